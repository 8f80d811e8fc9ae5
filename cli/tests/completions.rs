//! `trellis completions` and `trellis man`: generated from the argument
//! definitions, so they cover every command.

mod common;

use common::trellis;

/// Every subcommand, as `trellis --help` lists it.
fn subcommands(dir: &std::path::Path) -> Vec<String> {
    let help = trellis(dir, &["--help"]);
    assert_eq!(help.code, 0, "{}", help.stderr);
    let commands: Vec<String> = help
        .stdout
        .split("Commands:")
        .nth(1)
        .expect("--help lists the commands")
        .lines()
        .skip(1)
        .take_while(|line| !line.trim().is_empty())
        .filter_map(|line| line.split_whitespace().next())
        .filter(|name| *name != "help")
        .map(str::to_string)
        .collect();
    for expected in ["check", "test", "fmt", "init", "completions", "man"] {
        assert!(commands.iter().any(|c| c == expected), "{commands:?}");
    }
    commands
}

#[test]
fn the_bash_completion_script_completes_every_subcommand() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["completions", "bash"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(run.stdout.contains("complete -F"), "{}", run.stdout);
    for command in subcommands(dir.path()) {
        assert!(
            run.stdout.contains(&format!("trellis,{command})")),
            "bash completion does not know `{command}`"
        );
    }
    // Option values are completed too.
    assert!(run.stdout.contains("--deny-warnings"));
}

#[test]
fn every_shell_gets_a_script() {
    let dir = tempfile::tempdir().unwrap();
    for shell in ["bash", "zsh", "fish", "elvish", "powershell"] {
        let run = trellis(dir.path(), &["completions", shell]);
        assert_eq!(run.code, 0, "{shell}: {}", run.stderr);
        assert!(run.stdout.contains("trellis"), "{shell}");
    }
    let run = trellis(dir.path(), &["completions", "tcsh"]);
    assert_eq!(run.code, 2, "{}", run.stderr);
}

#[test]
fn the_manual_page_has_a_name_section_and_every_subcommand() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["man"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stdout.starts_with(".ie") || run.stdout.contains(".TH trellis"),
        "{}",
        run.stdout
    );
    assert!(run.stdout.contains(".SH NAME"), "{}", run.stdout);
    assert!(run.stdout.contains(".SH SUBCOMMANDS"), "{}", run.stdout);
    for command in subcommands(dir.path()) {
        assert!(
            run.stdout.contains(&format!("trellis\\-{command}(1)")),
            "the manual page does not list `{command}`"
        );
    }
}

#[test]
fn man_dir_writes_one_page_per_subcommand() {
    let dir = tempfile::tempdir().unwrap();
    let run = trellis(dir.path(), &["man", "--dir", "pages"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    let pages = dir.path().join("pages");
    assert!(pages.join("trellis.1").is_file());
    for command in subcommands(dir.path()) {
        let page = pages.join(format!("trellis-{command}.1"));
        let text = std::fs::read_to_string(&page)
            .unwrap_or_else(|_| panic!("{} was not written", page.display()));
        assert!(text.contains(".SH NAME"));
    }
}
