//! A 5 MB grammar does not freeze the server: analysis runs off the message
//! loop, and a burst of edits is analysed far fewer times than it has edits.

mod common;

use common::{generated_grammar, TestClient};
use serde_json::json;

const BIG: &str = "file:///grammars/big.trellis";

#[tokio::test(flavor = "multi_thread", worker_threads = 2)]
async fn a_five_megabyte_grammar_keeps_the_server_answering_and_bursts_coalesce() {
    let text = generated_grammar(5 << 20);
    assert!(text.len() >= 5 << 20);
    let mut client = TestClient::start();
    client.initialize().await;
    client.open(BIG, 1, &text).await;
    // A request that needs no analysis is answered while the analysis of
    // the big file runs, before its diagnostics are published.
    let id = client
        .send_request(
            "workspace/executeCommand",
            json!({"command": "trellis.noSuchCommand", "arguments": []}),
        )
        .await;
    let answered_first = client
        .wait_for(|m| m["id"] == id || m["method"] == "textDocument/publishDiagnostics")
        .await;
    assert_eq!(
        answered_first["id"], id,
        "the answer waited for the analysis"
    );
    assert_eq!(
        client.diagnostics_for_version(BIG, 1).await["diagnostics"],
        json!([])
    );

    // A burst of edits (each appends a comment, so each is new text).
    let edits = 12;
    for v in 2..2 + edits {
        client.change(BIG, v, &format!("{text}# edit {v}\n")).await;
    }
    let last = 1 + edits;
    // A request during the burst gets the analysis of the newest text.
    let hover = client
        .request(
            "textDocument/hover",
            json!({"textDocument": {"uri": BIG}, "position": {"line": 1, "character": 7}}),
        )
        .await;
    assert!(hover["contents"]["value"].as_str().unwrap().contains("S0"));
    assert_eq!(
        client.diagnostics_for_version(BIG, last).await["diagnostics"],
        json!([])
    );
    let versions: Vec<i64> = client
        .published(BIG)
        .iter()
        .map(|p| p["version"].as_i64().unwrap())
        .collect();
    assert!(
        versions.windows(2).all(|w| w[0] < w[1]),
        "versions go only forward: {versions:?}"
    );
    assert!(
        versions.len() < 1 + edits as usize,
        "{} publications for {} versions: the burst was not coalesced ({versions:?})",
        versions.len(),
        1 + edits
    );
    client.shutdown().await;
}
