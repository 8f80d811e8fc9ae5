//! `textDocument/formatting` and `textDocument/rangeFormatting` over
//! JSON-RPC: minimal edits in UTF-16 positions, nothing for a document with
//! syntax errors.

mod common;

use common::{file_uri, TestClient};
use serde_json::{json, Value};

/// The byte offset of an LSP position (UTF-16 units) in `text`.
fn offset(text: &str, pos: &Value) -> usize {
    let line = pos["line"].as_u64().unwrap() as usize;
    let character = pos["character"].as_u64().unwrap() as usize;
    let start: usize = text.split_inclusive('\n').take(line).map(str::len).sum();
    let mut units = 0;
    for (i, c) in text[start..].char_indices() {
        if units >= character || c == '\n' {
            return start + i;
        }
        units += c.len_utf16();
    }
    text.len()
}

/// `text` with LSP edits applied.
fn apply(text: &str, edits: &Value) -> String {
    let mut edits: Vec<(usize, usize, String)> = edits
        .as_array()
        .unwrap()
        .iter()
        .map(|e| {
            (
                offset(text, &e["range"]["start"]),
                offset(text, &e["range"]["end"]),
                e["newText"].as_str().unwrap().to_string(),
            )
        })
        .collect();
    edits.sort_by_key(|e| std::cmp::Reverse(e.0));
    let mut out = text.to_string();
    for (start, end, new) in edits {
        out.replace_range(start..end, &new);
    }
    out
}

const MESSY: &str = "start Request\nRequest {\n  0.5 \"Fähre\" \"𝄞\"   Island\n  0.5 Island\n}\nIsland {\"tolsey\"|\"oxna\"}\n";
const TIDY: &str = "start Request\n\nRequest {\n  0.5  \"Fähre\" \"𝄞\" Island\n  0.5  Island\n}\n\nIsland { \"tolsey\" | \"oxna\" }\n";

#[tokio::test]
async fn formatting_answers_small_edits_in_utf16_positions() {
    let dir = tempfile::tempdir().unwrap();
    let uri = file_uri(&dir.path().join("kiosk.trellis"));
    let mut client = TestClient::ready(&uri, MESSY).await;
    let edits = client
        .request(
            "textDocument/formatting",
            json!({"textDocument": {"uri": uri}, "options": {"tabSize": 2, "insertSpaces": true}}),
        )
        .await;
    assert_eq!(apply(MESSY, &edits), TIDY, "{edits}");
    // Small edits, not one replacement of the whole document.
    assert!(edits.as_array().unwrap().len() > 1, "{edits}");
    for e in edits.as_array().unwrap() {
        assert!(e["newText"].as_str().unwrap().len() < 20, "{e}");
    }
    client.shutdown().await;
}

#[tokio::test]
async fn range_formatting_only_touches_the_lines_of_the_range() {
    let dir = tempfile::tempdir().unwrap();
    let uri = file_uri(&dir.path().join("kiosk.trellis"));
    let mut client = TestClient::ready(&uri, MESSY).await;
    // Lines 2 and 3 (0-based): the alternatives of `Request`.
    let edits = client
        .request(
            "textDocument/rangeFormatting",
            json!({
                "textDocument": {"uri": uri},
                "range": {"start": {"line": 2, "character": 0}, "end": {"line": 3, "character": 5}},
                "options": {"tabSize": 2, "insertSpaces": true}
            }),
        )
        .await;
    assert_eq!(
        apply(MESSY, &edits),
        "start Request\nRequest {\n  0.5  \"Fähre\" \"𝄞\" Island\n  0.5  Island\n}\nIsland {\"tolsey\"|\"oxna\"}\n",
        "{edits}"
    );
    client.shutdown().await;
}

#[tokio::test]
async fn a_document_with_syntax_errors_gets_no_edits() {
    let dir = tempfile::tempdir().unwrap();
    let uri = file_uri(&dir.path().join("broken.trellis"));
    let mut client = TestClient::ready(&uri, "start A\nA {\"x\"}\nB = \"y\"\n").await;
    let edits = client
        .request(
            "textDocument/formatting",
            json!({"textDocument": {"uri": uri}, "options": {"tabSize": 2, "insertSpaces": true}}),
        )
        .await;
    assert!(edits.is_null(), "{edits}");
    client.shutdown().await;
}
