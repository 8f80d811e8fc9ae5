//! `trellis init`: the starter project checks clean, is formatted, passes
//! its own tests, and never overwrites a file.

mod common;

use common::trellis;
use std::fs;

#[test]
fn the_starter_project_checks_clean_is_formatted_and_passes_its_tests() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["init", "harbour"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("trellis test"), "{}", run.stdout);
    let project = dir.path().join("harbour");
    for name in ["logbook.trellis", "lexicon.trellis", "trellis.toml"] {
        assert!(project.join(name).is_file(), "{name} was not written");
    }
    let grammar = fs::read_to_string(project.join("logbook.trellis")).unwrap();
    assert!(grammar.contains("use \"lexicon.trellis\""));
    assert!(grammar.contains("test \""));

    let check = trellis(&project, &["check", "--deny-warnings"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    assert!(
        check.stderr.contains("0 errors, 0 warnings")
            || check.stdout.contains("0 errors, 0 warnings")
    );

    let fmt = trellis(&project, &["fmt", "--check"]);
    assert_eq!(fmt.code, 0, "{}{}", fmt.stdout, fmt.stderr);
    assert_eq!(fmt.stdout, "");

    let test = trellis(&project, &["test"]);
    assert_eq!(test.code, 0, "{}{}", test.stdout, test.stderr);
    assert!(test.stdout.contains("0 failed"), "{}", test.stdout);
}

#[test]
fn init_writes_into_the_current_directory_by_default() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["init"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(dir.path().join("logbook.trellis").is_file());
    assert!(!run.stdout.contains("cd "), "{}", run.stdout);
}

#[test]
fn init_refuses_to_overwrite_and_names_the_files_in_the_way() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("trellis.toml"), "max-arity = 3\n").unwrap();
    let run = trellis(dir.path(), &["init"]);
    assert_eq!(run.code, 2, "{}", run.stderr);
    assert!(run.stderr.contains("trellis.toml"), "{}", run.stderr);
    assert!(run.stderr.contains("nothing was written"), "{}", run.stderr);
    // Nothing was written, and the existing file is untouched.
    assert!(!dir.path().join("logbook.trellis").exists());
    assert!(!dir.path().join("lexicon.trellis").exists());
    assert_eq!(
        fs::read_to_string(dir.path().join("trellis.toml")).unwrap(),
        "max-arity = 3\n"
    );
}
