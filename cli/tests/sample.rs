//! `trellis sample` as a user runs it: the built binary on grammar files in
//! temporary directories.

mod common;
use common::trellis;

use serde_json::Value;
use std::fs;

const KIOSK: &str = r#"
grammar kiosk
start Request

Request {
  0.6  "a" Kind "ticket" Please
  0.4  Kind "ticket"
}

Kind { "day" | "single" | "return" }

Please {
  1/2  "please"
  1/2  "now" "please"
}
"#;

/// S → S S (0.7) | "a" (0.3): ends with probability 3/7 only.
const LEAKY: &str = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\n";

fn setup(text: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), text).unwrap();
    dir
}

#[test]
fn prints_the_requested_number_of_sentences_of_the_language() {
    let dir = setup(KIOSK);
    let run = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "25", "--seed", "4"],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines.len(), 25);
    // The language: [a] KIND ticket [now] please | KIND ticket.
    for line in lines {
        let words: Vec<&str> = line.split(' ').collect();
        let kind_at = usize::from(words[0] == "a");
        assert!(
            ["day", "single", "return"].contains(&words[kind_at]),
            "{line}"
        );
        assert_eq!(words[kind_at + 1], "ticket", "{line}");
        if kind_at == 1 {
            assert!(line.ends_with("ticket please") || line.ends_with("ticket now please"));
        } else {
            assert_eq!(words.len(), 2, "{line}");
        }
    }
}

#[test]
fn the_same_seed_repeats_the_output_and_another_seed_changes_it() {
    let dir = setup(KIOSK);
    let a = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "30", "--seed", "9"],
    );
    let b = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "30", "--seed", "9"],
    );
    let c = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "30", "--seed", "10"],
    );
    assert_eq!(a.stdout, b.stdout);
    assert_ne!(a.stdout, c.stdout);
}

#[test]
fn trees_and_json_carry_the_same_sentences() {
    let dir = setup(KIOSK);
    let text = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "5", "--seed", "2"],
    );
    let json = trellis(
        dir.path(),
        &[
            "sample",
            "g.trellis",
            "-n",
            "5",
            "--seed",
            "2",
            "--trees",
            "--format",
            "json",
        ],
    );
    assert_eq!(json.code, 0, "{}", json.stderr);
    let v: Value = serde_json::from_str(&json.stdout).unwrap();
    assert_eq!(v["seed"], 2);
    assert_eq!(v["from"], "Request");
    assert_eq!(v["abandoned"], 0);
    let samples = v["samples"].as_array().unwrap();
    let sentences: Vec<&str> = samples
        .iter()
        .map(|s| s["sentence"].as_str().unwrap())
        .collect();
    assert_eq!(sentences, text.stdout.lines().collect::<Vec<_>>());
    for s in samples {
        let tree = s["tree"].as_str().unwrap();
        assert!(tree.starts_with("(Request "), "{tree}");
        assert!(tree.contains("(Kind \""), "{tree}");
    }
}

#[test]
fn sampling_from_another_symbol() {
    let dir = setup(KIOSK);
    let run = trellis(
        dir.path(),
        &["sample", "g.trellis", "--from", "Please", "-n", "8"],
    );
    assert_eq!(run.code, 0);
    for line in run.stdout.lines() {
        assert!(line == "please" || line == "now please", "{line}");
    }
    let run = trellis(dir.path(), &["sample", "g.trellis", "--from", "Nope"]);
    assert_eq!(run.code, 2);
    assert!(
        run.stderr.contains("no block named `Nope`"),
        "{}",
        run.stderr
    );
}

#[test]
fn a_leaky_grammar_abandons_draws_and_says_so() {
    let dir = setup(LEAKY);
    let run = trellis(
        dir.path(),
        &[
            "sample",
            "g.trellis",
            "-n",
            "40",
            "--seed",
            "1",
            "--max-rules",
            "500",
        ],
    );
    assert_eq!(run.code, 1);
    let printed = run.stdout.lines().count();
    assert!(printed < 40, "some draws must be abandoned");
    assert!(
        run.stderr
            .contains(&format!("{} of 40 draws abandoned", 40 - printed)),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("500 rule applications"));
}

#[test]
fn a_grammar_with_errors_is_not_sampled() {
    let dir = setup("start S\nS {\n  0.5 \"a\"\n  0.4 \"b\"\n}\n");
    let run = trellis(dir.path(), &["sample", "g.trellis"]);
    assert_eq!(run.code, 1);
    assert!(run.stdout.is_empty());
    assert!(run.stderr.contains("sum-not-one"), "{}", run.stderr);
    let run = trellis(dir.path(), &["sample", "missing.trellis"]);
    assert_eq!(run.code, 2);
    assert!(
        run.stderr.contains("cannot read missing.trellis"),
        "{}",
        run.stderr
    );
}

#[test]
fn the_human_format_is_the_default_and_text_still_names_it() {
    let dir = setup(KIOSK);
    let args = ["sample", "g.trellis", "-n", "5", "--seed", "3"];
    let default = trellis(dir.path(), &args);
    assert_eq!(default.code, 0, "{}", default.stderr);
    assert_eq!(default.stdout.lines().count(), 5);
    for name in ["human", "text"] {
        let with: Vec<&str> = args.iter().copied().chain(["--format", name]).collect();
        let run = trellis(dir.path(), &with);
        assert_eq!(run.code, 0, "{name}: {}", run.stderr);
        assert_eq!(run.stdout, default.stdout, "{name}");
    }
}

#[test]
fn without_a_seed_the_seed_used_is_printed_and_draws_the_sample_again() {
    let dir = setup(KIOSK);
    let first = trellis(dir.path(), &["sample", "g.trellis", "-n", "20"]);
    assert_eq!(first.code, 0, "{}", first.stderr);
    let line = first.stderr.lines().next().unwrap_or_default();
    let seed = line
        .strip_prefix("seed: ")
        .and_then(|rest| rest.split(' ').next())
        .unwrap_or_else(|| panic!("no seed on standard error: {}", first.stderr));
    assert_eq!(
        line,
        format!("seed: {seed} (draw this sample again with --seed {seed})")
    );
    // Standard output holds only the sentences.
    assert_eq!(first.stdout.lines().count(), 20);
    let again = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "20", "--seed", seed],
    );
    assert_eq!(again.code, 0, "{}", again.stderr);
    assert_eq!(again.stdout, first.stdout);
    // A seed that was given is not repeated back.
    assert_eq!(again.stderr, "");
}

#[test]
fn without_a_seed_json_carries_the_seed_used() {
    let dir = setup(KIOSK);
    let first = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "5", "--format", "json"],
    );
    assert_eq!(first.code, 0, "{}", first.stderr);
    assert_eq!(first.stderr, "", "JSON mode keeps standard error quiet");
    let v: Value = serde_json::from_str(&first.stdout).unwrap();
    let seed = v["seed"]
        .as_u64()
        .expect("the document has the seed")
        .to_string();
    let again = trellis(
        dir.path(),
        &[
            "sample",
            "g.trellis",
            "-n",
            "5",
            "--format",
            "json",
            "--seed",
            &seed,
        ],
    );
    assert_eq!(again.stdout, first.stdout);
}
