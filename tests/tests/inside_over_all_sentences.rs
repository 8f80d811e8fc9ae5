//! Inside probabilities summed over all sentences.
//!
//! Two identities tie the parser's inside pass to the rest of the engine:
//!
//! * **Length marginals.** Rewriting every word of a grammar to one word
//!   `§` maps each sentence of length n onto `§ⁿ` and each derivation onto
//!   one of the same probability, so P'(`§ⁿ`) in the rewritten grammar is
//!   the sum of P(s) over every sentence s of length n of the original.
//! * **The partition function.** Summed over all lengths, the probability
//!   of the sentences is the probability that a derivation from the start
//!   symbol ends: the least fixed point of the grammar's polynomial system
//!   (computed by `consistency::termination_probabilities`, by Newton's
//!   method), and for S → S S (p) | "a" (1 − p) the Galton–Watson
//!   extinction probability min(1, (1 − p)/p).

use grammar_lang::model::{Grammar, Sym};
use trellis_acceptance::grammar;
use trellis_engine::consistency::termination_probabilities;
use trellis_engine::parser::{ParseOptions, Parser};
use trellis_engine::rng::{RandomSource, SplitMix64};

fn inside_options() -> ParseOptions {
    ParseOptions {
        kbest: 0,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    }
}

/// P(sentence) by the inside pass (0 when it does not parse).
fn inside(parser: &Parser, words: &[&str]) -> f64 {
    parser
        .parse(words, &inside_options())
        .unwrap()
        .sentence_probability
}

/// The grammar with every word replaced by `§`.
fn collapsed(g: &Grammar) -> Grammar {
    let mut out = g.clone();
    let one = out.intern_term("§");
    for rule in &mut out.rules {
        for sym in rule.rhs.iter_mut() {
            if let Sym::T(_) = sym {
                *sym = Sym::T(one);
            }
        }
    }
    out
}

/// A random grammar over non-terminals N0..N{n-1} and the words "a" and
/// "b": every block has a rule of words only (so every symbol is
/// productive) and up to three more rules mixing words and non-terminals;
/// `recursion` is the percent chance that a right-hand-side item is a
/// non-terminal. From 60 up, the words-only rule gets a small share of the
/// weight, so many such grammars branch faster than they end (they leak).
fn random_grammar(rng: &mut SplitMix64, n: usize, recursion: u64) -> Grammar {
    let mut text = String::from("start N0\n");
    for a in 0..n {
        text.push_str(&format!("N{a} relative {{\n"));
        let word = ["\"a\"", "\"b\""][rng.below(2) as usize];
        let weight = if recursion >= 60 { 1 } else { 1 + rng.below(5) };
        text.push_str(&format!("  {weight} {word}\n"));
        for _ in 0..1 + rng.below(3) {
            let items: Vec<String> = (0..1 + rng.below(3))
                .map(|_| {
                    if rng.next_u64() % 100 < recursion {
                        format!("N{}", rng.below(n as u64))
                    } else {
                        ["\"a\"", "\"b\""][rng.below(2) as usize].to_string()
                    }
                })
                .collect();
            // A lone non-terminal could close a unary cycle; keep it binary.
            let rhs = if items.len() == 1 && items[0].starts_with('N') {
                format!("{} \"a\"", items[0])
            } else {
                items.join(" ")
            };
            let weight = if recursion >= 60 {
                8 + rng.below(8)
            } else {
                1 + rng.below(5)
            };
            text.push_str(&format!("  {weight} {rhs}\n"));
        }
        text.push_str("}\n");
    }
    let analysis = grammar_lang::analyze_text(&text);
    // Duplicate alternatives are only warnings; errors would be a bug here.
    assert!(!analysis.has_errors(), "{text}\n{:?}", analysis.diagnostics);
    analysis.grammar
}

/// Every sentence over {a, b} of length `n`.
fn sentences(n: usize) -> Vec<Vec<&'static str>> {
    (0..1u32 << n)
        .map(|bits| {
            (0..n)
                .map(|k| if bits >> k & 1 == 1 { "b" } else { "a" })
                .collect()
        })
        .collect()
}

#[test]
fn summing_inside_over_all_sentences_of_a_length_equals_the_length_marginal() {
    let mut rng = SplitMix64::new(0x1e57_0001);
    let mut nonzero = 0;
    for round in 0..12 {
        let g = random_grammar(&mut rng, 2 + round % 3, 40);
        let parser = Parser::new(&g).unwrap();
        let lengths = Parser::new(&collapsed(&g)).unwrap();
        for n in 1..=7 {
            let total: f64 = sentences(n).iter().map(|s| inside(&parser, s)).sum();
            let marginal = inside(&lengths, &vec!["§"; n]);
            assert!(
                (total - marginal).abs() <= 1e-12 + 1e-9 * marginal,
                "round {round}, length {n}: {total} over all sentences, {marginal} for §^{n}"
            );
            nonzero += usize::from(marginal > 0.0);
        }
    }
    assert!(nonzero > 50, "too few lengths with any sentence: {nonzero}");
}

#[test]
fn inside_probabilities_of_all_lengths_sum_to_the_termination_probability() {
    let mut rng = SplitMix64::new(0x1e57_0002);
    let (mut tight, mut leaky) = (0, 0);
    for round in 0..30 {
        let g = random_grammar(&mut rng, 2 + round % 3, 30 + (round as u64 % 6) * 12);
        let start = g.start.unwrap().index();
        let terminates = termination_probabilities(&g)[start];
        let lengths = Parser::new(&collapsed(&g)).unwrap();
        let mut sum = 0.0;
        let mut tail: f64 = 0.0;
        for n in 1..=50 {
            let p = inside(&lengths, &vec!["§"; n]);
            sum += p;
            if n > 40 {
                tail = tail.max(p);
            }
        }
        // Only grammars whose length distribution has died out by 50
        // words are judged (near-critical ones converge too slowly). The
        // last ten lengths are looked at, as some grammars only make
        // sentences of even (or other periodic) lengths.
        if tail > 1e-14 {
            continue;
        }
        assert!(
            (sum - terminates).abs() < 1e-9,
            "round {round}: sentences sum to {sum}, termination probability {terminates}"
        );
        if terminates > 1.0 - 1e-9 {
            tight += 1;
        } else {
            leaky += 1;
        }
    }
    assert!(
        tight >= 5 && leaky >= 3,
        "coverage: {tight} tight, {leaky} leaky"
    );
}

#[test]
fn binary_branching_sentences_sum_to_the_galton_watson_extinction_probability() {
    // S → S S (p) | "a" (1 − p): a Galton–Watson process with 0 or 2
    // children, whose extinction probability is min(1, (1 − p)/p). The
    // probability of n words falls like (4p(1 − p))ⁿ, below 1e-11 by 60
    // words for these p.
    for (p, q) in [
        ("1/10", 1.0),
        ("1/5", 1.0),
        ("4/5", 0.25),
        ("9/10", 1.0 / 9.0),
    ] {
        let g = grammar(&format!("start S\nS {{ {p} S S | \"a\" }}\n"));
        let parser = Parser::new(&g).unwrap();
        let sum: f64 = (1..=60).map(|n| inside(&parser, &vec!["a"; n])).sum();
        assert!((sum - q).abs() < 1e-9, "p = {p}: {sum} against {q}");
    }
}
