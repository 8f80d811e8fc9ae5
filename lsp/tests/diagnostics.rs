//! Diagnostics over the protocol: what is published, where, for which
//! version, and when it is cleared.

mod common;

use common::{codes, file_uri, TestClient};
use serde_json::{json, Value};
use std::fs;

const MAIN: &str = "file:///grammars/kiosk.trellis";

fn diagnostic_with_code<'a>(params: &'a Value, code: &str) -> &'a Value {
    params["diagnostics"]
        .as_array()
        .expect("diagnostics array")
        .iter()
        .find(|d| d["code"] == code)
        .unwrap_or_else(|| panic!("no `{code}` diagnostic in {params}"))
}

#[tokio::test]
async fn initialize_announces_full_sync_utf16_positions_and_the_commands() {
    let mut client = TestClient::start();
    let caps = client.initialize().await;
    // TextDocumentSyncKind.Full = 1 (LSP 3.17 specification).
    assert_eq!(caps["textDocumentSync"]["change"], 1);
    assert_eq!(caps["textDocumentSync"]["openClose"], true);
    assert_eq!(caps["positionEncoding"], "utf-16");
    let commands = caps["executeCommandProvider"]["commands"]
        .as_array()
        .expect("commands");
    assert!(commands.contains(&json!("trellis.parse")));
    assert!(commands.contains(&json!("trellis.sample")));
    assert!(
        !commands.contains(&json!("trellis.debug.panic")),
        "the debug command stays hidden"
    );
    client.shutdown().await;
}

#[tokio::test]
async fn opening_a_broken_grammar_publishes_its_diagnostics_with_code_source_and_version() {
    let mut client = TestClient::start();
    client.initialize().await;
    client
        .open(
            MAIN,
            7,
            "start Request\nRequest {\n  1/2  \"ticket\" Island\n  1/2  \"ticket\"\n}\n",
        )
        .await;
    let params = client.diagnostics(MAIN).await;
    assert_eq!(params["version"], 7);
    assert_eq!(codes(&params), ["undefined"]);
    let d = diagnostic_with_code(&params, "undefined");
    assert_eq!(d["source"], "trellis");
    // DiagnosticSeverity.Error = 1 (LSP 3.17 specification).
    assert_eq!(d["severity"], 1);
    assert_eq!(
        d["range"],
        json!({"start": {"line": 2, "character": 16}, "end": {"line": 2, "character": 22}})
    );
    assert!(d["message"].as_str().unwrap().contains("Island"), "{d}");
    client.shutdown().await;
}

#[tokio::test]
async fn columns_count_utf16_code_units_after_non_ascii_terminals() {
    let mut client = TestClient::start();
    client.initialize().await;
    // "Fähre": ä is U+00E4, one UTF-16 unit but two UTF-8 bytes; "𝄞" is
    // U+1D11E, outside the BMP: two UTF-16 units (a surrogate pair), four
    // UTF-8 bytes, one character (Unicode Standard, section 3.9). So
    // `Ziel` starts at byte 20, character 16, UTF-16 unit 17.
    let text = "start S\nS { \"Fähre\" \"𝄞\" Ziel | \"x\" }\n";
    assert_eq!(text.lines().nth(1).unwrap().find("Ziel"), Some(20));
    client.open(MAIN, 1, text).await;
    let params = client.diagnostics(MAIN).await;
    let d = diagnostic_with_code(&params, "undefined");
    assert_eq!(
        d["range"],
        json!({"start": {"line": 1, "character": 17}, "end": {"line": 1, "character": 21}})
    );
    client.shutdown().await;
}

#[tokio::test]
async fn a_duplicate_block_points_at_the_first_one_as_related_information() {
    let mut client = TestClient::start();
    client.initialize().await;
    let text = "start S\nS { \"a\" }\nS { \"b\" }\n";
    client.open(MAIN, 1, text).await;
    let params = client.diagnostics(MAIN).await;
    let d = diagnostic_with_code(&params, "duplicate-block");
    assert_eq!(d["range"]["start"]["line"], 2);
    let related = d["relatedInformation"]
        .as_array()
        .expect("related information");
    assert_eq!(related.len(), 1);
    assert_eq!(related[0]["location"]["uri"], MAIN);
    assert_eq!(related[0]["location"]["range"]["start"]["line"], 1);
    assert!(!related[0]["message"].as_str().unwrap().is_empty());
    client.shutdown().await;
}

#[tokio::test]
async fn problems_in_a_used_file_are_published_under_that_files_uri() {
    let dir = tempfile::tempdir().unwrap();
    let main = dir.path().join("kiosk.trellis");
    let lexicon = dir.path().join("lexicon.trellis");
    fs::write(
        &main,
        "start Request\nuse \"lexicon.trellis\"\nRequest { Count \"ticket\" }\n",
    )
    .unwrap();
    // 1/2 + 1/3 = 5/6: the block does not sum to one.
    fs::write(&lexicon, "Count {\n  1/2 \"one\"\n  1/3 \"two\"\n}\n").unwrap();
    let (main_uri, lexicon_uri) = (file_uri(&main), file_uri(&lexicon));

    let mut client = TestClient::start();
    client.initialize().await;
    client
        .open(&main_uri, 1, &fs::read_to_string(&main).unwrap())
        .await;
    assert_eq!(
        codes(&client.diagnostics(&main_uri).await),
        Vec::<String>::new()
    );
    let lex = client.diagnostics(&lexicon_uri).await;
    assert_eq!(codes(&lex), ["sum-not-one"]);
    // Not an open buffer: no version.
    assert_eq!(lex["version"], Value::Null);

    // An open buffer is read instead of the file on disk, even unsaved.
    client
        .open(
            &lexicon_uri,
            1,
            "Count {\n  1/2 \"one\"\n  1/2 \"two\"\n}\n",
        )
        .await;
    let lex = client.diagnostics_for_version(&lexicon_uri, 1).await;
    assert_eq!(codes(&lex), Vec::<String>::new());

    // Closing the buffer: the grammar reads the disk file again.
    client.close(&lexicon_uri).await;
    let lex = client
        .wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == lexicon_uri
                && !m["params"]["diagnostics"].as_array().unwrap().is_empty()
        })
        .await;
    assert_eq!(codes(&lex["params"]), ["sum-not-one"]);

    // Closing the grammar too: nothing open uses the lexicon any more.
    client.close(&main_uri).await;
    let cleared = client
        .wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == lexicon_uri
                && m["params"]["diagnostics"].as_array().unwrap().is_empty()
        })
        .await;
    assert_eq!(cleared["params"]["diagnostics"], json!([]));
    client.shutdown().await;
}

#[tokio::test]
async fn closing_a_document_clears_its_diagnostics() {
    let mut client = TestClient::start();
    client.initialize().await;
    client.open(MAIN, 1, "start S\nS { T | \"t\" }\n").await;
    assert_eq!(codes(&client.diagnostics(MAIN).await), ["undefined"]);
    client.close(MAIN).await;
    let params = client.diagnostics(MAIN).await;
    assert_eq!(params["diagnostics"], json!([]));
    client.shutdown().await;
}

#[tokio::test]
async fn rapid_edits_end_with_the_newest_versions_diagnostics_and_never_go_back() {
    let mut client = TestClient::start();
    client.initialize().await;
    client.open(MAIN, 1, "start S\nS { A | \"a\" }\n").await;
    // Versions 2..=30 alternate between one and two undefined symbols; the
    // last (30) has exactly one.
    for v in 2..=30 {
        let text = if v % 2 == 0 {
            "start S\nS { A | \"a\" }\n"
        } else {
            "start S\nS { A B | \"a\" }\n"
        };
        client.change(MAIN, v, text).await;
    }
    let last = client.diagnostics_for_version(MAIN, 30).await;
    assert_eq!(codes(&last), ["undefined"]);
    // A change that arrives out of order (older than what the server has)
    // is ignored.
    client
        .change(MAIN, 29, "start S\nS { A B C | \"a\" }\n")
        .await;
    client.change(MAIN, 31, "start S\nS { \"a\" }\n").await;
    let newest = client.diagnostics_for_version(MAIN, 31).await;
    assert_eq!(newest["diagnostics"], json!([]));

    let versions: Vec<i64> = client
        .published(MAIN)
        .iter()
        .map(|p| p["version"].as_i64().expect("an open buffer's version"))
        .collect();
    let mut sorted = versions.clone();
    sorted.sort();
    assert_eq!(versions, sorted, "published versions must never decrease");
    assert!(!versions.contains(&29));
    client.shutdown().await;
}
