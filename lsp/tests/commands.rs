//! `workspace/executeCommand`: parsing and sampling the open grammar.

mod common;

use common::{assert_request_failed, TestClient, HARBOUR};
use serde_json::{json, Value};

const URI: &str = "file:///grammars/harbour.trellis";

async fn ready(text: &str) -> TestClient {
    TestClient::ready(URI, text).await
}

async fn command(client: &mut TestClient, name: &str, argument: Value) -> Value {
    client.execute(name, argument).await
}

fn close(a: &Value, b: f64) -> bool {
    (a.as_f64().expect("a number") - b).abs() < 1e-12
}

#[tokio::test]
async fn parse_returns_the_best_tree_and_its_probability() {
    let mut client = ready(HARBOUR).await;
    let response = command(
        &mut client,
        "trellis.parse",
        json!({"uri": URI, "sentences": ["ferries sail", "sink", "sail ferries"]}),
    )
    .await;
    let results = &response["result"]["results"];
    // A PCFG tree's probability is the product of its rules' probabilities:
    // 0.6 · 1/2 · 0.75 = 0.225; with one tree it is also the sentence's.
    assert_eq!(results[0]["parsed"], true);
    assert_eq!(results[0]["tree"], r#"(S (NP "ferries") (VP "sail"))"#);
    assert!(close(&results[0]["probability"], 0.225), "{}", results[0]);
    assert!(close(&results[0]["sentenceProbability"], 0.225));
    assert_eq!(results[0]["parseCount"], "1");
    // 0.4 · 0.25 = 0.1.
    assert_eq!(results[1]["tree"], r#"(S (VP "sink"))"#);
    assert!(close(&results[1]["probability"], 0.1));
    // Wrong word order: no parse, and a reason.
    assert_eq!(results[2]["parsed"], false);
    assert_eq!(results[2]["tree"], Value::Null);
    assert!(results[2]["explanation"]
        .as_str()
        .is_some_and(|e| !e.is_empty()));
    client.shutdown().await;
}

#[tokio::test]
async fn parse_draws_the_tree_when_asked_with_the_command_lines_renderer() {
    let mut client = ready(HARBOUR).await;
    let response = command(
        &mut client,
        "trellis.parse",
        json!({"uri": URI, "sentences": ["ferries sail", "sail ferries"], "picture": true}),
    )
    .await;
    let results = &response["result"]["results"];
    let svg = results[0]["picture"].as_str().expect("an SVG picture");
    // The renderer the command line's `parse --svg` uses, drawn for a page:
    // in the page's colour, without a colour scheme of its own.
    let grammar = grammar_lang::analyze_text(HARBOUR);
    let best = trellis_engine::Parser::new(&grammar.grammar)
        .expect("compiles")
        .parse_line("ferries sail", &trellis_engine::ParseOptions::default())
        .expect("parses")
        .best
        .expect("a tree");
    let expected = trellis_ide::picture::tree_picture(
        &grammar.grammar,
        "ferries sail",
        &[best],
        trellis_ide::picture::Surface::Inline,
    );
    assert_eq!(svg, expected);
    assert!(svg.contains("<text x=") && svg.contains(">ferries</text>"));
    assert!(!svg.contains("prefers-color-scheme"));
    // No tree, no picture; and none unless asked.
    assert_eq!(results[1]["picture"], Value::Null);
    let plain = command(
        &mut client,
        "trellis.parse",
        json!({"uri": URI, "sentence": "ferries sail"}),
    )
    .await;
    assert_eq!(plain["result"]["results"][0]["picture"], Value::Null);
    client.shutdown().await;
}

#[tokio::test]
async fn parse_refuses_a_grammar_with_errors() {
    let mut client = ready("start S\nS { 0.5 \"a\" }\n").await;
    let response = command(
        &mut client,
        "trellis.parse",
        json!({"uri": URI, "sentence": "a"}),
    )
    .await;
    assert_request_failed(&response, "1 error");
    client.shutdown().await;
}

#[tokio::test]
async fn parse_of_a_document_that_is_not_open_is_invalid() {
    let mut client = ready(HARBOUR).await;
    let response = command(
        &mut client,
        "trellis.parse",
        json!({"uri": "file:///elsewhere.trellis", "sentence": "a"}),
    )
    .await;
    assert_eq!(response["error"]["code"], -32602);
    client.shutdown().await;
}

#[tokio::test]
async fn sampling_is_reproducible_and_every_sample_parses() {
    let mut client = ready(HARBOUR).await;
    let args = json!({"uri": URI, "count": 25, "seed": 11, "trees": true});
    let first = command(&mut client, "trellis.sample", args.clone()).await["result"].clone();
    let second = command(&mut client, "trellis.sample", args).await["result"].clone();
    assert_eq!(first, second, "the same seed gives the same samples");
    let samples = first["samples"].as_array().expect("samples");
    assert_eq!(samples.len(), 25);
    let sentences: Vec<String> = samples
        .iter()
        .map(|s| s["sentence"].as_str().unwrap().to_string())
        .collect();
    let parsed = command(
        &mut client,
        "trellis.parse",
        json!({"uri": URI, "sentences": sentences}),
    )
    .await;
    for (sample, result) in samples
        .iter()
        .zip(parsed["result"]["results"].as_array().unwrap())
    {
        assert_eq!(result["parsed"], true, "{sample}");
        // This grammar is unambiguous, so the sampled tree is the parse.
        assert_eq!(result["tree"], sample["tree"]);
    }
    client.shutdown().await;
}
