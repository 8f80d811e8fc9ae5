//! The classic Vim runtime files in `editors/vim/` (ftdetect, syntax,
//! ftplugin, indent), loaded by real editors: headless Neovim (0.7 on
//! Debian 12, which does not ask the language server for semantic tokens,
//! so this syntax file is its only highlighting) and Vim in Ex mode.
//!
//! Each editor opens the bundled examples with nothing but
//! `editors/vim` on its runtime path and reports, through a Vim script,
//! the syntax group at chosen places (`synID`), the file type, the comment
//! settings and what `=` makes of a file whose indentation was removed.
//!
//! Needs `nvim` and `vim` (`.ci/run` installs Debian's). An editor that is
//! missing is skipped with a message — except under CI (env `CI` set),
//! where the test fails.

use std::fs;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("tests/ has a parent")
        .to_path_buf()
}

/// The editors to drive: program and the arguments that start it without
/// a terminal, without user configuration, with `editors/vim` first on
/// its runtime path and syntax, file types and indentation on.
fn editors() -> Vec<(&'static str, Vec<String>)> {
    let runtime = repo().join("editors/vim");
    let common = [
        "--cmd".to_string(),
        format!("set rtp^={}", runtime.display()),
        "--cmd".to_string(),
        "filetype plugin indent on".to_string(),
        "--cmd".to_string(),
        "syntax on".to_string(),
    ];
    let nvim: Vec<String> = ["--headless", "--clean", "-n", "-i", "NONE"]
        .iter()
        .map(|s| s.to_string())
        .chain(common.iter().cloned())
        .collect();
    let vim: Vec<String> = ["-N", "-u", "NONE", "-i", "NONE", "-n", "-Es"]
        .iter()
        .map(|s| s.to_string())
        .chain(common.iter().cloned())
        .collect();
    let mut found = Vec::new();
    for (program, args) in [("nvim", nvim), ("vim", vim)] {
        let present = Command::new(program)
            .arg("--version")
            .stdout(Stdio::null())
            .stderr(Stdio::null())
            .status()
            .is_ok_and(|s| s.success());
        if present {
            found.push((program, args));
        } else if std::env::var_os("CI").is_some() {
            panic!("{program} is not installed, and CI must run the Vim syntax test (.ci/run installs it)");
        } else {
            eprintln!(
                "SKIPPED for {program}: not installed (apt-get install neovim vim); CI runs it"
            );
        }
    }
    found
}

/// Runs `script` (Vim script that writes its findings to the file named by
/// `g:out` and quits) in `program` on `file`; returns the lines written.
fn run_script(program: &str, args: &[String], file: &Path, script: &str) -> Vec<String> {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out.txt");
    let script_path = dir.path().join("probe.vim");
    let script = format!(
        "let g:out = '{}'\n{script}\nqa!\n",
        out.display().to_string().replace('\'', "''")
    );
    fs::write(&script_path, script).unwrap();
    let status = Command::new(program)
        .args(args)
        .arg("-S")
        .arg(&script_path)
        .arg(file)
        .env("HOME", dir.path())
        .stdin(Stdio::null())
        .stdout(Stdio::null())
        .status()
        .unwrap_or_else(|e| panic!("{program} does not start: {e}"));
    assert!(status.success(), "{program} exited with {status}");
    let text = fs::read_to_string(&out)
        .unwrap_or_else(|e| panic!("{program} wrote no findings to {}: {e}", out.display()));
    text.lines().map(str::to_string).collect()
}

/// One place to look at: the first line containing `line`, at the first
/// occurrence of `at` in it, and the syntax group expected there.
struct Probe {
    line: &'static str,
    at: &'static str,
    group: &'static str,
}

/// Places in examples/ferry_kiosk.trellis, one or more for each kind of
/// token the lexer (grammar-lang/src/syntax/lexer.rs) knows: each line to
/// look in, with the places in it and the syntax group expected at each.
const FERRY_KIOSK: &[(&str, &[(&str, &str)])] = &[
    (
        "# The Skerrow Isles ferry kiosk",
        &[("Skerrow", "trellisComment")],
    ),
    (
        "grammar ferry_kiosk",
        &[
            ("grammar", "trellisKeyword"),
            ("ferry_kiosk", "trellisGrammarName"),
        ],
    ),
    (
        "start Request",
        &[("start", "trellisKeyword"), ("Request", "trellisSymbol")],
    ),
    (
        "use \"ferry_lexicon.trellis\"",
        &[("use", "trellisInclude"), ("lexicon", "trellisString")],
    ),
    (
        "## Everything a traveller",
        &[("Everything", "trellisDocComment")],
    ),
    (
        "Request {",
        &[("Request", "trellisDefinition"), ("{", "trellisBrace")],
    ),
    (
        "0.45  Purchase",
        &[("0.45", "trellisWeight"), ("Purchase", "trellisSymbol")],
    ),
    ("1/5   Question", &[("1/5", "trellisWeight")]),
    ("8%    Cancellation", &[("8%", "trellisWeight")]),
    (
        "40%  \"hello\"",
        &[("hello", "trellisString"), ("\"", "trellisString")],
    ),
    (
        "0.25  CountOne Fare TicketSg     # a return",
        &[("#", "trellisComment"), ("TicketSg", "trellisSymbol")],
    ),
    // A keyword inside quotes is a word, and a comment may follow it.
    (
        "\"start\" \"again\"",
        &[("start", "trellisString"), ("keywords", "trellisComment")],
    ),
    (
        "test \"buying tickets\" {",
        &[("test", "trellisKeyword"), ("buying", "trellisString")],
    ),
    (
        "accept \"two return tickets to tolsey\"",
        &[("accept", "trellisKeyword")],
    ),
    ("reject \"to tolsey\"", &[("reject", "trellisKeyword")]),
    (
        "accept \"a single to tolsey please\" as",
        &[
            ("as (", "trellisKeyword"),
            ("(Request", "trellisBrace"),
            ("Request", "trellisSymbol"),
            ("tolsey\")", "trellisString"),
        ],
    ),
];

/// The probes of `FERRY_KIOSK`, line by line in its order.
fn ferry_kiosk_probes() -> Vec<Probe> {
    FERRY_KIOSK
        .iter()
        .flat_map(|&(line, places)| {
            places
                .iter()
                .map(move |&(at, group)| Probe { line, at, group })
        })
        .collect()
}

/// The 1-based line and byte column of a probe in `text`.
fn locate(text: &str, probe: &Probe) -> (usize, usize) {
    let (index, line) = text
        .lines()
        .enumerate()
        .find(|(_, l)| l.contains(probe.line))
        .unwrap_or_else(|| panic!("no line contains {:?}", probe.line));
    let column = line
        .find(probe.at)
        .unwrap_or_else(|| panic!("{:?} is not in line {:?}", probe.at, line));
    (index + 1, column + 1)
}

#[test]
fn vim_and_neovim_highlight_the_ferry_kiosk_example_with_the_bundled_syntax_file() {
    let file = repo().join("examples/ferry_kiosk.trellis");
    let text = fs::read_to_string(&file).unwrap();
    let mut script = String::from(
        "let s:found = [&filetype, &commentstring, &comments, get(b:, 'current_syntax', '')]\n",
    );
    let probes = ferry_kiosk_probes();
    for p in &probes {
        let (line, column) = locate(&text, p);
        script.push_str(&format!(
            "call add(s:found, synIDattr(synID({line}, {column}, 1), 'name'))\n"
        ));
    }
    script.push_str("call writefile(s:found, g:out)");
    for (program, args) in editors() {
        let found = run_script(program, &args, &file, &script);
        assert_eq!(
            found[..4],
            ["trellis", "# %s", ":##,:#", "trellis"],
            "{program}: file type, commentstring, comments, syntax"
        );
        let mismatches: Vec<String> = probes
            .iter()
            .zip(&found[4..])
            .filter(|(p, group)| p.group != group.as_str())
            .map(|(p, group)| {
                format!(
                    "  {:?} in line {:?}: expected {}, found {group:?}",
                    p.at, p.line, p.group
                )
            })
            .collect();
        assert_eq!(found.len(), 4 + probes.len(), "{program}: {found:?}");
        assert!(
            mismatches.is_empty(),
            "{program} highlights differently:\n{}",
            mismatches.join("\n")
        );
    }
}

#[test]
fn reindenting_flush_left_examples_in_vim_gives_back_their_canonical_layout() {
    // The examples are in `trellis fmt`'s layout (CI checks it), so `=` over
    // a copy with every indentation removed must restore each file exactly.
    let mut files: Vec<PathBuf> = Vec::new();
    for dir in ["examples", "cli/src/init"] {
        for entry in fs::read_dir(repo().join(dir)).unwrap() {
            let path = entry.unwrap().path();
            if path.extension().is_some_and(|e| e == "trellis") {
                files.push(path);
            }
        }
    }
    files.sort();
    assert!(files.len() >= 8, "the examples are found: {files:?}");
    let script =
        "silent! %s/^\\s\\+//\nsilent normal! gg=G\ncall writefile(getline(1, '$'), g:out)";
    for (program, args) in editors() {
        for file in &files {
            let original = fs::read_to_string(file).unwrap();
            assert!(
                original.lines().any(|l| l.starts_with("  ")),
                "{} has indented lines",
                file.display()
            );
            let reindented = run_script(program, &args, file, script);
            let reindented: String = reindented.iter().map(|l| format!("{l}\n")).collect();
            assert_eq!(
                reindented,
                original,
                "{program} re-indents {} differently",
                file.display()
            );
        }
    }
}
