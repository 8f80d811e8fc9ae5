//! Builds small grammars through the model API for the sampling and
//! consistency tests.

#![allow(dead_code)]

use grammar_lang::model::{BlockInfo, Grammar, Ratio, Rule, Sym};
use grammar_lang::{FileId, Location, Span};

/// A grammar from `(lhs, rhs, p)` triples: the right-hand side is split on
/// spaces, items in double quotes are terminals. Every left-hand side gets
/// a block whose name sits at a span of its own; `start` is declared at
/// bytes 0..5.
pub fn grammar(start: &str, rules: &[(&str, &str, f64)]) -> Grammar {
    let mut g = Grammar::new();
    let s = g.intern_nt(start);
    g.start = Some(s);
    g.start_location = Some(loc(0, 5));
    for (i, &(lhs, rhs, p)) in rules.iter().enumerate() {
        let a = g.intern_nt(lhs);
        let items: Vec<Sym> = rhs
            .split_whitespace()
            .map(
                |item| match item.strip_prefix('"').and_then(|w| w.strip_suffix('"')) {
                    Some(word) => Sym::T(g.intern_term(word)),
                    None => Sym::N(g.intern_nt(item)),
                },
            )
            .collect();
        let at = loc(100 + 10 * i, 105 + 10 * i);
        for sym in &items {
            if let Sym::N(b) = sym {
                g.nonterminals[b.index()].references.push(at);
            }
        }
        let probability = Ratio::from_float(p).expect("finite test probability");
        g.push_rule(Rule {
            lhs: a,
            rhs_locations: vec![at; items.len()],
            rhs: items,
            weight: None,
            probability,
            p,
            location: at,
            doc: None,
        });
    }
    for a in g.nt_ids().collect::<Vec<_>>() {
        let mass = g
            .rules_of(a)
            .map(|(_, r)| r.probability.clone())
            .fold(Ratio::from_float(0.0).expect("zero"), |x, y| x + y);
        if g.nonterminal(a).rules.is_empty() {
            continue;
        }
        let name = loc(10 + a.index(), 11 + a.index());
        g.nonterminals[a.index()].block = Some(BlockInfo {
            name,
            location: name,
            relative: false,
            doc: None,
            mass,
        });
    }
    g
}

pub fn loc(start: usize, end: usize) -> Location {
    Location::new(FileId(0), Span::new(start, end))
}

/// Pearson's chi-square statistic of observed counts against expected ones.
pub fn chi_square(observed: &[f64], expected: &[f64]) -> f64 {
    observed
        .iter()
        .zip(expected)
        .map(|(o, e)| (o - e) * (o - e) / e)
        .sum()
}
