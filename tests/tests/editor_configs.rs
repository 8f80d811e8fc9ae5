//! The editor configurations under `editors/` read with a TOML reader: the
//! Helix language entry and the Zed extension point at `trellis lsp` and at
//! the tree-sitter grammar in `editors/tree-sitter-trellis`, for the file
//! types that grammar declares; their highlight queries are the grammar's
//! own with each editor's capture names.
//!
//! (The queries themselves are compiled against the grammar by
//! `tree-sitter query` in `.ci/run`.)

use std::fs;
use std::path::{Path, PathBuf};
use toml::Value;

fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("tests/ has a parent")
        .to_path_buf()
}

fn read(path: &str) -> String {
    fs::read_to_string(repo().join(path)).unwrap_or_else(|e| panic!("{path}: {e}"))
}

fn toml_file(path: &str) -> toml::Table {
    read(path)
        .parse::<toml::Table>()
        .unwrap_or_else(|e| panic!("{path} is not valid TOML: {e}"))
}

fn strings(value: Option<&Value>) -> Vec<String> {
    value
        .and_then(Value::as_array)
        .map(|a| {
            a.iter()
                .filter_map(Value::as_str)
                .map(str::to_string)
                .collect()
        })
        .unwrap_or_default()
}

/// The grammar's own description (tree-sitter.json): its name and file
/// types.
fn grammar_file_types() -> (String, Vec<String>) {
    let path = "editors/tree-sitter-trellis/tree-sitter.json";
    let json: serde_json::Value = serde_json::from_str(&read(path))
        .unwrap_or_else(|e| panic!("{path} is not valid JSON: {e}"));
    let grammar = &json["grammars"][0];
    let name = grammar["name"].as_str().expect("the grammar's name");
    let types = grammar["file-types"]
        .as_array()
        .expect("the grammar's file types")
        .iter()
        .filter_map(|t| t.as_str().map(str::to_string))
        .collect();
    (name.to_string(), types)
}

#[test]
fn the_grammar_is_named_trellis_and_claims_trellis_files() {
    let (name, types) = grammar_file_types();
    assert_eq!(name, "trellis");
    assert_eq!(types, ["trellis"]);
}

#[test]
fn helix_runs_trellis_lsp_with_the_tree_sitter_grammar_for_its_file_types() {
    let config = toml_file("editors/helix/languages.toml");
    let (grammar, file_types) = grammar_file_types();
    let languages = config["language"].as_array().expect("[[language]]");
    let language = languages
        .iter()
        .find(|l| l["name"].as_str() == Some("trellis"))
        .expect("a [[language]] named trellis");
    assert_eq!(strings(language.get("file-types")), file_types);
    assert_eq!(language["grammar"].as_str(), Some(grammar.as_str()));
    assert_eq!(language["scope"].as_str(), Some("source.trellis"));
    assert_eq!(strings(language.get("roots")), ["trellis.toml"]);
    assert_eq!(strings(language.get("comment-tokens"))[0], "#");
    assert_eq!(strings(language.get("language-servers")), ["trellis"]);

    let server = &config["language-server"]["trellis"];
    assert_eq!(server["command"].as_str(), Some("trellis"));
    assert_eq!(strings(server.get("args")), ["lsp"]);

    let grammars = config["grammar"].as_array().expect("[[grammar]]");
    let entry = grammars
        .iter()
        .find(|g| g["name"].as_str() == Some(grammar.as_str()))
        .expect("a [[grammar]] entry for the grammar");
    let path = entry["source"]["path"].as_str().expect("source.path");
    assert!(
        path.ends_with("/editors/tree-sitter-trellis"),
        "the grammar's source is the directory of the tree-sitter grammar: {path}"
    );
}

#[test]
fn zed_extension_declares_the_grammar_the_language_and_its_server() {
    let (grammar, file_types) = grammar_file_types();
    let extension = toml_file("editors/zed/extension.toml");
    assert_eq!(extension["id"].as_str(), Some("trellis"));
    assert_eq!(extension["schema_version"].as_integer(), Some(1));
    let source = &extension["grammars"][grammar.as_str()];
    assert_eq!(source["path"].as_str(), Some("editors/tree-sitter-trellis"));
    assert!(source["repository"].as_str().is_some() && source["rev"].as_str().is_some());
    let server = &extension["language_servers"]["trellis"];
    assert_eq!(strings(server.get("languages")), ["trellis"]);

    let language = toml_file("editors/zed/languages/trellis/config.toml");
    assert_eq!(language["name"].as_str(), Some("trellis"));
    assert_eq!(language["grammar"].as_str(), Some(grammar.as_str()));
    assert_eq!(strings(language.get("path_suffixes")), file_types);
    assert_eq!(strings(language.get("line_comments")), ["# "]);
    let brackets = language["brackets"].as_array().expect("brackets");
    let pairs: Vec<(&str, &str)> = brackets
        .iter()
        .map(|b| (b["start"].as_str().unwrap(), b["end"].as_str().unwrap()))
        .collect();
    assert_eq!(pairs, [("{", "}"), ("(", ")"), ("\"", "\"")]);

    // The extension's code starts the server as `trellis lsp` unless the
    // user's settings say otherwise.
    let code = read("editors/zed/src/lib.rs");
    assert!(
        code.contains(r#".which("trellis")"#),
        "looks trellis up on PATH"
    );
    assert!(
        code.contains(r#"vec!["lsp".to_string()]"#),
        "passes `lsp` by default"
    );
}

/// Each capture of the grammar's highlights.scm and its name in Helix and
/// in Zed (their theme scopes: Helix's `constant.numeric`, Zed's
/// `comment.doc`, …).
const CAPTURES: &[(&str, &str, &str)] = &[
    ("keyword", "keyword", "keyword"),
    ("keyword.import", "keyword.control.import", "keyword"),
    ("keyword.modifier", "keyword.storage.modifier", "keyword"),
    ("module", "namespace", "label"),
    ("type.definition", "type", "type"),
    ("type", "type", "type"),
    ("number", "constant.numeric", "number"),
    ("string", "string", "string"),
    (
        "string.escape",
        "constant.character.escape",
        "string.escape",
    ),
    ("comment", "comment.line", "comment"),
    (
        "comment.documentation",
        "comment.line.documentation",
        "comment.doc",
    ),
    (
        "punctuation.bracket",
        "punctuation.bracket",
        "punctuation.bracket",
    ),
    (
        "punctuation.delimiter",
        "punctuation.delimiter",
        "punctuation.delimiter",
    ),
];

/// A query without its comment lines and surrounding blank lines.
fn patterns(query: &str) -> String {
    query
        .lines()
        .filter(|l| !l.trim_start().starts_with(';'))
        .collect::<Vec<_>>()
        .join("\n")
        .trim()
        .to_string()
}

/// `query` with every capture renamed by `rename`; panics on a capture the
/// table does not know.
fn renamed(query: &str, rename: impl Fn(&str) -> Option<&'static str>) -> String {
    let mut out = String::with_capacity(query.len());
    let mut rest = query;
    while let Some(at) = rest.find('@') {
        out.push_str(&rest[..at]);
        let after = &rest[at + 1..];
        let end = after
            .find(|c: char| !(c.is_alphanumeric() || c == '.' || c == '_'))
            .unwrap_or(after.len());
        let capture = &after[..end];
        let new = rename(capture).unwrap_or_else(|| panic!("capture @{capture} has no mapping"));
        out.push('@');
        out.push_str(new);
        rest = &after[end..];
    }
    out.push_str(rest);
    out
}

#[test]
fn helix_and_zed_highlight_with_the_grammars_patterns_in_their_capture_names() {
    let canonical = patterns(&read("editors/tree-sitter-trellis/queries/highlights.scm"));
    let helix = renamed(&canonical, |c| {
        CAPTURES.iter().find(|m| m.0 == c).map(|m| m.1)
    });
    let zed = renamed(&canonical, |c| {
        CAPTURES.iter().find(|m| m.0 == c).map(|m| m.2)
    });
    assert_eq!(
        patterns(&read("editors/helix/queries/trellis/highlights.scm")),
        helix,
        "editors/helix/queries/trellis/highlights.scm"
    );
    assert_eq!(
        patterns(&read("editors/zed/languages/trellis/highlights.scm")),
        zed,
        "editors/zed/languages/trellis/highlights.scm"
    );
    assert_eq!(
        read("editors/helix/queries/trellis/locals.scm"),
        read("editors/tree-sitter-trellis/queries/locals.scm"),
        "Helix's locals.scm is the grammar's"
    );
}
