//! The reports CI systems read, from the built binary: `check --format
//! sarif` and `--format github`, `test --format junit`, and rule coverage
//! (`test --coverage`, `--min-coverage`). `tests/reports/validate.py`
//! reads the same reports with independent libraries.

mod common;
use common::{trellis, KIOSK};

use serde_json::Value;
use std::fs;
use std::path::Path;

fn examples() -> std::path::PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples")
}

/// The findings of `broken.trellis` as `check --format json` gives them.
fn broken_findings() -> Vec<Value> {
    let run = trellis(
        &examples(),
        &["check", "--format", "json", "broken.trellis"],
    );
    let doc: Value = serde_json::from_str(&run.stdout).unwrap();
    doc["diagnostics"].as_array().unwrap().clone()
}

#[test]
fn sarif_has_one_run_a_rule_per_code_and_a_result_per_finding() {
    let run = trellis(
        &examples(),
        &["check", "--format", "sarif", "broken.trellis"],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let log: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(log["version"], "2.1.0");
    let runs = log["runs"].as_array().unwrap();
    assert_eq!(runs.len(), 1);
    let driver = &runs[0]["tool"]["driver"];
    assert_eq!(driver["name"], "trellis");
    assert_eq!(driver["version"], env!("CARGO_PKG_VERSION"));
    let rules: Vec<&str> = driver["rules"]
        .as_array()
        .unwrap()
        .iter()
        .map(|r| r["id"].as_str().unwrap())
        .collect();
    assert!(rules.contains(&"sum-not-one") && rules.contains(&"leaky"));
    assert_eq!(runs[0]["columnKind"], "unicodeCodePoints");

    let findings = broken_findings();
    let results = runs[0]["results"].as_array().unwrap();
    assert_eq!(results.len(), findings.len());
    for (result, finding) in results.iter().zip(&findings) {
        assert_eq!(result["ruleId"], finding["code"]);
        assert_eq!(result["level"], finding["severity"]);
        let index = result["ruleIndex"].as_u64().unwrap() as usize;
        assert_eq!(rules[index], finding["code"]);
        let place = &result["locations"][0]["physicalLocation"];
        // Named relative to the working directory.
        let uri = place["artifactLocation"]["uri"].as_str().unwrap();
        assert_eq!(Some(uri), finding["file"].as_str());
        assert_eq!(place["region"]["startLine"], finding["line"]);
        assert_eq!(place["region"]["startColumn"], finding["column"]);
        assert_eq!(place["region"]["endLine"], finding["end_line"]);
        assert_eq!(place["region"]["endColumn"], finding["end_column"]);
        let text = result["message"]["text"].as_str().unwrap();
        assert!(text.starts_with(finding["message"].as_str().unwrap()));
        if let Some(help) = finding["help"].as_str() {
            assert!(text.ends_with(&format!("help: {help}")), "{text}");
        }
        let related = result["relatedLocations"].as_array().map_or(0, Vec::len);
        assert_eq!(related, finding["related"].as_array().unwrap().len());
    }
}

#[test]
fn sarif_of_a_clean_grammar_has_no_results_and_exits_zero() {
    let run = trellis(
        &examples(),
        &["check", "--format", "sarif", "ferry_kiosk.trellis"],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let log: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(log["runs"][0]["results"], serde_json::json!([]));
}

#[test]
fn an_invalid_trellis_toml_is_reported_in_the_asked_format() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("trellis.toml"),
        "[checks]\nunreachble = \"off\"\n",
    )
    .unwrap();
    fs::write(dir.path().join("g.trellis"), KIOSK).unwrap();
    let sarif = trellis(dir.path(), &["check", "--format", "sarif"]);
    assert_eq!(sarif.code, 2);
    let log: Value = serde_json::from_str(&sarif.stdout).unwrap();
    let result = &log["runs"][0]["results"][0];
    assert_eq!(result["ruleId"], "config");
    assert_eq!(
        result["locations"][0]["physicalLocation"]["artifactLocation"]["uri"],
        "trellis.toml"
    );
    let github = trellis(dir.path(), &["check", "--format", "github"]);
    assert_eq!(github.code, 2);
    assert!(
        github
            .stdout
            .starts_with("::error file=trellis.toml,line=2,col=1,"),
        "{}",
        github.stdout
    );
}

#[test]
fn github_prints_one_annotation_line_per_finding() {
    let run = trellis(
        &examples(),
        &["check", "--format", "github", "broken.trellis"],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let findings = broken_findings();
    let lines: Vec<&str> = run.stdout.lines().collect();
    assert_eq!(lines.len(), findings.len());
    for (line, finding) in lines.iter().zip(&findings) {
        let command = match finding["severity"].as_str().unwrap() {
            "error" => "error",
            "warning" => "warning",
            _ => "notice",
        };
        let head = format!(
            "::{command} file={},line={},col={},endLine={},endColumn={},title=trellis {}::",
            finding["file"].as_str().unwrap(),
            finding["line"],
            finding["column"],
            finding["end_line"],
            finding["end_column"],
            finding["code"].as_str().unwrap(),
        );
        assert!(line.starts_with(&head), "{line}\nexpected {head}");
    }
    // The `sum-not-one` finding's help line is on a line of its own, escaped.
    let sum = lines
        .iter()
        .find(|l| l.contains("title=trellis sum-not-one"))
        .unwrap();
    assert!(sum.contains("%0Ahelp: "), "{sum}");
}

/// A kiosk whose tests hold, fail, and one grammar with an error.
fn failing_suite() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("kiosk.trellis"),
        format!(
            "{KIOSK}\ntest \"orders & <returns>\" {{\n  accept \"day ticket\"\n  reject \"day ticket\"\n  accept \"dya ticket\"\n}}\n"
        ),
    )
    .unwrap();
    fs::write(
        dir.path().join("erring.trellis"),
        "start S\nS {\n  1/2 \"a\"\n}\ntest \"t\" {\n  accept \"a\"\n}\n",
    )
    .unwrap();
    dir
}

#[test]
fn junit_has_a_suite_per_test_block_and_a_case_per_case_with_failures_and_errors() {
    let dir = failing_suite();
    let run = trellis(
        dir.path(),
        &[
            "test",
            "--format",
            "junit",
            "kiosk.trellis",
            "erring.trellis",
        ],
    );
    assert_eq!(run.code, 1, "{}", run.stderr);
    let xml = &run.stdout;
    assert!(xml.starts_with("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n<testsuites name=\"trellis\" tests=\"4\" failures=\"2\" errors=\"1\" skipped=\"0\">"), "{xml}");
    assert!(
        xml.contains("<testsuite name=\"orders &amp; &lt;returns&gt;\" tests=\"3\" failures=\"2\" errors=\"0\" skipped=\"0\" file=\"kiosk.trellis\">"),
        "{xml}"
    );
    assert!(
        xml.contains("<testcase name=\"accept &quot;day ticket&quot;\" classname=\"kiosk.trellis/orders &amp; &lt;returns&gt;\" file=\"kiosk.trellis\" line=\"17\"/>"),
        "{xml}"
    );
    assert!(
        xml.contains("<failure message=\"expected no parse, but the sentence parses; its most probable tree:\" type=\"reject\">"),
        "{xml}"
    );
    assert!(
        xml.contains(
            "<failure message=\"expected a parse, but the sentence has none\" type=\"accept\">"
        ),
        "{xml}"
    );
    assert!(
        xml.contains("<error message=\"the grammar has 1 error in what this run uses, so it cannot run; fix it first (errors in blocks the run cannot reach do not stop it)\" type=\"not-run\">erring.trellis:2:1: sum-not-one: "),
        "{xml}"
    );
    assert_eq!(xml.matches("<testcase ").count(), 4);
}

#[test]
fn coverage_lists_each_uncovered_rule_at_its_place_with_counts_per_block() {
    let dir = failing_suite();
    let run = trellis(dir.path(), &["test", "--coverage", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    // "day ticket" passes: Request → Ticket, Ticket → Kind "ticket",
    // Kind → "day"; 3 of the 7 rules.
    let out = &run.stdout;
    assert!(
        out.contains("coverage of kiosk.trellis: 3 of 7 rules covered (42.9%)"),
        "{out}"
    );
    assert!(
        out.contains("  Request  1/2\n  Ticket   1/2\n  Kind     1/3\n"),
        "{out}"
    );
    assert!(
        out.contains("kiosk.trellis:6:3  Request → \"a\" Ticket\n"),
        "{out}"
    );
    assert!(
        out.contains("kiosk.trellis:14:27  Kind → \"return\"\n"),
        "{out}"
    );
    assert!(!out.contains("Kind → \"day\"\n"), "{out}");
}

#[test]
fn min_coverage_fails_a_run_below_it_and_passes_one_above() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("g.trellis"),
        format!("{KIOSK}\ntest \"t\" {{\n  accept \"day ticket\"\n}}\n"),
    )
    .unwrap();
    let below = trellis(dir.path(), &["test", "--min-coverage", "50", "g.trellis"]);
    assert_eq!(below.code, 1, "{}{}", below.stdout, below.stderr);
    assert!(
        below.stdout.contains("below --min-coverage 50"),
        "{}",
        below.stdout
    );
    let above = trellis(dir.path(), &["test", "--min-coverage", "42.8", "g.trellis"]);
    assert_eq!(above.code, 0, "{}{}", above.stdout, above.stderr);
    let json = trellis(
        dir.path(),
        &[
            "test",
            "--format",
            "json",
            "--min-coverage",
            "50%",
            "g.trellis",
        ],
    );
    assert_eq!(json.code, 1);
    assert!(
        json.stderr.contains("below --min-coverage 50"),
        "{}",
        json.stderr
    );
    let doc: Value = serde_json::from_str(&json.stdout).unwrap();
    let coverage = &doc["grammars"][0]["coverage"];
    assert_eq!(
        (coverage["covered"].as_u64(), coverage["rules"].as_u64()),
        (Some(3), Some(7))
    );
    assert_eq!(coverage["uncovered"][0]["rule"], "Request → \"a\" Ticket");
    assert_eq!(coverage["uncovered"][0]["line"], 6);
    let bad = trellis(dir.path(), &["test", "--min-coverage", "120", "g.trellis"]);
    assert_eq!(bad.code, 2, "{}", bad.stderr);
}
