//! `trellis.runTest` and the code lenses that run test blocks.

mod common;

use common::{assert_request_failed, harbour_with_tests, TestClient};
use serde_json::{json, Value};

const URI: &str = "file:///grammars/harbour.trellis";

async fn ready(text: &str) -> TestClient {
    TestClient::ready(URI, text).await
}

async fn run_test(client: &mut TestClient, argument: Value) -> Value {
    client.execute("trellis.runTest", argument).await
}

#[tokio::test]
async fn run_test_runs_every_test_and_reports_each_case() {
    let mut client = ready(&harbour_with_tests()).await;
    let result = run_test(&mut client, json!({"uri": URI})).await["result"].clone();
    assert_eq!(result["passed"], 3, "{result}");
    assert_eq!(result["failed"], 2, "{result}");
    let good = &result["tests"][0];
    assert_eq!(good["name"], "good");
    assert_eq!(good["passed"], true);
    assert_eq!(good["location"]["uri"], URI);
    assert_eq!(
        good["location"]["range"]["start"],
        json!({"line": 8, "character": 0})
    );
    let first = &good["cases"][0];
    assert_eq!(first["tree"], r#"(S (NP "ferries") (VP "sail"))"#);
    assert!((first["probability"].as_f64().unwrap() - 0.225).abs() < 1e-12);

    let bad = &result["tests"][1];
    assert_eq!(bad["passed"], false);
    let cases = bad["cases"].as_array().unwrap();
    assert_eq!(cases[0]["passed"], true);
    // `reject "boats sail"` fails: the sentence parses.
    assert_eq!(cases[1]["passed"], false);
    assert_eq!(
        cases[1]["location"]["range"]["start"],
        json!({"line": 15, "character": 2})
    );
    assert_eq!(cases[1]["tree"], r#"(S (NP "boats") (VP "sail"))"#);
    let reason = cases[2]["failure"].as_array().unwrap();
    assert!(
        reason
            .iter()
            .any(|l| l.as_str().unwrap().contains("did you mean \"ferries\"?")),
        "{reason:?}"
    );
    client.shutdown().await;
}

#[tokio::test]
async fn run_test_runs_one_named_test_and_refuses_an_unknown_name() {
    let mut client = ready(&harbour_with_tests()).await;
    let result = run_test(&mut client, json!({"uri": URI, "test": "good"})).await["result"].clone();
    assert_eq!(result["tests"].as_array().unwrap().len(), 1);
    assert_eq!(result["passed"], 2);
    assert_eq!(result["failed"], 0);

    let response = run_test(&mut client, json!({"uri": URI, "test": "ugly"})).await;
    assert_request_failed(&response, "no test named \"ugly\"");
    client.shutdown().await;
}

#[tokio::test]
async fn run_test_refuses_a_grammar_with_errors() {
    let mut client = ready("start S\nS { 0.5 \"a\" }\ntest \"t\" { accept \"a\" }\n").await;
    let response = run_test(&mut client, json!({"uri": URI})).await;
    assert_request_failed(&response, "1 error");
    client.shutdown().await;
}

#[tokio::test]
async fn code_lenses_run_all_tests_above_start_and_one_test_above_each_block() {
    let mut client = ready(&harbour_with_tests()).await;
    let lenses = client
        .request(
            "textDocument/codeLens",
            json!({"textDocument": {"uri": URI}}),
        )
        .await;
    let lenses = lenses.as_array().unwrap();
    let summary: Vec<(u64, &str, &str)> = lenses
        .iter()
        .map(|l| {
            (
                l["range"]["start"]["line"].as_u64().unwrap(),
                l["command"]["command"].as_str().unwrap(),
                l["command"]["title"].as_str().unwrap(),
            )
        })
        .collect();
    assert_eq!(
        summary,
        [
            (0, "trellis.parse", "▶ parse a sentence"),
            (0, "trellis.sample", "⚄ sample 10 sentences"),
            (0, "trellis.runTest", "▶ run all 2 tests"),
            (8, "trellis.runTest", "▶ run test (2 cases)"),
            (13, "trellis.runTest", "▶ run test (3 cases)"),
        ]
    );
    // The lens of the failing test runs it and shows why it failed.
    let command = &lenses[4]["command"];
    let response = client
        .call(
            "workspace/executeCommand",
            json!({"command": command["command"], "arguments": command["arguments"]}),
        )
        .await;
    assert_eq!(response["result"]["failed"], 2);
    let shown = client
        .wait_for(|m| m["method"] == "window/showMessage")
        .await;
    let text = shown["params"]["message"].as_str().unwrap();
    assert!(text.starts_with("test \"bad\": 2 of 3 failed"), "{text}");
    assert!(text.contains("line 16: reject \"boats sail\""), "{text}");
    assert!(
        text.contains("expected no parse, but the sentence parses"),
        "{text}"
    );
    client.shutdown().await;
}
