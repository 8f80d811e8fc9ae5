//! What formatting must preserve, checked on any text without syntax
//! errors: shared by the formatter's example tests and its property tests.

#![allow(dead_code)]

use grammar_lang::model::{Grammar, Sym};
use grammar_lang::syntax::lexer::{lex, TokenKind};
use grammar_lang::tree::Tree;
use grammar_lang::{analyze_text, format, FormatOptions};

/// A rule without ids or spans: right-hand side, probability, weight as
/// written, doc.
type RuleFacts = (Vec<String>, String, Option<String>, Option<String>);
/// A test case: accept?, sentence, expected tree.
type CaseFacts = (bool, String, Option<Tree>);

/// The facts of a model formatting must keep, free of ids and spans.
#[derive(Debug, PartialEq)]
pub struct Facts {
    name: Option<String>,
    start: Option<String>,
    /// Each block in order: name, relative, doc, rules in order.
    blocks: Vec<(String, bool, Option<String>, Vec<RuleFacts>)>,
    tests: Vec<(String, Option<String>, Vec<CaseFacts>)>,
    /// Every finding's code and message (positions left out).
    findings: Vec<(String, String)>,
}

pub fn facts(text: &str) -> Facts {
    let analysis = analyze_text(text);
    let g: &Grammar = &analysis.grammar;
    let mut blocks: Vec<_> = g
        .nt_ids()
        .filter_map(|id| {
            let nt = g.nonterminal(id);
            let block = nt.block.as_ref()?;
            let rules = g
                .rules_of(id)
                .map(|(_, rule)| {
                    let rhs = rule
                        .rhs
                        .iter()
                        .map(|&sym| match sym {
                            Sym::N(n) => format!("N {}", g.nt_name(n)),
                            Sym::T(t) => format!("T {}", g.term_text(t)),
                        })
                        .collect();
                    (
                        rhs,
                        rule.probability.to_string(),
                        rule.weight.as_ref().map(|w| w.text.to_string()),
                        rule.doc.clone(),
                    )
                })
                .collect();
            Some((
                block.location.span.start,
                (nt.name.clone(), block.relative, block.doc.clone(), rules),
            ))
        })
        .collect();
    blocks.sort_by_key(|(at, _)| *at);
    Facts {
        name: g.name.clone(),
        start: g.start.map(|s| g.nt_name(s).to_string()),
        blocks: blocks.into_iter().map(|(_, b)| b).collect(),
        tests: g
            .tests
            .iter()
            .map(|t| {
                let cases = t
                    .cases
                    .iter()
                    .map(|c| {
                        (
                            c.expect == grammar_lang::model::Expectation::Accept,
                            c.sentence.clone(),
                            c.tree.clone(),
                        )
                    })
                    .collect();
                (t.name.clone(), t.doc.clone(), cases)
            })
            .collect(),
        findings: analysis
            .diagnostics
            .iter()
            .map(|d| (d.code.as_str().to_string(), d.message.clone()))
            .collect(),
    }
}

/// The text's tokens without spaces, line breaks and `|`, each comment
/// trimmed and marked as standing at the end of a line of code or on a line
/// of its own: formatting must keep this sequence exactly, so every comment
/// keeps its neighbours and its kind of place.
pub fn skeleton(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut code_on_line = false;
    for token in lex(text) {
        let t = token.span.text(text);
        match token.kind {
            TokenKind::Newline => code_on_line = false,
            TokenKind::Whitespace | TokenKind::Pipe => {}
            TokenKind::Comment | TokenKind::DocComment => {
                let place = if code_on_line { "trailing" } else { "own line" };
                out.push(format!("{place} {}", t.trim_end()));
            }
            _ => {
                code_on_line = true;
                out.push(t.to_string());
            }
        }
    }
    out
}

/// Formats `text` and checks the result: idempotent, same model (and same
/// findings), same tokens and comments in the same places, no trailing
/// spaces, one final newline; the minimal edits give the formatted text.
/// Returns the formatted text.
pub fn check_formatting(text: &str, options: &FormatOptions) -> Result<String, String> {
    let formatted = format(text, options).map_err(|e| format!("{e}: {:?}", e.errors))?;
    let again = format(&formatted, options)
        .map_err(|e| format!("output does not parse: {e:?}\n{formatted}"))?;
    if again != formatted {
        return Err(format!(
            "not idempotent:\n--- once ---\n{formatted}\n--- twice ---\n{again}"
        ));
    }
    let (before, after) = (facts(text), facts(&formatted));
    if before != after {
        return Err(format!(
            "the model changed:\n{before:#?}\n{after:#?}\n--- input ---\n{text}\n--- formatted ---\n{formatted}"
        ));
    }
    let (before, after) = (skeleton(text), skeleton(&formatted));
    if before != after {
        return Err(format!(
            "tokens or comments moved:\n{before:?}\n{after:?}\n--- input ---\n{text}\n--- formatted ---\n{formatted}"
        ));
    }
    let edits = grammar_lang::format::minimal_edits(text, &formatted);
    if !edits.windows(2).all(|w| w[0].0.end <= w[1].0.start) {
        return Err(format!("edits overlap or are out of order: {edits:?}"));
    }
    let mut edited = text.to_string();
    for (span, new) in edits.iter().rev() {
        edited.replace_range(span.range(), new);
    }
    if edited != formatted {
        return Err(format!(
            "the minimal edits do not give the formatted text: {edits:?}"
        ));
    }
    if let Some(line) = formatted.lines().find(|l| l.ends_with([' ', '\t'])) {
        return Err(format!("trailing spaces in {line:?}"));
    }
    if !formatted.is_empty() && (!formatted.ends_with('\n') || formatted.ends_with("\n\n")) {
        return Err(format!(
            "does not end with exactly one newline:\n{formatted:?}"
        ));
    }
    Ok(formatted)
}
