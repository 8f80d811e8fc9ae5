//! Probabilistic parsing checked against outside references: a textbook
//! worked example, closed forms, and brute-force enumeration of derivations.

mod parse_support;

use num_bigint::BigUint;
use parse_support::*;
use trellis_engine::compile::CompileError;
use trellis_engine::count::Count;
use trellis_engine::parser::{ParseError, ParseOptions, Parser};

fn options(kbest: usize) -> ParseOptions {
    ParseOptions {
        kbest,
        ..ParseOptions::default()
    }
}

#[test]
fn textbook_ambiguous_sentence_has_the_published_tree_and_sentence_probabilities() {
    let parser = Parser::new(&astronomers()).unwrap();
    let out = parser
        .parse(
            &["astronomers", "saw", "stars", "with", "ears"],
            &options(5),
        )
        .unwrap();
    // Manning & Schütze ch. 11 (recalled from memory), see `astronomers`.
    let best = out.best.as_ref().unwrap();
    assert!(
        rel(best.probability, 0.0009072) < 1e-12,
        "{}",
        best.probability
    );
    assert_eq!(
        best.tree.to_treebank(),
        "(S (NP astronomers) (VP (V saw) (NP (NP stars) (PP (P with) (NP ears)))))"
    );
    assert_eq!(out.kbest.len(), 2);
    assert!(rel(out.kbest[0].probability, 0.0009072) < 1e-12);
    assert!(rel(out.kbest[1].probability, 0.0006804) < 1e-12);
    assert_eq!(
        out.kbest[1].tree.to_treebank(),
        "(S (NP astronomers) (VP (VP (V saw) (NP stars)) (PP (P with) (NP ears))))"
    );
    assert!(
        rel(out.sentence_probability, 0.0015876) < 1e-12,
        "{}",
        out.sentence_probability
    );
    assert!(rel(out.sentence_log_probability, 0.0015876f64.ln()) < 1e-12);
    assert_eq!(out.parse_count, Some(Count::Finite(BigUint::from(2u32))));
    assert!(out.explanation.is_none());
}

fn catalan(k: u32) -> BigUint {
    // C(0) = 1, C(m+1) = C(m) · 2(2m+1) / (m+2) (standard identity).
    let mut c = BigUint::from(1u32);
    for m in 0..k {
        c = c * BigUint::from(2 * (2 * m + 1)) / BigUint::from(m + 2);
    }
    c
}

#[test]
fn hundred_word_sentence_matches_the_catalan_closed_form_without_underflow() {
    // S → S S (0.4) | "a" (0.6): a sentence of n words has Catalan(n−1)
    // binary trees, each with probability 0.4^(n−1) · 0.6^n (mathematical
    // identity: the number of full binary trees with n leaves).
    let g = grammar("S", &[("S", "S S", "0.4"), ("S", "\"a\"", "0.6")]);
    let parser = Parser::new(&g).unwrap();
    let n = 100usize;
    let words = vec!["a"; n];
    let out = parser.parse(&words, &options(3)).unwrap();
    let c = catalan(n as u32 - 1);
    assert_eq!(out.parse_count, Some(Count::Finite(c.clone())));
    let tree_log = (n as f64 - 1.0) * 0.4f64.ln() + n as f64 * 0.6f64.ln();
    let c_f64: f64 = c.to_string().parse().unwrap();
    let best = out.best.unwrap();
    assert!(best.log_probability.is_finite());
    assert!(rel(best.log_probability, tree_log) < 1e-12);
    assert!(rel(out.sentence_log_probability, tree_log + c_f64.ln()) < 1e-12);
    assert_eq!(best.tree.words().len(), n);
    assert_eq!(out.kbest.len(), 3);
    for t in &out.kbest {
        assert!(rel(t.log_probability, tree_log) < 1e-12);
    }
}

/// Checks one grammar and sentence against brute-force enumeration;
/// returns the number of trees compared.
fn check_against_enumeration(g: &grammar_lang::Grammar, parser: &Parser, words: &[&str]) -> usize {
    let budget = g.nonterminals.len();
    if count_derivations(g, words, budget) > 2_000 {
        return 0; // enumeration too slow for a unit test; other sentences cover it
    }
    let mut all = all_derivations(g, words, budget);
    let out = parser.parse(words, &options(all.len() + 3)).unwrap();
    let context = format!("sentence {words:?}");
    if all.is_empty() {
        assert!(out.best.is_none(), "{context}");
        assert_eq!(out.sentence_probability, 0.0, "{context}");
        assert_eq!(out.parse_count, Some(Count::zero()), "{context}");
        assert!(out.explanation.is_some(), "{context}");
        return 0;
    }
    let sum: f64 = all.iter().map(|(_, p)| p).sum();
    let max = all.iter().map(|(_, p)| *p).fold(0.0, f64::max);
    assert!(
        rel(out.sentence_probability, sum) < 1e-12,
        "{context}: {} vs {sum}",
        out.sentence_probability
    );
    let best = out.best.as_ref().unwrap();
    assert!(rel(best.probability, max) < 1e-12, "{context}");
    assert!(
        all.iter()
            .any(|(t, p)| *t == best.tree && rel(*p, max) < 1e-12),
        "{context}: best tree {} is not a most probable derivation",
        best.tree
    );
    assert_eq!(
        out.parse_count,
        Some(Count::Finite(BigUint::from(all.len()))),
        "{context}"
    );
    // Binarization keeps the distribution: the k-best list with k above the
    // number of trees lists every tree of the user's grammar exactly once,
    // with the probability the user's rules give it.
    assert_eq!(out.kbest.len(), all.len(), "{context}");
    for w in out.kbest.windows(2) {
        assert!(
            w[0].probability >= w[1].probability * (1.0 - 1e-12),
            "{context}: k-best out of order"
        );
    }
    let mut got: Vec<(String, f64)> = out
        .kbest
        .iter()
        .map(|t| (t.tree.to_brackets(), t.probability))
        .collect();
    got.sort_by(|a, b| a.0.cmp(&b.0).then(a.1.total_cmp(&b.1)));
    all.sort_by(|a, b| {
        a.0.to_brackets()
            .cmp(&b.0.to_brackets())
            .then(a.1.total_cmp(&b.1))
    });
    for ((gt, gp), (et, ep)) in got.iter().zip(&all) {
        assert_eq!(gt, &et.to_brackets(), "{context}");
        assert!(
            rel(*gp, *ep) < 1e-12,
            "{context}: {gt} has {gp}, expected {ep}"
        );
    }
    all.len()
}

#[test]
fn random_grammars_agree_with_brute_force_enumeration_of_every_derivation() {
    // Brute force (every derivation enumerated from the rules' definition)
    // is the reference for inside (sum), Viterbi (max), the parse count and
    // the full k-best list.
    let mut rng = Rng(0x007e_1115);
    let (mut ambiguous, mut trees) = (0, 0);
    for round in 0..40 {
        let nts = 2 + round % 3;
        let g = random_grammar(&mut rng, nts, false);
        let parser = Parser::new(&g).unwrap();
        for words in all_sentences(4) {
            let compared = check_against_enumeration(&g, &parser, &words);
            trees += compared;
            ambiguous += usize::from(compared > 1);
        }
    }
    assert!(
        ambiguous > 100 && trees > 2_000,
        "too little coverage: {ambiguous} ambiguous sentences, {trees} trees"
    );
}

#[test]
fn random_grammars_with_unary_cycles_agree_with_series_and_bounded_enumeration() {
    // Inside: fixed-point iteration of the inside equations (the series
    // Σ Uᵏ summed term by term). Viterbi: the best derivation never repeats a
    // unary cycle (each has product < 1), so enumeration with chains of at
    // most |N| steps contains it. Count: infinite exactly when allowing
    // longer chains (2|N| → 4|N| steps) adds derivations (a usable cycle).
    let mut rng = Rng(0xc1c1e);
    let mut cyclic_seen = 0;
    for round in 0..30 {
        let nts = 2 + round % 2;
        let g = random_grammar(&mut rng, nts, true);
        let parser = match Parser::new(&g) {
            Ok(p) => p,
            Err(e) => panic!("random grammar refused: {e}"),
        };
        for words in all_sentences(3) {
            let context = format!("round {round}, sentence {words:?}");
            let out = parser.parse(&words, &options(2)).unwrap();
            let reference = inside_by_iteration(&g, &words);
            if reference == 0.0 {
                assert!(out.best.is_none(), "{context}");
                continue;
            }
            assert!(
                rel(out.sentence_probability, reference) < 1e-12,
                "{context}: {} vs {reference}",
                out.sentence_probability
            );
            let n = g.nonterminals.len();
            let bounded = all_derivations(&g, &words, n);
            let max = bounded.iter().map(|(_, p)| *p).fold(0.0, f64::max);
            assert!(
                rel(out.best.as_ref().unwrap().probability, max) < 1e-12,
                "{context}"
            );
            let c2 = count_derivations(&g, &words, 2 * n);
            let c4 = count_derivations(&g, &words, 4 * n);
            match out.parse_count.as_ref().unwrap() {
                Count::Infinite => {
                    cyclic_seen += 1;
                    assert!(
                        c4 > c2,
                        "{context}: reported infinite but no cycle is usable"
                    );
                }
                Count::Finite(c) => {
                    assert_eq!(c4, c2, "{context}");
                    assert_eq!(c, &BigUint::from(c2), "{context}");
                }
            }
            // The two best: a derivation with a chain over 2|N| steps has
            // two strictly more probable ones (cut out cycles), so the top 2
            // lie inside the 2|N| bound.
            if c2 > 20_000 {
                continue; // too many to enumerate quickly; the other checks ran
            }
            let mut top: Vec<f64> = all_derivations(&g, &words, 2 * n)
                .iter()
                .map(|(_, p)| *p)
                .collect();
            top.sort_by(|a, b| b.total_cmp(a));
            assert_eq!(out.kbest.len(), top.len().min(2), "{context}");
            for (got, want) in out.kbest.iter().zip(&top) {
                assert!(rel(got.probability, *want) < 1e-12, "{context}");
            }
        }
    }
    assert!(
        cyclic_seen > 0,
        "the generator produced no usable unary cycle"
    );
}

#[test]
fn unary_self_loop_sums_as_a_geometric_series_and_has_infinitely_many_parses() {
    // A → A (1/2) | "a" (1/2): P("a") = Σ_k (1/2)^k · 1/2 = 1 (geometric series).
    let g = grammar("A", &[("A", "A", "1/2"), ("A", "\"a\"", "1/2")]);
    let parser = Parser::new(&g).unwrap();
    let out = parser.parse(&["a"], &options(3)).unwrap();
    assert!(rel(out.sentence_probability, 1.0) < 1e-12);
    assert_eq!(out.parse_count, Some(Count::Infinite));
    let best = out.best.unwrap();
    assert_eq!(best.tree.to_brackets(), r#"(A "a")"#);
    assert!(rel(best.probability, 0.5) < 1e-12);
    let probs: Vec<f64> = out.kbest.iter().map(|t| t.probability).collect();
    assert_eq!(out.kbest[2].tree.to_brackets(), r#"(A (A (A "a")))"#);
    for (got, want) in probs.iter().zip([0.5, 0.25, 0.125]) {
        assert!(rel(*got, want) < 1e-12);
    }
}

#[test]
fn unary_cycles_whose_probability_does_not_shrink_are_refused() {
    let certain = grammar_with_errors("S", &[("S", "A", "1"), ("A", "B", "1"), ("B", "A", "1")]);
    match Parser::new(&certain) {
        Err(CompileError::UnaryCycle { symbols, rules }) => {
            assert_eq!(symbols, vec!["A", "B"]);
            assert_eq!(rules.len(), 2);
        }
        other => panic!("expected a unary-cycle error, got {other:?}"),
    }
    // Every single cycle here is below 1 (A→A 1/2, A→B→A 1/2), yet together
    // they sum to 1: spectral radius 1, the series diverges.
    let together = grammar_with_errors(
        "A",
        &[("A", "A", "1/2"), ("A", "B", "1/2"), ("B", "A", "1")],
    );
    let err = Parser::new(&together).unwrap_err();
    assert!(err.to_string().contains("A, B"), "{err}");
}

#[test]
fn grammar_without_start_symbol_is_refused() {
    let mut g = grammar("S", &[("S", "\"a\"", "1")]);
    g.start = None;
    assert_eq!(Parser::new(&g).unwrap_err(), CompileError::NoStart);
}

#[test]
fn empty_sentence_and_oversized_chart_are_errors_not_allocations() {
    let parser = Parser::new(&astronomers()).unwrap();
    let empty: [&str; 0] = [];
    assert_eq!(
        parser.parse(&empty, &options(1)).unwrap_err(),
        ParseError::EmptySentence
    );
    let long = vec!["stars"; 10_000];
    match parser.parse(&long, &options(1)) {
        Err(ParseError::ChartTooLarge {
            words,
            needed_bytes,
            limit_bytes,
        }) => {
            assert_eq!(words, 10_000);
            assert!(needed_bytes > limit_bytes);
        }
        other => panic!("expected the chart to be refused, got {other:?}"),
    }
    let tight = ParseOptions {
        max_chart_bytes: 1000,
        ..options(1)
    };
    let err = parser
        .parse(&["astronomers", "saw", "stars", "with", "ears"], &tight)
        .unwrap_err();
    assert!(err.to_string().contains("limit"), "{err}");
}

#[test]
fn trees_show_the_users_rules_long_mixed_rules_and_every_unary_step() {
    let g = grammar(
        "Request",
        &[
            ("Request", "Ticket", "1"),
            ("Ticket", "Count Kind \"ticket\" \"to\" Place", "1/2"),
            ("Ticket", "Kind \"ticket\" \"to\" Place", "1/2"),
            ("Count", "\"one\"", "1"),
            ("Kind", "\"return\"", "1"),
            ("Place", "Island", "1"),
            ("Island", "\"skerrow\"", "1"),
        ],
    );
    let parser = Parser::new(&g).unwrap();
    let out = parser
        .parse_line("one return ticket to skerrow", &options(1))
        .unwrap();
    let best = out.best.unwrap();
    assert_eq!(
        best.tree.to_brackets(),
        r#"(Request (Ticket (Count "one") (Kind "return") "ticket" "to" (Place (Island "skerrow"))))"#
    );
    assert!(rel(best.probability, 0.5) < 1e-12);
    // Both Ticket rules end in `"ticket" "to" Place`: the intermediates for
    // that suffix are shared (⟨"ticket" "to" Place⟩, ⟨"to" Place⟩ and
    // ⟨Kind "ticket" "to" Place⟩ — three, not five).
    let c = parser.compiled();
    let intermediates = (0..c.symbol_count() as u32)
        .filter(|&s| c.kind(s) == trellis_engine::compile::SymKind::Intermediate)
        .count();
    assert_eq!(intermediates, 3);
}

#[test]
fn left_child_with_many_rules_uses_indexed_lookup_and_still_matches_enumeration() {
    // `A` is the left child of 14 rules, so the chart does not scan them
    // all: it intersects A's right children with the right cell's symbols
    // (bit masks), or looks up the single pair when the right cell holds one
    // symbol; `S → S S` keeps the plain scan in use too. Brute-force
    // enumeration is the reference, as above.
    let names: Vec<String> = (0..12).map(|k| format!("X{k}")).collect();
    let mut rules: Vec<(&str, String, &str)> = Vec::new();
    for name in &names {
        rules.push(("S", format!("A {name}"), "1/14"));
    }
    rules.push(("S", "S S".to_string(), "1/14"));
    // A right cell holding Z alone: looked up as a single (A, Z) pair.
    rules.push(("S", "A Z".to_string(), "1/14"));
    rules.push(("Z", "\"z\"".to_string(), "1"));
    rules.push(("A", "\"a\"".to_string(), "1/2"));
    rules.push(("A", "A A".to_string(), "1/2"));
    for (k, name) in names.iter().enumerate() {
        let word = if k % 2 == 0 { "\"x\"" } else { "\"y\"" };
        if k < 3 {
            rules.push((name, word.to_string(), "2/3"));
            rules.push((name, "\"a\"".to_string(), "1/3"));
        } else {
            rules.push((name, word.to_string(), "1"));
        }
    }
    let triples: Vec<(&str, &str, &str)> =
        rules.iter().map(|(l, r, w)| (*l, r.as_str(), *w)).collect();
    let g = grammar("S", &triples);
    let parser = Parser::new(&g).unwrap();
    let vocabulary = ["a", "x", "y", "z"];
    let mut compared = 0;
    for len in 1..=4u32 {
        for code in 0..4usize.pow(len) {
            let words: Vec<&str> = (0..len)
                .map(|d| vocabulary[code / 4usize.pow(d) % 4])
                .collect();
            compared += check_against_enumeration(&g, &parser, &words);
        }
    }
    assert!(compared > 300, "only {compared} trees compared");
}

#[test]
fn counts_stay_exact_where_they_outgrow_machine_integers() {
    // S → S S | "a": n words have Catalan(n − 1) parses (the Catalan
    // numbers count the binary bracketings of n leaves; OEIS A000108),
    // computed here by the closed form C(m) = (2m)! / (m! (m + 1)!) in big
    // integers. Catalan(31) ≈ 1.5e16 is the first past 2⁵³, where the
    // inside pass hands counting over to the counting pass; Catalan(36) ≈
    // 1.1e19 still fits 64 bits, Catalan(37) ≈ 4.2e19 does not, and
    // Catalan(67) ≈ 1.1e38 is past 128 bits' reach of its products: between
    // 30 and 80 words the count changes representation three times, and
    // every count stays exact.
    fn closed_form(m: u32) -> BigUint {
        let factorial = |n: u32| (1..=n).fold(BigUint::from(1u32), |f, k| f * BigUint::from(k));
        factorial(2 * m) / (factorial(m) * factorial(m + 1))
    }
    let g = grammar("S", &[("S", "S S", "0.4"), ("S", "\"a\"", "0.6")]);
    let parser = Parser::new(&g).unwrap();
    let no_trees = ParseOptions {
        kbest: 0,
        ..options(1)
    };
    for n in 30..=80u32 {
        let words = vec!["a"; n as usize];
        let out = parser.parse(&words, &no_trees).unwrap();
        assert_eq!(
            out.parse_count,
            Some(Count::Finite(closed_form(n - 1))),
            "{n} words"
        );
    }
    assert!(closed_form(36) < BigUint::from(u64::MAX));
    assert!(closed_form(37) > BigUint::from(u64::MAX));
}

#[test]
fn an_infinite_count_stays_infinite_where_the_finite_ones_overflow() {
    // S → S (1/4) | X (3/4), X → X X | "a": every S is infinitely
    // ambiguous (the self-loop repeats any number of times) while the X
    // counts (Catalan numbers) outgrow 64 and 128 bits on the way up.
    let g = grammar(
        "S",
        &[
            ("S", "S", "1/4"),
            ("S", "X", "3/4"),
            ("X", "X X", "1/2"),
            ("X", "\"a\"", "1/2"),
        ],
    );
    let parser = Parser::new(&g).unwrap();
    for n in [1usize, 37, 80] {
        let out = parser.parse(&vec!["a"; n], &options(0)).unwrap();
        assert_eq!(out.parse_count, Some(Count::Infinite), "{n} words");
    }
}

#[test]
fn kbest_on_random_grammars_with_unary_cycles_matches_bounded_enumeration() {
    // The lazy k-best produces each symbol's derivations in a cell through
    // the unary rules, cycles included. Reference: enumeration with unary
    // chains of at most (k + 1)·|N| steps. A derivation with a longer chain
    // has at least k strictly more probable ones (cut out its cycles one
    // after another: each cycle has probability below 1), so the k best lie
    // within the bound.
    let k = 4;
    let mut rng = Rng(0x1a2b);
    let mut compared = 0;
    for round in 0..30 {
        let nts = 2 + round % 2;
        let g = random_grammar(&mut rng, nts, true);
        let parser = Parser::new(&g).unwrap();
        let bound = (k + 1) * g.nonterminals.len();
        for words in all_sentences(2) {
            if count_derivations(&g, &words, bound) > 3_000 {
                continue; // too many to enumerate quickly; other sentences cover it
            }
            let mut top: Vec<(String, f64)> = all_derivations(&g, &words, bound)
                .into_iter()
                .map(|(t, p)| (t.to_brackets(), p))
                .collect();
            top.sort_by(|a, b| b.1.total_cmp(&a.1));
            let out = parser.parse(&words, &options(k)).unwrap();
            let context = format!("round {round}, sentence {words:?}");
            assert_eq!(out.kbest.len(), top.len().min(k), "{context}");
            for (rank, (got, want)) in out.kbest.iter().zip(&top).enumerate() {
                assert!(
                    rel(got.probability, want.1) < 1e-12,
                    "{context}: rank {rank}: {} vs {}",
                    got.probability,
                    want.1
                );
                // The tree is one the enumeration has, with that probability.
                let brackets = got.tree.to_brackets();
                assert!(
                    top.iter()
                        .any(|(t, p)| *t == brackets && rel(*p, got.probability) < 1e-12),
                    "{context}: {brackets} is not a derivation of probability {}",
                    got.probability
                );
                compared += 1;
            }
            // No derivation twice: a tree shows up at most as often as the
            // enumeration has it (twice when two equal rules make it).
            for t in &out.kbest {
                let brackets = t.tree.to_brackets();
                let got = out
                    .kbest
                    .iter()
                    .filter(|u| u.tree.to_brackets() == brackets)
                    .count();
                let have = top.iter().filter(|(u, _)| *u == brackets).count();
                assert!(got <= have, "{context}: {brackets} {got} times");
            }
        }
    }
    assert!(compared > 150, "only {compared} trees compared");
}
