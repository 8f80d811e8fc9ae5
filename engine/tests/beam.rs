//! The optional per-cell beam: a beam that drops nothing gives the exact
//! parse bit for bit; a narrow one gives lower bounds (every surviving tree
//! is a tree of the sentence), and its passes agree with one another on
//! the same set of surviving trees.

mod parse_support;

use num_bigint::BigUint;
use parse_support::*;
use trellis_engine::count::Count;
use trellis_engine::parser::{Beam, ParseOptions, Parser};
use trellis_test_support::grammars::GREENHOUSE_BEAM;

fn options(kbest: usize, beam: Option<Beam>) -> ParseOptions {
    ParseOptions {
        kbest,
        beam,
        ..ParseOptions::default()
    }
}

/// Acyclic and cyclic random grammars over {a, b}, with their parsers.
fn grammars() -> Vec<(Parser, bool)> {
    let mut rng = Rng(0xBEA5);
    let mut out = Vec::new();
    for n in 0..24 {
        let cycles = n % 3 == 2;
        let g = random_grammar(&mut rng, 3 + n % 4, cycles);
        out.push((Parser::new(&g).unwrap(), cycles));
    }
    out
}

#[test]
fn a_beam_that_drops_nothing_gives_the_exact_parse_bit_for_bit() {
    let wide = [
        Beam::new(f64::INFINITY, None).unwrap(),
        Beam::new(1e6, Some(usize::MAX)).unwrap(),
    ];
    let mut compared = 0;
    for (parser, _) in grammars() {
        for words in all_sentences(5) {
            let exact = parser.parse(&words, &options(3, None)).unwrap();
            for beam in wide {
                let out = parser.parse(&words, &options(3, Some(beam))).unwrap();
                // Nothing was dropped, so the outcome says it is exact and is
                // equal in every field, floats included.
                assert_eq!(out, exact, "{words:?} {beam:?}");
                assert!(out.beam.is_none() && out.beam_abandoned.is_none());
                compared += 1;
            }
        }
    }
    assert!(compared > 1000);
}

#[test]
fn a_narrow_beam_gives_lower_bounds_and_keeps_the_best_tree_when_it_survives() {
    let narrow = [
        Beam::new(0.0, None).unwrap(),
        Beam::new(0.7, None).unwrap(),
        Beam::new(2.0, None).unwrap(),
        Beam::new(f64::INFINITY, Some(1)).unwrap(),
        Beam::new(3.0, Some(2)).unwrap(),
    ];
    let (mut pruned, mut best_kept, mut best_lost, mut abandoned) = (0, 0, 0, 0);
    for (parser, _) in grammars() {
        for words in all_sentences(6) {
            let exact = parser.parse(&words, &options(1, None)).unwrap();
            for beam in narrow {
                let out = parser.parse(&words, &options(1, Some(beam))).unwrap();
                // A pruned parse never finds a sentence unparsable (it falls
                // back to the exact parse when no tree survives).
                assert_eq!(out.parsed(), exact.parsed(), "{words:?} {beam:?}");
                if out.beam.is_none() {
                    // Nothing dropped, or every tree dropped and the beam
                    // given up: the exact parse, saying which.
                    let mut as_exact = out.clone();
                    if let Some(given_up) = as_exact.beam_abandoned.take() {
                        assert_eq!(given_up, beam);
                        assert!(out.parsed());
                        abandoned += 1;
                    }
                    assert_eq!(as_exact, exact, "exact: {words:?} {beam:?}");
                    continue;
                }
                assert_eq!(out.beam, Some(beam));
                assert_eq!(out.beam_abandoned, None);
                pruned += 1;
                // Surviving trees are a subset of all trees: each bound
                // below is the sum/max/count over a subset (the definition).
                assert!(
                    out.sentence_log_probability <= exact.sentence_log_probability + 1e-12,
                    "{words:?} {beam:?}: {} > {}",
                    out.sentence_log_probability,
                    exact.sentence_log_probability
                );
                let (b, e) = (out.best.as_ref().unwrap(), exact.best.as_ref().unwrap());
                // Tied trees may differ in the last bit (their rules are
                // summed in different orders).
                assert!(
                    b.log_probability <= e.log_probability + 1e-12 * e.log_probability.abs(),
                    "{words:?} {beam:?}: {} {} > {} {}",
                    b.tree.to_brackets(),
                    b.log_probability,
                    e.tree.to_brackets(),
                    e.log_probability
                );
                if b.tree == e.tree {
                    assert_eq!(b.log_probability.to_bits(), e.log_probability.to_bits());
                    best_kept += 1;
                } else {
                    best_lost += 1;
                }
                match (&out.parse_count, &exact.parse_count) {
                    (Some(Count::Finite(p)), Some(Count::Finite(x))) => assert!(p <= x),
                    (Some(Count::Infinite), Some(c)) => assert!(c.is_infinite()),
                    (Some(_), Some(Count::Infinite)) => {}
                    other => panic!("counts missing: {other:?}"),
                }
            }
        }
    }
    assert!(pruned > 1000, "{pruned}");
    assert!(best_kept > 100 && best_lost > 10, "{best_kept} {best_lost}");
    assert!(abandoned > 10, "{abandoned}");
}

#[test]
fn under_a_beam_inside_count_and_kbest_agree_on_the_surviving_trees() {
    // With an acyclic unary graph there are finitely many trees: listing
    // them all with k-best, their probabilities must sum to the inside
    // probability and their number must be the parse count, pruned or not.
    let narrow = [
        Beam::new(0.5, None).unwrap(),
        Beam::new(1.5, Some(2)).unwrap(),
    ];
    let mut checked = 0;
    for (parser, cycles) in grammars() {
        if cycles {
            continue;
        }
        for words in all_sentences(5) {
            for beam in narrow {
                let out = parser.parse(&words, &options(100_000, Some(beam))).unwrap();
                if out.beam.is_none() || !out.parsed() {
                    continue;
                }
                let Some(Count::Finite(n)) = &out.parse_count else {
                    panic!("acyclic grammars have finite counts");
                };
                assert_eq!(*n, BigUint::from(out.kbest.len()), "{words:?} {beam:?}");
                let sum: f64 = out.kbest.iter().map(|t| t.probability).sum();
                assert!(
                    rel(sum, out.sentence_probability) < 1e-9,
                    "{words:?} {beam:?}: {sum} vs {}",
                    out.sentence_probability
                );
                assert_eq!(out.kbest[0].tree, out.best.as_ref().unwrap().tree);
                checked += 1;
            }
        }
    }
    assert!(checked > 50, "{checked}");
}

#[test]
fn a_beam_prunes_symbols_not_derivations_so_the_textbook_ambiguity_survives_one_symbol_per_cell() {
    // Manning & Schütze ch. 11 (recalled from memory; see `astronomers`):
    // both trees of the sentence put a VP over "saw stars with ears" and
    // differ only inside it, so keeping one symbol per cell drops other
    // symbols but neither tree: the results are the exact ones, marked as
    // computed under the beam.
    let parser = Parser::new(&astronomers()).unwrap();
    let words = ["astronomers", "saw", "stars", "with", "ears"];
    let exact = parser.parse(&words, &options(5, None)).unwrap();
    let beam = Beam::new(f64::INFINITY, Some(1)).unwrap();
    let out = parser.parse(&words, &options(5, Some(beam))).unwrap();
    assert_eq!(out.beam, Some(beam), "some cell held two symbols");
    assert_eq!(out.kbest.len(), 2);
    assert!(rel(out.sentence_probability, 0.0015876) < 1e-12);
    assert_eq!(out.kbest, exact.kbest);
    assert_eq!(out.parse_count, exact.parse_count);
}

fn greenhouse() -> Parser {
    let analysis = grammar_lang::analyze_text(GREENHOUSE_BEAM);
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    Parser::new(&analysis.grammar).unwrap()
}

#[test]
fn a_beam_that_drops_the_best_tree_says_so_and_gives_the_surviving_tree() {
    // Hand-worked numbers with `GREENHOUSE_BEAM`: "water fern" has trees of
    // 0.24 (through Bed) and 0.09 (through Plant); both beams drop Bed.
    let parser = greenhouse();
    let words = ["water", "fern"];
    let exact = parser.parse(&words, &options(2, None)).unwrap();
    assert!(rel(exact.sentence_probability, 0.33) < 1e-12);
    assert!(rel(exact.best.as_ref().unwrap().probability, 0.24) < 1e-12);
    for beam in [
        Beam::new(0.5, None).unwrap(),
        Beam::new(f64::INFINITY, Some(1)).unwrap(),
    ] {
        let out = parser.parse(&words, &options(2, Some(beam))).unwrap();
        assert_eq!(out.beam, Some(beam));
        assert_eq!(out.beam_abandoned, None);
        let best = out.best.as_ref().unwrap();
        assert_eq!(
            best.tree.to_brackets(),
            r#"(Command "water" (Plant "fern"))"#
        );
        assert!(rel(best.probability, 0.09) < 1e-12);
        assert!(rel(out.sentence_probability, 0.09) < 1e-12);
        assert_eq!(out.kbest.len(), 1);
        assert_eq!(out.parse_count, Some(Count::Finite(BigUint::from(1u32))));
    }
}

#[test]
fn a_beam_that_drops_every_tree_is_given_up_and_the_parse_is_exact() {
    // Hand-worked numbers with `GREENHOUSE_BEAM`: over "ivy" both beams keep
    // only Zone, so no tree of "water ivy" survives; its one exact tree has
    // 1/10 · 1/10 = 0.01.
    let parser = greenhouse();
    let words = ["water", "ivy"];
    let exact = parser.parse(&words, &options(2, None)).unwrap();
    assert_eq!(exact.beam_abandoned, None);
    for beam in [
        Beam::new(0.5, None).unwrap(),
        Beam::new(f64::INFINITY, Some(1)).unwrap(),
    ] {
        let out = parser.parse(&words, &options(2, Some(beam))).unwrap();
        assert_eq!(out.beam, None, "the results are exact");
        assert_eq!(out.beam_abandoned, Some(beam));
        assert!(rel(out.sentence_probability, 0.01) < 1e-12);
        // Apart from saying so, the exact parse, bit for bit.
        let mut plain = out.clone();
        plain.beam_abandoned = None;
        assert_eq!(plain, exact);
    }
    // A sentence without any tree is not parsed, beam or no beam: nothing
    // was given up.
    let out = parser
        .parse(
            &["ivy", "water"],
            &options(1, Some(Beam::new(0.0, Some(1)).unwrap())),
        )
        .unwrap();
    assert!(!out.parsed());
    assert_eq!((out.beam, out.beam_abandoned), (None, None));
}
