//! Diagnostics over the protocol: what is published, where, for which
//! version, and when it is cleared. Grammars are fixtures
//! (`trellis_test_support`): what is published is written as annotations
//! under the text it points at, columns compared in UTF-16 units.

mod common;

use common::{assert_published, codes, FixtureWorkspace, TestClient};
use serde_json::{json, Value};
use trellis_test_support::fixture::DEFAULT_PATH;

const MAIN: &str = "file:///grammars/kiosk.trellis";

/// A started server with the fixture's files open; what is published
/// first for its root file is checked against that file's annotations
/// and returned.
async fn open(fixture: &str) -> (TestClient, FixtureWorkspace, Value) {
    let mut client = TestClient::start();
    client.initialize().await;
    let ws = client.open_fixture(fixture).await;
    let params = client.check_diagnostics(&ws, DEFAULT_PATH).await;
    (client, ws, params)
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
    let ws = FixtureWorkspace::new(
        r#"
        start S
        S { Island | "ticket" }
            ^^^^^^ error undefined: Island
        "#,
    );
    let uri = ws.uri(DEFAULT_PATH);
    client.open(&uri, 7, ws.text(DEFAULT_PATH)).await;
    // DiagnosticSeverity.Error = 1 (LSP 3.17 specification).
    let params = client.check_diagnostics(&ws, DEFAULT_PATH).await;
    assert_eq!(params["version"], 7);
    assert_eq!(params["diagnostics"][0]["source"], "trellis");
    client.shutdown().await;
}

#[tokio::test]
async fn columns_count_utf16_code_units_after_non_ascii_terminals() {
    // "Fähre": ä is U+00E4, one UTF-16 unit but two UTF-8 bytes; "𝄞" is
    // U+1D11E, outside the BMP: two UTF-16 units (a surrogate pair), four
    // UTF-8 bytes, one character (Unicode Standard, section 3.9). So
    // `Ziel` starts at byte 20, character 16, UTF-16 unit 17.
    let (client, ws, _) = open(
        r#"
        start S
        S { "Fähre" "𝄞" Ziel | "x" }
                        ^^^^ error undefined
        "#,
    )
    .await;
    let file = ws.file(DEFAULT_PATH);
    let annotation = &file.annotations[0];
    assert_eq!(file.line(1).find("Ziel"), Some(20));
    assert_eq!(annotation.columns, 16..20, "characters");
    assert_eq!(file.utf16_columns(annotation), 17..21, "UTF-16 units");
    client.shutdown().await;
}

#[tokio::test]
async fn a_duplicate_block_points_at_the_first_one_as_related_information() {
    let (client, ws, params) = open(
        r#"
        start S
        [[S]] { "a" }
        S { "b" }
        ^ error duplicate-block
        "#,
    )
    .await;
    let [first] = ws.ranges(DEFAULT_PATH);
    let related = params["diagnostics"][0]["relatedInformation"]
        .as_array()
        .expect("related information");
    assert_eq!(related.len(), 1);
    assert_eq!(
        related[0]["location"],
        json!({"uri": ws.uri(DEFAULT_PATH), "range": first})
    );
    assert!(!related[0]["message"].as_str().unwrap().is_empty());
    client.shutdown().await;
}

#[tokio::test]
async fn problems_in_a_used_file_are_published_under_that_files_uri() {
    // 1/2 + 1/3 = 5/6: the block does not sum to one.
    let ws = FixtureWorkspace::new(
        r#"
        === kiosk.trellis ===
        start S
        use "lexicon.trellis"
        S { Count }
        === lexicon.trellis ===
        Count {
        ^^^^^ error sum-not-one
          1/2 "one"
          1/3 "two"
        }
        "#,
    );
    let (main_uri, lexicon_uri) = (ws.uri("kiosk.trellis"), ws.uri("lexicon.trellis"));

    let mut client = TestClient::start();
    client.initialize().await;
    client.open(&main_uri, 1, ws.text("kiosk.trellis")).await;
    client.check_diagnostics(&ws, "kiosk.trellis").await;
    let lex = client.check_diagnostics(&ws, "lexicon.trellis").await;
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
    assert_published(ws.file("lexicon.trellis"), &lex["params"]);

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
    let (mut client, ws, _) = open(
        r#"
        start S
        S { T | "t" }
            ^ error undefined
        "#,
    )
    .await;
    let uri = ws.uri(DEFAULT_PATH);
    client.close(&uri).await;
    let params = client.diagnostics(&uri).await;
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
