//! Terminals of several words as a user meets them: the built binary on a
//! greenhouse grammar whose terminals have spaces inside. Every command
//! agrees that `"fresh water"` is the two words `fresh` `water`.

mod common;
use common::{trellis, trellis_stdin};

use std::fs;

/// Every sentence of the language uses a terminal of several words:
/// `fresh water` or `rain water` or `two cans of`.
const GREENHOUSE: &str = r#"
start Order

Order {
  0.5  Water Amount
  0.5  "two cans of" Water
}

Water {
  "fresh water" | "rain water"
}

Amount relative {
  3  "one litre"
  1  "a drop"
}

test "orders" {
  accept "fresh water one litre" as (Order (Water "fresh water") (Amount "one litre"))
  accept "two cans of rain water"
  reject "fresh one litre"
}
"#;

fn setup(text: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), text).unwrap();
    dir
}

#[test]
fn parse_splits_a_sentence_into_the_words_of_multi_word_terminals() {
    let dir = setup(GREENHOUSE);
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "rain water a drop",
            "two cans of fresh water",
            "--format",
            "brackets",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert_eq!(
        run.stdout,
        "(Order (Water rain water) (Amount a drop))\n\
         (Order two cans of (Water fresh water))\n"
    );
}

#[test]
fn every_sampled_sentence_parses() {
    let dir = setup(GREENHOUSE);
    let run = trellis(
        dir.path(),
        &["sample", "g.trellis", "-n", "40", "--seed", "11"],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines.len(), 40);
    // Sentences are the words of the terminals, spaced once.
    for line in &lines {
        assert!(
            line.contains("fresh water") || line.contains("rain water"),
            "{line}"
        );
        assert!(!line.contains("  "), "{line:?}");
    }
    // What `sample` draws, `parse` reads back: every sentence parses.
    let (code, stdout, stderr) = trellis_stdin(
        dir.path(),
        &["parse", "g.trellis", "--input", "-", "--format", "brackets"],
        &run.stdout,
    );
    assert_eq!(code, 0, "{stderr}");
    assert_eq!(stdout.lines().count(), 40);
    assert!(stdout.lines().all(|tree| tree.starts_with("(Order ")));
}

#[test]
fn test_cases_with_multi_word_leaves_pass() {
    let dir = setup(GREENHOUSE);
    let run = trellis(dir.path(), &["test", "g.trellis"]);
    assert_eq!(run.code, 0, "{}\n{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("(3 cases)"), "{}", run.stdout);
}

#[test]
fn check_reports_spacing_and_misspelt_words_where_they_are() {
    let text = GREENHOUSE
        .replace("\"rain water\"", "\"rain  water\"")
        .replace("\"two cans of rain water\"", "\"two cans of rain watr\"");
    let dir = setup(&text);
    let run = trellis(dir.path(), &["check", "g.trellis"]);
    // Warnings only: the check passes.
    assert_eq!(run.code, 0, "{}", run.stdout);
    assert!(
        run.stdout.contains("warning[terminal-spacing]")
            && run.stdout.contains("g.trellis:10:19")
            && run.stdout.contains("write it as \"rain water\""),
        "{}",
        run.stdout
    );
    assert!(
        run.stdout.contains("warning[unknown-word]")
            && run.stdout.contains("g.trellis:20:28")
            && run.stdout.contains("did you mean `water`?"),
        "{}",
        run.stdout
    );
}
