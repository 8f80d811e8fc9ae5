//! Code actions: quick fixes for diagnostics that keep the user's text.
//!
//! Every fix edits as little as possible: it replaces weight tokens,
//! inserts text at one point, or deletes whole lines. Comments and layout
//! outside the edited tokens or lines are never touched.

use super::locate::{self, line_start, next_line_start};
use super::TextEdit;
use grammar_lang::analysis::Analysis;
use grammar_lang::diagnostic::{Code, Diagnostic, Location};
use grammar_lang::model::{Notation, Ratio};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::{Block, Decl};
use grammar_lang::syntax::lexer::quote;
use grammar_lang::weight::{write_block, BlockWeights};
use num_traits::{Signed, Zero};

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CodeActionKind {
    QuickFix,
    Refactor,
}

/// One offered change.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CodeAction {
    pub title: String,
    pub kind: CodeActionKind,
    /// The code of the diagnostic this fixes, if any.
    pub diagnostic_code: Option<Code>,
    /// Where that diagnostic is reported.
    pub diagnostic_location: Option<Location>,
    pub edits: Vec<TextEdit>,
    /// The fix most likely meant (an editor may apply it with one key).
    pub is_preferred: bool,
}

/// The fixes for the diagnostics of `file` that overlap `span`:
///
/// * `sum-not-one` — **renormalize** the block: every weight is divided by
///   the block's sum, so ratios are kept and the sum is exactly 1. The new
///   weights keep the block's notation
///   ([`write_block`](grammar_lang::weight::write_block)): the notation
///   most of its weights use (ties: fraction, decimal, percent), written
///   exactly. When some value cannot be written exactly in it (a repeating
///   expansion such as 8/21 = 38.095…%, or more than
///   [`MAX_DECIMALS`](grammar_lang::weight::MAX_DECIMALS) digits after the
///   point) the whole block is written in exact fractions and the title
///   says why: `… (percentages cannot be exact here: 3/7 has no finite
///   decimal expansion; writes fractions)`. Nothing is ever rounded. Only
///   weight tokens whose value changes are edited (a zero keeps its text).
///   (A block reported as `sum-not-one` has a weight on every
///   alternative: unweighted alternatives would take the remainder.) Also
///   offered: **mark the block `relative`**, which inserts ` relative`
///   after its name.
/// * `undefined` and `unknown-start` with a close known name (`did you
///   mean `Observation`?`) — **replace the name** at that use with the
///   known one; the preferred fix. The same for `unknown-word` with a close
///   known word: the word inside the sentence's quotes is replaced.
/// * `terminal-spacing` — **normalise the spacing**: the terminal is
///   rewritten with single spaces between its words and none at its ends
///   (the same words, so the same rules); the preferred fix.
/// * `undefined` — **define the symbol** with a stub block
///   `Name {\n  "Name"  # TODO: …\n}` inserted on the line after the block
///   that uses it, separated by a blank line. The same for
///   `unknown-start`, after the `start` declaration.
/// * `unreachable` — **remove the block**: deletes its lines, the `##` doc
///   lines above it and one adjacent blank line; nothing else.
///
/// Besides the fixes, one refactor is offered when `span` lies on the head
/// of a `relative` block (its name or the keyword): **write out the
/// probabilities**, which replaces every weight by the alternative's exact
/// probability (inserting one before unweighted alternatives, in the
/// block's notation as for renormalizing — decimals when no weight is
/// written — with the same fallback and title) and removes `relative`; the
/// model is unchanged.
///
/// Cost: a pass over the file's diagnostics plus the size of the blocks
/// concerned.
pub fn code_actions(analysis: &Analysis, file: FileId, span: Span) -> Vec<CodeAction> {
    let mut out: Vec<CodeAction> = Vec::new();
    for d in analysis.diagnostics.iter().filter(|d| {
        d.location.file == file
            && d.location.span.start <= span.end
            && span.start <= d.location.span.end
    }) {
        let found = match d.code {
            Code::SumNotOne => {
                let mut v = Vec::new();
                if let Some(block) = block_named_at(analysis, d.location) {
                    v.extend(renormalize(analysis, file, block, d));
                    v.push(make_relative(analysis, file, block, d));
                }
                v
            }
            Code::Undefined | Code::UnknownStart => replace_name(analysis, d)
                .into_iter()
                .chain(define_stub(analysis, d))
                .collect(),
            Code::UnknownWord | Code::TerminalSpacing => {
                replace_name(analysis, d).into_iter().collect()
            }
            Code::Unreachable => block_named_at(analysis, d.location)
                .map(|block| remove_block(analysis, file, block, d))
                .into_iter()
                .collect(),
            _ => Vec::new(),
        };
        for action in found {
            if !out.iter().any(|a| a.title == action.title) {
                out.push(action);
            }
        }
    }
    if let Some(action) = write_out_relative(analysis, file, span) {
        out.push(action);
    }
    out
}

/// `title`, followed by the reason when `written` could not keep the
/// block's notation: `… (percentages cannot be exact here: 8/21 has no
/// finite decimal expansion; writes fractions)`.
fn titled(title: String, written: &BlockWeights) -> String {
    match &written.fallback {
        None => title,
        Some(why) => format!("{title} ({why}; writes fractions)"),
    }
}

/// Refactor offered on the head of a `relative` block: write every
/// alternative's probability as its weight and drop `relative`, so the
/// block reads as plain probabilities that sum to 1.
fn write_out_relative(analysis: &Analysis, file: FileId, span: Span) -> Option<CodeAction> {
    let syntax = locate::syntax(analysis, file)?;
    let Decl::Block(block) = locate::decl_at(syntax, span.start as usize)? else {
        return None;
    };
    let relative = block.relative?;
    if span.end > relative.end.max(block.name.span.end) {
        return None;
    }
    let grammar = &analysis.grammar;
    let nt = locate::is_model_block(analysis, file, block)?;
    let info = grammar.nonterminal(nt).block.as_ref()?;
    if grammar.is_damaged(nt) || info.mass.is_zero() {
        return None;
    }
    let rules: Vec<_> = grammar.rules_of(nt).map(|(_, r)| r).collect();
    if rules.len() != block.alternatives.len() {
        return None;
    }
    let notations: Vec<Notation> = rules
        .iter()
        .filter_map(|r| r.weight.as_ref().map(|w| w.notation))
        .collect();
    let values: Vec<Ratio> = rules.iter().map(|r| r.probability.clone()).collect();
    let written = write_block(&values, &notations);
    let mut edits = vec![TextEdit {
        file,
        span: Span::new(block.name.span.end as usize, relative.end as usize),
        new_text: String::new(),
    }];
    for ((alt, rule), text) in block.alternatives.iter().zip(&rules).zip(&written.texts) {
        edits.push(match (&rule.weight, alt.weight) {
            (Some(_), Some(w)) => TextEdit {
                file,
                span: w,
                new_text: text.clone(),
            },
            _ => TextEdit {
                file,
                span: Span::point(alt.span.start as usize),
                new_text: format!("{text} "),
            },
        });
    }
    let name = grammar.nt_name(nt);
    Some(CodeAction {
        title: titled(
            format!("Write out the probabilities of `{name}` and drop `relative`"),
            &written,
        ),
        kind: CodeActionKind::Refactor,
        diagnostic_code: None,
        diagnostic_location: None,
        edits,
        is_preferred: false,
    })
}

fn quick_fix(title: String, d: &Diagnostic, edits: Vec<TextEdit>) -> CodeAction {
    CodeAction {
        title,
        kind: CodeActionKind::QuickFix,
        diagnostic_code: Some(d.code),
        diagnostic_location: Some(d.location),
        edits,
        is_preferred: false,
    }
}

/// The block whose name is at `at`.
fn block_named_at(analysis: &Analysis, at: Location) -> Option<&Block> {
    let syntax = locate::syntax(analysis, at.file)?;
    match locate::decl_at(syntax, at.span.start as usize)? {
        Decl::Block(b) if b.name.span == at.span => Some(b),
        _ => None,
    }
}

fn renormalize(
    analysis: &Analysis,
    file: FileId,
    block: &Block,
    d: &Diagnostic,
) -> Option<CodeAction> {
    let grammar = &analysis.grammar;
    let nt = locate::is_model_block(analysis, file, block)?;
    if grammar.is_damaged(nt) {
        return None;
    }
    let rules: Vec<_> = grammar.rules_of(nt).map(|(_, r)| r).collect();
    let weights: Vec<_> = rules
        .iter()
        .map(|r| r.weight.as_ref())
        .collect::<Option<Vec<_>>>()?;
    if weights.is_empty() || weights.iter().any(|w| w.value.is_negative()) {
        return None;
    }
    let sum: Ratio = weights.iter().map(|w| &w.value).sum();
    if sum.is_zero() {
        return None;
    }
    let new: Vec<Ratio> = weights.iter().map(|w| &w.value / &sum).collect();
    let notations: Vec<Notation> = weights.iter().map(|w| w.notation).collect();
    let written = write_block(&new, &notations);
    // A weight whose value stays (a zero) keeps its text.
    let edits: Vec<TextEdit> = weights
        .iter()
        .zip(&new)
        .zip(&written.texts)
        .filter(|((w, value), _)| w.value != **value)
        .map(|((w, _), text)| TextEdit {
            file: w.location.file,
            span: w.location.span,
            new_text: text.clone(),
        })
        .collect();
    if edits.is_empty() {
        return None;
    }
    Some(quick_fix(
        titled(
            format!(
                "Renormalize `{}` so its weights sum to 1",
                grammar.nt_name(nt)
            ),
            &written,
        ),
        d,
        edits,
    ))
}

fn make_relative(analysis: &Analysis, file: FileId, block: &Block, d: &Diagnostic) -> CodeAction {
    let name = block.name.span.text(locate::text(analysis, file));
    quick_fix(
        format!("Mark `{name}` relative (divide its weights by their sum)"),
        d,
        vec![TextEdit {
            file,
            span: Span::point(block.name.span.end as usize),
            new_text: " relative".to_string(),
        }],
    )
}

/// Replaces the text the diagnostic points at by the text it suggests: a
/// misspelt name or word by the known one, a badly spaced terminal by its
/// words spaced once.
fn replace_name(analysis: &Analysis, d: &Diagnostic) -> Option<CodeAction> {
    let suggestion = d.suggestion.as_deref()?;
    let file = d.location.file;
    let wrong = d.location.span.text(locate::text(analysis, file));
    if wrong.is_empty() || wrong == suggestion {
        return None;
    }
    let title = match d.code {
        Code::TerminalSpacing => format!("Normalise the spacing: {suggestion}"),
        _ => format!("Replace `{wrong}` with `{suggestion}`"),
    };
    Some(CodeAction {
        is_preferred: true,
        ..quick_fix(
            title,
            d,
            vec![TextEdit {
                file,
                span: d.location.span,
                new_text: suggestion.to_string(),
            }],
        )
    })
}

fn define_stub(analysis: &Analysis, d: &Diagnostic) -> Option<CodeAction> {
    let file = d.location.file;
    let syntax = locate::syntax(analysis, file)?;
    let text = locate::text(analysis, file);
    let name = d.location.span.text(text);
    let (after, first_alt) = match locate::decl_at(syntax, d.location.span.start as usize)? {
        Decl::Block(block) => (block.span, block.alternatives.first()),
        Decl::Start(start) => (start.span, None),
        _ => return None,
    };
    // Indent like the block's first alternative when it starts its line.
    let indent = first_alt
        .map(|alt| {
            let start = line_start(text, alt.span.start as usize);
            &text[start..alt.span.start as usize]
        })
        .filter(|s| !s.is_empty() && s.chars().all(|c| c == ' ' || c == '\t'))
        .unwrap_or("  ");
    let at = next_line_start(text, after.end as usize);
    let lead = if text[..at].ends_with('\n') {
        "\n"
    } else {
        "\n\n"
    };
    let stub = format!(
        "{lead}{name} {{\n{indent}{}  # TODO: the words or symbols `{name}` stands for\n}}\n",
        quote(name)
    );
    Some(quick_fix(
        format!("Define `{name}` with a stub block"),
        d,
        vec![TextEdit {
            file,
            span: Span::point(at),
            new_text: stub,
        }],
    ))
}

fn remove_block(analysis: &Analysis, file: FileId, block: &Block, d: &Diagnostic) -> CodeAction {
    let text = locate::text(analysis, file);
    let name = block.name.span.text(text);
    let first = block
        .doc
        .as_ref()
        .map_or(block.span.start, |doc| doc.span.start) as usize;
    let last = block.span.end as usize;
    let from = line_start(text, first);
    let to = next_line_start(text, last);
    let blank_before_first = text[from..first].trim().is_empty();
    let rest_of_last_line = text[last..to].trim_start();
    let only_comment_after = rest_of_last_line.is_empty() || rest_of_last_line.starts_with('#');
    let span = if blank_before_first && only_comment_after {
        // Whole lines, plus one blank line: the one after if there is one,
        // else the one before.
        let after_end = next_line_start(text, to);
        if to < text.len() && text[to..after_end].trim().is_empty() {
            Span::new(from, after_end)
        } else if from > 0 {
            let before_start = line_start(text, from - 1);
            if text[before_start..from].trim().is_empty() {
                Span::new(before_start, to)
            } else {
                Span::new(from, to)
            }
        } else {
            Span::new(from, to)
        }
    } else {
        Span::new(first, last)
    };
    quick_fix(
        format!("Remove the unreachable block `{name}`"),
        d,
        vec![TextEdit {
            file,
            span,
            new_text: String::new(),
        }],
    )
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn code_actions(&self, file: FileId, span: Span) -> Vec<CodeAction> {
        code_actions(self.core(), file, span)
    }
}
