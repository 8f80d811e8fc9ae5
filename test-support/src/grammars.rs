//! Small grammars that several test suites use, each with its source or
//! its hand-worked numbers, and the writer of grammars given as rule lists.

use std::fmt::Display;

/// A small harbour grammar: every sentence has one tree, e.g. "ferries
/// sail" with 0.6 · 1/2 · 0.75 = 0.225 (worked by hand).
pub const HARBOUR: &str = "start S
S {
  0.6  NP VP
  0.4  VP
}
NP { 1/2 \"ferries\" | 1/2 \"boats\" }
VP { 0.75 \"sail\" | 0.25 \"sink\" }
";

/// The PCFG of Manning & Schütze, *Foundations of Statistical Natural
/// Language Processing* (1999), ch. 11, "astronomers saw stars with ears".
/// Rules, probabilities and results are recalled from memory: the two
/// parses have probabilities 0.0009072 (PP attached to the object NP) and
/// 0.0006804 (PP attached to the VP); P(sentence) = 0.0015876.
pub const ASTRONOMERS: &str = "start S
S { NP VP }
PP { P NP }
VP { 0.7 V NP | 0.3 VP PP }
P { \"with\" }
V { \"saw\" }
NP { 0.4 NP PP | 0.1 \"astronomers\" | 0.18 \"ears\" | 0.04 \"saw\" | 0.18 \"stars\" | 0.1 \"telescopes\" }
";

/// A greenhouse voice grammar on which a narrow beam matters, worked by
/// hand (a tree's probability is the product of its rules'):
///
/// * "water fern" has two trees, (Command "water" (Bed "fern")) with
///   6/10 · 2/5 = 0.24 and (Command "water" (Plant "fern")) with
///   1/10 · 9/10 = 0.09; P(sentence) = 0.33. Over "fern", Plant (9/10)
///   outranks Bed (2/5) by ln(9/4) ≈ 0.81, so keeping one symbol per span,
///   or a beam of 0.5, drops Bed and the best tree: the pruned parse finds
///   the one tree of 0.09.
/// * "water ivy" has the one tree (Command "water" (Plant "ivy")) with
///   1/10 · 1/10 = 0.01. Over "ivy", Zone (1/2) outranks Command (3/10 ·
///   1/2 = 0.15, through Zone) and Plant (1/10), so the same beams keep
///   Zone alone, which no tree of two words uses: no tree survives, and
///   the beam is given up for that sentence.
pub const GREENHOUSE_BEAM: &str = "start Command
Command {
  1/10  \"water\" Plant
  6/10  \"water\" Bed
  3/10  Zone
}
Plant { 9/10 \"fern\" | 1/10 \"ivy\" }
Bed { 2/5 \"fern\" | 3/5 \"gravel\" }
Zone { 1/2 \"north\" | 1/2 \"ivy\" }
";

/// The grammar-language text of `(lhs, rhs, weight)` triples: one block per
/// left-hand side (in order of first appearance); the right-hand side is
/// written as in the language (terminals in double quotes). Weights are
/// written with `Display`: exact probabilities as text (`0.4`, `1/3`,
/// `25%`), or floats, which print as the shortest decimal that round-trips
/// (so the model's `p` is the same float).
pub fn grammar_text<W: Display>(start: &str, rules: &[(&str, &str, W)]) -> String {
    let mut order: Vec<&str> = Vec::new();
    for (lhs, _, _) in rules {
        if !order.contains(lhs) {
            order.push(lhs);
        }
    }
    let mut text = format!("start {start}\n");
    for lhs in order {
        text.push_str(&format!("\n{lhs} {{\n"));
        for (l, rhs, weight) in rules {
            if *l == lhs {
                text.push_str(&format!("  {weight}  {rhs}\n"));
            }
        }
        text.push_str("}\n");
    }
    text
}

/// The first `n` primes, by trial division.
pub fn primes(n: usize) -> Vec<u64> {
    let mut out: Vec<u64> = Vec::with_capacity(n);
    let mut k = 2u64;
    while out.len() < n {
        if out
            .iter()
            .take_while(|&&p| p * p <= k)
            .all(|&p| !k.is_multiple_of(p))
        {
            out.push(k);
        }
        k += 1;
    }
    out
}

/// A grammar whose one block `Call` has `n` alternatives weighted `1/p`
/// over the first `n` primes: the exact sum's denominator is the product
/// of them all (about 23,000 bits for 1,000 primes), hostile to exact
/// arithmetic.
pub fn prime_reciprocals(n: usize) -> String {
    let mut text = String::from("grammar harbour\nstart Call\nCall {\n");
    for p in primes(n) {
        text.push_str(&format!("  1/{p} \"ahoy\"\n"));
    }
    text.push_str("}\n");
    text
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn rule_lists_become_one_block_per_left_hand_side_in_order_of_appearance() {
        let text = grammar_text(
            "S",
            &[
                ("S", "A", "1/2"),
                ("A", "\"a\"", "1"),
                ("S", "\"s\"", "1/2"),
            ],
        );
        assert_eq!(
            text,
            "start S\n\nS {\n  1/2  A\n  1/2  \"s\"\n}\n\nA {\n  1  \"a\"\n}\n"
        );
    }

    #[test]
    fn float_weights_are_written_so_that_they_read_back_as_the_same_float() {
        let p = 0.1 + 0.2;
        let text = grammar_text("S", &[("S", "\"a\"", p), ("S", "\"b\"", 1.0 - p)]);
        let written: f64 = text
            .lines()
            .nth(3)
            .unwrap()
            .split_whitespace()
            .next()
            .unwrap()
            .parse()
            .unwrap();
        assert_eq!(written, p);
    }

    #[test]
    fn the_shared_grammars_analyse_without_findings() {
        for text in [HARBOUR, ASTRONOMERS] {
            let analysis = grammar_lang::analyze_text(text);
            assert!(
                analysis.diagnostics.is_empty(),
                "{text}\n{:?}",
                analysis.diagnostics
            );
        }
    }
}
