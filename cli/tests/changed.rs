//! `--changed FILE…` narrows `check` and `test` to the grammars that read
//! one of the files: what a commit hook asks when those files changed.

mod common;

use common::trellis;
use std::fs;

/// Two grammars, one of which uses a lexicon; a third file stands alone.
fn project() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    let write = |name: &str, text: &str| fs::write(dir.path().join(name), text).unwrap();
    write(
        "kiosk.trellis",
        "start Request\nuse \"words.trellis\"\nRequest { Kind \"ticket\" }\n\
         test \"t\" { accept \"day ticket\" }\n",
    );
    write("words.trellis", "Kind { \"day\" | \"return\" }\n");
    // Broken on purpose: weights sum to 0.9.
    write("harbour.trellis", "start S\nS { 0.5 \"a\" | 0.4 \"b\" }\n");
    dir
}

#[test]
fn a_changed_lexicon_checks_the_grammars_that_use_it_and_nothing_else() {
    let dir = project();
    let run = trellis(dir.path(), &["check", ".", "--changed", "words.trellis"]);
    // harbour.trellis is broken but does not read the lexicon: not checked.
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("checked 2 files"), "{}", run.stdout);

    let run = trellis(dir.path(), &["check", ".", "--changed", "harbour.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("sum-not-one"), "{}", run.stdout);
}

#[test]
fn paths_name_the_same_file_however_they_are_written() {
    let dir = project();
    let run = trellis(
        dir.path(),
        &["check", ".", "--changed", "./sub/../harbour.trellis"],
    );
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
}

#[test]
fn a_changed_lexicon_runs_the_tests_of_the_grammars_that_use_it() {
    let dir = project();
    let run = trellis(dir.path(), &["test", ".", "--changed", "words.trellis"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stdout.contains("1 test in 1 grammar: 1 passed"),
        "{}",
        run.stdout
    );
}

#[test]
fn a_changed_file_no_grammar_reads_checks_nothing_and_says_so() {
    let dir = project();
    fs::write(dir.path().join("notes.txt"), "not a grammar").unwrap();
    let run = trellis(dir.path(), &["check", ".", "--changed", "notes.txt"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr.contains("no grammar in . reads notes.txt"),
        "{}",
        run.stderr
    );
}
