//! `trellis stats` as a user runs it.

use serde_json::Value;
use std::fs;
use std::process::Command;

fn stats(text: &str, extra: &[&str]) -> (i32, String, String) {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), text).unwrap();
    let out = Command::new(env!("CARGO_BIN_EXE_trellis"))
        .arg("stats")
        .arg("g.trellis")
        .args(extra)
        .current_dir(dir.path())
        .env("NO_COLOR", "1")
        .output()
        .expect("the trellis binary runs");
    (
        out.status.code().expect("trellis exits normally"),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}

/// S → "a" S (1/2) | "a" (1/2): geometric length with mean 1/(1 − 1/2) = 2
/// (derived: E = 1 + E/2).
const GEOMETRIC: &str = "start S\nS {\n  1/2 \"a\" S\n  1/2 \"a\"\n}\n";

/// S → S S (0.7) | "a" (0.3): ends with probability 3/7 (Galton–Watson
/// extinction probability (1 − p)/p).
const LEAKY: &str = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\n";

#[test]
fn json_reports_the_documented_fields() {
    let (code, out, err) = stats(GEOMETRIC, &["--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["tight"], true);
    assert_eq!(v["regime"], "subcritical");
    assert!((v["spectral_radius"].as_f64().unwrap() - 0.5).abs() < 1e-12);
    assert_eq!(v["leak"], 0.0);
    assert!((v["expected_length"].as_f64().unwrap() - 2.0).abs() < 1e-12);
    let symbols = v["symbols"].as_array().unwrap();
    assert_eq!(symbols.len(), 1);
    assert_eq!(symbols[0]["name"], "S");
    assert!((symbols[0]["termination_probability"].as_f64().unwrap() - 1.0).abs() < 1e-12);
    assert!((symbols[0]["expected_uses"].as_f64().unwrap() - 2.0).abs() < 1e-12);
    assert_eq!(v["diagnostics"].as_array().unwrap().len(), 0);
}

#[test]
fn json_leak_is_exactly_zero_when_tight() {
    // Critical branching (S → S S | "a", 1/2 each) terminates with
    // probability 1, but the solver stops about 1e-8 short of it.
    let critical = "start S\nS {\n  1/2 S S\n  1/2 \"a\"\n}\n";
    let (code, out, err) = stats(critical, &["--format", "json"]);
    assert_eq!(code, 0, "{err}");
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["tight"], true);
    assert_eq!(v["leak"], 0.0, "{out}");
}

#[test]
fn a_leaky_grammar_exits_with_one_and_explains_the_leak() {
    let (code, out, _) = stats(LEAKY, &["--format", "json"]);
    assert_eq!(code, 1);
    let v: Value = serde_json::from_str(&out).unwrap();
    assert_eq!(v["tight"], false);
    assert!((v["leak"].as_f64().unwrap() - 4.0 / 7.0).abs() < 1e-12);
    assert_eq!(v["expected_length"], Value::Null);
    assert_eq!(v["symbols"][0]["expected_uses"], Value::Null);
    assert_eq!(v["diagnostics"][0]["code"], "leaky");
    assert_eq!(v["diagnostics"][0]["line"], 1, "at `start S`");

    let (code, out, _) = stats(LEAKY, &[]);
    assert_eq!(code, 1);
    assert!(
        out.contains("no: 0.571429 of the probability is lost"),
        "{out}"
    );
    assert!(out.contains("warning[leaky]"), "{out}");
    assert!(out.contains("1.4 (supercritical)"), "{out}");
}

#[test]
fn the_human_table_lists_reachable_symbols() {
    let text = "start S\nS {\n  \"a\" A\n}\nA {\n  1/4 \"b\" A\n  3/4 \"b\"\n}\nX {\n  \"x\"\n}\n";
    let (code, out, err) = stats(text, &[]);
    assert_eq!(code, 0, "{err}");
    // A is used 1/(1 − 1/4) = 4/3 times per sentence (geometric, derived).
    assert!(out.contains("1.33333"), "{out}");
    assert!(
        out.contains("(1 symbol not reachable from S left out)"),
        "{out}"
    );
    // 1 + 4/3 words.
    assert!(
        out.contains("expected length           2.33333 words"),
        "{out}"
    );
}
