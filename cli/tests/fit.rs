//! `trellis fit`: a hand-written grammar's weights re-estimated from trees
//! in its own symbols, with nothing but the weights changed.

mod common;

use common::{trellis, Run};
use serde_json::Value;
use std::fs;
use std::path::Path;

/// A lighthouse logbook grammar with every kind of thing a fit must keep:
/// comments, doc comments, a test block, a multi-word terminal, bare
/// alternatives and a `relative` block.
const LOGBOOK: &str = "\
# The lighthouse logbook: one line per watch.
start Entry

## One entry of the log.
Entry {
  0.5  Lamp Status   # the usual line
  0.5  Weather
}

## What the lamp is called.
Lamp { \"lamp\" | \"fresh water\" | \"beacon\" }

Status relative {
  6  \"lit\"    # counted by hand last winter
  3  \"dark\"
}

Weather {
  50%  \"fog\"
  50%  \"gale\"
}

test \"watch\" {
  accept \"lamp lit\"
  accept \"beacon dark\"
}
";

/// Four entries: `Entry → Lamp Status` three times, `Entry → Weather`
/// once. `fresh water` is one terminal of two words, matched whether the
/// tree writes it as two leaves or as one quoted leaf.
const TREES: &str = "\
# four watches
(Entry (Lamp lamp) (Status lit))
(Entry (Lamp fresh water) (Status lit))
(Entry (Lamp \"fresh water\")
       (Status dark))
(Entry (Weather fog))
";

fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("logbook.trellis"), LOGBOOK).unwrap();
    fs::write(dir.path().join("watches.mrg"), TREES).unwrap();
    dir
}

/// `trellis fit logbook.trellis watches.mrg` with `options` after them,
/// run in `dir`; it must succeed.
#[track_caller]
fn fit_watches(dir: &Path, options: &[&str]) -> Run {
    let args = [&["fit", "logbook.trellis", "watches.mrg"], options].concat();
    let run = trellis(dir, &args);
    assert_eq!(run.code, 0, "{}", run.stderr);
    run
}

/// Checks that `run` wrote `text` to standard error.
#[track_caller]
fn assert_stderr_has(run: &Run, text: &str) {
    assert!(run.stderr.contains(text), "{}", run.stderr);
}

fn read(dir: &Path, name: &str) -> String {
    fs::read_to_string(dir.join(name)).unwrap()
}

#[test]
fn maximum_likelihood_weights_replace_only_the_weight_tokens() {
    let dir = setup();
    let run = fit_watches(dir.path(), &["--smoothing", "none"]);
    // Maximum likelihood for a multinomial (common practice), by hand:
    //   Entry: Lamp Status 3 of 4 → 3/4 = 0.75, Weather 1 of 4 → 0.25;
    //   Lamp: lamp 1, fresh water 2, beacon 0 of 3 → 1/3, 2/3, 0 (no
    //     finite decimal: the block is written in fractions, and the bare
    //     alternatives get their weights);
    //   Status (relative: counts): lit 2, dark 1;
    //   Weather: fog 1, gale 0 → 100%, 0%.
    // Every comment, doc comment, the test block and the layout stay.
    let expected = LOGBOOK
        .replace("0.5  Lamp Status", "0.75  Lamp Status")
        .replace("0.5  Weather\n", "0.25  Weather\n")
        .replace(
            "{ \"lamp\" | \"fresh water\" | \"beacon\" }",
            "{ 1/3 \"lamp\" | 2/3 \"fresh water\" | 0 \"beacon\" }",
        )
        .replace("6  \"lit\"", "2  \"lit\"")
        .replace("3  \"dark\"", "1  \"dark\"")
        .replace("50%  \"fog\"", "100%  \"fog\"")
        .replace("50%  \"gale\"", "0%  \"gale\"");
    assert_eq!(run.stdout, expected);
    // The file itself is untouched: without -o or --in-place the grammar
    // goes to standard output.
    assert_eq!(read(dir.path(), "logbook.trellis"), LOGBOOK);
    assert_stderr_has(&run, "fitted 4 blocks to 4 trees (smoothing none)");
    // The one block that turns to fractions gets its reason in full.
    assert_stderr_has(
        &run,
        "note: `Lamp` takes exact fractions: decimals cannot be exact here: 1/3 has no finite \
         decimal expansion\n",
    );
    // Zero weights are reported, and the test case they break.
    assert!(
        run.stderr
            .contains("warning: the fitted grammar has a new finding: logbook.trellis:11:")
            && run.stderr.contains("zero-weight"),
        "{}",
        run.stderr
    );
    assert_stderr_has(&run, "warning: test \"watch\": `accept \"beacon dark\"` held with the old weights and fails with the new");
}

#[test]
fn add_one_smoothing_gives_unseen_rules_a_share() {
    let dir = setup();
    let run = fit_watches(
        dir.path(),
        &["--smoothing", "add-1", "-o", "fitted.trellis"],
    );
    assert!(run.stdout.is_empty());
    assert_stderr_has(&run, "wrote fitted.trellis");
    // Entry, Lamp and Weather turn to fractions (below): one note names
    // them all, and JSON gives each block's reason.
    assert_eq!(run.stderr.matches("note:").count(), 1, "{}", run.stderr);
    assert_stderr_has(
        &run,
        "note: 3 blocks take exact fractions, since some of their new weights have no finite \
         decimal expansion: `Entry`, `Lamp`, `Weather` (`--format json` gives each block's \
         reason)\n",
    );
    let json = fit_watches(
        dir.path(),
        &["--smoothing", "add-1", "--dry-run", "--format", "json"],
    );
    let doc: Value = serde_json::from_str(json.stdout.trim()).unwrap();
    assert_eq!(
        doc["fallbacks"],
        serde_json::json!([
            {"block": "Entry", "reason": "decimals cannot be exact here: 2/3 has no finite decimal expansion"},
            {"block": "Lamp", "reason": "decimals cannot be exact here: 1/3 has no finite decimal expansion"},
            {"block": "Weather", "reason": "percentages cannot be exact here: 2/3 has no finite decimal expansion"},
        ])
    );
    let fitted = read(dir.path(), "fitted.trellis");
    // Add-1 (Laplace's rule of succession), (count + 1) / (total + n):
    //   Entry: (3+1)/(4+2) = 4/6 = 2/3, (1+1)/(4+2) = 1/3 — no finite
    //     decimal, so fractions;
    //   Lamp: (1+1)/(3+3) = 1/3, (2+1)/6 = 1/2, (0+1)/6 = 1/6;
    //   Status: counts plus one, 3 and 2;
    //   Weather: (1+1)/(1+2) = 2/3 — no finite percentage: fractions.
    assert!(
        fitted.contains("  2/3  Lamp Status   # the usual line\n  1/3  Weather\n"),
        "{fitted}"
    );
    assert!(
        fitted.contains("Lamp { 1/3 \"lamp\" | 1/2 \"fresh water\" | 1/6 \"beacon\" }"),
        "{fitted}"
    );
    assert!(
        fitted.contains("  3  \"lit\"    # counted by hand last winter\n  2  \"dark\"\n"),
        "{fitted}"
    );
    assert!(
        fitted.contains("  2/3  \"fog\"\n  1/3  \"gale\"\n"),
        "{fitted}"
    );
    // The fitted grammar is clean and its tests pass.
    let check = trellis(dir.path(), &["check", "fitted.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    assert!(
        check.stdout.contains("0 errors, 0 warnings"),
        "{}",
        check.stdout
    );
    let test = trellis(dir.path(), &["test", "fitted.trellis"]);
    assert_eq!(test.code, 0, "{}{}", test.stdout, test.stderr);
}

#[test]
fn the_default_is_add_a_half_and_fitting_twice_changes_nothing_more() {
    let dir = setup();
    let run = fit_watches(dir.path(), &["--in-place"]);
    assert!(run.stdout.is_empty());
    assert_stderr_has(&run, "(smoothing add-0.5)");
    let once = read(dir.path(), "logbook.trellis");
    // Add-½: Entry (3.5/5, 1.5/5) = 0.7, 0.3; Status counts 2.5 and 1.5.
    assert!(
        once.contains("  0.7  Lamp Status   # the usual line\n  0.3  Weather\n"),
        "{once}"
    );
    assert!(
        once.contains("  2.5  \"lit\"    # counted by hand last winter\n  1.5  \"dark\"\n"),
        "{once}"
    );
    // Weather: (1.5/2, 0.5/2) = 75%, 25%, in its own notation.
    assert!(once.contains("  75%  \"fog\"\n  25%  \"gale\"\n"), "{once}");
    let again = fit_watches(dir.path(), &["--in-place"]);
    assert_stderr_has(&again, "no weight changes: nothing written");
    assert_eq!(read(dir.path(), "logbook.trellis"), once);
    let check = trellis(dir.path(), &["check", "logbook.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
}

#[test]
fn a_node_no_rule_produces_is_located_with_the_rule_it_needs() {
    let dir = setup();
    fs::write(
        dir.path().join("odd.mrg"),
        "(Entry (Weather gale))\n(Entry (Lamp lamp)\n  (Status lit) (Weather fog))\n(Entry (Lamp lantern) (Status lit))\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["fit", "logbook.trellis", "odd.mrg"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(run.stdout.is_empty());
    assert_stderr_has(&run, "error: odd.mrg:2:1: no rule produces this node: the tree needs the rule `Entry → Lamp Status Weather`\n  \
             help: add the alternative `Lamp Status Weather` to the block `Entry` (logbook.trellis:5:1), or correct the tree");
    assert_eq!(read(dir.path(), "logbook.trellis"), LOGBOOK);
    // --keep-going skips both bad trees and fits to the one good tree.
    let run = trellis(
        dir.path(),
        &[
            "fit",
            "logbook.trellis",
            "odd.mrg",
            "--keep-going",
            "--dry-run",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert_stderr_has(&run, "warning: skipped a tree: odd.mrg:4:8: no rule produces this node: the tree needs the rule `Lamp → \"lantern\"` (`lantern` is no terminal of the grammar)");
    assert_stderr_has(
        &run,
        "fitted 2 blocks to 1 tree (smoothing add-0.5); 2 trees skipped",
    );
    // An unknown label, with the name it probably meant.
    fs::write(dir.path().join("typo.mrg"), "(Entry (Wether fog))\n").unwrap();
    let run = trellis(dir.path(), &["fit", "logbook.trellis", "typo.mrg"]);
    assert_eq!(run.code, 1);
    assert_stderr_has(&run, "error: typo.mrg:1:8: `Wether` is not a symbol of the grammar: no block has this name\n  help: did you mean `Weather`?");
}

#[test]
fn cleaning_applies_before_matching_and_errors_keep_their_place() {
    let dir = setup();
    fs::write(
        dir.path().join("tagged.mrg"),
        "( (Entry-LOG (Lamp-1 lamp) (Status=2 lit)) )\n(Entry (Weather-X (-NONE- *) fog))\n",
    )
    .unwrap();
    let run = trellis(
        dir.path(),
        &[
            "fit",
            "logbook.trellis",
            "tagged.mrg",
            "--strip-functions",
            "--drop-empty",
            "--dry-run",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert_stderr_has(&run, "fitted 4 blocks to 2 trees");
    // Without --drop-empty the empty element is a node no rule produces,
    // reported at its own bracket on line 2 (the outer bracket of line 1
    // is not a node).
    let run = trellis(
        dir.path(),
        &["fit", "logbook.trellis", "tagged.mrg", "--strip-functions"],
    );
    assert_eq!(run.code, 1);
    assert_stderr_has(
        &run,
        "error: tagged.mrg:2:19: `-NONE-` is not a symbol of the grammar",
    );
}

#[test]
fn a_dry_run_prints_old_and_new_probabilities_and_writes_nothing() {
    let dir = setup();
    let run = fit_watches(dir.path(), &["--dry-run", "--smoothing", "none"]);
    assert_eq!(read(dir.path(), "logbook.trellis"), LOGBOOK);
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines[0], "rule                  count  old            new");
    assert!(
        lines.contains(&"Entry → Lamp Status       3  0.5            0.75"),
        "{}",
        run.stdout
    );
    assert!(
        lines.contains(&"Lamp → \"fresh water\"      2  ≈0.3333333333  ≈0.6666666667"),
        "{}",
        run.stdout
    );
    assert!(
        lines.contains(&"Status → \"lit\"            2  ≈0.6666666667  ≈0.6666666667"),
        "{}",
        run.stdout
    );

    let run = trellis(
        dir.path(),
        &[
            "fit",
            "--format",
            "json",
            "--dry-run",
            "logbook.trellis",
            "watches.mrg",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert_eq!(doc["trees"], 4);
    assert_eq!(doc["written"], false);
    let entry = &doc["blocks"][0];
    assert_eq!(entry["name"], "Entry");
    assert_eq!(entry["total"], 4);
    // Add-½: (3 + ½)/(4 + 1) = 7/10.
    assert_eq!(entry["rules"][0]["new"], "7/10");
    assert_eq!(entry["rules"][0]["old"], "1/2");
    assert_eq!(entry["rules"][0]["line"], 6);
}

#[test]
fn a_grammar_with_errors_is_not_fitted() {
    let dir = setup();
    fs::write(
        dir.path().join("broken.trellis"),
        "start S\nS {\n  0.5 \"a\"\n}\n",
    )
    .unwrap();
    fs::write(dir.path().join("s.mrg"), "(S a)\n").unwrap();
    let run = trellis(dir.path(), &["fit", "broken.trellis", "s.mrg"]);
    assert_eq!(run.code, 1);
    assert_stderr_has(&run, "sum-not-one");
    assert_stderr_has(
        &run,
        "error: broken.trellis has 1 error; fix it before fitting its weights",
    );
}

#[test]
fn weights_in_a_used_file_need_in_place() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("main.trellis"),
        "start S\nuse \"words.trellis\"\nS {\n  0.5 W\n  0.5 W W\n}\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("words.trellis"),
        "# the words\nW {\n  0.5 \"a\"\n  0.5 \"b\"\n}\n",
    )
    .unwrap();
    fs::write(dir.path().join("t.mrg"), "(S (W a))\n(S (W a) (W a))\n").unwrap();
    let run = trellis(dir.path(), &["fit", "main.trellis", "t.mrg"]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert_stderr_has(&run, "words.trellis too");
    let run = trellis(
        dir.path(),
        &[
            "fit",
            "main.trellis",
            "t.mrg",
            "--in-place",
            "--smoothing",
            "add-1",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    // W: a three times, b never: (3+1)/(3+2) = 0.8, 0.2.
    assert_eq!(
        read(dir.path(), "words.trellis"),
        "# the words\nW {\n  0.8 \"a\"\n  0.2 \"b\"\n}\n"
    );
    assert!(read(dir.path(), "main.trellis").contains("  0.5 W\n  0.5 W W\n"));
}

/// The grammar whose weights the round trip must recover: recursion, a
/// terminal of two words and every notation.
const TRUE_LOG: &str = "\
start Log
Log {
  0.6  Entry
  0.4  Entry Log
}
Entry {
  0.5  Light Status
  0.3  Weather
  0.2  \"fresh water\" Status
}
Light { 0.7 \"lamp\" | 0.3 \"beacon\" }
Status relative {
  3  \"lit\"
  1  \"dark\"
}
Weather {
  25%  \"fog\"
  75%  \"gale\"
}
";

#[test]
fn weights_are_recovered_from_trees_sampled_from_the_grammar() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("true.trellis"), TRUE_LOG).unwrap();
    let sample = trellis(
        dir.path(),
        &[
            "sample",
            "true.trellis",
            "--trees",
            "-n",
            "20000",
            "--seed",
            "13",
        ],
    );
    assert_eq!(sample.code, 0, "{}", sample.stderr);
    fs::write(dir.path().join("sampled.mrg"), &sample.stdout).unwrap();
    // A copy with every block's weights made uniform (counts of 1).
    let perturbed = TRUE_LOG
        .replace("0.6  Entry\n", "0.5  Entry\n")
        .replace("0.4  Entry Log", "0.5  Entry Log")
        .replace("0.5  Light", "1/3  Light")
        .replace("0.3  Weather", "1/3  Weather")
        .replace("0.2  \"fresh", "1/3  \"fresh")
        .replace("0.7 \"lamp\" | 0.3", "0.5 \"lamp\" | 0.5")
        .replace("3  \"lit\"", "1  \"lit\"")
        .replace("25%", "50%")
        .replace("75%", "50%");
    fs::write(dir.path().join("guess.trellis"), perturbed).unwrap();
    let run = trellis(
        dir.path(),
        &[
            "fit",
            "guess.trellis",
            "sampled.mrg",
            "--smoothing",
            "none",
            "--format",
            "json",
            "--dry-run",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let doc: Value = serde_json::from_str(run.stdout.trim()).unwrap();
    assert_eq!(doc["trees"], 20000);
    let truth = [
        ("Log", [0.6, 0.4].as_slice()),
        ("Entry", &[0.5, 0.3, 0.2]),
        ("Light", &[0.7, 0.3]),
        ("Status", &[0.75, 0.25]),
        ("Weather", &[0.25, 0.75]),
    ];
    for (name, probabilities) in truth {
        let block = doc["blocks"]
            .as_array()
            .unwrap()
            .iter()
            .find(|b| b["name"] == name)
            .unwrap();
        let n = block["total"].as_f64().unwrap();
        // Hoeffding's inequality (1963): given n uses of the block, a
        // rule's share c/n lies within sqrt(ln(2/δ)/(2n)) of its
        // probability except with probability δ; δ = 10⁻⁶ per rule.
        let bound = ((2.0f64 / 1e-6).ln() / (2.0 * n)).sqrt();
        assert!(n > 5000.0, "{name}: only {n} uses");
        for (rule, &p) in block["rules"].as_array().unwrap().iter().zip(probabilities) {
            let fitted = rule["new_probability"].as_f64().unwrap();
            assert!(
                (fitted - p).abs() <= bound,
                "{name}: {} fitted {fitted}, true {p}, bound {bound}",
                rule["rule"]
            );
        }
    }
}
