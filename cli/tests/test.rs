//! `trellis test` as a user runs it: the built binary on grammar files in
//! temporary directories and on the bundled examples.

mod common;
use common::{trellis, KIOSK};

use serde_json::Value;
use std::fs;
use std::path::Path;

fn grammar_with_tests(tests: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), format!("{KIOSK}\n{tests}")).unwrap();
    dir
}

#[test]
fn the_bundled_examples_pass_their_own_tests() {
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let run = trellis(
        &examples,
        &["test", "ferry_kiosk.trellis", "greenhouse_voice.trellis"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stdout.contains("passed  test \"buying tickets\""),
        "{}",
        run.stdout
    );
    // The lexicon's blocks are part of the kiosk.
    assert!(
        run.stdout.contains("in 2 grammars: 7 passed, 0 failed"),
        "{}",
        run.stdout
    );
}

#[test]
fn the_examples_directory_runs_every_grammar_and_refuses_the_broken_one() {
    // `broken_no_start.trellis` has a test block but no start symbol: its
    // test is not run and the run fails; so is the test block of
    // `broken.trellis` (a grammar with errors), which `broken_cycle.trellis`
    // uses and so runs as well. The lexicon, a library without tests or
    // start, is tested only as part of the kiosk.
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let run = trellis(&examples, &["test"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("no-start"), "{}", run.stdout);
    assert!(
        run.stdout
            .contains("10 tests in 5 grammars: 7 passed, 0 failed, 3 not run"),
        "{}",
        run.stdout
    );
}

#[test]
fn failing_cases_are_located_and_explained_and_the_exit_status_is_one() {
    let dir = grammar_with_tests(
        r#"test "orders" {
  accept "day ticket"
  accept "dya ticket"
  reject "a day ticket"
}
"#,
    );
    let run = trellis(dir.path(), &["test", "g.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let out = &run.stdout;
    assert!(
        out.contains("FAILED  test \"orders\" (2 of 3 cases failed)"),
        "{out}"
    );
    // Lines and columns are 1-based; the tests start on line 16 of the file.
    assert!(
        out.contains("g.trellis:18:3  accept \"dya ticket\""),
        "{out}"
    );
    assert!(
        out.contains("unknown word \"dya\" (word 1); did you mean \"day\"?"),
        "{out}"
    );
    assert!(
        out.contains("g.trellis:19:3  reject \"a day ticket\""),
        "{out}"
    );
    assert!(
        out.contains("expected no parse, but the sentence parses"),
        "{out}"
    );
    assert!(
        !out.contains("accept \"day ticket\"\n"),
        "passing cases are not listed: {out}"
    );
    assert!(
        out.contains("1 test in 1 grammar: 0 passed, 1 failed (1 of 3 cases held)"),
        "{out}"
    );
}

#[test]
fn an_expected_tree_that_ties_for_most_probable_holds() {
    let dir = grammar_with_tests(
        r#"test "ties" {
  accept "a day ticket" as (Request (Ticket "a" (Kind "day") "ticket"))
  accept "a day ticket" as (Request "a" (Ticket (Kind "day") "ticket"))
}
"#,
    );
    let run = trellis(dir.path(), &["test", "--verbose"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert_eq!(
        run.stdout.matches("holds by a tie").count(),
        1,
        "{}",
        run.stdout
    );
}

#[test]
fn cases_printed_by_trees_paste_back_into_a_test_block_as_they_are() {
    // The expected tree of the second case spans several lines; `--trees`
    // prints every case on one line, with its most probable tree and the
    // probability in a comment.
    let dir = grammar_with_tests(
        "test \"t\" {\n  accept \"a a single ticket\"\n  accept \"return ticket\" as (Request\n    (Ticket\n      (Kind \"return\")\n      \"ticket\"))\n  reject \"ticket ticket\"\n}\n",
    );
    let run = trellis(dir.path(), &["test", "--trees"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let cases: Vec<&str> = run
        .stdout
        .lines()
        .map(str::trim)
        .filter(|l| l.starts_with("accept ") || l.starts_with("reject "))
        .collect();
    assert_eq!(
        cases,
        [
            r#"accept "a a single ticket" as (Request "a" (Ticket "a" (Kind "single") "ticket"))  # ok, p ≈ 0.0833333"#,
            r#"accept "return ticket" as (Request (Ticket (Kind "return") "ticket"))  # ok, p ≈ 0.0833333"#,
            r#"reject "ticket ticket"  # ok"#,
        ],
        "{}",
        run.stdout
    );
    // Each tree takes 1/2 · 1/2 · 1/3 = 1/12, worked by hand (KIOSK's
    // comment works the first).
    let pasted: String = cases.iter().map(|c| format!("  {c}\n")).collect();
    fs::write(
        dir.path().join("g.trellis"),
        format!("{KIOSK}\ntest \"pasted\" {{\n{pasted}}}\n"),
    )
    .unwrap();
    let run = trellis(dir.path(), &["test"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("(3 cases)"), "{}", run.stdout);
}

#[test]
fn json_output_describes_every_test_and_case() {
    let dir = grammar_with_tests(
        r#"test "good" {
  accept "return ticket"
}
test "bad" {
  accept "a day ticket" as (Request (Ticket (Kind "day") "ticket"))
}
"#,
    );
    let run = trellis(dir.path(), &["test", "--format", "json"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let doc: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(doc["tests"]["passed"], 1);
    assert_eq!(doc["tests"]["failed"], 1);
    assert_eq!(doc["cases"]["failed"], 1);
    let tests = doc["grammars"][0]["tests"].as_array().unwrap();
    assert_eq!(tests[0]["name"], "good");
    assert_eq!(tests[0]["passed"], true);
    assert_eq!(
        tests[0]["cases"][0]["tree"],
        r#"(Request (Ticket (Kind "return") "ticket"))"#
    );
    // 1/2 · 1/2 · 1/3 = 1/12, worked by hand.
    let p = tests[0]["cases"][0]["probability"].as_f64().unwrap();
    assert!((p - 1.0 / 12.0).abs() < 1e-15, "{p}");
    let bad = &tests[1]["cases"][0];
    assert_eq!(bad["passed"], false);
    assert_eq!(bad["line"], 20);
    assert_eq!(bad["column"], 3);
    let failure: Vec<&str> = bad["failure"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l.as_str().unwrap())
        .collect();
    assert!(
        failure
            .iter()
            .any(|l| l.contains("not a tree of the grammar: its words are \"day ticket\"")),
        "{failure:?}"
    );
}

#[test]
fn a_grammar_with_errors_is_not_run_and_its_errors_are_shown() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("g.trellis"),
        "start S\nS { 0.5 \"x\" | 0.4 \"y\" }\ntest \"t\" { accept \"x\" }\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["test"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("sum-not-one"), "{}", run.stdout);
    assert!(
        run.stdout
            .contains("1 test not run: the grammar has 1 error, so it cannot be run; fix it first"),
        "{}",
        run.stdout
    );
    assert!(
        run.stdout.contains("0 passed, 0 failed, 1 not run"),
        "{}",
        run.stdout
    );
}

#[test]
fn a_filter_runs_only_matching_tests_and_a_filter_matching_none_is_a_usage_error() {
    let dir = grammar_with_tests(
        "test \"singles\" {\n  accept \"single ticket\"\n}\ntest \"returns\" {\n  reject \"return\"\n}\n",
    );
    let run = trellis(dir.path(), &["test", "--filter", "sing"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("\"singles\""), "{}", run.stdout);
    assert!(!run.stdout.contains("\"returns\""), "{}", run.stdout);

    let run = trellis(dir.path(), &["test", "--filter", "weekly"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr
            .contains("no test name contains \"weekly\"; the tests are \"returns\", \"singles\""),
        "{}",
        run.stderr
    );
}

#[test]
fn a_missing_path_is_a_usage_error() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["test", "nowhere.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr.contains("cannot check nowhere.trellis"),
        "{}",
        run.stderr
    );
}
