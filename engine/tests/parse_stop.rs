//! Stopping a parse: every chart pass asks the caller's stop condition once
//! per cell and gives up at once with `ParseError::Stopped`. The stop
//! conditions here count their calls, so the tests are deterministic (no
//! clocks): the k-th call says stop, and the parse must have asked exactly
//! k times.

mod parse_support;

use parse_support::*;
use std::cell::Cell;
use trellis_engine::parser::{ParseError, ParseOptions, Parser};

/// `S → S S (0.4) | "a" (0.6)`: every split of every span analyses, so
/// every pass does work in every cell.
fn ambiguous() -> Parser {
    Parser::new(&grammar("S", &[("S", "S S", "0.4"), ("S", "\"a\"", "0.6")])).unwrap()
}

/// A stop condition that holds from its `fire_at`-th call on (never when
/// `None`), and how often it was asked.
struct CountingStop {
    calls: Cell<usize>,
    fire_at: Option<usize>,
}

impl CountingStop {
    fn new(fire_at: Option<usize>) -> CountingStop {
        CountingStop {
            calls: Cell::new(0),
            fire_at,
        }
    }

    fn ask(&self) -> bool {
        self.calls.set(self.calls.get() + 1);
        self.fire_at.is_some_and(|k| self.calls.get() >= k)
    }
}

/// Every combination of the optional passes: inside always runs after
/// Viterbi on a sentence that parses; k-best and counting on request.
fn every_pass_combination() -> Vec<ParseOptions> {
    let mut all = Vec::new();
    for kbest in [0, 1, 4] {
        for count_parses in [false, true] {
            all.push(ParseOptions {
                kbest,
                count_parses,
                ..ParseOptions::default()
            });
        }
    }
    all
}

#[test]
fn a_stop_that_never_fires_changes_nothing_and_is_asked_once_per_cell_per_pass() {
    let parser = ambiguous();
    let words = vec!["a"; 12];
    let cells = 12 * 13 / 2;
    for options in every_pass_combination() {
        let stop = CountingStop::new(None);
        let stopped = parser
            .parse_until(&words, &options, &|| stop.ask())
            .unwrap();
        assert_eq!(stopped, parser.parse(&words, &options).unwrap());
        // Viterbi and inside always: once per cell. These counts stay far
        // below 2⁵³, so the inside pass takes them too and counting asks
        // nothing more. The k-best pass (more than one tree asked for) is
        // lazy: it asks once for each cell it visits (a few thousand steps,
        // no more, for these four trees), at least the whole sentence's.
        let passes = 2;
        let calls = stop.calls.get();
        if options.kbest > 1 {
            assert!(
                calls > passes * cells && calls <= (passes + 1) * cells,
                "{options:?}: {calls} calls"
            );
        } else {
            assert_eq!(calls, passes * cells, "{options:?}");
        }
    }
}

#[test]
fn counts_past_two_to_the_53_are_finished_by_a_counting_pass_that_asks_per_cell() {
    // `S → S S | "a"` has Catalan(n − 1) parses of n words (OEIS A000108),
    // computed here exactly: the first span length whose count reaches
    // 2⁵³ is where the inside pass hands counting over.
    let mut catalan: Vec<u128> = vec![1];
    for m in 0..40u128 {
        let next = catalan[m as usize] * 2 * (2 * m + 1) / (m + 2);
        catalan.push(next);
    }
    let n = 40;
    let handover = (1..=n).find(|&len| catalan[len - 1] >= 1 << 53).unwrap();
    assert_eq!(handover, 32, "C(31) is the first Catalan number past 2⁵³");
    // Cells are numbered by span length, then start (`chart::Layout`).
    let first_of_length = |len: usize| (1..len).map(|l| n - l + 1).sum::<usize>();
    let cells = n * (n + 1) / 2;
    let counted_after = cells - first_of_length(handover);
    let parser = ambiguous();
    let words = vec!["a"; n];
    let stop = CountingStop::new(None);
    let out = parser
        .parse_until(&words, &ParseOptions::default(), &|| stop.ask())
        .unwrap();
    assert_eq!(
        out.parse_count
            .and_then(|c| c.finite().map(|v| v.to_string())),
        Some(catalan[n - 1].to_string())
    );
    assert_eq!(stop.calls.get(), 2 * cells + counted_after);
}

#[test]
fn a_stop_that_fires_at_any_check_stops_every_pass_right_there() {
    let parser = ambiguous();
    let words = vec!["a"; 9];
    for options in every_pass_combination() {
        let total = {
            let stop = CountingStop::new(None);
            parser
                .parse_until(&words, &options, &|| stop.ask())
                .unwrap();
            stop.calls.get()
        };
        // Firing at check k, for every k the parse makes: the parse stops
        // without asking again, in whichever pass check k falls.
        for k in 1..=total {
            let stop = CountingStop::new(Some(k));
            let result = parser.parse_until(&words, &options, &|| stop.ask());
            assert_eq!(result, Err(ParseError::Stopped), "{options:?}, check {k}");
            assert_eq!(stop.calls.get(), k, "{options:?}, check {k}");
        }
    }
}

#[test]
fn a_stop_that_fires_stops_the_best_tree_and_a_failed_parse_too() {
    let parser = ambiguous();
    let words = vec!["a"; 30];
    let stop = CountingStop::new(Some(100));
    assert_eq!(
        parser.best_tree_until(&words, u64::MAX, &|| stop.ask()),
        Err(ParseError::Stopped)
    );
    assert_eq!(stop.calls.get(), 100);
    // A sentence that does not parse is stopped in its Viterbi pass.
    let mut unknown = vec!["a"; 30];
    unknown[29] = "b";
    let stop = CountingStop::new(Some(7));
    assert_eq!(
        parser.parse_until(&unknown, &ParseOptions::default(), &|| stop.ask()),
        Err(ParseError::Stopped)
    );
    assert_eq!(stop.calls.get(), 7);
}

#[test]
fn a_stop_that_holds_from_the_start_stops_before_any_cell() {
    let parser = ambiguous();
    let stop = CountingStop::new(Some(1));
    let result = parser.parse_until(&["a", "a"], &ParseOptions::default(), &|| stop.ask());
    assert_eq!(result, Err(ParseError::Stopped));
    assert_eq!(stop.calls.get(), 1);
    assert_eq!(
        ParseError::Stopped.to_string(),
        "the parse was stopped before it finished (it ran out of time or was cancelled)"
    );
}

#[test]
fn a_refusal_caused_by_kbest_says_so_and_how_many_trees_fit() {
    let parser = ambiguous();
    let words = vec!["a"; 40];
    let chart = parser.chart_bytes(
        40,
        &ParseOptions {
            kbest: 500,
            ..ParseOptions::default()
        },
    );
    // The k-best state is budgeted as it grows, against what the chart
    // leaves of the limit: leave it half of what 500 trees need.
    let state = parser.kbest_state_bytes(&words, 500).unwrap();
    let limit = chart + state / 2;
    let options = ParseOptions {
        kbest: 500,
        max_chart_bytes: limit,
        ..ParseOptions::default()
    };
    let fits = match parser.parse(&words, &options) {
        Err(ParseError::KbestTooLarge {
            words: 40,
            kbest: 500,
            fits,
            needed_bytes,
            limit_bytes,
        }) => {
            assert_eq!(limit_bytes, limit);
            assert!(needed_bytes > limit, "{needed_bytes} ≤ {limit}");
            assert!((1..500).contains(&fits), "{fits}");
            fits
        }
        other => panic!("expected the k-best state to be refused, got {other:?}"),
    };
    // The trees it says fit do fit, under the same limit.
    let fitting = ParseOptions {
        kbest: fits,
        ..options.clone()
    };
    assert_eq!(parser.parse(&words, &fitting).unwrap().kbest.len(), fits);
    let message = parser.parse(&words, &options).unwrap_err().to_string();
    assert!(
        message.starts_with("finding the 500 most probable trees of a sentence of 40 words"),
        "{message}"
    );
    assert!(
        message.contains(&format!("so do the {fits} most probable trees")),
        "{message}"
    );
    assert!(
        message.ends_with(&format!("ask for at most {fits} trees or raise the limit")),
        "{message}"
    );
    assert!(!message.contains("shorter"), "{message}");
    // When the chart itself does not fit, the sentence is what is refused.
    let small = ParseOptions {
        max_chart_bytes: chart - 1,
        ..options
    };
    assert!(matches!(
        parser.parse(&words, &small),
        Err(ParseError::ChartTooLarge { words: 40, .. })
    ));
}

#[test]
fn the_kbest_state_grows_with_k_and_the_items_reached_not_with_the_chart() {
    // S → S S | "a": 40 words have Catalan(39) trees and 820 cells. The
    // best few trees reach a small part of the chart; the state grows with
    // k, from a small base.
    let parser = ambiguous();
    let words = vec!["a"; 40];
    let two = parser.kbest_state_bytes(&words, 2).unwrap();
    let ten = parser.kbest_state_bytes(&words, 10).unwrap();
    let hundred = parser.kbest_state_bytes(&words, 100).unwrap();
    assert!(two <= ten && ten <= hundred, "{two} {ten} {hundred}");
    assert!(hundred > ten, "{ten} {hundred}");
    // The old bottom-up lists kept up to k entries for each of the 820
    // items (24 bytes an entry, two lists): 100 trees would have taken
    // 820 · 2 · 24 · 100 bytes at most, the lazy state takes far less.
    assert!(hundred < 820 * 2 * 24 * 100 / 4, "{hundred}");
}

#[test]
fn large_counts_below_the_root_need_no_counting_pass_when_the_root_count_is_small() {
    // X → X X | "a" gives every span of n a's Catalan(n − 1) derivations
    // of X (OEIS A000108), past 2⁵³ from 32 words on; but a sentence that
    // starts with "x" can only be S → "x" T with T right-branching, one
    // parse. The huge X counts take no part in it: the inside pass's
    // capped counts give the root's exactly, and no counting pass runs.
    let parser = Parser::new(&grammar(
        "S",
        &[
            ("S", "\"x\" T", "0.9"),
            ("S", "X X", "0.1"),
            ("T", "\"a\" T", "0.5"),
            ("T", "\"a\"", "0.5"),
            ("X", "X X", "0.3"),
            ("X", "\"a\"", "0.7"),
        ],
    ))
    .unwrap();
    let n = 40;
    let mut words = vec!["a"; n];
    words[0] = "x";
    let stop = CountingStop::new(None);
    let out = parser
        .parse_until(&words, &ParseOptions::default(), &|| stop.ask())
        .unwrap();
    assert_eq!(out.parse_count.map(|c| c.to_string()), Some("1".into()));
    let cells = n * (n + 1) / 2;
    assert_eq!(stop.calls.get(), 2 * cells, "Viterbi and inside only");
    // All a's: S → X X over 40 words has Σ_k C(k−1)·C(39−k) = C(39)
    // parses (the Catalan recurrence), counted past 2⁵³ by the counting
    // pass.
    let words = vec!["a"; n];
    let out = parser.parse(&words, &ParseOptions::default()).unwrap();
    let mut catalan: Vec<u128> = vec![1];
    for m in 0..40u128 {
        catalan.push(catalan[m as usize] * 2 * (2 * m + 1) / (m + 2));
    }
    assert_eq!(
        out.parse_count.map(|c| c.to_string()),
        Some(catalan[39].to_string())
    );
}
