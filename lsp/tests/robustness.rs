//! The server survives bad input and its own failures, and answers them as
//! the JSON-RPC 2.0 and LSP specifications say.

mod common;

use common::{codes, frame, TestClient};
use serde_json::{json, Value};

const MAIN: &str = "file:///grammars/kiosk.trellis";

// Error codes from the JSON-RPC 2.0 specification, section 5.1, and the LSP
// 3.17 specification ("ErrorCodes", "LSPErrorCodes").
const PARSE_ERROR: i64 = -32700;
const INVALID_REQUEST: i64 = -32600;
const METHOD_NOT_FOUND: i64 = -32601;
const INVALID_PARAMS: i64 = -32602;
const INTERNAL_ERROR: i64 = -32603;
const SERVER_NOT_INITIALIZED: i64 = -32002;
const REQUEST_CANCELLED: i64 = -32800;

fn error_code(response: &Value) -> i64 {
    response["error"]["code"]
        .as_i64()
        .unwrap_or_else(|| panic!("expected an error response, got {response}"))
}

/// Parses one sentence with the grammar open at `MAIN`.
async fn parse(client: &mut TestClient, sentence: &str) -> Value {
    client
        .request(
            "workspace/executeCommand",
            json!({"command": "trellis.parse", "arguments": [{"uri": MAIN, "sentence": sentence}]}),
        )
        .await
}

/// A started server busy parsing: a small ambiguous grammar open at
/// `MAIN`, its diagnostics received, and a parse of many long sentences
/// sent but not awaited, which keeps the parser busy for a long while; the
/// id of that parse request.
async fn busy_server() -> (TestClient, i64) {
    let mut client = TestClient::start();
    client.initialize().await;
    client
        .open(MAIN, 1, "start S\nS relative {\n  1 S S\n  1 \"a\"\n}\n")
        .await;
    client.diagnostics(MAIN).await;
    let sentences = vec![vec!["a"; 40].join(" "); 5_000];
    let id = client
        .send_request(
            "workspace/executeCommand",
            json!({"command": "trellis.parse", "arguments": [{"uri": MAIN, "sentences": sentences}]}),
        )
        .await;
    (client, id)
}

#[tokio::test]
async fn a_request_before_initialize_is_refused_as_not_initialized() {
    let mut client = TestClient::start();
    let response = client
        .call(
            "workspace/executeCommand",
            json!({"command": "trellis.parse", "arguments": []}),
        )
        .await;
    assert_eq!(error_code(&response), SERVER_NOT_INITIALIZED);
    client.initialize().await;
    client.shutdown().await;
}

#[tokio::test]
async fn malformed_json_gets_a_parse_error_with_a_null_id_and_the_server_goes_on() {
    let mut client = TestClient::start();
    client.initialize().await;
    client
        .send_raw(&frame("{\"jsonrpc\": \"2.0\", \"id\": 3, \"method\": "))
        .await;
    let response = client
        .wait_for(|m| m.get("error").is_some() && m["id"].is_null())
        .await;
    assert_eq!(error_code(&response), PARSE_ERROR);
    // Still serving.
    client.open(MAIN, 1, "start S\nS { T | \"t\" }\n").await;
    assert_eq!(codes(&client.diagnostics(MAIN).await), ["undefined"]);
    client.shutdown().await;
}

#[tokio::test]
async fn a_message_that_is_json_but_not_a_request_gets_invalid_request() {
    let mut client = TestClient::start();
    client.initialize().await;
    // Valid JSON, but neither a request, a notification nor a response.
    client
        .send_raw(&frame("{\"jsonrpc\": \"2.0\", \"id\": 4}"))
        .await;
    let response = client.response(4).await;
    assert_eq!(error_code(&response), INVALID_REQUEST);
    // A header block without Content-Length cannot be read as a message.
    client.send_raw(b"Content-Type: text/plain\r\n\r\n").await;
    let response = client
        .wait_for(|m| m.get("error").is_some() && m["id"].is_null())
        .await;
    assert_eq!(error_code(&response), PARSE_ERROR);
    // Still serving.
    client.open(MAIN, 1, "start S\nS { \"t\" }\n").await;
    assert_eq!(client.diagnostics(MAIN).await["diagnostics"], json!([]));
    client.shutdown().await;
}

#[tokio::test]
async fn unknown_methods_and_bad_parameters_get_their_error_codes() {
    let mut client = TestClient::start();
    client.initialize().await;
    let response = client.call("trellis/noSuchMethod", json!({})).await;
    assert_eq!(error_code(&response), METHOD_NOT_FOUND);
    let response = client
        .call("workspace/executeCommand", json!({"command": 42}))
        .await;
    assert_eq!(error_code(&response), INVALID_PARAMS);
    let response = client
        .call(
            "workspace/executeCommand",
            json!({"command": "trellis.noSuchCommand", "arguments": []}),
        )
        .await;
    assert_eq!(error_code(&response), INVALID_PARAMS);
    client.shutdown().await;
}

#[tokio::test]
async fn a_panic_in_core_work_is_logged_answered_with_an_error_and_survived() {
    let mut client = TestClient::start();
    client.initialize().await;
    let response = client
        .call(
            "workspace/executeCommand",
            json!({"command": "trellis.debug.panic", "arguments": []}),
        )
        .await;
    assert_eq!(error_code(&response), INTERNAL_ERROR);
    assert!(
        response["error"]["message"]
            .as_str()
            .unwrap()
            .contains("deliberate panic"),
        "{response}"
    );
    let log = client
        .wait_for(|m| m["method"] == "window/logMessage" && m["params"]["type"] == 1)
        .await;
    assert!(
        log["params"]["message"]
            .as_str()
            .unwrap()
            .contains("deliberate panic"),
        "{log}"
    );
    // The server keeps serving: analysis and commands still work.
    client.open(MAIN, 1, "start S\nS { \"ferry\" }\n").await;
    assert_eq!(client.diagnostics(MAIN).await["diagnostics"], json!([]));
    assert_eq!(
        parse(&mut client, "ferry").await["results"][0]["parsed"],
        true
    );
    client.shutdown().await;
}

#[tokio::test]
async fn a_cancelled_parse_is_answered_with_request_cancelled() {
    // The parse runs far longer than the cancellation takes to arrive.
    let (mut client, id) = busy_server().await;
    client.notify("$/cancelRequest", json!({"id": id})).await;
    let response = client.response(id).await;
    assert_eq!(error_code(&response), REQUEST_CANCELLED);
    // The server answers the next request.
    assert_eq!(
        parse(&mut client, "a a").await["results"][0]["parsed"],
        true
    );
    client.shutdown().await;
}

#[tokio::test]
async fn a_long_request_holds_up_neither_other_requests_nor_diagnostics() {
    // The parse runs far longer than what follows.
    let (mut client, slow) = busy_server().await;
    // An edit is analysed and published, and a hover answered, while the
    // parse is still running.
    client
        .change(
            MAIN,
            2,
            "start S\nS relative {\n  1 S S\n  1 \"a\"\n  1 T\n}\n",
        )
        .await;
    assert_eq!(
        codes(&client.diagnostics_for_version(MAIN, 2).await),
        ["undefined"]
    );
    let hover = client
        .request(
            "textDocument/hover",
            json!({"textDocument": {"uri": MAIN}, "position": {"line": 2, "character": 6}}),
        )
        .await;
    assert!(hover.to_string().contains('S'), "{hover}");
    assert!(
        !client.received.iter().any(|m| m["id"] == slow),
        "the parse finished before the edit was published; it cannot show that it does not block"
    );
    client.notify("$/cancelRequest", json!({"id": slow})).await;
    assert_eq!(error_code(&client.response(slow).await), REQUEST_CANCELLED);
    client.shutdown().await;
}

/// A `use` of a FIFO is refused without opening it: a blocking read would
/// wedge the analysis worker for every document. The finding is located at
/// the `use` string, and the server goes on answering and analysing.
#[cfg(unix)]
#[tokio::test]
async fn a_use_of_a_fifo_is_a_diagnostic_and_the_server_keeps_answering() {
    let dir = tempfile::tempdir().unwrap();
    // mkfifo is in coreutils; nobody ever writes to this FIFO.
    let made = std::process::Command::new("mkfifo")
        .arg(dir.path().join("pipe.trellis"))
        .status()
        .expect("mkfifo runs");
    assert!(made.success());
    let uri = common::file_uri(&dir.path().join("kiosk.trellis"));
    let mut client = TestClient::start();
    client.initialize().await;
    client
        .open(
            &uri,
            1,
            "start Request\nuse \"pipe.trellis\"\nRequest { \"ticket\" }\n",
        )
        .await;
    let published = client.diagnostics(&uri).await;
    assert_eq!(codes(&published), ["use-missing"]);
    let d = &published["diagnostics"][0];
    assert!(
        d["message"].as_str().unwrap().contains("FIFO"),
        "{published}"
    );
    // Line 1 (0-based), from the opening quote of the path string.
    assert_eq!(d["range"]["start"], json!({"line": 1, "character": 4}));

    // Still answering requests ...
    let hover = client
        .request(
            "textDocument/hover",
            json!({"textDocument": {"uri": uri}, "position": {"line": 2, "character": 2}}),
        )
        .await;
    assert!(
        hover["contents"]["value"]
            .as_str()
            .is_some_and(|v| v.contains("Request")),
        "{hover}"
    );
    // ... and analysing: with the `use` gone, the finding goes.
    client
        .change(&uri, 2, "start Request\nRequest { \"ticket\" }\n")
        .await;
    let published = client.diagnostics_for_version(&uri, 2).await;
    assert!(codes(&published).is_empty(), "{published}");
    client.shutdown().await;
}
