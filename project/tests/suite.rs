//! A command-line test run over a directory: which grammars' tests run,
//! what a grammar with errors counts as, and what a selection that matches
//! nothing could have named.

use std::fs;
use trellis_project::analyse_paths;
use trellis_project::test_run::{run_suite, Counts, RunOptions, Selection};

/// A kiosk that uses a lexicon; the lexicon's own test block is run as
/// part of the kiosk's grammar, not on its own (it has no `start`).
const KIOSK: &str = "start Request
use \"words.trellis\"
Request { Kind \"ticket\" }
test \"tickets\" {
  accept \"day ticket\"
  reject \"ticket day\"
}
";
const WORDS: &str = "Kind { \"day\" | \"return\" }
test \"words\" {
  accept \"return ticket\"
  accept \"single ticket\"
}
";
/// Weights summing to 0.9: a `sum-not-one` error, so its tests cannot run.
const BROKEN: &str = "start S
S { 0.5 \"a\" | 0.4 \"b\" }
test \"broken\" { accept \"a\" }
";

#[test]
fn a_directory_run_tests_each_grammar_once_and_counts_what_could_not_run() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), KIOSK).unwrap();
    fs::write(dir.path().join("words.trellis"), WORDS).unwrap();
    fs::write(dir.path().join("broken.trellis"), BROKEN).unwrap();
    let analysed = analyse_paths(&[dir.path().to_path_buf()]).ok().unwrap();
    let suite = run_suite(&analysed.checked, Selection::All, RunOptions::default());

    let names: Vec<String> = suite
        .grammars
        .iter()
        .map(|g| g.path.file_name().unwrap().to_string_lossy().into_owned())
        .collect();
    assert_eq!(names, ["broken.trellis", "kiosk.trellis"]);
    assert_eq!(suite.tally.grammars, 2);
    assert_eq!(suite.tally.grammars_blocked, 1);
    assert_eq!(suite.tally.tests_not_run, 1);
    // kiosk: "tickets" holds (2 cases); "words" fails on "single ticket".
    assert_eq!(
        suite.tally.counts,
        Counts {
            tests_passed: 1,
            tests_failed: 1,
            cases_passed: 3,
            cases_failed: 1
        }
    );
    assert_eq!(suite.tally.tests(), 3);
    assert!(!suite.tally.all_held());
    assert_eq!(suite.available, ["broken", "tickets", "words"]);
}

#[test]
fn a_selection_that_matches_nothing_runs_nothing_but_lists_the_names() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), KIOSK).unwrap();
    fs::write(dir.path().join("words.trellis"), WORDS).unwrap();
    let analysed = analyse_paths(&[dir.path().to_path_buf()]).ok().unwrap();
    let filter = ["refund".to_string()];
    let suite = run_suite(
        &analysed.checked,
        Selection::NameContains(&filter),
        RunOptions::default(),
    );
    assert!(suite.grammars.is_empty());
    assert_eq!(suite.tally.tests(), 0);
    assert!(suite.tally.all_held());
    assert_eq!(suite.available, ["tickets", "words"]);
}
