//! End to end through a real editor: Neovim's built-in LSP client starts the
//! built `trellis lsp`, opens copies of the bundled examples, and records
//! what it receives (lsp/tests/nvim/e2e.lua); this test checks the record.
//!
//! Needs `nvim` (0.7 or newer; `.ci/run` installs Debian's). Without it the
//! test is skipped with a message — except under CI (env `CI` set), where it
//! fails.

#[path = "common/binary.rs"]
mod binary;

use binary::{repo, trellis_binary};
use serde_json::Value;
use std::collections::BTreeSet;
use std::fs;
use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// Generous bound on the whole editor session, so a hung editor fails the
/// test instead of hanging it (not a measurement).
const SESSION_LIMIT: Duration = Duration::from_secs(240);

fn nvim_available() -> bool {
    Command::new("nvim")
        .arg("--version")
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .status()
        .is_ok_and(|s| s.success())
}

/// The (code, 0-based line) of each diagnostic `trellis check --format json`
/// reports for `file`.
fn cli_findings(trellis: &Path, file: &Path) -> BTreeSet<(String, u64)> {
    let out = Command::new(trellis)
        .args(["check", "--format", "json"])
        .arg(file)
        .output()
        .expect("trellis runs");
    let report: Value = serde_json::from_slice(&out.stdout).expect("JSON report");
    let name = file.file_name().unwrap().to_string_lossy().to_string();
    report["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|d| d["file"].as_str().unwrap().ends_with(&name))
        .map(|d| {
            (
                d["code"].as_str().unwrap().to_string(),
                d["line"].as_u64().unwrap() - 1,
            )
        })
        .collect()
}

fn copy_examples(dir: &Path, names: &[&str]) {
    fs::create_dir_all(dir).unwrap();
    for name in names {
        fs::copy(repo().join("examples").join(name), dir.join(name)).unwrap();
    }
}

#[test]
fn neovim_shows_diagnostics_hover_definition_fixes_parses_and_runs_tests_through_trellis_lsp() {
    if !nvim_available() {
        if std::env::var_os("CI").is_some() {
            panic!("nvim is not installed, and CI must run the editor test (.ci/run installs it)");
        }
        eprintln!("SKIPPED: nvim is not installed (apt-get install neovim); CI runs this test");
        return;
    }
    let trellis = trellis_binary();
    let dir = tempfile::tempdir().unwrap();
    let broken_dir = dir.path().join("broken");
    let good_dir = dir.path().join("good");
    copy_examples(&broken_dir, &["broken.trellis", "broken_cycle.trellis"]);
    copy_examples(&good_dir, &["ferry_kiosk.trellis", "ferry_lexicon.trellis"]);
    let broken = broken_dir.join("broken.trellis");
    let good = good_dir.join("ferry_kiosk.trellis");
    let out_file = dir.path().join("received.json");
    let home = dir.path().join("home");
    fs::create_dir_all(&home).unwrap();

    let mut child = Command::new("nvim")
        .args(["--headless", "--clean", "-n", "-i", "NONE", "-u"])
        .arg(repo().join("lsp/tests/nvim/e2e.lua"))
        .env("TRELLIS_BIN", &trellis)
        .env("TRELLIS_PLUGIN", repo().join("editors/nvim"))
        .env("TRELLIS_BROKEN", &broken)
        .env("TRELLIS_GOOD", &good)
        .env("TRELLIS_OUT", &out_file)
        .env("HOME", &home)
        .env("XDG_CACHE_HOME", home.join("cache"))
        .env("XDG_STATE_HOME", home.join("state"))
        .env("XDG_DATA_HOME", home.join("data"))
        .env("XDG_CONFIG_HOME", home.join("config"))
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .current_dir(dir.path())
        .spawn()
        .expect("nvim starts");
    let started = Instant::now();
    let status = loop {
        if let Some(status) = child.try_wait().expect("waiting on nvim") {
            break status;
        }
        if started.elapsed() > SESSION_LIMIT {
            let _ = child.kill();
            let _ = child.wait();
            panic!("nvim did not finish within {SESSION_LIMIT:?}");
        }
        std::thread::sleep(Duration::from_millis(50));
    };
    let text = fs::read_to_string(&out_file).unwrap_or_else(|e| {
        panic!(
            "nvim ({status}) wrote no record to {}: {e}",
            out_file.display()
        )
    });
    let record: Value = serde_json::from_str(&text).expect("the record is JSON");
    let log = record["log"]
        .as_str()
        .and_then(|p| fs::read_to_string(p).ok())
        .unwrap_or_default();
    let tail: String = log
        .lines()
        .rev()
        .take(40)
        .collect::<Vec<_>>()
        .into_iter()
        .rev()
        .collect::<Vec<_>>()
        .join("\n");
    assert_eq!(
        record["errors"],
        Value::Array(vec![]),
        "the editor session failed; client log tail:\n{tail}"
    );
    let steps = &record["steps"];
    assert_eq!(
        steps["attached"], true,
        "the LSP client never attached; log tail:\n{tail}"
    );
    assert_eq!(steps["filetype"], "trellis");

    // The editor receives exactly what `trellis check` reports for the file.
    let received: BTreeSet<(String, u64)> = steps["diagnostics"]["diagnostics"]
        .as_array()
        .expect("diagnostics")
        .iter()
        .map(|d| {
            (
                d["code"].as_str().unwrap().to_string(),
                d["range"]["start"]["line"].as_u64().unwrap(),
            )
        })
        .collect();
    assert_eq!(received, cli_findings(&trellis, &broken));
    assert!(received.len() >= 15, "{received:?}");
    assert_eq!(
        steps["shown_diagnostic_count"].as_u64(),
        Some(received.len() as u64)
    );

    // Hover and definition on `Island` inside `Order`.
    let hover = steps["hover"]["result"]["contents"]["value"]
        .as_str()
        .unwrap_or_else(|| panic!("no hover: {}", steps["hover"]));
    assert!(hover.contains("Island"), "{hover}");
    let definition = &steps["definition"]["result"];
    let broken_text = fs::read_to_string(&broken).unwrap();
    let island_line = broken_text
        .lines()
        .position(|l| l.starts_with("Island {"))
        .unwrap() as u64;
    assert_eq!(
        definition["range"]["start"],
        serde_json::json!({"line": island_line, "character": 0}),
        "{definition}"
    );
    assert!(definition["uri"]
        .as_str()
        .unwrap()
        .ends_with("/broken.trellis"));

    // A grammar with errors is not parsed: LSP `RequestFailed`.
    assert_eq!(steps["parse_broken"]["error"]["code"], -32803);

    // The quick fix removed the `sum-not-one` finding and nothing else.
    assert!(steps["applied_fix"].as_str().is_some());
    let after: BTreeSet<(String, u64)> = steps["diagnostics_after_fix"]["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| {
            (
                d["code"].as_str().unwrap().to_string(),
                d["range"]["start"]["line"].as_u64().unwrap(),
            )
        })
        .collect();
    let expected: BTreeSet<(String, u64)> = received
        .iter()
        .filter(|(code, _)| code != "sum-not-one")
        .cloned()
        .collect();
    assert_eq!(after, expected);

    // The clean ferry grammar parses its own test sentence and rejects
    // its own malformed one (examples/ferry_kiosk.trellis, test blocks).
    assert_eq!(
        steps["good_diagnostics"]["diagnostics"],
        serde_json::json!([])
    );
    let results = &steps["parse"]["result"]["results"];
    assert_eq!(results[0]["parsed"], true, "{results}");
    assert!(results[0]["tree"].as_str().unwrap().starts_with("(Request"));
    assert_eq!(results[1]["parsed"], false);
    let lenses: Vec<&str> = steps["lenses"]["result"]
        .as_array()
        .unwrap()
        .iter()
        .map(|l| l["command"]["command"].as_str().unwrap())
        .collect();
    // Above `start`: parse, sample, run every test; then one per test block
    // (the kiosk has four).
    assert_eq!(
        lenses,
        [
            "trellis.parse",
            "trellis.sample",
            "trellis.runTest",
            "trellis.runTest",
            "trellis.runTest",
            "trellis.runTest",
            "trellis.runTest"
        ]
    );
    // The kiosk's own tests all hold (their expectations were written by
    // hand; `engine/tests/parse_examples.rs` checks them case by case).
    let run = &steps["run_tests"]["result"];
    assert_eq!(run["failed"], 0, "{run}");
    assert!(run["passed"].as_u64().unwrap() >= 20, "{run}");
    assert_eq!(run["tests"].as_array().unwrap().len(), 4);
    // The case added in the editor fails, and `:TrellisTest`'s quickfix
    // list points at it.
    let quickfix = &steps["quickfix"];
    let items = quickfix["items"].as_array().unwrap();
    assert_eq!(items.len(), 1, "{quickfix}");
    assert_eq!(items[0]["lnum"], quickfix["failing_line"]);
    assert_eq!(items[0]["col"], 3);
    let text = items[0]["text"].as_str().unwrap();
    assert!(
        text.starts_with("test \"added in the editor\": reject \"two return tickets to tolsey\""),
        "{text}"
    );
    assert!(text.contains("expected no parse"), "{text}");
    // The whole reason is kept, down to the tree it found (on the one line
    // a quickfix entry has).
    assert!(
        text.contains(
            "its most probable tree: (Request (Purchase (Order (Tickets (CountMany \"two\")"
        ),
        "{text}"
    );
    assert!(text.contains("(Island \"tolsey\")"), "{text}");
    assert!(text.contains("(p ≈ "), "{text}");
    assert!(!text.contains('\n'), "{text}");
}
