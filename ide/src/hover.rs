//! Hover: what a rule, a symbol or a word means, with its numbers.

use super::lookup::{lookup, Lookup, NtRole};
use super::numbers::{code, exact, float, percent};
use super::IdeIndex;
use grammar_lang::analysis::Analysis;
use grammar_lang::model::{Grammar, Notation, NtId, Ratio, RuleId, TermId};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::lexer::{quote, TokenKind};
use num_traits::{One, Zero};
use std::fmt::Write;

/// Numbers from the probabilistic engine, supplied by the caller. Every
/// field is optional in effect: an empty vector (or one too short) simply
/// leaves the number out of the hover.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct EngineFacts {
    /// Per non-terminal (indexed by `NtId`): the probability that a
    /// derivation starting from it ends.
    pub termination: Vec<f64>,
    /// Per rule (indexed by `RuleId`): how often the rule is used, on
    /// average, in one sentence of the grammar.
    pub rule_expected_uses: Vec<f64>,
}

/// A hover answer: markdown text and the span it is about.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Hover {
    pub markdown: String,
    pub span: Span,
}

/// Most producers of a word listed in a terminal's hover.
const LISTED_PRODUCERS: usize = 20;

/// The hover for `offset` of `file`: a rule when on its weight or between
/// its items, a non-terminal on its name, a word on a quoted terminal, a
/// keyword's meaning, a test's cases, a used file. `None` elsewhere.
///
/// Cost: the lookup, plus the size of one block (a rule or non-terminal) or
/// of the rules producing one word.
pub fn hover(
    analysis: &Analysis,
    index: &IdeIndex,
    file: FileId,
    offset: usize,
    facts: Option<&EngineFacts>,
) -> Option<Hover> {
    let found = lookup(analysis, file, offset)?;
    let grammar = &analysis.grammar;
    let markdown = match &found {
        Lookup::Weight { rule, .. } | Lookup::Alternative { rule, .. } => {
            rule_hover(grammar, *rule, facts)
        }
        Lookup::NonTerminal { nt, role, .. } => nt_hover(grammar, index, *nt, *role, facts),
        Lookup::Terminal { term, value, .. } => terminal_hover(grammar, index, *term, value),
        Lookup::Keyword { keyword, .. } => keyword_hover(*keyword)?.to_string(),
        Lookup::UsePath { target, .. } => use_hover(analysis, *target),
        Lookup::Test { test, .. } => test_hover(grammar, (*test)?)?,
    };
    Some(Hover {
        markdown,
        span: found.span(),
    })
}

fn rule_hover(grammar: &Grammar, id: RuleId, facts: Option<&EngineFacts>) -> String {
    let rule = grammar.rule(id);
    let lhs = grammar.nt_name(rule.lhs);
    let block = grammar.nonterminal(rule.lhs).block.as_ref();
    let relative = block.is_some_and(|b| b.relative);
    let mut out = format!("**rule** {}\n", code(&grammar.rule_text(id)));
    if let Some(doc) = &rule.doc {
        let _ = write!(out, "\n{doc}\n");
    }
    out.push('\n');
    match &rule.weight {
        Some(w) => {
            let notation = match w.notation {
                Notation::Decimal => "decimal",
                Notation::Fraction => "fraction",
                Notation::Percent => "percent",
            };
            let kind = if relative {
                "relative weight"
            } else {
                "weight"
            };
            let _ = writeln!(out, "- {kind} as written: {} ({notation})", code(&w.text));
        }
        None if relative => {
            out.push_str("- unweighted: counts as relative weight 1\n");
        }
        None => {
            out.push_str("- unweighted: shares what the weighted alternatives leave\n");
        }
    }
    let mass = block.map_or_else(Ratio::zero, |b| b.mass.clone());
    let runs_use = crate::run::run_probability(grammar, id);
    if *runs_use == rule.probability {
        let _ = writeln!(out, "- probability: {}", exact(&rule.probability));
    } else {
        let _ = writeln!(
            out,
            "- probability: {} as written; runs use {} (the block's probabilities sum to {} \
             and runs divide them by that sum)",
            exact(&rule.probability),
            exact(&runs_use),
            exact(&mass)
        );
    }
    if !mass.is_zero() {
        let share = &rule.probability / &mass;
        let _ = writeln!(
            out,
            "- share of {}: {} of its total",
            code(lhs),
            percent(&share)
        );
    }
    let _ = writeln!(out, "- total of {}: {}", code(lhs), exact(&mass));
    if let Some(approx) = block.and_then(|b| b.approximate.as_ref()) {
        let _ = writeln!(
            out,
            "- computed in floating point: the exact sum of {} needs more than {} bits; its \
             weights sum to ≈{:.6e} (within ±{:.1e})",
            code(lhs),
            grammar_lang::model::EXACT_SUM_BITS,
            approx.weighted,
            approx.tolerance
        );
    } else if relative {
        let sum: Ratio = grammar
            .rules_of(rule.lhs)
            .map(|(_, r)| {
                r.weight
                    .as_ref()
                    .map_or_else(Ratio::one, |w| w.value.clone())
            })
            .sum();
        let _ = writeln!(
            out,
            "- {} is `relative`: its weights sum to {} and each is divided by that sum",
            code(lhs),
            exact(&sum)
        );
    }
    if let Some(uses) = facts.and_then(|f| f.rule_expected_uses.get(id.index())) {
        let _ = writeln!(out, "- expected uses per sentence: {}", float(*uses));
    }
    out
}

fn nt_hover(
    grammar: &Grammar,
    index: &IdeIndex,
    nt: NtId,
    role: NtRole,
    facts: Option<&EngineFacts>,
) -> String {
    let symbol = grammar.nonterminal(nt);
    let name = &symbol.name;
    let is_start = grammar.start == Some(nt);
    let mut out = format!(
        "**{}** {}\n",
        if is_start {
            "start symbol"
        } else {
            "non-terminal"
        },
        code(name)
    );
    let Some(block) = &symbol.block else {
        let _ = write!(
            out,
            "\nused {} but has **no block**: it derives nothing\n",
            times(symbol.references.len())
        );
        return out;
    };
    if let Some(doc) = &block.doc {
        let _ = write!(out, "\n{doc}\n");
    }
    out.push('\n');
    let rules = symbol.rules.len();
    let _ = writeln!(
        out,
        "- {} {}{}",
        rules,
        if rules == 1 { "rule" } else { "rules" },
        if block.relative {
            ", `relative` (weights divided by their sum)"
        } else {
            ""
        }
    );
    if let Some(approx) = &block.approximate {
        let _ = writeln!(
            out,
            "- weights sum to ≈{:.6e} (within ±{:.1e}), checked in floating point: the exact \
             sum needs more than {} bits",
            approx.weighted,
            approx.tolerance,
            grammar_lang::model::EXACT_SUM_BITS
        );
    } else if !block.mass.is_one() && rules > 0 {
        let _ = writeln!(
            out,
            "- probabilities sum to {}{}",
            exact(&block.mass),
            if block.mass.is_zero() {
                ""
            } else {
                "; runs divide each by that sum"
            }
        );
    }
    match (index.is_reachable(nt), grammar.start) {
        (Some(true), _) if is_start => {}
        (Some(true), Some(start)) => {
            let _ = writeln!(
                out,
                "- reachable from the start symbol {}",
                code(grammar.nt_name(start))
            );
        }
        (Some(false), Some(start)) => {
            let _ = writeln!(
                out,
                "- **not reachable** from the start symbol {}",
                code(grammar.nt_name(start))
            );
        }
        _ => out.push_str("- reachability unknown: the grammar has no usable `start`\n"),
    }
    if index.is_productive(nt) {
        out.push_str("- productive: derives at least one string of words\n");
    } else {
        out.push_str("- **unproductive**: derives no string of words\n");
    }
    let uses = symbol
        .references
        .iter()
        .filter(|&&at| !(is_start && Some(at) == grammar.start_location))
        .count();
    let _ = writeln!(out, "- used {} on right-hand sides", times(uses));
    if let Some(t) = facts.and_then(|f| f.termination.get(nt.index())) {
        let _ = writeln!(out, "- termination probability: {}", float(*t));
    }
    if role == NtRole::TestLabel {
        out.push_str("\n(label of an expected tree in a test)\n");
    }
    out
}

fn times(n: usize) -> String {
    match n {
        1 => "once".to_string(),
        n => format!("{n} times"),
    }
}

fn terminal_hover(
    grammar: &Grammar,
    index: &IdeIndex,
    term: Option<TermId>,
    value: &str,
) -> String {
    let mut out = format!("**terminal** {}\n\n", code(&quote(value)));
    let words: Vec<&str> = grammar_lang::model::words(value).collect();
    if words.len() > 1 {
        // A terminal of several words is the sequence of its words
        // (lowering splits it), each a word of the grammar of its own.
        let _ = writeln!(
            out,
            "the sequence of {} words {}: a sentence must have them one after the other\n",
            words.len(),
            words
                .iter()
                .map(|w| code(&quote(w)))
                .collect::<Vec<_>>()
                .join(" ")
        );
        out.push_str("| word | rules producing it |\n|---|---|\n");
        for word in words {
            let rules = grammar
                .term(word)
                .map_or(0, |t| index.rules_producing(t).len());
            let _ = writeln!(out, "| {} | {rules} |", code(&quote(word)));
        }
        return out;
    }
    let term = term.or_else(|| words.first().and_then(|w| grammar.term(w)));
    let producers = term.map_or(&[][..], |t| index.rules_producing(t));
    if producers.is_empty() {
        out.push_str("no rule produces this word\n");
        return out;
    }
    let _ = writeln!(
        out,
        "produced directly by {} {}:\n",
        producers.len(),
        if producers.len() == 1 {
            "rule"
        } else {
            "rules"
        }
    );
    out.push_str("| non-terminal | rule | probability |\n|---|---|---|\n");
    for &id in producers.iter().take(LISTED_PRODUCERS) {
        let rule = grammar.rule(id);
        let _ = writeln!(
            out,
            "| {} | {} | {} |",
            code(grammar.nt_name(rule.lhs)),
            code(&grammar.rule_text(id)).replace('|', "\\|"),
            probability_cell(grammar, id)
        );
    }
    if producers.len() > LISTED_PRODUCERS {
        let _ = writeln!(out, "\n… and {} more", producers.len() - LISTED_PRODUCERS);
    }
    out
}

/// A rule's probability for a table: as written, and what runs use when
/// its block is rescaled.
fn probability_cell(grammar: &Grammar, id: RuleId) -> String {
    let written = &grammar.rule(id).probability;
    let runs_use = crate::run::run_probability(grammar, id);
    if *runs_use == *written {
        exact(written)
    } else {
        format!(
            "{} as written; runs use {}",
            exact(written),
            exact(&runs_use)
        )
    }
}

/// What each keyword means, in one line.
pub(crate) fn keyword_hover(keyword: TokenKind) -> Option<&'static str> {
    Some(match keyword {
        TokenKind::KwGrammar => "`grammar NAME`: names the grammar (at most once)",
        TokenKind::KwStart => "`start Symbol`: where every derivation begins (exactly once per grammar)",
        TokenKind::KwUse => "`use \"path\"`: pulls in another file's blocks; the path is relative to this file",
        TokenKind::KwRelative => "`relative`: the block's weights are divided by their sum; an unweighted alternative counts as weight 1",
        TokenKind::KwTest => "`test \"name\" { … }`: sentences the grammar must accept or reject",
        TokenKind::KwAccept => "`accept \"words\"`: the sentence must have a parse; with `as (…)` its most probable parse must be that tree",
        TokenKind::KwReject => "`reject \"words\"`: the sentence must have no parse",
        TokenKind::KwAs => "`as (Label …)`: the expected most probable parse, in labelled brackets",
        _ => return None,
    })
}

fn use_hover(analysis: &Analysis, target: Option<FileId>) -> String {
    let Some(file) = target else {
        return "file not loaded (see the `use-missing` or `use-cycle` report)".to_string();
    };
    let path = analysis.sources.get(file).path.display().to_string();
    let blocks = analysis.syntax.get(file.0 as usize).map_or(0, |s| {
        s.decls
            .iter()
            .filter(|d| matches!(d, grammar_lang::syntax::ast::Decl::Block(_)))
            .count()
    });
    format!(
        "**file** {}\n\n{} {}\n",
        code(&path),
        blocks,
        if blocks == 1 { "block" } else { "blocks" }
    )
}

fn test_hover(grammar: &Grammar, test: usize) -> Option<String> {
    let test = grammar.tests.get(test)?;
    let accepts = test
        .cases
        .iter()
        .filter(|c| c.expect == grammar_lang::model::Expectation::Accept)
        .count();
    let trees = test.cases.iter().filter(|c| c.tree.is_some()).count();
    let mut out = format!("**test** {}\n", code(&quote(&test.name)));
    if let Some(doc) = &test.doc {
        let _ = write!(out, "\n{doc}\n");
    }
    let _ = write!(
        out,
        "\n{} accepted ({} with an expected tree), {} rejected\n",
        accepts,
        trees,
        test.cases.len() - accepts
    );
    Some(out)
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn hover(&self, file: FileId, offset: usize) -> Option<Hover> {
        hover(self.core(), self.index(), file, offset, self.facts())
    }
}
