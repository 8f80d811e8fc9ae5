//! `trellis parse` as a user runs it: the built binary on grammar files in
//! temporary directories.

mod common;
use common::{trellis, KIOSK};

use serde_json::Value;
use std::fs;

fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), KIOSK).unwrap();
    dir
}

#[test]
fn ambiguous_sentence_lists_both_trees_with_their_probabilities() {
    let dir = setup();
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "a day ticket", "--kbest", "2"],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    // Each tree: 1/2 · 1/2 · 1/3 = 1/12; together 1/6.
    assert!(run.stdout.contains("p = 0.0833333"), "{}", run.stdout);
    assert!(
        run.stdout.contains("P(sentence) = 0.166667"),
        "{}",
        run.stdout
    );
    assert!(run.stdout.contains("trees: 2"), "{}", run.stdout);
    // Trees are indented, one child per line, word-only nodes on one line.
    let first =
        "    (Request\n      \"a\"\n      (Ticket\n        (Kind \"day\")\n        \"ticket\"))";
    let second =
        "    (Request\n      (Ticket\n        \"a\"\n        (Kind \"day\")\n        \"ticket\"))";
    assert!(run.stdout.contains(first), "{}", run.stdout);
    assert!(run.stdout.contains(second), "{}", run.stdout);
}

#[test]
fn sentence_without_parse_is_explained_and_sets_the_exit_status() {
    let dir = setup();
    let run = trellis(dir.path(), &["parse", "g.trellis", "a dya ticket"]);
    assert_eq!(run.code, 1);
    assert!(run.stdout.contains("no parse"), "{}", run.stdout);
    assert!(
        run.stdout
            .contains(r#"unknown word "dya" (word 2); did you mean "day"?"#),
        "{}",
        run.stdout
    );
}

#[test]
fn batch_input_gives_one_json_line_per_sentence_in_input_order() {
    let dir = setup();
    let lines: Vec<String> = (0..40)
        .map(|n| {
            if n % 3 == 0 {
                "ticket day".to_string()
            } else {
                "day ticket".to_string()
            }
        })
        .collect();
    fs::write(dir.path().join("in.txt"), lines.join("\n\n")).unwrap();
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "--input",
            "in.txt",
            "--format",
            "json",
        ],
    );
    assert_eq!(run.code, 1, "some sentences do not parse");
    let docs: Vec<Value> = run
        .stdout
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    assert_eq!(docs.len(), 40);
    for (n, doc) in docs.iter().enumerate() {
        assert_eq!(doc["sentence"], lines[n].as_str());
        assert_eq!(doc["parsed"], n % 3 != 0);
    }
    assert_eq!(docs[1]["parse_count"], "1");
    assert_eq!(
        docs[1]["best"]["tree"],
        r#"(Request (Ticket (Kind "day") "ticket"))"#
    );
    assert_eq!(docs[0]["explanation"]["breakdown"]["prefix_words"], 0);
}

#[test]
fn brackets_format_prints_bare_treebank_trees_and_a_blank_line_for_failures() {
    let dir = setup();
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "return ticket",
            "ticket",
            "--format",
            "brackets",
        ],
    );
    assert_eq!(run.code, 1);
    assert_eq!(run.stdout, "(Request (Ticket (Kind return) ticket))\n\n");
    assert!(
        run.stderr.contains("1 of 2 sentences did not parse"),
        "{}",
        run.stderr
    );
}

#[test]
fn the_human_format_is_the_default_and_text_still_names_it() {
    let dir = setup();
    let default = trellis(dir.path(), &["parse", "g.trellis", "a day ticket"]);
    assert_eq!(default.code, 0, "{}", default.stderr);
    assert!(default.stdout.starts_with("sentence: a day ticket\n"));
    for name in ["human", "text"] {
        let run = trellis(
            dir.path(),
            &["parse", "g.trellis", "a day ticket", "--format", name],
        );
        assert_eq!(run.code, 0, "{name}: {}", run.stderr);
        assert_eq!(run.stdout, default.stdout, "{name}");
    }
    // `text` is a hidden alias: help names the formats as every command does.
    let help = trellis(dir.path(), &["parse", "--help"]);
    assert!(help.stdout.contains("human"), "{}", help.stdout);
    assert!(!help.stdout.contains("text:"), "{}", help.stdout);
}

#[test]
fn kbest_zero_is_a_usage_error_not_silently_one() {
    let dir = setup();
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "a day ticket", "--kbest", "0"],
    );
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.is_empty(), "{}", run.stdout);
    assert!(run.stderr.contains("--kbest"), "{}", run.stderr);
    assert!(run.stderr.contains("0"), "{}", run.stderr);
}
