//! Builds small grammars for the sampling and consistency tests through
//! the real front end (`grammar_lang::analyze_text`).

#![allow(dead_code)]

use grammar_lang::Grammar;

/// The grammar of a `.trellis` text (diagnostics are not the point of these
/// tests: deliberately broken grammars still lower to a model).
pub fn parse(text: &str) -> Grammar {
    grammar_lang::analyze_text(text).grammar
}

/// The text of a grammar given as `(lhs, rhs, p)` triples, one block per
/// left-hand side in order of first appearance, weights written as the
/// shortest decimal that round-trips the float (so the model's `p` is the
/// same float).
pub fn text(start: &str, rules: &[(&str, &str, f64)]) -> String {
    let mut order: Vec<&str> = Vec::new();
    for &(lhs, _, _) in rules {
        if !order.contains(&lhs) {
            order.push(lhs);
        }
    }
    let mut out = format!("start {start}\n");
    for lhs in order {
        out.push_str(&format!("{lhs} {{\n"));
        for &(a, rhs, p) in rules {
            if a == lhs {
                out.push_str(&format!("  {p} {rhs}\n"));
            }
        }
        out.push_str("}\n");
    }
    out
}

/// [`text`] analysed.
pub fn grammar(start: &str, rules: &[(&str, &str, f64)]) -> Grammar {
    parse(&text(start, rules))
}

/// Pearson's chi-square statistic of observed counts against expected ones.
pub fn chi_square(observed: &[f64], expected: &[f64]) -> f64 {
    observed
        .iter()
        .zip(expected)
        .map(|(o, e)| (o - e) * (o - e) / e)
        .sum()
}
