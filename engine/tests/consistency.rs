//! Consistency analysis against closed forms and classical results.

mod consistency_support;

use consistency_support::{grammar, parse};
use grammar_lang::Code;
use trellis_engine::consistency::{analyze, leaky_diagnostic, LeakCause, Regime};

/// S → S S (p) | "a" (1 − p).
fn binary(p: f64) -> grammar_lang::Grammar {
    grammar("S", &[("S", "S S", p), ("S", r#""a""#, 1.0 - p)])
}

const LEAKY: &str = r#"
grammar leaky_example
start S

## Splits more often than it stops.
S {
  0.7  S S
  0.3  "a"
}
"#;

#[test]
fn binary_branching_terminates_with_the_galton_watson_extinction_probability() {
    // A derivation from S is a Galton–Watson process with 0 or 2 children;
    // its extinction probability is the least root of x = p x² + (1 − p),
    // i.e. min(1, (1 − p)/p) (classical branching-process result, e.g.
    // Harris, "The Theory of Branching Processes", 1963).
    for (p, expected, tolerance) in [
        (1.0 / 3.0, 1.0, 1e-12),
        // p = 1/2 is critical: x = 1 is a double root, Newton converges only
        // linearly there and f(x) − x ≈ (1 − x)²/2 vanishes below rounding
        // once 1 − x ≈ 1e-8 (square root of machine epsilon), so 1e-6 is the
        // honest accuracy.
        (0.5, 1.0, 1e-6),
        (2.0 / 3.0, 0.5, 1e-12),
        (0.7, 3.0 / 7.0, 1e-12),
    ] {
        let report = analyze(&binary(p)).unwrap();
        let x = report.symbols[0].termination_probability;
        assert!(
            (x - expected).abs() < tolerance,
            "p = {p}: termination {x}, expected {expected}"
        );
        assert!((report.leak - (1.0 - expected)).abs() < tolerance);
    }
}

#[test]
fn the_spectral_radius_of_binary_branching_is_twice_the_branching_probability() {
    // M = [2p]: each use of S → S S makes two S (Booth & Thompson 1973).
    let sub = analyze(&binary(0.3)).unwrap();
    assert!((sub.spectral_radius - 0.6).abs() < 1e-12);
    assert_eq!(sub.regime, Regime::Subcritical);
    assert!(sub.tight);

    let critical = analyze(&binary(0.5)).unwrap();
    assert_eq!(critical.regime, Regime::Critical);
    assert!(
        critical.tight,
        "a critical branching process still dies out"
    );
    assert_eq!(
        critical.expected_length, None,
        "but its expected size is infinite"
    );
    assert_eq!(critical.symbols[0].expected_uses, None);

    let super_ = analyze(&binary(0.7)).unwrap();
    assert!((super_.spectral_radius - 1.4).abs() < 1e-12);
    assert_eq!(super_.regime, Regime::Supercritical);
}

#[test]
fn right_recursion_has_geometric_expected_length() {
    // S → "a" S (q) | "a" (1 − q): the number of words N is geometric on
    // {1, 2, …} with success 1 − q, so E[N] = 1/(1 − q) (derived: E = 1 + qE);
    // every rule application emits one word, so the derivation size is the
    // same; the recursive rule is used E − 1 = q/(1 − q) times on average.
    for q in [0.25, 0.9] {
        let g = grammar("S", &[("S", r#""a" S"#, q), ("S", r#""a""#, 1.0 - q)]);
        let report = analyze(&g).unwrap();
        let expected = 1.0 / (1.0 - q);
        assert!((report.expected_length.unwrap() - expected).abs() < 1e-12);
        assert!((report.expected_derivation_size.unwrap() - expected).abs() < 1e-12);
        assert!((report.rule_expected_uses[0].unwrap() - q / (1.0 - q)).abs() < 1e-12);
        assert!((report.rule_expected_uses[1].unwrap() - 1.0).abs() < 1e-12);
    }
}

#[test]
fn subcritical_binary_branching_has_the_closed_form_moments() {
    // S → S S (p) | "a" (1 − p), p < 1/2. Length: E = 2pE + (1 − p), so
    // E = (1 − p)/(1 − 2p); size: D = 1 + 2pD, so D = 1/(1 − 2p) (derived).
    let p = 0.3;
    let report = analyze(&binary(p)).unwrap();
    assert!((report.expected_length.unwrap() - 0.7 / 0.4).abs() < 1e-12);
    assert!((report.expected_derivation_size.unwrap() - 1.0 / 0.4).abs() < 1e-12);
}

#[test]
fn expected_uses_flow_down_through_the_components() {
    // S → A A; A → "a" A (1/2) | "a" (1/2). Each A starts a geometric chain
    // of mean length 2 (E = 1 + E/2), two chains: e_A = 4, four words,
    // derivation size 1 + 4 (derived by hand).
    let g = grammar(
        "S",
        &[
            ("S", "A A", 1.0),
            ("A", r#""a" A"#, 0.5),
            ("A", r#""a""#, 0.5),
        ],
    );
    let report = analyze(&g).unwrap();
    assert_eq!(report.symbols[0].expected_uses, Some(1.0));
    assert!((report.symbols[1].expected_uses.unwrap() - 4.0).abs() < 1e-12);
    assert!((report.expected_length.unwrap() - 4.0).abs() < 1e-12);
    assert!((report.expected_derivation_size.unwrap() - 5.0).abs() < 1e-12);
    assert!((report.rule_expected_uses[1].unwrap() - 2.0).abs() < 1e-12);
}

#[test]
fn mutual_recursion_is_solved_as_one_component() {
    // A → B B (p) | "a" (1 − p); B → A "b": x_B = x_A, so x_A solves
    // x = p x² + (1 − p) as in the branching example: (1 − p)/p = 1/3 at
    // p = 3/4 (Galton–Watson extinction, as above).
    let p = 0.75;
    let g = grammar(
        "A",
        &[
            ("A", "B B", p),
            ("A", r#""a""#, 1.0 - p),
            ("B", r#"A "b""#, 1.0),
        ],
    );
    let report = analyze(&g).unwrap();
    for s in &report.symbols {
        assert!(
            (s.termination_probability - 1.0 / 3.0).abs() < 1e-12,
            "{s:?}"
        );
    }
    // M = [[0, 2p], [1, 0]]: eigenvalues ±√(2p) (characteristic λ² − 2p).
    assert!((report.spectral_radius - (2.0 * p).sqrt()).abs() < 1e-12);
    assert!(!report.tight);
}

#[test]
fn the_leaky_example_reports_its_leak_and_where_it_comes_from() {
    // S → S S (0.7) | "a" (0.3): terminates with probability 3/7
    // (Galton–Watson extinction (1 − p)/p), so 1 − 3/7 leaks.
    let g = parse(LEAKY);
    let report = analyze(&g).unwrap();
    assert!(!report.tight);
    assert!((report.leak - (1.0 - 3.0 / 7.0)).abs() < 1e-12);
    assert_eq!(report.expected_length, None);
    assert_eq!(report.leak_sources.len(), 1);
    let source = &report.leak_sources[0];
    assert_eq!(source.symbols, vec![g.nt("S").unwrap()]);
    match source.cause {
        LeakCause::Recursion { growth } => assert!((growth - 1.4).abs() < 1e-12),
        other => panic!("unexpected cause {other:?}"),
    }

    let d = leaky_diagnostic(&g, &report).expect("a leaky grammar gets a diagnostic");
    assert_eq!(d.code, Code::Leaky);
    assert_eq!(d.location.span.text(LEAKY), "S", "at the start declaration");
    assert_eq!(Some(d.location), g.start_location);
    assert!(d.message.contains("0.428571"), "{}", d.message);
    assert!(d.message.contains("0.571429"), "{}", d.message);
    assert_eq!(d.related.len(), 1);
    assert!(
        d.related[0].message.contains("`S`"),
        "{}",
        d.related[0].message
    );
    assert!(d.help.is_some());
}

#[test]
fn a_tight_grammar_gets_no_leaky_diagnostic() {
    let g = binary(0.3);
    let report = analyze(&g).unwrap();
    assert!(report.leak_sources.is_empty());
    assert_eq!(leaky_diagnostic(&g, &report), None);
}

#[test]
fn an_undefined_symbol_leaks_the_mass_that_reaches_it() {
    // S → "a" (1/2) | U "b" (1/2) with U never defined: half the mass
    // reaches U and never becomes a sentence.
    let g = grammar("S", &[("S", r#""a""#, 0.5), ("S", r#"U "b""#, 0.5)]);
    let report = analyze(&g).unwrap();
    assert!((report.leak - 0.5).abs() < 1e-15);
    assert_eq!(report.leak_sources.len(), 1);
    assert_eq!(report.leak_sources[0].symbols, vec![g.nt("U").unwrap()]);
    assert_eq!(report.leak_sources[0].cause, LeakCause::Undefined);
    let d = leaky_diagnostic(&g, &report).unwrap();
    assert!(d.related[0].message.contains("`U` has no block"));
}

#[test]
fn an_unproductive_loop_is_named_as_never_ending() {
    // S → "a" (0.25) | B (0.75); B → B "b": B never ends, S ends w.p. 1/4.
    let g = grammar(
        "S",
        &[
            ("S", r#""a""#, 0.25),
            ("S", "B", 0.75),
            ("B", r#"B "b""#, 1.0),
        ],
    );
    let report = analyze(&g).unwrap();
    assert!((report.leak - 0.75).abs() < 1e-15);
    assert_eq!(report.leak_sources[0].symbols, vec![g.nt("B").unwrap()]);
    assert_eq!(report.leak_sources[0].cause, LeakCause::NeverEnds);
}

#[test]
fn a_deficient_block_is_rescaled_not_counted_as_leak() {
    // Mass 0.6: sampled and analysed as 1/2, 1/2 (documented choice).
    let g = grammar("S", &[("S", r#""a""#, 0.3), ("S", r#""b""#, 0.3)]);
    let report = analyze(&g).unwrap();
    assert!(report.tight);
    assert_eq!(report.rescaled_blocks, vec![g.nt("S").unwrap()]);
    assert!((report.rule_expected_uses[0].unwrap() - 0.5).abs() < 1e-15);
}

#[test]
fn unreachable_symbols_do_not_affect_the_report() {
    // X is supercritical but unreachable from S.
    let g = grammar(
        "S",
        &[
            ("S", r#""a""#, 1.0),
            ("X", "X X", 0.9),
            ("X", r#""x""#, 0.1),
        ],
    );
    let report = analyze(&g).unwrap();
    assert!(report.tight);
    assert_eq!(report.spectral_radius, 0.0);
    let x = &report.symbols[g.nt("X").unwrap().index()];
    assert!(!x.reachable);
    // Still computed: (1 − p)/p = 1/9.
    assert!((x.termination_probability - 1.0 / 9.0).abs() < 1e-12);
}

#[test]
fn a_tight_grammar_leaks_exactly_nothing() {
    // Tight means the root terminates with probability 1, so nothing leaks
    // by definition: the rounding left over by the fixed-point solver (up
    // to about 1e-8 at the critical point) is not reported as a leak.
    for p in [0.1, 0.3, 0.5] {
        let report = analyze(&binary(p)).unwrap();
        assert!(report.tight, "p = {p}");
        assert_eq!(report.leak, 0.0, "p = {p}");
    }
    let report = analyze(&parse(
        r#"
        start S
        S { 0.1 "a" | 0.2 "b" | 0.3 S S "c" | 0.4 "d" }
        "#,
    ))
    .unwrap();
    assert!(report.tight);
    assert_eq!(report.leak, 0.0);
}
