//! Every command reads the same `trellis.toml` and sees the same findings
//! at the same levels as `trellis check`: one analysis (the façade) under
//! all of them.

mod common;

use common::trellis;
use std::fs;

/// S → S S (0.7) | "a" (0.3) ends with probability 3/7 (the extinction
/// probability min(1, q/p) of a Galton–Watson process with two children
/// with probability p and none with probability q, a classic
/// branching-process result), so 4/7 of the mass leaks.
const LEAKY: &str = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\n";

fn project(config: Option<&str>) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), LEAKY).unwrap();
    if let Some(config) = config {
        fs::write(dir.path().join("trellis.toml"), config).unwrap();
    }
    dir
}

#[test]
fn stats_reports_the_leak_at_the_level_trellis_toml_sets() {
    let default = project(None);
    let run = trellis(default.path(), &["stats", "g.trellis", "--format", "json"]);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(doc["diagnostics"][0]["code"], "leaky", "{}", run.stdout);
    assert_eq!(doc["diagnostics"][0]["severity"], "warning");

    let raised = project(Some("[checks]\nleaky = \"error\"\n"));
    let run = trellis(raised.path(), &["stats", "g.trellis", "--format", "json"]);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(doc["diagnostics"][0]["severity"], "error", "{}", run.stdout);
    // `check` agrees: the same finding, an error, exit status 1.
    let check = trellis(raised.path(), &["check", "--format", "json"]);
    assert_eq!(check.code, 1, "{}", check.stdout);
    let doc: serde_json::Value = serde_json::from_str(&check.stdout).unwrap();
    assert_eq!(doc["diagnostics"][0]["code"], "leaky");
    assert_eq!(doc["diagnostics"][0]["severity"], "error");

    let silenced = project(Some("[checks]\nleaky = \"off\"\n"));
    let run = trellis(silenced.path(), &["stats", "g.trellis", "--format", "json"]);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(doc["diagnostics"], serde_json::json!([]), "{}", run.stdout);
}

#[test]
fn a_level_that_makes_a_reachable_block_fail_stops_parse_sample_and_stats_naming_the_error() {
    // A repeated alternative is a warning by default and an error here; it
    // lies in the start symbol's block, which every run uses.
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("g.trellis"),
        "start S\nS { \"a\" | \"a\" }\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("trellis.toml"),
        "[checks]\nduplicate-rule = \"error\"\n",
    )
    .unwrap();
    assert_eq!(trellis(dir.path(), &["check"]).code, 1);
    for args in [
        &["parse", "g.trellis", "a"][..],
        &["sample", "g.trellis", "-n", "1"][..],
        &["stats", "g.trellis"][..],
    ] {
        let run = trellis(dir.path(), args);
        assert_eq!(run.code, 1, "{args:?}: {}", run.stderr);
        assert!(
            run.stderr
                .contains("the grammar has 1 error in what this run uses, so it cannot run"),
            "{args:?}: {}",
            run.stderr
        );
        assert!(
            run.stderr.contains("  g.trellis:2:11: duplicate-rule "),
            "{args:?}: {}",
            run.stderr
        );
    }
}

#[test]
fn a_level_that_makes_an_unreachable_block_fail_does_not_stop_a_run_and_is_listed() {
    // `unreachable` made an error lies in `X`, which no run from `S` uses.
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("g.trellis"),
        "start S\nS { \"a\" }\nX { \"x\" }\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("trellis.toml"),
        "[checks]\nunreachable = \"error\"\n",
    )
    .unwrap();
    assert_eq!(trellis(dir.path(), &["check"]).code, 1);
    for args in [
        &["parse", "g.trellis", "a"][..],
        &["sample", "g.trellis", "-n", "1", "--seed", "1"][..],
        &["stats", "g.trellis"][..],
    ] {
        let run = trellis(dir.path(), args);
        assert_eq!(run.code, 0, "{args:?}: {}", run.stderr);
        assert!(
            run.stderr.contains(
                "note: ran despite 1 error outside what this run uses (`trellis check` shows it):\n  \
                 g.trellis:3:1: unreachable "
            ),
            "{args:?}: {}",
            run.stderr
        );
    }
}

#[test]
fn an_invalid_configuration_stops_every_command_with_status_2() {
    let dir = project(Some("[checks]\nunreachble = \"error\"\n"));
    for args in [
        &["check"][..],
        &["parse", "g.trellis", "a"][..],
        &["sample", "g.trellis", "-n", "1"][..],
        &["stats", "g.trellis"][..],
        &["test"][..],
    ] {
        let run = trellis(dir.path(), args);
        assert_eq!(run.code, 2, "{args:?}: {}{}", run.stdout, run.stderr);
        assert!(
            run.stderr.contains("trellis.toml"),
            "{args:?}: {}",
            run.stderr
        );
    }
}
