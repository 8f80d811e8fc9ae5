//! A parser keeps its chart memory from one parse for the next (arrays and
//! per-cell scratch rows). What is kept must never show: every outcome of
//! a long-lived parser, after any mix of earlier parses — other lengths,
//! beams, counting, k-best, sentences without a tree, parses stopped half
//! way, cells spread over threads — is equal, floats bit for bit, to the
//! outcome of a parser made afresh for that one sentence.

mod parse_support;

use parse_support::*;
use std::cell::Cell;
use trellis_engine::parser::{Beam, ParseError, ParseOptions, Parser, Workers};

/// The options a call uses, chosen by `pick` (a mix of every option the
/// passes depend on).
fn options(pick: usize) -> ParseOptions {
    let beam = match pick % 4 {
        0 => Some(Beam::new(0.5, Some(2)).expect("a valid beam")),
        1 => Some(Beam::new(f64::INFINITY, None).expect("a valid beam")),
        _ => None,
    };
    ParseOptions {
        kbest: [0, 1, 3][pick % 3],
        count_parses: !pick.is_multiple_of(5),
        beam,
        workers: if pick.is_multiple_of(7) {
            Workers::new(Scrambled)
        } else {
            Workers::default()
        },
        ..ParseOptions::default()
    }
}

#[test]
fn a_parser_reused_across_any_mix_of_parses_answers_as_a_fresh_one_does() {
    let mut rng = Rng(0x2E_C7C1E);
    let mut compared = 0;
    let mut stopped = 0;
    for n in 0..12 {
        let cycles = n % 3 == 2;
        let g = random_grammar(&mut rng, 3 + n % 4, cycles);
        let reused = Parser::new(&g).expect("compiles");
        for call in 0..60 {
            let len = 1 + rng.below(9);
            let words: Vec<&str> = (0..len).map(|_| ["a", "b"][rng.below(2)]).collect();
            let options = options(rng.below(420));
            if rng.below(6) == 0 {
                // A parse stopped part way leaves the kept memory behind
                // it as a finished one would.
                let calls = Cell::new(0);
                let fire_at = 1 + rng.below(len * (len + 1));
                let stop = || {
                    calls.set(calls.get() + 1);
                    calls.get() >= fire_at
                };
                match reused.parse_until(&words, &options, &stop) {
                    Err(ParseError::Stopped) => stopped += 1,
                    Ok(_) => {}
                    Err(e) => panic!("{e}"),
                }
                continue;
            }
            let fresh = Parser::new(&g).expect("compiles");
            if call % 4 == 0 {
                let got = reused.best_tree_with(&words, &options, &|| false);
                let want = fresh.best_tree_with(&words, &options, &|| false);
                assert_eq!(
                    got, want,
                    "best tree of {words:?}, grammar {n}, call {call}"
                );
            } else {
                let got = reused.parse(&words, &options).expect("fits");
                let want = fresh.parse(&words, &options).expect("fits");
                assert_eq!(
                    got, want,
                    "{words:?} with {options:?}, grammar {n}, call {call}"
                );
            }
            compared += 1;
        }
    }
    // The seed gives a fixed mix; these guard against a change of the
    // generator quietly making the test compare nothing.
    assert!(compared > 500, "{compared} outcomes compared");
    assert!(stopped > 20, "{stopped} parses stopped");
}
