//! Exact consistency verdicts on near-critical grammars, where floating
//! point cannot decide.
//!
//! Reference: a derivation from `S → S S (p) | "a" (1 − p)` is a
//! Galton–Watson process with 0 or 2 children, so it ends with probability
//! min(1, (1 − p)/p): tight exactly when p ≤ 1/2, critical at p = 1/2
//! (T. E. Harris, *The Theory of Branching Processes*, 1963, ch. I; the
//! same example in Z. Chi and S. Geman, "Estimation of probabilistic
//! context-free grammars", Computational Linguistics 24(2), 1998 — both
//! recalled from memory). Its expectation matrix is the 1×1 matrix `2p`.

mod consistency_support;

use consistency_support::parse;
use trellis_engine::consistency::{analyze, leak_finding, Regime, Verdict};

/// The binary grammar with its weights written exactly as given.
fn binary(split: &str, stop: &str) -> grammar_lang::Grammar {
    parse(&format!("start S\nS {{ {split} S S | {stop} \"a\" }}\n"))
}

#[test]
fn a_grammar_just_below_critical_is_exactly_tight_and_subcritical() {
    // p = 0.4999999999 < 1/2: tight, ρ = 0.9999999998 < 1. Floating point
    // reported a leak of 3e-8 and "critical" here.
    let g = binary("0.4999999999", "0.5000000001");
    let r = analyze(&g).unwrap();
    assert_eq!(r.verdict, Verdict::Exact);
    assert!(r.tight);
    assert_eq!(r.leak, 0.0);
    assert_eq!(r.regime, Regime::Subcritical);
    assert!(r.spectral_radius < 1.0);
    assert_eq!(r.symbols[0].termination_probability, 1.0);
    // Finite expected size: e_S = 1 / (1 − 2p) = 5e9 uses of S.
    let uses = r.symbols[0].expected_uses.unwrap();
    assert!((uses / 5e9 - 1.0).abs() < 1e-5, "{uses}");
    assert!(leak_finding(&g).is_none());
}

#[test]
fn a_grammar_just_above_critical_exactly_leaks_its_small_leak() {
    // p = 0.5000000001 > 1/2: the leak is 1 − (1 − p)/p = (2p − 1)/p
    // = 2e-10 / 0.5000000001 ≈ 3.9999999992e-10. Floating point called it
    // tight.
    let g = binary("0.5000000001", "0.4999999999");
    let r = analyze(&g).unwrap();
    assert_eq!(r.verdict, Verdict::Exact);
    assert!(!r.tight);
    assert_eq!(r.regime, Regime::Supercritical);
    let expected = 2e-10 / 0.5000000001;
    assert!((r.leak / expected - 1.0).abs() < 1e-5, "leak {}", r.leak);
    assert_eq!(r.leak_sources.len(), 1);
    let finding = leak_finding(&g).expect("a leak, however small, is reported");
    assert!(finding.message.contains("4e-10"), "{}", finding.message);
}

#[test]
fn the_textbook_case_is_tight_exactly_when_p_is_at_most_one_half() {
    for (p, q, pf, tight, regime) in [
        ("1/3", "2/3", 1.0f64 / 3.0, true, Regime::Subcritical),
        ("1/2", "1/2", 0.5, true, Regime::Critical),
        ("2/3", "1/3", 2.0 / 3.0, false, Regime::Supercritical),
        ("0.7", "0.3", 0.7, false, Regime::Supercritical),
        ("49/100", "51/100", 0.49, true, Regime::Subcritical),
        ("51/100", "49/100", 0.51, false, Regime::Supercritical),
    ] {
        let r = analyze(&binary(p, q)).unwrap();
        assert_eq!(r.verdict, Verdict::Exact, "p = {p}");
        assert_eq!(r.tight, tight, "p = {p}");
        assert_eq!(r.regime, regime, "p = {p}");
        // Termination probability min(1, (1 − p)/p).
        let expected = ((1.0 - pf) / pf).min(1.0);
        let x = r.symbols[0].termination_probability;
        assert!((x - expected).abs() < 1e-12, "p = {p}: {x} vs {expected}");
        assert!(((1.0 - expected) - r.leak).abs() < 1e-12, "p = {p}");
    }
    // Critical: exactly radius 1, infinite expected size.
    let r = analyze(&binary("1/2", "1/2")).unwrap();
    assert_eq!(r.spectral_radius, 1.0);
    assert!(r.expected_length.is_none());
}

#[test]
fn components_are_decided_bottom_up_and_a_leak_below_reaches_the_root() {
    // S → A | "s"; A → A A (1/2) | "a" (1/2) is critical but tight, so S
    // is tight; with A supercritical, S leaks through it (half of S's mass
    // goes to A, which ends with probability 1/2: leak 1/4).
    let tight = parse("start S\nS { 1/2 A | 1/2 \"s\" }\nA { 1/2 A A | 1/2 \"a\" }\n");
    let r = analyze(&tight).unwrap();
    assert_eq!(
        (r.verdict, r.tight, r.regime),
        (Verdict::Exact, true, Regime::Critical)
    );
    let leaky = parse("start S\nS { 1/2 A | 1/2 \"s\" }\nA { 2/3 A A | 1/3 \"a\" }\n");
    let r = analyze(&leaky).unwrap();
    assert_eq!((r.verdict, r.tight), (Verdict::Exact, false));
    assert!((r.leak - 0.25).abs() < 1e-12, "{}", r.leak);
    // A symbol with no block: nothing through it ends (x = 0).
    let undefined = parse("start S\nS { 1/2 B | 1/2 \"s\" }\n");
    let r = analyze(&undefined).unwrap();
    assert_eq!((r.verdict, r.tight), (Verdict::Exact, false));
    assert!((r.leak - 0.5).abs() < 1e-12, "{}", r.leak);
}

#[test]
fn a_grammar_past_the_exact_cap_is_decided_numerically_with_its_tolerance() {
    // A chain of 70 symbols, each ending or going on to the next.
    let mut text = String::from("start N0\n");
    for i in 0..70 {
        text.push_str(&format!("N{i} {{ 1/2 \"w\" | 1/2 N{} }}\n", i + 1));
    }
    text.push_str("N70 { \"w\" }\n");
    let r = analyze(&parse(&text)).unwrap();
    assert_eq!(r.verdict, Verdict::Numerical { tolerance: 1e-6 });
    assert!(r.tight);
}
