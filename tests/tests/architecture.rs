//! The layering ARCHITECTURE.md promises, checked on the sources, so that a
//! change that breaks it fails here rather than in review:
//!
//! * the pure crates (`grammar-lang`, `engine`, `treebank`, `ide`) depend only on the
//!   crates listed below, and their sources do no I/O, spawn no threads,
//!   print nothing and know no protocol, terminal or wire format;
//! * the project layer (`project`) may do I/O but knows no protocol and
//!   writes nothing to the terminal;
//! * the shells (`cli`, `lsp`) analyse grammars only through the façade and
//!   read grammar files only through the project layer.
//!
//! Adding a dependency to a pure crate means adding it to its list here, on
//! purpose, with ARCHITECTURE.md updated to match.

use std::collections::BTreeSet;
use std::path::{Path, PathBuf};

fn root() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("..")
}

/// The names of the normal (not dev, not build) dependencies of a crate.
fn dependencies(krate: &str) -> BTreeSet<String> {
    let path = root().join(krate).join("Cargo.toml");
    let text = std::fs::read_to_string(&path)
        .unwrap_or_else(|e| panic!("{} cannot be read: {e}", path.display()));
    let manifest: toml::Table = text
        .parse()
        .unwrap_or_else(|e| panic!("{} is not TOML: {e}", path.display()));
    manifest
        .get("dependencies")
        .and_then(toml::Value::as_table)
        .map(|t| t.keys().cloned().collect())
        .unwrap_or_default()
}

/// Every `.rs` file under `dir`, recursively.
fn rust_files(dir: &Path) -> Vec<PathBuf> {
    let mut out = Vec::new();
    let mut stack = vec![dir.to_path_buf()];
    while let Some(d) = stack.pop() {
        let entries =
            std::fs::read_dir(&d).unwrap_or_else(|e| panic!("{} unreadable: {e}", d.display()));
        for entry in entries.flatten() {
            let path = entry.path();
            if path.is_dir() {
                stack.push(path);
            } else if path.extension().is_some_and(|x| x == "rs") {
                out.push(path);
            }
        }
    }
    out.sort();
    out
}

/// `file:line: text` for every line of `krate/src` (comments left out)
/// that contains one of `needles`.
fn offending_lines(krate: &str, needles: &[&str]) -> Vec<String> {
    let mut found = Vec::new();
    for file in rust_files(&root().join(krate).join("src")) {
        let text = std::fs::read_to_string(&file).unwrap_or_default();
        for (i, line) in text.lines().enumerate() {
            let code = line.trim_start();
            if code.starts_with("//") {
                continue;
            }
            // Text after a line comment is not code either.
            let code = code.split(" //").next().unwrap_or(code);
            if let Some(needle) = needles.iter().find(|n| code.contains(**n)) {
                let shown = file
                    .strip_prefix(root())
                    .unwrap_or(&file)
                    .display()
                    .to_string();
                found.push(format!("{shown}:{}: `{needle}` in {}", i + 1, line.trim()));
            }
        }
    }
    found
}

fn set(names: &[&str]) -> BTreeSet<String> {
    names.iter().map(|s| s.to_string()).collect()
}

/// What no pure crate's sources may use: I/O, threads, processes, the
/// environment, printing, async runtimes, protocol and wire-format crates.
const IMPURE: &[&str] = &[
    "std::fs",
    "std::net",
    "std::process",
    "std::thread",
    "std::env",
    "std::io::stdin",
    "std::io::stdout",
    "std::io::stderr",
    "println!",
    "eprintln!",
    "print!(",
    "eprint!(",
    "dbg!(",
    "tokio",
    "tower_lsp",
    "lsp_types",
    "serde",
    "rayon",
    "ariadne",
];

#[test]
fn the_pure_crates_depend_only_on_what_their_role_needs() {
    let expected = [
        (
            "grammar-lang",
            set(&[
                "logos",
                "num-bigint",
                "num-integer",
                "num-rational",
                "num-traits",
                "smol_str",
            ]),
        ),
        // rustc-hash: a hash function for the lexicon's short keys (no
        // dependencies, no I/O).
        (
            "engine",
            set(&["grammar-lang", "num-bigint", "num-traits", "rustc-hash"]),
        ),
        // Reads trees from any `BufRead` it is given; opening files is the
        // project layer's.
        ("treebank", set(&["grammar-lang"])),
        (
            "ide",
            set(&["grammar-lang", "num-bigint", "num-traits", "trellis-engine"]),
        ),
    ];
    for (krate, allowed) in expected {
        let actual = dependencies(krate);
        let extra: Vec<_> = actual.difference(&allowed).collect();
        assert!(
            extra.is_empty(),
            "{krate} must stay pure, but depends on {extra:?} (see ARCHITECTURE.md)"
        );
    }
}

#[test]
fn the_pure_crates_do_no_io_print_nothing_and_know_no_protocol() {
    for krate in ["grammar-lang", "engine", "treebank", "ide"] {
        let found = offending_lines(krate, IMPURE);
        assert!(
            found.is_empty(),
            "{krate} must stay pure:\n{}",
            found.join("\n")
        );
    }
}

#[test]
fn the_project_layer_knows_no_protocol_and_no_terminal() {
    let forbidden = set(&[
        "tower-lsp",
        "lsp-types",
        "tokio",
        "ariadne",
        "clap",
        "trellis-lsp",
        "trellis-cli",
    ]);
    let deps = dependencies("project");
    let bad: Vec<_> = deps.intersection(&forbidden).collect();
    assert!(bad.is_empty(), "project depends on {bad:?}");
    let found = offending_lines(
        "project",
        &[
            "tower_lsp",
            "lsp_types",
            "tokio",
            "ariadne",
            "println!",
            "eprintln!",
            "print!(",
            "eprint!(",
            "std::io::stdout",
            "std::io::stderr",
            "std::process::exit",
        ],
    );
    assert!(found.is_empty(), "{}", found.join("\n"));
}

#[test]
fn the_shells_analyse_only_through_the_facade_and_read_only_through_the_project_layer() {
    for krate in ["cli", "lsp"] {
        let found = offending_lines(
            krate,
            &[
                "grammar_lang::analyze(",
                "grammar_lang::analyze_text(",
                "consistency::leak_finding(",
                "std::fs::read(",
                "std::fs::read_to_string(",
                "fs::read_to_string(",
                "String::from_utf8(",
            ],
        );
        assert!(
            found.is_empty(),
            "{krate} does the façade's or the project layer's work:\n{}",
            found.join("\n")
        );
    }
}
