//! `trellis check` as a user runs it: the built binary on grammar files in
//! temporary directories. Expectations follow the language as README.md
//! states it ("The grammar language", "Checking grammars") and the
//! diagnostic codes of `grammar-lang`.

mod common;
use common::{trellis, Run};

use serde_json::Value;
use std::fs;
use std::path::Path;

fn write(dir: &Path, name: &str, text: &str) {
    let path = dir.join(name);
    fs::create_dir_all(path.parent().unwrap()).unwrap();
    fs::write(path, text).unwrap();
}

/// The `diagnostics` array of a `--format json` run, after checking that the
/// output is exactly one JSON object with only that key.
fn diagnostics(run: &Run) -> Vec<Value> {
    let value: Value = serde_json::from_str(&run.stdout)
        .unwrap_or_else(|e| panic!("stdout is one JSON value ({e}): {}", run.stdout));
    let object = value.as_object().expect("a JSON object");
    assert_eq!(object.len(), 1, "only `diagnostics`: {value}");
    object["diagnostics"].as_array().expect("an array").clone()
}

fn codes(diagnostics: &[Value]) -> Vec<&str> {
    diagnostics
        .iter()
        .map(|d| d["code"].as_str().unwrap())
        .collect()
}

/// A grammar with nothing wrong: weights sum to 1 and the unweighted
/// alternatives share the whole mass (1/2 each).
const CLEAN: &str = "\
grammar ferry_kiosk
start Request

Request {
  1/2  Count Kind \"ticket\"
  50%  Kind \"ticket\"
}

Count { \"one\" | \"two\" }
Kind { \"return\" | \"single\" }
";

/// `Timetable` cannot be reached from `Request`: an `unreachable` warning.
const UNREACHABLE: &str = "\
start Request
Request { \"ticket\" }
Timetable { \"when\" \"does\" \"it\" \"leave\" }
";

/// 0.5 + 0.4 misses exactly 1/10: a `sum-not-one` error.
const SUM_NOT_ONE: &str = "\
start Request
Request {
  0.5  \"one\" \"ticket\"
  0.4  \"two\" \"tickets\"
}
";

#[test]
fn a_clean_grammar_exits_zero_and_says_what_was_checked() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", CLEAN);
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert_eq!(run.stdout, "checked 1 file: 0 errors, 0 warnings\n");
    assert_eq!(run.stderr, "");
}

#[test]
fn an_error_exits_one_and_is_shown_with_its_code_and_place() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", SUM_NOT_ONE);
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("error[sum-not-one]"), "{}", run.stdout);
    assert!(run.stdout.contains("kiosk.trellis:2:"), "{}", run.stdout);
    assert!(
        run.stdout
            .ends_with("checked 1 file: 1 error, 0 warnings\n"),
        "{}",
        run.stdout
    );
    assert!(!run.stdout.contains('\u{1b}'), "no colour into a pipe");
}

#[test]
fn the_missing_mass_is_named_exactly() {
    // README ("Checking grammars", `sum-not-one`): weights are summed as
    // exact rationals and a shortfall is reported exactly; 1 - (0.5 + 0.4) = 1/10.
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", SUM_NOT_ONE);
    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["sum-not-one"]);
    assert!(
        diags[0]["message"].as_str().unwrap().contains("1/10"),
        "{}",
        diags[0]
    );
}

#[test]
fn json_has_every_promised_field_and_one_based_character_columns() {
    let dir = tempfile::tempdir().unwrap();
    // `Payment` has no block. On line 3 it starts after `  1/2 "Fähre" `,
    // which is 14 characters but 15 bytes (ä is two bytes in UTF-8), so its
    // 1-based column is 15 and it ends before column 22.
    write(
        dir.path(),
        "kiosk.trellis",
        "start Trip\nTrip {\n  1/2 \"Fähre\" Payment\n  1/2 \"Bus\"\n}\n",
    );
    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["undefined"], "{diags:?}");
    let d = &diags[0];
    for key in [
        "code",
        "severity",
        "file",
        "line",
        "column",
        "end_line",
        "end_column",
        "message",
        "related",
        "help",
    ] {
        assert!(d.get(key).is_some(), "missing `{key}` in {d}");
    }
    assert_eq!(d["severity"], "error");
    assert_eq!(d["file"], "kiosk.trellis");
    assert_eq!(d["line"], 3);
    assert_eq!(d["column"], 15);
    assert_eq!(d["end_line"], 3);
    assert_eq!(d["end_column"], 22);
    assert!(d["message"].as_str().unwrap().contains("Payment"), "{d}");
    assert_eq!(run.stderr, "");
}

#[test]
fn human_output_underlines_the_right_characters_after_non_ascii_text() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "kiosk.trellis",
        "start Trip\nTrip {\n  1/2 \"Fähre\" Payment\n  1/2 \"Bus\"\n}\n",
    );
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert!(run.stdout.contains("kiosk.trellis:3:15"), "{}", run.stdout);
    let lines: Vec<&str> = run.stdout.lines().collect();
    let src = lines
        .iter()
        .position(|l| l.contains("\"Fähre\" Payment"))
        .unwrap_or_else(|| panic!("snippet missing: {}", run.stdout));
    let col = |line: &str, needle: &str| line[..line.find(needle).unwrap()].chars().count();
    let start = col(lines[src], "Payment");
    let marks: Vec<usize> = lines[src + 1]
        .chars()
        .enumerate()
        .filter(|(_, c)| matches!(c, '─' | '┬'))
        .map(|(i, _)| i)
        .collect();
    assert_eq!(
        marks,
        (start..start + 7).collect::<Vec<_>>(),
        "{}",
        run.stdout
    );
}

#[test]
fn warnings_alone_exit_zero_unless_denied() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", UNREACHABLE);
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stdout.contains("warning[unreachable]"),
        "{}",
        run.stdout
    );
    assert!(
        run.stdout
            .ends_with("checked 1 file: 0 errors, 1 warning\n"),
        "{}",
        run.stdout
    );

    let run = trellis(dir.path(), &["check", "--deny-warnings", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    assert!(run.stdout.contains("warnings are denied"), "{}", run.stdout);
}

#[test]
fn trellis_toml_can_turn_a_warning_into_an_error() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "grammars/kiosk.trellis", UNREACHABLE);
    let run = trellis(dir.path(), &["check", "--format", "json", "grammars"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert_eq!(diagnostics(&run)[0]["severity"], "warning");

    // The file is found by walking up from the grammar's directory.
    write(
        dir.path(),
        "trellis.toml",
        "[checks]\nunreachable = \"error\"\n",
    );
    let run = trellis(dir.path(), &["check", "--format", "json", "grammars"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["unreachable"]);
    assert_eq!(diags[0]["severity"], "error");
}

#[test]
fn trellis_toml_can_silence_a_check() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", UNREACHABLE);
    write(
        dir.path(),
        "trellis.toml",
        "[checks]\nunreachable = \"off\"\n",
    );
    let run = trellis(
        dir.path(),
        &[
            "check",
            "--deny-warnings",
            "--format",
            "json",
            "kiosk.trellis",
        ],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(diagnostics(&run).is_empty());
}

#[test]
fn a_bad_trellis_toml_exits_two_with_a_located_message() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", SUM_NOT_ONE);
    write(
        dir.path(),
        "trellis.toml",
        "[checks]\nunreachble = \"error\"\n",
    );
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("trellis.toml:2:1"), "{}", run.stderr);
    assert!(
        run.stderr.contains("unknown check `unreachble`"),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("nothing was checked"), "{}", run.stderr);
    // The grammar was not checked, so its error is not reported.
    assert!(!run.stdout.contains("sum-not-one"), "{}", run.stdout);

    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    assert_eq!(run.code, 2);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["config"]);
    assert_eq!(diags[0]["file"], "trellis.toml");
    assert_eq!(
        (&diags[0]["line"], &diags[0]["column"]),
        (&2.into(), &1.into())
    );
}

#[test]
fn a_trellis_toml_that_is_not_toml_exits_two() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", CLEAN);
    write(
        dir.path(),
        "trellis.toml",
        "[checks\nunreachable = \"error\"\n",
    );
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("trellis.toml:1:"), "{}", run.stderr);
}

#[test]
fn a_directory_is_searched_for_grammar_files_in_order() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "zeta.trellis", SUM_NOT_ONE);
    write(dir.path(), "alpha.trellis", UNREACHABLE);
    write(dir.path(), "sub/clean.trellis", CLEAN);
    write(dir.path(), "notes.txt", "not a grammar {");
    // Hidden directories and build output are not the user's grammars.
    write(dir.path(), ".cache/old.trellis", SUM_NOT_ONE);
    write(dir.path(), "target/copy.trellis", SUM_NOT_ONE);
    let run = trellis(dir.path(), &["check", "--format", "json", "."]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    let found: Vec<(&str, &str)> = diags
        .iter()
        .map(|d| (d["file"].as_str().unwrap(), d["code"].as_str().unwrap()))
        .collect();
    assert_eq!(
        found,
        [
            ("alpha.trellis", "unreachable"),
            ("zeta.trellis", "sum-not-one")
        ]
    );

    let run = trellis(dir.path(), &["check"]);
    assert_eq!(run.code, 1);
    assert!(
        run.stdout
            .ends_with("checked 3 files: 1 error, 1 warning\n"),
        "{}",
        run.stdout
    );
}

#[test]
fn a_lexicon_used_by_a_grammar_in_the_same_directory_is_checked_as_part_of_it() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "kiosk.trellis",
        "start Request\nuse \"words.trellis\"\nRequest { Kind \"ticket\" }\n",
    );
    // No `start` here: on its own this file would not be a grammar.
    write(
        dir.path(),
        "words.trellis",
        "Kind { \"return\" | \"single\" }\n",
    );
    let run = trellis(dir.path(), &["check", "--format", "json"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(diagnostics(&run).is_empty(), "{}", run.stdout);
    let run = trellis(dir.path(), &["check"]);
    assert_eq!(run.stdout, "checked 2 files: 0 errors, 0 warnings\n");
}

#[test]
fn a_finding_in_a_shared_file_is_reported_once() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["day.trellis", "night.trellis"] {
        write(
            dir.path(),
            name,
            "start Request\nuse \"words.trellis\"\nRequest { Kind \"ticket\" }\n",
        );
    }
    // The same right-hand side twice: one `duplicate-rule` warning.
    write(
        dir.path(),
        "words.trellis",
        "Kind {\n  1/2 \"return\"\n  1/2 \"return\"\n}\n",
    );
    let run = trellis(
        dir.path(),
        &["check", "--format", "json", "day.trellis", "night.trellis"],
    );
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["duplicate-rule"], "{}", run.stdout);
    assert_eq!(diags[0]["file"], "words.trellis");
}

#[test]
fn a_missing_path_exits_two_and_names_it() {
    let dir = tempfile::tempdir().unwrap();
    write(dir.path(), "kiosk.trellis", CLEAN);
    let run = trellis(dir.path(), &["check", "kiosk.trellis", "absent.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(
        run.stderr
            .contains("cannot check absent.trellis: no such file or directory"),
        "{}",
        run.stderr
    );
    // The files that exist are still checked.
    assert!(run.stdout.contains("checked 1 file"), "{}", run.stdout);
}

#[test]
fn a_file_that_is_not_utf8_exits_two_and_says_so() {
    let dir = tempfile::tempdir().unwrap();
    // 0xE4 is `ä` in Latin-1 and never a complete character in UTF-8
    // (RFC 3629: it starts a three-byte sequence).
    fs::write(
        dir.path().join("latin1.trellis"),
        b"start S\nS { \"F\xE4hre\" }\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["check", "latin1.trellis"]);
    assert_eq!(run.code, 2, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("latin1.trellis"), "{}", run.stderr);
    assert!(run.stderr.contains("not UTF-8"), "{}", run.stderr);
    assert!(run.stderr.contains("line 2"), "{}", run.stderr);
}

#[test]
fn json_output_stays_one_object_when_a_path_is_missing() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["check", "--format", "json", "absent"]);
    assert_eq!(run.code, 2);
    assert!(diagnostics(&run).is_empty());
    assert!(run.stderr.contains("absent"), "{}", run.stderr);
}

#[test]
fn bad_usage_exits_two() {
    let dir = tempfile::tempdir().unwrap();
    assert_eq!(trellis(dir.path(), &["check", "--format", "xml"]).code, 2);
    assert_eq!(trellis(dir.path(), &["check", "--no-such-flag"]).code, 2);
    assert_eq!(trellis(dir.path(), &["no-such-command"]).code, 2);
}

#[test]
fn version_and_help_describe_the_tool() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["--version"]);
    assert_eq!(run.code, 0);
    assert_eq!(
        run.stdout,
        format!("trellis {}\n", env!("CARGO_PKG_VERSION"))
    );
    let run = trellis(dir.path(), &["check", "--help"]);
    assert_eq!(run.code, 0);
    assert!(run.stdout.contains("--deny-warnings"), "{}", run.stdout);
    assert!(run.stdout.contains("Exit status: 0"), "{}", run.stdout);
    assert!(run.stdout.contains("trellis.toml"), "{}", run.stdout);
    // Every check a user can configure is listed with its default level.
    assert!(run.stdout.contains("unreachable"), "{}", run.stdout);
    assert!(run.stdout.contains("sum-not-one"), "{}", run.stdout);
}

#[test]
fn an_empty_directory_checks_nothing_and_says_so() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["check"]);
    assert_eq!(run.code, 0);
    assert_eq!(run.stdout, "checked 0 files: 0 errors, 0 warnings\n");
    assert!(
        run.stderr.contains("no .trellis files found"),
        "{}",
        run.stderr
    );
}

#[test]
fn used_files_are_found_relative_to_the_using_file_not_the_working_directory() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "grammars/kiosk.trellis",
        "start Request\nuse \"lexicon/words.trellis\"\nRequest { Kind \"ticket\" }\n",
    );
    write(
        dir.path(),
        "grammars/lexicon/words.trellis",
        "Kind {\n  1/2 \"return\"\n  1/2 \"return\"\n}\n",
    );
    let run = trellis(
        dir.path(),
        &["check", "--format", "json", "grammars/kiosk.trellis"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["duplicate-rule"]);
    assert_eq!(diags[0]["file"], "grammars/lexicon/words.trellis");
    assert_eq!(diags[0]["line"], 3);
}

#[test]
fn a_used_file_that_is_not_utf8_is_a_located_error_in_the_grammar() {
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "kiosk.trellis",
        "start Request\nuse \"words.trellis\"\nRequest { \"ticket\" }\n",
    );
    // 0xFF never occurs in UTF-8 (RFC 3629, section 1).
    fs::write(dir.path().join("words.trellis"), b"Kind { \"\xFF\" }\n").unwrap();
    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["use-missing"]);
    assert_eq!(diags[0]["file"], "kiosk.trellis");
    assert_eq!(diags[0]["line"], 2);
    assert!(
        diags[0]["message"].as_str().unwrap().contains("not UTF-8"),
        "{}",
        diags[0]
    );
}

#[test]
fn the_shipped_ferry_kiosk_example_checks_clean() {
    // A realistic two-file grammar: examples/ferry_kiosk.trellis uses
    // examples/ferry_lexicon.trellis, read from disk through `use`.
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let run = trellis(
        &examples,
        &["check", "--format", "json", "ferry_kiosk.trellis"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(diagnostics(&run).is_empty(), "{}", run.stdout);
}

#[test]
fn json_related_places_point_at_the_other_block() {
    // README ("Checking grammars", `duplicate-block`): two blocks for one
    // name is an error that shows both.
    let dir = tempfile::tempdir().unwrap();
    write(
        dir.path(),
        "kiosk.trellis",
        "start Kind\nKind { \"return\" }\nKind { \"single\" }\n",
    );
    let run = trellis(dir.path(), &["check", "--format", "json", "kiosk.trellis"]);
    assert_eq!(run.code, 1, "{}{}", run.stdout, run.stderr);
    let diags = diagnostics(&run);
    assert_eq!(codes(&diags), ["duplicate-block"], "{}", run.stdout);
    let d = &diags[0];
    assert_eq!(d["line"], 3);
    let related = d["related"].as_array().unwrap();
    assert_eq!(related.len(), 1, "{d}");
    assert_eq!(related[0]["file"], "kiosk.trellis");
    assert_eq!(related[0]["line"], 2);
    assert_eq!(related[0]["column"], 1);
    assert!(related[0]["message"]
        .as_str()
        .is_some_and(|m| !m.is_empty()));

    // The human report shows both places.
    let run = trellis(dir.path(), &["check", "kiosk.trellis"]);
    assert!(run.stdout.contains("Kind { \"return\" }"), "{}", run.stdout);
    assert!(run.stdout.contains("Kind { \"single\" }"), "{}", run.stdout);
}

/// README says the bundled examples between them show every finding: every
/// code `check` can report appears in `check --format json` of some example
/// file. `config` comes from `trellis.toml`, not from a grammar, and
/// `uncovered` from running tests in the editor, so neither is expected.
#[test]
fn the_examples_show_every_code_check_reports() {
    use grammar_lang::Code;
    let examples = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let mut shown = std::collections::BTreeSet::new();
    let mut files: Vec<_> = fs::read_dir(&examples)
        .unwrap()
        .map(|e| e.unwrap().file_name().into_string().unwrap())
        .filter(|name| name.ends_with(".trellis"))
        .collect();
    files.sort();
    for file in &files {
        let run = trellis(&examples, &["check", "--format", "json", file]);
        for d in diagnostics(&run) {
            shown.insert(d["code"].as_str().unwrap().to_string());
        }
    }
    let missing: Vec<&str> = Code::ALL
        .iter()
        .filter(|&&c| c != Code::Config && c.is_check())
        .map(|c| c.as_str())
        .filter(|name| !shown.contains(*name))
        .collect();
    assert!(
        missing.is_empty(),
        "codes no example shows: {missing:?} (examples: {files:?})"
    );
    // The one that needs an error-free grammar has its own.
    let run = trellis(
        &examples,
        &["check", "--format", "json", "broken_leaky.trellis"],
    );
    assert_eq!(codes(&diagnostics(&run)), ["leaky"]);
}
