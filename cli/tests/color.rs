//! Colour, decided in one place for every command: `--color auto|always|never`
//! (a global flag) and, under `auto`, a terminal and no non-empty `NO_COLOR`
//! (https://no-color.org). The tests' output goes into pipes, so `auto`
//! never colours here.

mod common;
use common::{trellis, trellis_with_env, KIOSK};

use std::fs;

const ESC: char = '\u{1b}';

/// A grammar whose check finds an error and whose test fails.
fn setup() -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("broken.trellis"),
        "start S\nS {\n  1/2 \"a\"\n  1/4 \"b\"\n}\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("g.trellis"),
        format!("{KIOSK}\ntest \"t\" {{\n  reject \"a day ticket\"\n}}\n"),
    )
    .unwrap();
    dir
}

#[test]
fn always_colours_even_into_a_pipe() {
    let dir = setup();
    let check = trellis(
        dir.path(),
        &["check", "--color", "always", "broken.trellis"],
    );
    assert_eq!(check.code, 1, "{}{}", check.stdout, check.stderr);
    assert!(check.stdout.contains(ESC), "{}", check.stdout);
    // The flag is global: it may come before the command too.
    let test = trellis(dir.path(), &["--color", "always", "test", "g.trellis"]);
    assert_eq!(test.code, 1, "{}{}", test.stdout, test.stderr);
    assert!(
        test.stdout.contains("\u{1b}[31;1mFAILED\u{1b}[0m"),
        "{}",
        test.stdout
    );
    // Errors of a grammar that cannot run are coloured on stderr.
    let stats = trellis(dir.path(), &["stats", "--color=always", "broken.trellis"]);
    assert_eq!(stats.code, 1, "{}", stats.stderr);
    assert!(stats.stderr.contains(ESC), "{}", stats.stderr);
}

#[test]
fn always_wins_over_no_color() {
    // no-color.org: a command-line flag overrides NO_COLOR.
    let dir = setup();
    let run = trellis_with_env(
        dir.path(),
        &["check", "--color", "always", "broken.trellis"],
        &[("NO_COLOR", "1")],
    );
    assert!(run.stdout.contains(ESC), "{}", run.stdout);
}

#[test]
fn never_and_auto_into_a_pipe_do_not_colour() {
    let dir = setup();
    for color in [&["--color", "never"][..], &["--color", "auto"], &[]] {
        for command in [&["check", "broken.trellis"][..], &["test", "g.trellis"]] {
            let args: Vec<&str> = command.iter().chain(color).copied().collect();
            let run = trellis(dir.path(), &args);
            assert_eq!(run.code, 1, "{args:?}: {}{}", run.stdout, run.stderr);
            assert!(!run.stdout.contains(ESC), "{args:?}: {}", run.stdout);
            assert!(!run.stderr.contains(ESC), "{args:?}: {}", run.stderr);
        }
    }
}

#[test]
fn no_color_without_the_flag_gives_no_colour() {
    let dir = setup();
    for command in [
        &["check", "broken.trellis"][..],
        &["test", "g.trellis"],
        &["stats", "broken.trellis"],
    ] {
        let run = trellis_with_env(dir.path(), command, &[("NO_COLOR", "1")]);
        assert!(!run.stdout.contains(ESC), "{command:?}: {}", run.stdout);
        assert!(!run.stderr.contains(ESC), "{command:?}: {}", run.stderr);
    }
}

#[test]
fn an_unknown_colour_choice_is_a_usage_error() {
    let dir = setup();
    let run = trellis(dir.path(), &["check", "--color", "sometimes"]);
    assert_eq!(run.code, 2, "{}", run.stderr);
}
