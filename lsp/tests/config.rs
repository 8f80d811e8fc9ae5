//! Edits of `trellis.toml` reach the diagnostics without touching the
//! grammar: through the client's file watching when it has it, and by the
//! server's own look at the configuration files when it has not.

mod common;

use common::{file_uri, TestClient};
use serde_json::{json, Value};
use std::fs;
use std::time::Duration;
use trellis_lsp::Options;

/// `Spare` is unreachable: a warning by default.
const GRAMMAR: &str = "start S\nS { \"a\" }\nSpare { \"b\" }\n";

fn severities(params: &Value) -> Vec<(String, u64)> {
    params["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .map(|d| {
            (
                d["code"].as_str().unwrap_or_default().to_string(),
                d["severity"].as_u64().unwrap(),
            )
        })
        .collect()
}

/// Waits for diagnostics of `uri` with `severity` (1 error, 2 warning).
async fn wait_for_unreachable(client: &mut TestClient, uri: &str, severity: u64) {
    client
        .wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri
                && severities(&m["params"]) == [("unreachable".to_string(), severity)]
        })
        .await;
}

fn grammar_dir() -> (tempfile::TempDir, String) {
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("g.trellis");
    fs::write(&path, GRAMMAR).unwrap();
    let uri = file_uri(&path);
    (dir, uri)
}

#[tokio::test]
async fn a_watched_configuration_change_republishes_with_the_new_levels() {
    let (dir, uri) = grammar_dir();
    // Polling too rarely to matter: only the notification can explain a
    // change within the test.
    let mut client = TestClient::start_with(Options {
        config_poll: Duration::from_secs(3600),
        ..Options::default()
    });
    let id = client
        .send_request(
            "initialize",
            json!({"processId": null, "rootUri": null, "capabilities": {
                "workspace": {"didChangeWatchedFiles": {"dynamicRegistration": true}}
            }}),
        )
        .await;
    client.response(id).await;
    client.notify("initialized", json!({})).await;
    // The server asks to watch configuration and grammar files.
    let request = client
        .wait_for(|m| m["method"] == "client/registerCapability")
        .await;
    let registration = &request["params"]["registrations"][0];
    assert_eq!(registration["method"], "workspace/didChangeWatchedFiles");
    let globs: Vec<&str> = registration["registerOptions"]["watchers"]
        .as_array()
        .unwrap()
        .iter()
        .map(|w| w["globPattern"].as_str().unwrap())
        .collect();
    assert_eq!(globs, ["**/trellis.toml", "**/*.trellis"]);
    client
        .send(json!({"jsonrpc": "2.0", "id": request["id"], "result": null}))
        .await;

    client.open(&uri, 1, GRAMMAR).await;
    wait_for_unreachable(&mut client, &uri, 2).await;

    let config = dir.path().join("trellis.toml");
    fs::write(&config, "[checks]\nunreachable = \"error\"\n").unwrap();
    client
        .notify(
            "workspace/didChangeWatchedFiles",
            json!({"changes": [{"uri": file_uri(&config), "type": 1}]}),
        )
        .await;
    wait_for_unreachable(&mut client, &uri, 1).await;
    client.shutdown().await;
}

#[tokio::test]
async fn without_file_watching_the_server_notices_configuration_edits_itself() {
    let (dir, uri) = grammar_dir();
    let config = dir.path().join("trellis.toml");
    fs::write(&config, "[checks]\nunreachable = \"error\"\n").unwrap();
    let mut client = TestClient::start_with(Options {
        config_poll: Duration::from_millis(50),
        ..Options::default()
    });
    client.initialize().await;
    client.open(&uri, 1, GRAMMAR).await;
    wait_for_unreachable(&mut client, &uri, 1).await;

    // Edited outside the editor: back to a warning.
    fs::write(&config, "[checks]\nunreachable = \"warning\"\n").unwrap();
    wait_for_unreachable(&mut client, &uri, 2).await;
    // Silenced: nothing left to report.
    fs::write(&config, "[checks]\nunreachable = \"off\"\n").unwrap();
    client
        .wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri.as_str()
                && m["params"]["diagnostics"] == json!([])
        })
        .await;
    client.shutdown().await;
}

#[tokio::test]
async fn uncovered_rules_are_hints_when_trellis_toml_turns_them_on() {
    // "a" is the only sentence the test accepts: `S → "a"` is covered,
    // `S → "b"` is not (and `Spare` stays unreachable).
    let grammar =
        "start S\nS { \"a\" | \"b\" }\nSpare { \"c\" }\ntest \"t\" {\n  accept \"a\"\n}\n";
    let dir = tempfile::tempdir().unwrap();
    let path = dir.path().join("g.trellis");
    fs::write(&path, grammar).unwrap();
    fs::write(
        dir.path().join("trellis.toml"),
        "[editor]\nuncovered-rules = \"hint\"\n",
    )
    .unwrap();
    let uri = file_uri(&path);
    let mut client = TestClient::start();
    client.initialize().await;
    client.open(&uri, 1, grammar).await;
    let published = client
        .wait_for(|m| {
            m["method"] == "textDocument/publishDiagnostics"
                && m["params"]["uri"] == uri.as_str()
                && severities(&m["params"])
                    .iter()
                    .any(|(c, _)| c == "uncovered")
        })
        .await;
    let mut found = severities(&published["params"]);
    found.sort();
    // 4 is HINT; `Spare → "c"` is uncovered too.
    assert_eq!(
        found,
        [
            ("uncovered".to_string(), 4),
            ("uncovered".to_string(), 4),
            ("unreachable".to_string(), 2)
        ]
    );
    let lines: Vec<u64> = published["params"]["diagnostics"]
        .as_array()
        .unwrap()
        .iter()
        .filter(|d| d["code"] == "uncovered")
        .map(|d| d["range"]["start"]["line"].as_u64().unwrap())
        .collect();
    assert_eq!(lines, [1, 2]);
    client.shutdown().await;
}
