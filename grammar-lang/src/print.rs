//! Printing a semantic model back to `.trellis` text.
//!
//! [`print_grammar`] writes one self-contained file: the `grammar` name, the
//! `start` declaration, every block with its rules, and every test. Blocks
//! from `use`d files are written inline, so the printed grammar needs no
//! other file. Analysing the printed text gives back the same model (same
//! names, right-hand sides, exact probabilities, `relative` flags, docs and
//! tests); only spans differ.
//!
//! Weights keep the text the user wrote when that text still denotes the
//! rule's weight. Unweighted alternatives stay unweighted when the share of
//! the remaining mass is still their probability; otherwise the exact
//! probability is written as a fraction, so nothing is ever rounded.

use crate::model::{fraction, Grammar, NtId, Ratio, Rule, Sym};
use crate::syntax::lexer::quote;
use crate::weight::parse_weight;
use num_traits::{One, Zero};
use std::fmt::Write;

/// Writes `grammar` as `.trellis` text.
pub fn print_grammar(grammar: &Grammar) -> String {
    let mut out = String::new();
    if let Some(name) = &grammar.name {
        let _ = writeln!(out, "grammar {name}");
    }
    if let Some(start) = grammar.start {
        let _ = writeln!(out, "start {}", grammar.nt_name(start));
    }
    for nt in block_order(grammar) {
        if !out.is_empty() {
            out.push('\n');
        }
        print_block(grammar, nt, &mut out);
    }
    for test in &grammar.tests {
        if !out.is_empty() {
            out.push('\n');
        }
        print_doc(test.doc.as_deref(), "", &mut out);
        let _ = writeln!(out, "test {} {{", quote(&test.name));
        for case in &test.cases {
            let _ = writeln!(out, "  {case}");
        }
        out.push_str("}\n");
    }
    out
}

/// The non-terminals that get a block: those defined by a block or owning
/// rules, in the order their blocks appear in the sources (id order for
/// blocks without a place, e.g. in a model built by a program).
fn block_order(grammar: &Grammar) -> Vec<NtId> {
    let mut ids: Vec<NtId> = grammar
        .nt_ids()
        .filter(|&id| {
            let nt = grammar.nonterminal(id);
            nt.block.is_some() || !nt.rules.is_empty()
        })
        .collect();
    ids.sort_by_key(|&id| {
        let nt = grammar.nonterminal(id);
        let place = nt
            .block
            .as_ref()
            .map(|b| (b.location.file, b.location.span.start));
        (place.is_none(), place, id)
    });
    ids
}

fn print_block(grammar: &Grammar, nt: NtId, out: &mut String) {
    let info = &grammar.nonterminal(nt);
    let relative = info.block.as_ref().is_some_and(|b| b.relative);
    print_doc(info.block.as_ref().and_then(|b| b.doc.as_deref()), "", out);
    let _ = writeln!(
        out,
        "{}{} {{",
        info.name,
        if relative { " relative" } else { "" }
    );
    let rules: Vec<&Rule> = grammar.rules_of(nt).map(|(_, rule)| rule).collect();
    let weights = weight_texts(&rules, relative);
    let width = weights
        .iter()
        .flatten()
        .map(|w| w.chars().count())
        .max()
        .unwrap_or(0);
    for (rule, weight) in rules.iter().zip(&weights) {
        print_doc(rule.doc.as_deref(), "  ", out);
        out.push_str("  ");
        if width > 0 {
            let weight = weight.as_deref().unwrap_or("");
            let _ = write!(out, "{weight:<width$}  ");
        }
        let items: Vec<String> = rule.rhs.iter().map(|&sym| sym_text(grammar, sym)).collect();
        out.push_str(&items.join(" "));
        // Keep the line free of trailing spaces (e.g. an empty right-hand side).
        let trimmed = out.trim_end_matches(' ').len();
        out.truncate(trimmed);
        out.push('\n');
    }
    out.push_str("}\n");
}

fn sym_text(grammar: &Grammar, sym: Sym) -> String {
    match sym {
        Sym::N(n) => grammar.nt_name(n).to_string(),
        Sym::T(t) => quote(grammar.term_text(t)),
    }
}

/// The weight to write before each rule of one block (`None`: unweighted).
fn weight_texts(rules: &[&Rule], relative: bool) -> Vec<Option<String>> {
    let written = |rule: &Rule| -> Option<String> {
        let weight = rule.weight.as_ref()?;
        let text_still_true =
            matches!(parse_weight(&weight.text), Ok((value, _)) if value == weight.value);
        Some(if text_still_true {
            weight.text.to_string()
        } else {
            fraction(&weight.value)
        })
    };
    let all_weighted = rules.iter().all(|r| r.weight.is_some());
    if all_weighted || (!relative && unweighted_shares_hold(rules)) {
        return rules.iter().map(|r| written(r)).collect();
    }
    // The stated weights no longer explain the probabilities: write every
    // probability exactly (in a `relative` block they are divided by their
    // sum, 1, so they stay the same).
    rules
        .iter()
        .map(|r| Some(fraction(&r.probability)))
        .collect()
}

/// Whether the unweighted rules' probabilities are exactly their equal share
/// of what the weighted rules leave, so they can stay unweighted.
fn unweighted_shares_hold(rules: &[&Rule]) -> bool {
    let mut left = Ratio::one();
    let mut unweighted = 0u32;
    for rule in rules {
        match &rule.weight {
            Some(w) => left -= &w.value,
            None => unweighted += 1,
        }
    }
    if unweighted == 0 {
        return true;
    }
    if left <= Ratio::zero() {
        return false;
    }
    let share = left / Ratio::from_integer(unweighted.into());
    rules
        .iter()
        .filter(|r| r.weight.is_none())
        .all(|r| r.probability == share)
}

/// Writes `##` lines for a doc text.
fn print_doc(doc: Option<&str>, indent: &str, out: &mut String) {
    let Some(doc) = doc else { return };
    for line in doc.split('\n') {
        if line.is_empty() {
            let _ = writeln!(out, "{indent}##");
        } else {
            let _ = writeln!(out, "{indent}## {line}");
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::diagnostic::Location;
    use crate::model::{BlockInfo, Expectation as Expect, GrammarTest, Notation, TestCase, Weight};
    use crate::tree::Tree;
    use num_bigint::BigInt;

    fn here() -> Location {
        Location::new(crate::source::FileId(0), crate::span::Span::default())
    }

    fn r(n: i64, d: i64) -> Ratio {
        Ratio::new(BigInt::from(n), BigInt::from(d))
    }

    fn block(relative: bool, doc: Option<&str>) -> BlockInfo {
        BlockInfo {
            name: here(),
            location: here(),
            relative,
            doc: doc.map(str::to_string),
            mass: Ratio::one(),
            approximate: None,
        }
    }

    fn weight(text: &str) -> Weight {
        let (value, notation) = parse_weight(text).expect("test weights are well formed");
        Weight {
            text: text.into(),
            value,
            notation,
            location: here(),
        }
    }

    fn rule(g: &mut Grammar, lhs: &str, rhs: &[&str], w: Option<Weight>, p: Ratio) {
        let lhs = g.intern_nt(lhs);
        let rhs: Vec<Sym> = rhs
            .iter()
            .map(|item| match item.strip_prefix('\'') {
                Some(word) => Sym::T(g.intern_term(word)),
                None => Sym::N(g.intern_nt(item)),
            })
            .collect();
        g.push_rule(Rule {
            lhs,
            rhs,
            weight: w,
            p: crate::model::to_f64(&p),
            probability: p,
            location: here(),
            doc: None,
        });
    }

    /// The kiosk grammar of the language sketch, built by hand.
    fn kiosk() -> Grammar {
        let mut g = Grammar::new();
        g.name = Some("ferry_kiosk".into());
        let request = g.intern_nt("Request");
        g.start = Some(request);
        rule(
            &mut g,
            "Request",
            &["Ticket", "'please"],
            Some(weight("0.55")),
            r(11, 20),
        );
        rule(
            &mut g,
            "Request",
            &["Ticket"],
            Some(weight("45%")),
            r(9, 20),
        );
        rule(
            &mut g,
            "Ticket",
            &["Count", "Kind", "'ticket"],
            None,
            r(1, 2),
        );
        rule(&mut g, "Ticket", &["Kind", "'ticket"], None, r(1, 2));
        rule(&mut g, "Kind", &["'day"], Some(weight("1/2")), r(1, 2));
        rule(&mut g, "Kind", &["'say \"hi\""], None, r(1, 2));
        rule(&mut g, "Count", &["'one"], Some(weight("6")), r(3, 4));
        rule(&mut g, "Count", &["'two"], Some(weight("2")), r(1, 4));
        for (name, relative, doc) in [
            (
                "Request",
                false,
                Some("What a passenger says.\n\nTwo lines."),
            ),
            ("Ticket", false, None),
            ("Kind", false, None),
            ("Count", true, None),
        ] {
            let id = g.nt(name).expect("interned above");
            g.nonterminals[id.index()].block = Some(block(relative, doc));
        }
        g.tests.push(GrammarTest {
            name: "tickets".into(),
            location: here(),
            doc: Some("Sanity.".into()),
            cases: vec![
                TestCase {
                    expect: Expect::Accept,
                    sentence: "day ticket".into(),
                    tree: Some(Tree::node(
                        "Request",
                        vec![Tree::node(
                            "Ticket",
                            vec![
                                Tree::node("Kind", vec![Tree::leaf("day")]),
                                Tree::leaf("ticket"),
                            ],
                        )],
                    )),
                    location: here(),
                },
                TestCase {
                    expect: Expect::Reject,
                    sentence: "ticket ticket".into(),
                    tree: None,
                    location: here(),
                },
            ],
        });
        g
    }

    #[test]
    fn prints_declarations_blocks_docs_and_tests_in_the_language_syntax() {
        let expected = r#"grammar ferry_kiosk
start Request

## What a passenger says.
##
## Two lines.
Request {
  0.55  Ticket "please"
  45%   Ticket
}

Ticket {
  Count Kind "ticket"
  Kind "ticket"
}

Count relative {
  6  "one"
  2  "two"
}

Kind {
  1/2  "day"
       "say \"hi\""
}

## Sanity.
test "tickets" {
  accept "day ticket" as (Request (Ticket (Kind "day") "ticket"))
  reject "ticket ticket"
}
"#;
        assert_eq!(print_grammar(&kiosk()), expected);
    }

    #[test]
    fn weights_that_no_longer_explain_the_probabilities_become_exact_fractions() {
        let mut g = kiosk();
        // A program set probabilities of unweighted rules directly (e.g. from
        // counts): 1/3 and 2/3 are not equal shares, so both are written.
        let ticket = g.nt("Ticket").expect("defined");
        let ids: Vec<_> = g.nonterminal(ticket).rules.clone();
        g.rules[ids[0].index()].probability = r(1, 3);
        g.rules[ids[1].index()].probability = r(2, 3);
        // A weight whose text disagrees with its value keeps the value.
        let count = g.nt("Count").expect("defined");
        let first = g.nonterminal(count).rules[0];
        if let Some(w) = g.rules[first.index()].weight.as_mut() {
            w.value = r(5, 1);
            w.notation = Notation::Fraction;
        }
        let text = print_grammar(&g);
        assert!(text.contains("Ticket {\n  1/3  Count Kind \"ticket\"\n  2/3  Kind \"ticket\"\n}"));
        assert!(text.contains("Count relative {\n  5  \"one\"\n  2  \"two\"\n}"));
    }

    #[test]
    fn an_empty_grammar_prints_as_empty_text() {
        assert_eq!(print_grammar(&Grammar::new()), "");
    }
}
