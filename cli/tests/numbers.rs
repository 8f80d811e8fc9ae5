//! One way of writing probabilities for people, in every command: six
//! significant digits, scientific notation only below 1e-4, and log
//! probabilities labelled as natural logs.

mod common;
use common::{trellis, KIOSK};

use std::fs;

fn project(text: &str) -> tempfile::TempDir {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("g.trellis"), text).unwrap();
    dir
}

#[test]
fn parse_test_and_stats_write_the_same_probability_the_same_way() {
    // "a a day ticket" has the one tree 1/2 · 1/2 · 1/3 = 1/12 (KIOSK);
    // ln(1/12) = −2.484907.
    let dir = project(&format!(
        "{KIOSK}\ntest \"t\" {{\n  accept \"a a day ticket\"\n  reject \"a a return ticket\"\n}}\n"
    ));
    let parse = trellis(dir.path(), &["parse", "g.trellis", "a a day ticket"]);
    assert_eq!(parse.code, 0, "{}", parse.stderr);
    assert!(
        parse
            .stdout
            .contains("best tree (p = 0.0833333, ln p = -2.4849)"),
        "{}",
        parse.stdout
    );
    assert!(
        parse
            .stdout
            .contains("P(sentence) = 0.0833333 (ln P = -2.4849)"),
        "{}",
        parse.stdout
    );

    let test = trellis(dir.path(), &["test", "--trees"]);
    assert_eq!(test.code, 1, "{}{}", test.stdout, test.stderr);
    // The accepted case's tree (as the comment of a case that pastes
    // back), and the failed reject's most probable tree.
    assert!(
        test.stdout.contains("# ok, p ≈ 0.0833333"),
        "{}",
        test.stdout
    );
    assert!(test.stdout.contains("(p ≈ 0.0833333)"), "{}", test.stdout);
    assert!(!test.stdout.contains("e-2"), "{}", test.stdout);
}

#[test]
fn probabilities_below_1e_minus_4_are_scientific() {
    let dir = project("start S\nS {\n  0.00002 \"rare\"\n  0.99998 \"common\"\n}\n");
    let run = trellis(dir.path(), &["parse", "g.trellis", "rare"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("(p = 2e-5, ln p = "), "{}", run.stdout);
    let run = trellis(dir.path(), &["stats", "g.trellis"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    // P(ends) of S is 1, written without trailing zeros.
    assert!(
        run.stdout
            .lines()
            .any(|l| l.split_whitespace().collect::<Vec<_>>() == ["S", "1", "1"]),
        "{}",
        run.stdout
    );
}
