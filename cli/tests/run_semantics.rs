//! What a run uses, as a user sees it: a grammar whose block sums
//! `trellis.toml` allows to be off runs with each block's weights divided by
//! their sum in `parse`, `sample`, `stats` and `test` alike, and an error
//! stops a run only when it lies in what the run uses.

mod common;
use common::trellis;

use serde_json::Value;
use std::collections::HashMap;
use std::fs;

/// A lighthouse logbook whose blocks do not sum to one: `Entry` sums to
/// 0.9, `Weather` to 7/8. Divided by their sums, `Entry`'s alternatives
/// get 1/2 each and `Weather`'s 4/7, 2/7 and 1/7.
const LOGBOOK: &str = r#"start Entry
Entry {
  0.45  Weather "logged"
  0.45  Lamp "logged"
}
Weather {
  1/2  "fog"
  1/4  "gale"
  1/8  "calm"
}
Lamp { "lit" }
test "log" {
  accept "fog logged" as (Entry (Weather "fog") "logged")
}
"#;

const SUMS_MAY_BE_OFF: &str = "[checks]\nsum-not-one = \"warning\"\n";

fn setup(text: &str, config: Option<&str>) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), text).unwrap();
    if let Some(config) = config {
        fs::write(dir.path().join("trellis.toml"), config).unwrap();
    }
    dir
}

fn json(text: &str) -> Value {
    serde_json::from_str(text).unwrap_or_else(|e| panic!("{e}: {text}"))
}

fn close(a: &Value, b: f64) -> bool {
    a.as_f64().is_some_and(|a| (a - b).abs() < 1e-12)
}

#[test]
fn parse_uses_the_weights_divided_by_their_block_sums_and_says_so() {
    let dir = setup(LOGBOOK, Some(SUMS_MAY_BE_OFF));
    // The tree uses Entry → Weather "logged" and Weather → "fog":
    // (0.45 / 0.9) · ((1/2) / (7/8)) = 1/2 · 4/7 = 2/7 (worked by hand;
    // the weights as written would give 0.45 · 1/2 = 0.225).
    let run = trellis(dir.path(), &["parse", "g.trellis", "fog logged"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("p = 0.285714"), "{}", run.stdout);
    assert!(
        run.stderr.contains(
            "note: the weights of blocks `Entry`, `Weather` do not sum to one and were \
             rescaled to sum to one"
        ),
        "{}",
        run.stderr
    );
    let run = trellis(
        dir.path(),
        &["parse", "g.trellis", "fog logged", "--format", "json"],
    );
    let doc = json(&run.stdout);
    assert!(close(&doc["best"]["probability"], 2.0 / 7.0), "{doc}");
    assert_eq!(doc["rescaled"], serde_json::json!(["Entry", "Weather"]));
    assert_eq!(doc["ignored_errors"], serde_json::json!([]));
}

#[test]
fn sample_draws_with_the_same_weights_parse_uses() {
    let dir = setup(LOGBOOK, Some(SUMS_MAY_BE_OFF));
    let n = 7000;
    let run = trellis(
        dir.path(),
        &[
            "sample",
            "g.trellis",
            "-n",
            &n.to_string(),
            "--seed",
            "11",
            "--format",
            "json",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    assert_eq!(doc["rescaled"], serde_json::json!(["Entry", "Weather"]));
    let mut counts: HashMap<String, f64> = HashMap::new();
    for s in doc["samples"].as_array().unwrap() {
        *counts
            .entry(s["sentence"].as_str().unwrap().to_string())
            .or_default() += 1.0;
    }
    // The sentences' probabilities with the rescaled weights (each has one
    // tree): fog 1/2 · 4/7, gale 1/2 · 2/7, calm 1/2 · 1/7, lit 1/2.
    let expected = [
        ("fog logged", 2.0 / 7.0),
        ("gale logged", 1.0 / 7.0),
        ("calm logged", 1.0 / 14.0),
        ("lit logged", 1.0 / 2.0),
    ];
    assert_eq!(counts.len(), 4, "{counts:?}");
    // Pearson's chi-square over the four sentences (3 degrees of freedom).
    let chi: f64 = expected
        .iter()
        .map(|(s, p)| {
            let e = p * n as f64;
            let o = counts.get(*s).copied().unwrap_or(0.0);
            (o - e) * (o - e) / e
        })
        .sum();
    // 16.27 is the chi-square quantile for df 3 at α = 0.001 (standard
    // table, recalled from memory); the weights as written (0.45 · 1/2 …,
    // 10% of the draws lost) would be far off.
    assert!(chi < 16.27, "chi-square {chi}: {counts:?}");
}

#[test]
fn stats_measures_the_same_weights() {
    let dir = setup(LOGBOOK, Some(SUMS_MAY_BE_OFF));
    let run = trellis(dir.path(), &["stats", "g.trellis", "--format", "json"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    // With `Entry` divided by 0.9 every derivation ends (as written, 10%
    // of the mass would be missing); each sentence has two words and uses
    // `Weather` with probability 1/2 (worked by hand).
    assert_eq!(doc["tight"], true, "{doc}");
    assert!(close(&doc["expected_length"], 2.0), "{doc}");
    let weather = doc["symbols"]
        .as_array()
        .unwrap()
        .iter()
        .find(|s| s["name"] == "Weather")
        .unwrap();
    assert!(close(&weather["expected_uses"], 0.5), "{weather}");
    assert_eq!(doc["rescaled"], serde_json::json!(["Entry", "Weather"]));
    let human = trellis(dir.path(), &["stats", "g.trellis"]);
    assert!(
        human.stderr.contains("rescaled to sum to one"),
        "{}",
        human.stderr
    );
}

#[test]
fn the_test_runner_judges_with_the_same_weights() {
    let dir = setup(LOGBOOK, Some(SUMS_MAY_BE_OFF));
    let run = trellis(dir.path(), &["test", "--format", "json"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let doc = json(&run.stdout);
    let grammar = &doc["grammars"][0];
    assert_eq!(grammar["rescaled"], serde_json::json!(["Entry", "Weather"]));
    // The same 2/7 as `parse` (see above).
    let case = &grammar["tests"][0]["cases"][0];
    assert_eq!(case["passed"], true, "{case}");
    assert!(close(&case["probability"], 2.0 / 7.0), "{case}");
    let human = trellis(dir.path(), &["test"]);
    assert!(
        human
            .stdout
            .contains("note: the weights of blocks `Entry`, `Weather`"),
        "{}",
        human.stdout
    );
}

#[test]
fn an_error_in_a_block_the_start_cannot_reach_does_not_stop_a_run_and_is_listed() {
    let text = format!("{LOGBOOK}Spare {{ Missing \"x\" }}\n");
    let dir = setup(&text, Some(SUMS_MAY_BE_OFF));
    let run = trellis(dir.path(), &["parse", "g.trellis", "lit logged"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("p = 0.5"), "{}", run.stdout);
    assert!(
        run.stderr
            .contains("note: ran despite 2 errors outside what this run uses"),
        "{}",
        run.stderr
    );
    assert!(
        run.stderr
            .contains("  g.trellis:15:9: undefined `Missing` is used but has no block"),
        "{}",
        run.stderr
    );
    let run = trellis(dir.path(), &["stats", "g.trellis", "--format", "json"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc = json(&run.stdout);
    let ignored: Vec<(&str, u64)> = doc["ignored_errors"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| (d["code"].as_str().unwrap(), d["line"].as_u64().unwrap()))
        .collect();
    assert_eq!(ignored, [("unproductive", 15), ("undefined", 15)]);
    // `check` still fails on them.
    assert_eq!(trellis(dir.path(), &["check"]).code, 1);
}

#[test]
fn an_error_in_what_the_run_uses_stops_it_and_is_named_with_its_place() {
    let text = LOGBOOK.replace("1/8  \"calm\"", "1/8  Drizzle");
    let dir = setup(&text, Some(SUMS_MAY_BE_OFF));
    for args in [
        &["parse", "g.trellis", "fog logged"][..],
        &["sample", "g.trellis", "-n", "1", "--seed", "1"][..],
        &["stats", "g.trellis"][..],
    ] {
        let run = trellis(dir.path(), args);
        assert_eq!(run.code, 1, "{args:?}: {}", run.stderr);
        assert!(
            run.stderr.contains(
                "error: g.trellis: the grammar has 1 error in what this run uses, so it \
                 cannot run; fix it first"
            ),
            "{args:?}: {}",
            run.stderr
        );
        assert!(
            run.stderr.contains(
                "  g.trellis:9:8: undefined `Drizzle` is used but has no block (help: define \
                 it with a block `Drizzle { … }`, or fix the name)"
            ),
            "{args:?}: {}",
            run.stderr
        );
    }
    // Starting from a symbol that does not reach the error runs.
    let run = trellis(dir.path(), &["stats", "g.trellis", "--from", "Lamp"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
}
