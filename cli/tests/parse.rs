//! `trellis parse` as a user runs it: the built binary on grammar files in
//! temporary directories.

mod common;
use common::{trellis, Run, KIOSK};

use serde_json::Value;
use std::fs;
use trellis_test_support::grammars::GREENHOUSE_BEAM;

fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), KIOSK).unwrap();
    dir
}

/// `trellis parse g.trellis --input in.txt` with `input` as the file and
/// `options` after it.
fn parse_input(dir: &tempfile::TempDir, input: &str, options: &[&str]) -> Run {
    fs::write(dir.path().join("in.txt"), input).unwrap();
    let mut args = vec!["parse", "g.trellis", "--input", "in.txt"];
    args.extend_from_slice(options);
    trellis(dir.path(), &args)
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
    let run = parse_input(&dir, &lines.join("\n\n"), &["--format", "json"]);
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
fn a_long_batch_is_written_in_input_order_with_sentence_numbers_and_one_summary() {
    // Long enough to be parsed and written in several rounds: order,
    // sentence numbers and the summary must span them all.
    let dir = setup();
    let total = 2600;
    let refused_at = 2000;
    let long = vec!["ticket"; 400].join(" ");
    let lines: Vec<&str> = (0..total)
        .map(|n| match n {
            _ if n == refused_at => long.as_str(),
            _ if n % 7 == 3 => "ticket day",
            _ => "day ticket",
        })
        .collect();
    let run = parse_input(
        &dir,
        &lines.join("\n"),
        &["--format", "brackets", "--max-chart-mib", "1"],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let out: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(out.len(), total);
    let mut unparsed = 0;
    for (n, line) in out.iter().enumerate() {
        if n == refused_at || n % 7 == 3 {
            assert_eq!(*line, "", "sentence {}", n + 1);
            unparsed += usize::from(n != refused_at);
        } else {
            assert_eq!(
                *line,
                "(Request (Ticket (Kind day) ticket))",
                "sentence {}",
                n + 1
            );
        }
    }
    assert!(
        run.stderr.contains(&format!(
            "sentence {}: a sentence of 400 words needs a chart",
            refused_at + 1
        )),
        "{}",
        run.stderr
    );
    assert!(
        run.stderr.contains(&format!(
            "{unparsed} of {total} sentences did not parse; 1 of {total} was not analysed"
        )),
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

/// `S → S S (0.4) | "a" (0.6)`: a sentence of n words has Catalan(n − 1)
/// trees, so its chart passes do work in every cell.
const AMBIGUOUS: &str = "start S\nS { 0.4 S S | 0.6 \"a\" }\n";

fn ambiguous() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("s.trellis"), AMBIGUOUS).unwrap();
    dir
}

/// `n` words "a", space-separated.
fn words(n: usize) -> String {
    vec!["a"; n].join(" ")
}

#[test]
fn a_chart_refused_for_its_kbest_lists_names_kbest_not_the_sentence_length() {
    // 40 words of the ambiguous grammar: a small chart, and Catalan(39)
    // trees, of which the k-best pass cannot find 100,000 within 1 MiB.
    let dir = ambiguous();
    let sentence = words(40);
    let args = [
        "parse",
        "s.trellis",
        sentence.as_str(),
        "--kbest",
        "100000",
        "--max-chart-mib",
        "1",
    ];
    let run = trellis(dir.path(), &args);
    assert_eq!(run.code, 1, "{}", run.stderr);
    let text = &run.stdout;
    assert!(
        text.contains("not analysed: finding the 100000 most probable trees"),
        "{text}"
    );
    assert!(
        text.contains("or fewer, or raise --max-chart-mib (now 1)"),
        "{text}"
    );
    assert!(text.contains("ask for --kbest "), "{text}");
    assert!(!text.contains("did not parse"), "{text}");
    assert!(!text.contains("shorter"), "{text}");
    assert!(!text.contains("no parse"), "{text}");
    // The number of trees it names does fit.
    let fits: String = text
        .split("ask for --kbest ")
        .nth(1)
        .unwrap()
        .chars()
        .take_while(char::is_ascii_digit)
        .collect();
    let mut fitting = args.to_vec();
    fitting[4] = &fits;
    let run = trellis(dir.path(), &fitting);
    assert_eq!(run.code, 0, "--kbest {fits}: {}{}", run.stdout, run.stderr);
}

#[test]
fn a_refused_sentence_has_a_null_probability_in_json_not_zero() {
    let dir = ambiguous();
    let sentence = words(40);
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "s.trellis",
            sentence.as_str(),
            "--kbest",
            "100000",
            "--max-chart-mib",
            "1",
            "--format",
            "json",
        ],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert_eq!(doc["parsed"], false);
    assert!(doc["sentence_probability"].is_null(), "{doc}");
    assert!(doc["sentence_log_probability"].is_null(), "{doc}");
    let error = doc["error"].as_str().unwrap();
    assert!(
        error.contains("--kbest") && error.contains("--max-chart-mib"),
        "{error}"
    );
    // A sentence that does not parse still has probability 0 (it is known).
    let dir = setup();
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "ticket day", "--format", "json"],
    );
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert_eq!(doc["sentence_probability"], 0.0);
}

#[test]
fn max_seconds_stops_a_long_parse_and_says_which_option_stopped_it() {
    let dir = ambiguous();
    let sentence = vec!["a"; 300].join(" ");
    // A nanosecond: the parse of 300 words cannot finish within it (its
    // chart alone is 45,150 cells).
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "s.trellis",
            sentence.as_str(),
            "--max-seconds",
            "0.000000001",
        ],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(
        run.stdout.contains(
            "not analysed: the parse was stopped before it finished: it took longer than \
             --max-seconds 0.000000001"
        ),
        "{}",
        run.stdout
    );
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "s.trellis",
            sentence.as_str(),
            "--max-seconds",
            "1e-9",
            "--format",
            "brackets",
        ],
    );
    assert_eq!(run.code, 1);
    assert_eq!(run.stdout, "\n");
    assert!(
        run.stderr.contains("sentence 1: the parse was stopped"),
        "{}",
        run.stderr
    );
    assert!(
        run.stderr.contains("1 of 1 was not analysed"),
        "{}",
        run.stderr
    );
    for bad in ["0", "-0.5", "soon", "inf"] {
        let run = trellis(
            dir.path(),
            &["parse", "s.trellis", "a", &format!("--max-seconds={bad}")],
        );
        assert_eq!(run.code, 2, "{bad}");
        assert!(
            run.stderr.contains("is not a number of seconds above 0"),
            "{}",
            run.stderr
        );
    }
}

#[test]
fn a_beam_says_the_results_are_not_exact_in_both_formats() {
    let dir = setup();
    // "a day ticket" has two trees (see the first test); keeping one symbol
    // per chart cell drops the one that starts with "a" inside the Ticket.
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "a day ticket",
            "--kbest",
            "2",
            "--beam-size",
            "1",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("trees: 1"), "{}", run.stdout);
    assert!(
        run.stdout.contains(
            "note: pruned with a beam of at most 1 symbol per cell: not exact; probabilities \
             are lower bounds, the best tree may be missed, the tree count counts surviving \
             trees only"
        ),
        "{}",
        run.stdout
    );
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "a day ticket",
            "--beam",
            "0",
            "--format",
            "json",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert_eq!(doc["exact"], Value::Bool(false), "{doc}");
    assert_eq!(doc["beam"]["log_width"], 0.0, "{doc}");
    assert_eq!(doc["beam"]["max_symbols"], Value::Null, "{doc}");
    assert_eq!(doc["parse_count"], "1", "{doc}");
    // A lower bound on the exact 1/6 (see the first test): one tree's 1/12.
    let p = doc["sentence_probability"].as_f64().unwrap();
    assert!((p - 1.0 / 12.0).abs() < 1e-15, "{p}");
    // A beam wide enough to drop nothing: exact, and no field says otherwise.
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "a day ticket",
            "--beam",
            "100",
            "--format",
            "json",
        ],
    );
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert!(
        doc.get("exact").is_none() && doc.get("beam").is_none(),
        "{doc}"
    );
    assert_eq!(doc["parse_count"], "2", "{doc}");
    let human = trellis(
        dir.path(),
        &["parse", "g.trellis", "a day ticket", "--beam", "100"],
    );
    assert!(!human.stdout.contains("pruned"), "{}", human.stdout);
}

#[test]
fn a_beam_that_drops_every_tree_is_given_up_and_says_the_results_are_exact() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), GREENHOUSE_BEAM).unwrap();
    // Hand-worked with `GREENHOUSE_BEAM`: one symbol per span keeps only
    // Zone over "ivy", which no tree of "water ivy" uses, so the beam is
    // given up; the exact tree has 1/10 · 1/10 = 0.01. "water fern" keeps
    // a tree (0.09 of the exact 0.24 and 0.33): pruned, not given up.
    let args = [
        "parse",
        "g.trellis",
        "water ivy",
        "water fern",
        "--beam-size",
        "1",
    ];
    let run = trellis(dir.path(), &args);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let (ivy, fern) = run.stdout.split_once("\n\n").unwrap();
    assert!(
        ivy.contains(
            "note: a beam of at most 1 symbol per cell left no tree, so it was given up for \
             this sentence: the results are exact"
        ),
        "{ivy}"
    );
    assert!(ivy.contains("P(sentence) = 0.01 "), "{ivy}");
    assert!(!ivy.contains("pruned"), "{ivy}");
    assert!(fern.contains("note: pruned with"), "{fern}");
    assert!(!fern.contains("given up"), "{fern}");
    let mut json = args.to_vec();
    json.extend(["--format", "json"]);
    let run = trellis(dir.path(), &json);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let docs: Vec<Value> = run
        .stdout
        .lines()
        .map(|l| serde_json::from_str(l).unwrap())
        .collect();
    let (ivy, fern) = (&docs[0], &docs[1]);
    assert_eq!(ivy["exact"], Value::Bool(true), "{ivy}");
    assert_eq!(ivy["beam_abandoned"], Value::Bool(true), "{ivy}");
    assert!(ivy.get("beam").is_none(), "{ivy}");
    assert_eq!(ivy["best"]["tree"], r#"(Command "water" (Plant "ivy"))"#);
    let p = ivy["sentence_probability"].as_f64().unwrap();
    assert!((p - 0.01).abs() < 1e-15, "{p}");
    assert_eq!(fern["exact"], Value::Bool(false), "{fern}");
    assert!(fern.get("beam_abandoned").is_none(), "{fern}");
    assert_eq!(fern["beam"]["max_symbols"], 1, "{fern}");
    // Without a beam, nothing is said.
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "water ivy", "--format", "json"],
    );
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert!(
        doc.get("exact").is_none() && doc.get("beam_abandoned").is_none(),
        "{doc}"
    );
}

#[test]
fn a_bad_beam_is_refused_with_what_to_write() {
    let dir = setup();
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "a day ticket", "--beam", "wide"],
    );
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(
        run.stderr
            .contains("`wide` is not a beam width (a natural-log width of 0 or more"),
        "{}",
        run.stderr
    );
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "a day ticket", "--beam-size", "0"],
    );
    assert_eq!(run.code, 2, "{}", run.stderr);
}
