//! `leaky` joins the static findings of a grammar whose mass leaks.

use grammar_lang::{analyze_text, Code, Config, Severity};
use trellis_engine::consistency::add_leak_finding;

/// S → S S (0.7) | "a" (0.3) ends with probability 3/7: the extinction
/// probability min(1, q/p) of a Galton–Watson process with two children
/// with probability p and none with probability q (a classic
/// branching-process result).
const LEAKY: &str = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\n";

#[test]
fn a_leaking_grammar_gets_a_leaky_warning_at_its_start_declaration() {
    let mut analysis = analyze_text(LEAKY);
    assert!(add_leak_finding(&mut analysis, &Config::default()));
    let leaky: Vec<_> = analysis
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::Leaky)
        .collect();
    assert_eq!(leaky.len(), 1);
    assert_eq!(leaky[0].severity, Severity::Warning);
    assert_eq!(leaky[0].location.span.text(LEAKY), "S", "{:?}", leaky[0]);
    // 1 − 3/7 = 4/7 ≈ 0.571 leaks.
    assert!(leaky[0].message.contains("0.571"), "{}", leaky[0].message);
}

#[test]
fn a_tight_grammar_gets_no_leaky_finding() {
    // S → S S (0.3) | "a" (0.7) ends with probability 1 (same result).
    let mut analysis = analyze_text("start S\nS {\n  0.3 S S\n  0.7 \"a\"\n}\n");
    assert!(!add_leak_finding(&mut analysis, &Config::default()));
    assert!(analysis.diagnostics.is_empty());
}

#[test]
fn the_configured_level_applies_and_off_silences_it() {
    let config = Config::from_toml("[checks]\nleaky = \"error\"\n").expect("valid config");
    let mut analysis = analyze_text(LEAKY);
    assert!(add_leak_finding(&mut analysis, &config));
    assert!(analysis.has_errors());

    let off = Config::from_toml("[checks]\nleaky = \"off\"\n").expect("valid config");
    let mut analysis = analyze_text(LEAKY);
    assert!(!add_leak_finding(&mut analysis, &off));
}

#[test]
fn grammars_with_errors_are_not_measured() {
    let mut analysis = analyze_text("start S\nS {\n  0.7 S S\n  0.3 \"a\"\n  0.1 T\n}\n");
    assert!(analysis.has_errors());
    assert!(!add_leak_finding(&mut analysis, &Config::default()));
}
