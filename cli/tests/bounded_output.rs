//! Human output stays proportional to what a person can read, whatever the
//! input: repeated findings on one line are one report, long lines are
//! shown as a window, and each file shows a bounded number of reports.
//! JSON keeps every finding.

mod common;

use common::trellis;
use serde_json::Value;

/// A block whose one line holds `pipes` empty alternatives.
fn pipes_on_one_line(pipes: usize) -> String {
    format!(
        "grammar ferry_kiosk\nstart Request\nRequest {{ \"ticket\" {}}}\n",
        "| ".repeat(pipes)
    )
}

#[test]
fn eight_thousand_empty_alternatives_on_one_line_are_one_short_report() {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("kiosk.trellis"), pipes_on_one_line(8_000)).unwrap();
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 1);
    assert!(
        run.stdout.contains(
            "empty alternative: epsilon rules are not supported (8,000 times on this line)"
        ),
        "{}",
        run.stdout
    );
    assert_eq!(run.stdout.matches("error[empty-rule]").count(), 1);
    // One report of a few lines, each line of it at most the excerpt width
    // and the margin wide (the help text aside).
    assert!(run.stdout.len() < 2_000, "{} bytes", run.stdout.len());
    for line in run.stdout.lines().filter(|l| !l.contains("Help:")) {
        assert!(line.chars().count() <= 200, "{line}");
    }
    assert!(run.stdout.contains("kiosk.trellis:3:20"), "{}", run.stdout);

    // JSON lists every one of them.
    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    let report: Value = serde_json::from_str(&run.stdout).unwrap();
    let diagnostics = report["diagnostics"].as_array().unwrap();
    assert_eq!(diagnostics.len(), 8_000);
    assert!(diagnostics.iter().all(|d| d["code"] == "empty-rule"));
}

#[test]
fn a_file_shows_fifty_reports_then_counts_the_rest() {
    let dir = tempfile::tempdir().unwrap();
    // 300 lines, each with two empty alternatives: 600 findings, two per
    // line, so 50 reports show 100 of them.
    let text = format!(
        "grammar ferry_kiosk\nstart Request\nRequest {{\n  \"ticket\"\n{}}}\n",
        "  | |\n".repeat(300)
    );
    std::fs::write(dir.path().join("kiosk.trellis"), text).unwrap();
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 1);
    assert_eq!(run.stdout.matches("error[empty-rule]").count(), 50);
    assert!(
        run.stdout.contains(
            "… and 500 more findings in kiosk.trellis (`--format json` lists every finding)"
        ),
        "{}",
        run.stdout
    );
    assert!(run.stdout.contains("600 errors"), "{}", run.stdout);

    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    let report: Value = serde_json::from_str(&run.stdout).unwrap();
    assert_eq!(report["diagnostics"].as_array().unwrap().len(), 600);
}

#[test]
fn a_finding_on_a_long_line_shows_a_window_around_its_span() {
    let dir = tempfile::tempdir().unwrap();
    // An undefined name far along a long line of words.
    let words = "\"fare\" ".repeat(400);
    let text = format!("grammar ferry_kiosk\nstart Request\nRequest {{ {words}Harbour {words}}}\n");
    std::fs::write(dir.path().join("kiosk.trellis"), &text).unwrap();
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let column = "Request { ".len() + words.len() + 1;
    assert!(
        run.stdout.contains(&format!("kiosk.trellis:3:{column}")),
        "{}",
        run.stdout
    );
    // The excerpt is two lines below the report's header.
    let lines: Vec<&str> = run.stdout.lines().collect();
    let header = lines
        .iter()
        .position(|l| l.contains(&format!("kiosk.trellis:3:{column}")))
        .unwrap();
    let at = header + 2;
    let excerpt = lines[at];
    // Cut on both sides, and no wider than the window and its margin.
    assert!(excerpt.contains("│ …"), "{excerpt}");
    assert!(excerpt.ends_with('…'), "{excerpt}");
    assert!(excerpt.chars().count() <= 170, "{excerpt}");
    // The underline starts under the name.
    let name_col = excerpt[..excerpt.find("Harbour").unwrap()].chars().count();
    let mark_col = lines[at + 1][..lines[at + 1].find('┬').unwrap()]
        .chars()
        .count();
    assert_eq!(name_col, mark_col, "{excerpt}\n{}", lines[at + 1]);
}
