//! `trellis fmt`: rewriting files in place, `--check`, `--diff`, standard
//! input, refusing files with syntax errors, and the configured width.

mod common;

use common::{trellis, trellis_stdin};
use std::fs;
use std::path::Path;

const MESSY: &str = "start Request\nRequest {  0.5 Ticket   # most\n 0.5   \"hello\" }\nTicket {\"return\"|\"single\"}\n";
const TIDY: &str = "start Request\n\nRequest {\n  0.5  Ticket  # most\n  0.5  \"hello\"\n}\n\nTicket { \"return\" | \"single\" }\n";

fn names(dir: &Path) -> Vec<String> {
    let mut names: Vec<String> = fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
        .collect();
    names.sort();
    names
}

#[test]
fn fmt_rewrites_every_grammar_file_in_place_and_leaves_no_temporary_file() {
    let dir = tempfile::tempdir().unwrap();
    fs::create_dir(dir.path().join("lexicon")).unwrap();
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    fs::write(
        dir.path().join("lexicon/words.trellis"),
        "W {\"a\"  |\"b\"}\n",
    )
    .unwrap();
    fs::write(dir.path().join("tidy.trellis"), TIDY).unwrap();
    let run = trellis(dir.path(), &["fmt"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        TIDY
    );
    assert_eq!(
        fs::read_to_string(dir.path().join("lexicon/words.trellis")).unwrap(),
        "W { \"a\" | \"b\" }\n"
    );
    assert_eq!(
        fs::read_to_string(dir.path().join("tidy.trellis")).unwrap(),
        TIDY
    );
    assert!(
        run.stderr.contains("formatted 2 of 3 files"),
        "{}",
        run.stderr
    );
    assert_eq!(
        names(dir.path()),
        ["kiosk.trellis", "lexicon", "tidy.trellis"]
    );
    assert_eq!(names(&dir.path().join("lexicon")), ["words.trellis"]);
    // A second run changes nothing.
    let again = trellis(dir.path(), &["fmt", "--check"]);
    assert_eq!((again.code, again.stdout.as_str()), (0, ""));
}

#[test]
fn check_lists_the_files_that_would_change_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    fs::write(dir.path().join("tidy.trellis"), TIDY).unwrap();
    let run = trellis(dir.path(), &["fmt", "--check", "."]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert_eq!(run.stdout, "kiosk.trellis\n");
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        MESSY
    );
    let clean = trellis(dir.path(), &["fmt", "--check", "tidy.trellis"]);
    assert_eq!((clean.code, clean.stdout.as_str()), (0, ""));
}

#[test]
fn diff_prints_a_unified_diff_and_writes_nothing() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    let run = trellis(dir.path(), &["fmt", "--diff", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert_eq!(
        run.stdout,
        "--- a/kiosk.trellis\n+++ b/kiosk.trellis\n@@ -1,4 +1,8 @@\n start Request\n\
         -Request {  0.5 Ticket   # most\n- 0.5   \"hello\" }\n-Ticket {\"return\"|\"single\"}\n\
         +\n+Request {\n+  0.5  Ticket  # most\n+  0.5  \"hello\"\n+}\n+\n+Ticket { \"return\" | \"single\" }\n"
    );
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        MESSY
    );
    // With --check too: the file's name, then its diff.
    let both = trellis(dir.path(), &["fmt", "--check", "--diff"]);
    assert_eq!(both.code, 1);
    assert!(
        both.stdout
            .starts_with("kiosk.trellis\n--- a/kiosk.trellis\n"),
        "{}",
        both.stdout
    );
}

#[test]
fn a_dash_formats_standard_input_to_standard_output() {
    let dir = tempfile::tempdir().unwrap();
    let (code, stdout, stderr) = trellis_stdin(dir.path(), &["fmt", "-"], MESSY);
    assert_eq!(code, 0, "{stderr}");
    assert_eq!(stdout, TIDY);
    let (code, stdout, _) = trellis_stdin(dir.path(), &["fmt", "-", "--check"], MESSY);
    assert_eq!((code, stdout.as_str()), (1, "<stdin>\n"));
    let (code, _, _) = trellis_stdin(dir.path(), &["fmt", "-", "--check"], TIDY);
    assert_eq!(code, 0);
    // The width of the trellis.toml above the working directory applies.
    fs::write(dir.path().join("trellis.toml"), "[format]\nwidth = 20\n").unwrap();
    let (code, stdout, _) = trellis_stdin(
        dir.path(),
        &["fmt", "-"],
        "W { \"aaaa\" | \"bbbb\" | \"cccc\" }\n",
    );
    assert_eq!(code, 0);
    // Too wide for one line: the row of words wraps at 20 columns.
    assert_eq!(stdout, "W {\n  \"aaaa\" | \"bbbb\"\n  \"cccc\"\n}\n");
}

#[test]
fn a_file_with_syntax_errors_is_not_rewritten_and_its_errors_are_shown() {
    let dir = tempfile::tempdir().unwrap();
    let broken = "start A\nA {\"x\"}\nB = \"y\"\n";
    fs::write(dir.path().join("broken.trellis"), broken).unwrap();
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    let run = trellis(dir.path(), &["fmt", "--color", "never"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert_eq!(
        fs::read_to_string(dir.path().join("broken.trellis")).unwrap(),
        broken
    );
    assert!(run.stderr.contains("error[syntax]"), "{}", run.stderr);
    assert!(run.stderr.contains("broken.trellis:3:3"), "{}", run.stderr);
    assert!(
        run.stderr
            .contains("broken.trellis has 1 syntax error, so it was not formatted"),
        "{}",
        run.stderr
    );
    // The other file is formatted all the same.
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        TIDY
    );
    let (code, stdout, stderr) = trellis_stdin(dir.path(), &["fmt", "-"], broken);
    assert_eq!((code, stdout.as_str()), (1, ""));
    assert!(stderr.contains("<stdin>:3:3"), "{stderr}");
}

#[test]
fn a_missing_path_or_an_invalid_configuration_stops_with_status_2() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["fmt", "absent.trellis"]);
    assert_eq!(run.code, 2);
    assert!(run.stderr.contains("absent.trellis"), "{}", run.stderr);
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    fs::write(
        dir.path().join("trellis.toml"),
        "[format]\nwidth = \"wide\"\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["fmt", "--color", "never"]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(run.stderr.contains("trellis.toml"), "{}", run.stderr);
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        MESSY
    );
}

#[test]
fn json_reports_every_file_with_its_change_and_its_syntax_errors() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), MESSY).unwrap();
    fs::write(dir.path().join("tidy.trellis"), TIDY).unwrap();
    fs::write(dir.path().join("broken.trellis"), "B = \"y\"\n").unwrap();
    let run = trellis(dir.path(), &["fmt", "--check", "--format", "json"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    let doc: serde_json::Value = serde_json::from_str(&run.stdout).unwrap();
    let files = doc["files"].as_array().unwrap();
    let find = |name: &str| {
        files
            .iter()
            .find(|f| f["file"] == name)
            .unwrap_or_else(|| panic!("{name} missing in {doc}"))
    };
    assert_eq!(find("kiosk.trellis")["changed"], true);
    assert_eq!(find("tidy.trellis")["changed"], false);
    assert_eq!(find("broken.trellis")["diagnostics"][0]["code"], "syntax");
    assert_eq!(find("broken.trellis")["diagnostics"][0]["line"], 1);
    assert_eq!(
        fs::read_to_string(dir.path().join("kiosk.trellis")).unwrap(),
        MESSY
    );
    let refused = trellis(dir.path(), &["fmt", "-", "--format", "json"]);
    assert_eq!(refused.code, 2);
}
