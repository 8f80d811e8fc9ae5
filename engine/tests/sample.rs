//! Sampling: distributions against exact enumeration and closed forms,
//! limits on leaky grammars, and clear errors.

mod consistency_support;

use consistency_support::grammar;
use grammar_lang::model::Sym;
use grammar_lang::tree::Tree;
use grammar_lang::Grammar;
use std::collections::HashMap;
use trellis_engine::consistency::analyze;
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{SampleError, Sampler};
use trellis_test_support::stats::chi_square;

const DRAWS: usize = 100_000;

/// Every sentence of a grammar without recursion with its probability,
/// by exhaustive expansion of the rules (independent of the sampler):
/// the probability of a sentence is the sum over its derivations.
fn enumerate(g: &Grammar, sym: Sym) -> Vec<(Vec<String>, f64)> {
    match sym {
        Sym::T(t) => vec![(vec![g.term_text(t).to_string()], 1.0)],
        Sym::N(a) => {
            let mut out = Vec::new();
            for (_, rule) in g.rules_of(a) {
                let mut partial: Vec<(Vec<String>, f64)> = vec![(Vec::new(), rule.p)];
                for &item in &rule.rhs {
                    let tails = enumerate(g, item);
                    partial = partial
                        .iter()
                        .flat_map(|(w, p)| {
                            tails.iter().map(move |(w2, p2)| {
                                let mut w = w.clone();
                                w.extend(w2.iter().cloned());
                                (w, p * p2)
                            })
                        })
                        .collect();
                }
                out.extend(partial);
            }
            let mut merged: HashMap<Vec<String>, f64> = HashMap::new();
            for (w, p) in out {
                *merged.entry(w).or_default() += p;
            }
            let mut v: Vec<_> = merged.into_iter().collect();
            v.sort_by(|a, b| a.0.cmp(&b.0));
            v
        }
    }
}

#[test]
fn sentence_frequencies_match_exactly_enumerated_probabilities() {
    // An ambiguous grammar: "a b" has three derivations, "b b" and "b a"
    // two or one.
    let g = grammar(
        "S",
        &[
            ("S", "A A", 0.45),
            ("S", r#"A "b""#, 0.25),
            ("S", r#""a" "b""#, 0.2),
            ("S", r#""b""#, 0.1),
            ("A", r#""a""#, 0.7),
            ("A", r#""b""#, 0.3),
        ],
    );
    let start = g.start.unwrap();
    let exact = enumerate(&g, Sym::N(start));
    assert_eq!(exact.len(), 5);
    assert!((exact.iter().map(|e| e.1).sum::<f64>() - 1.0).abs() < 1e-12);

    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(20_240_601);
    let mut counts: HashMap<Vec<String>, f64> = HashMap::new();
    for _ in 0..DRAWS {
        let words = sampler.words(&mut rng, start, 100).unwrap();
        *counts
            .entry(words.iter().map(|w| w.to_string()).collect())
            .or_default() += 1.0;
    }
    assert_eq!(
        counts.len(),
        exact.len(),
        "no sentence outside the language"
    );
    let observed: Vec<f64> = exact.iter().map(|(w, _)| counts[w]).collect();
    let expected: Vec<f64> = exact.iter().map(|(_, p)| p * DRAWS as f64).collect();
    // Pearson's chi-square with 5 categories has 4 degrees of freedom; the
    // critical value at α = 0.001 is 18.467 (standard chi-square table,
    // e.g. NIST/SEMATECH e-Handbook of Statistical Methods, §1.3.6.7.4).
    let stat = chi_square(&observed, &expected);
    assert!(stat < 18.467, "chi-square {stat}");
}

#[test]
fn recursive_sentence_lengths_follow_the_geometric_law() {
    // S → "a" S (0.4) | "b" (0.6): the sentence aⁿb has probability
    // 0.4ⁿ · 0.6 (derived: n recursive choices then the ending one).
    let q = 0.4;
    let g = grammar("S", &[("S", r#""a" S"#, q), ("S", r#""b""#, 1.0 - q)]);
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(7);
    const CELLS: usize = 8; // n = 0..6 and n ≥ 7
    let mut observed = [0.0f64; CELLS];
    let mut sentence = Vec::new();
    for _ in 0..DRAWS {
        sampler
            .sentence_into(&mut rng, start, 10_000, &mut sentence)
            .unwrap();
        let n = sentence.len() - 1;
        observed[n.min(CELLS - 1)] += 1.0;
    }
    let mut expected = [0.0f64; CELLS];
    for (n, e) in expected.iter_mut().enumerate().take(CELLS - 1) {
        *e = q.powi(n as i32) * (1.0 - q) * DRAWS as f64;
    }
    expected[CELLS - 1] = q.powi(CELLS as i32 - 1) * DRAWS as f64;
    // 8 cells → 7 degrees of freedom; critical value at α = 0.001 is
    // 24.322 (same table as above). The tail cell expects 164 counts.
    let stat = chi_square(&observed, &expected);
    assert!(stat < 24.322, "chi-square {stat}");
}

#[test]
fn the_mean_sampled_length_agrees_with_the_computed_expected_length() {
    // S → S S (0.3) | "a" (0.7): expected length (1 − p)/(1 − 2p) = 1.75.
    let g = grammar("S", &[("S", "S S", 0.3), ("S", r#""a""#, 0.7)]);
    let start = g.start.unwrap();
    let report = analyze(&g).unwrap();
    let mu = report.expected_length.unwrap();
    assert!((mu - 1.75).abs() < 1e-12);
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(99);
    let mut sum = 0.0;
    let mut sum_sq = 0.0;
    for _ in 0..DRAWS {
        let n = sampler.sentence(&mut rng, start, 100_000).unwrap().len() as f64;
        sum += n;
        sum_sq += n * n;
    }
    let mean = sum / DRAWS as f64;
    let sd = (sum_sq / DRAWS as f64 - mean * mean).sqrt();
    let se = sd / (DRAWS as f64).sqrt();
    // Central limit theorem: five standard errors (two-sided p ≈ 6e-7).
    assert!(
        (mean - mu).abs() < 5.0 * se,
        "mean {mean}, expected {mu}, se {se}"
    );
}

#[test]
fn a_leaky_grammar_hits_the_limit_instead_of_hanging() {
    // S → S S (0.7) | "a" (0.3) ends with probability 3/7 (Galton–Watson
    // extinction (1 − p)/p); the rest grows until the limit.
    let g = grammar("S", &[("S", "S S", 0.7), ("S", r#""a""#, 0.3)]);
    let start = g.start.unwrap();
    let report = analyze(&g).unwrap();
    assert!(!report.tight);
    assert!((report.leak - (1.0 - 3.0 / 7.0)).abs() < 1e-12);

    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(3);
    let trials = 2_000;
    let mut finished = 0usize;
    for _ in 0..trials {
        match sampler.sentence(&mut rng, start, 10_000) {
            Ok(_) => finished += 1,
            Err(SampleError::LimitExceeded { from, limit }) => {
                assert_eq!((from.as_str(), limit), ("S", 10_000));
            }
            Err(other) => panic!("unexpected error {other}"),
        }
    }
    // A surviving supercritical process passes 10,000 nodes only if it never
    // dies, so the finished share estimates 3/7; binomial standard error
    // √(p(1 − p)/n) ≈ 0.011, five of them allowed.
    let share = finished as f64 / trials as f64;
    let se = (3.0 / 7.0 * (4.0 / 7.0) / trials as f64).sqrt();
    assert!((share - 3.0 / 7.0).abs() < 5.0 * se, "share {share}");
}

#[test]
fn a_very_deep_derivation_does_not_overflow_the_stack() {
    // Right recursion that almost never stops: 300,000 nested rules.
    let g = grammar("S", &[("S", r#""a" S"#, 1.0 - 1e-9), ("S", r#""a""#, 1e-9)]);
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(1);
    let err = sampler.sentence(&mut rng, start, 300_000).unwrap_err();
    assert!(matches!(
        err,
        SampleError::LimitExceeded { limit: 300_000, .. }
    ));
    let err = sampler.derivation(&mut rng, start, 300_000).unwrap_err();
    assert!(
        err.to_string().contains("300000 rule applications"),
        "{err}"
    );
}

#[test]
fn the_same_seed_gives_the_same_sentences() {
    let g = grammar(
        "S",
        &[
            ("S", "S S", 0.3),
            ("S", r#""a""#, 0.4),
            ("S", r#""b""#, 0.3),
        ],
    );
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let run = |seed: u64| -> Vec<String> {
        let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
        (0..200)
            .map(|_| sampler.text(&sampler.sentence(&mut rng, start, 100_000).unwrap()))
            .collect()
    };
    assert_eq!(run(11), run(11));
    assert_ne!(run(11), run(12));
}

/// Checks that every node of `tree` is a rule of `g` with positive
/// probability (iteratively).
fn assert_tree_uses_grammar_rules(g: &Grammar, tree: &Tree) {
    let mut stack = vec![tree];
    while let Some(t) = stack.pop() {
        let Tree::Node { label, children } = t else {
            continue;
        };
        let a = g.nt(label).expect("labels are non-terminals");
        let found = g.rules_of(a).any(|(_, r)| {
            r.p > 0.0
                && r.rhs.len() == children.len()
                && r.rhs.iter().zip(children).all(|(s, c)| match (s, c) {
                    (Sym::T(w), Tree::Leaf(x)) => g.term_text(*w) == x,
                    (Sym::N(b), Tree::Node { label, .. }) => g.nt_name(*b) == label,
                    _ => false,
                })
        });
        assert!(found, "node {label} does not match a rule: {t}");
        stack.extend(children.iter());
    }
}

#[test]
fn trees_follow_the_rules_and_yield_the_sentence_drawn_with_the_same_seed() {
    let g = grammar(
        "S",
        &[
            ("S", "NP VP", 0.8),
            ("S", "VP", 0.2),
            ("NP", r#""we""#, 0.5),
            ("NP", r#""the" N"#, 0.5),
            ("N", r#""ferry""#, 0.6),
            ("N", r#"N "ticket""#, 0.4),
            ("VP", r#""sail""#, 0.7),
            ("VP", r#""book" NP"#, 0.3),
        ],
    );
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    for seed in 0..50 {
        let tree = sampler
            .tree(&mut Xoshiro256StarStar::seed_from_u64(seed), start, 1_000)
            .unwrap();
        assert_eq!(tree.label(), Some("S"));
        assert_tree_uses_grammar_rules(&g, &tree);
        let words = sampler
            .words(&mut Xoshiro256StarStar::seed_from_u64(seed), start, 1_000)
            .unwrap();
        assert_eq!(tree.words(), words);
    }
}

#[test]
fn sampling_can_start_from_any_symbol() {
    let g = grammar(
        "S",
        &[
            ("S", r#"N "please""#, 1.0),
            ("N", r#""one""#, 0.5),
            ("N", r#""two""#, 0.5),
        ],
    );
    let n = g.nt("N").unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(5);
    for _ in 0..20 {
        let words = sampler.words(&mut rng, n, 10).unwrap();
        assert!(words == ["one"] || words == ["two"], "{words:?}");
    }
}

#[test]
fn a_deficient_block_is_sampled_proportionally() {
    // Mass 0.8 = 0.2 + 0.6: drawn as 1/4 and 3/4 (documented choice).
    let g = grammar("S", &[("S", r#""a""#, 0.2), ("S", r#""b""#, 0.6)]);
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    assert_eq!(sampler.rescaled_blocks(), &[start]);
    let mut rng = Xoshiro256StarStar::seed_from_u64(8);
    let a = g.term("a").unwrap();
    let mut count_a = 0.0;
    for _ in 0..DRAWS {
        if sampler.sentence(&mut rng, start, 10).unwrap() == [a] {
            count_a += 1.0;
        }
    }
    let n = DRAWS as f64;
    // 1 degree of freedom: critical value 10.828 at α = 0.001 (same table).
    let stat = chi_square(&[count_a, n - count_a], &[0.25 * n, 0.75 * n]);
    assert!(stat < 10.828, "chi-square {stat}");
}

#[test]
fn undefined_and_unproductive_symbols_are_named_before_sampling() {
    let g = grammar(
        "S",
        &[
            ("S", r#""a""#, 0.5),
            ("S", "T", 0.5),
            ("T", r#"U "b""#, 1.0),
            ("L", r#"L "c""#, 1.0),
            ("Z", r#""z""#, 0.0),
        ],
    );
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(0);
    let err = sampler
        .sentence(&mut rng, g.nt("S").unwrap(), 100)
        .unwrap_err();
    assert_eq!(
        err,
        SampleError::Undefined {
            from: "S".into(),
            symbol: "U".into()
        }
    );
    assert_eq!(
        err.to_string(),
        "cannot sample from `S`: it can reach `U`, which has no block"
    );
    let err = sampler
        .sentence(&mut rng, g.nt("L").unwrap(), 100)
        .unwrap_err();
    assert!(matches!(err, SampleError::Unproductive { ref symbol, .. } if symbol == "L"));
    let err = sampler
        .sentence(&mut rng, g.nt("Z").unwrap(), 100)
        .unwrap_err();
    assert!(matches!(err, SampleError::NoRules { ref symbol, .. } if symbol == "Z"));
}

#[test]
fn a_tree_too_deep_to_print_safely_is_refused_but_its_sentence_is_not() {
    // A chain N0 → "a" N1 → … → "a" N5999 → "a": exactly 6,000 levels, past
    // the tree depth limit (5,000) and within the rule limit.
    let depth = 6_000;
    let rules: Vec<(String, String)> = (0..depth)
        .map(|i| {
            let rhs = if i + 1 < depth {
                format!(r#""a" N{}"#, i + 1)
            } else {
                r#""a""#.to_string()
            };
            (format!("N{i}"), rhs)
        })
        .collect();
    let spec: Vec<(&str, &str, f64)> = rules
        .iter()
        .map(|(a, b)| (a.as_str(), b.as_str(), 1.0))
        .collect();
    let g = grammar("N0", &spec);
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(1);
    let err = sampler.tree(&mut rng, start, 10_000).unwrap_err();
    assert_eq!(
        err,
        SampleError::TreeTooDeep {
            from: "N0".into(),
            limit: trellis_engine::sample::TREE_DEPTH_LIMIT
        }
    );
    let sentence = sampler.sentence(&mut rng, start, 10_000).unwrap();
    assert_eq!(sentence.len(), depth);
}

#[test]
fn a_long_block_with_rare_rules_is_drawn_in_proportion() {
    // Seven alternatives from 0.4 down to 0.001 (alias-table columns mixing
    // large and small rules).
    let probs = [0.4, 0.25, 0.15, 0.1, 0.059, 0.04, 0.001];
    let words = ["a", "b", "c", "d", "e", "f", "g"];
    let spec: Vec<(&str, String, f64)> = words
        .iter()
        .zip(probs)
        .map(|(w, p)| ("S", format!("\"{w}\""), p))
        .collect();
    let spec: Vec<(&str, &str, f64)> = spec.iter().map(|(a, b, p)| (*a, b.as_str(), *p)).collect();
    let g = grammar("S", &spec);
    let start = g.start.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(123);
    let mut observed = [0.0f64; 7];
    for _ in 0..DRAWS {
        let s = sampler.sentence(&mut rng, start, 10).unwrap();
        observed[s[0].index()] += 1.0;
    }
    let expected: Vec<f64> = probs.iter().map(|p| p * DRAWS as f64).collect();
    // 7 cells → 6 degrees of freedom; critical value at α = 0.001 is
    // 22.458 (same table as above). The rarest cell expects 100 counts.
    let stat = chi_square(&observed, &expected);
    assert!(stat < 22.458, "chi-square {stat}");
}
