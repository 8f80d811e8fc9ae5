//! `trellis.parse` with a beam: the results say whether they are exact,
//! which beam pruned them, or that the beam was given up; bad beams are
//! refused naming the field; and the server's parses are the command line's
//! bit for bit (both shells parse through the same façade path).

#[path = "common/binary.rs"]
mod binary;
mod common;

use binary::trellis_binary;
use common::TestClient;
use serde_json::{json, Value};
use std::process::Command;
use trellis_test_support::grammars::GREENHOUSE_BEAM;

const URI: &str = "file:///grammars/greenhouse.trellis";

async fn parse(client: &mut TestClient, argument: Value) -> Value {
    client.execute("trellis.parse", argument).await
}

fn number(v: &Value) -> f64 {
    v.as_f64().unwrap_or_else(|| panic!("a number: {v}"))
}

#[tokio::test]
async fn a_beam_that_drops_the_best_tree_says_the_result_is_not_exact_and_which_beam() {
    let mut client = TestClient::ready(URI, GREENHOUSE_BEAM).await;
    let sentences = json!(["water fern", "water ivy"]);
    let exact = parse(&mut client, json!({"uri": URI, "sentences": sentences})).await;
    let pruned = parse(
        &mut client,
        json!({"uri": URI, "sentences": sentences, "beam": 0.5}),
    )
    .await;
    let (exact, pruned) = (&exact["result"]["results"], &pruned["result"]["results"]);

    // Hand-worked with `GREENHOUSE_BEAM`: "water fern" has trees of 0.24
    // (through Bed) and 0.09 (through Plant); a beam of 0.5 drops Bed over
    // "fern" (ln(9/4) ≈ 0.81 below Plant), and with it the best tree.
    let (e, p) = (&exact[0], &pruned[0]);
    assert_eq!(e["exact"], true, "{e}");
    assert_eq!(e["beam"], Value::Null, "{e}");
    assert_eq!(e["beamAbandoned"], false, "{e}");
    assert!((number(&e["probability"]) - 0.24).abs() < 1e-12, "{e}");
    assert_eq!(p["exact"], false, "{p}");
    assert_eq!(
        p["beam"],
        json!({"logWidth": 0.5, "maxSymbols": null}),
        "{p}"
    );
    assert_eq!(p["beamAbandoned"], false, "{p}");
    assert_eq!(p["tree"], r#"(Command "water" (Plant "fern"))"#);
    assert!((number(&p["probability"]) - 0.09).abs() < 1e-12, "{p}");
    // Lower bounds, by definition of the surviving trees (a subset).
    assert!(number(&p["probability"]) <= number(&e["probability"]));
    assert!(number(&p["sentenceProbability"]) <= number(&e["sentenceProbability"]));
    assert_eq!(
        (&e["parseCount"], &p["parseCount"]),
        (&json!("2"), &json!("1"))
    );

    // "water ivy": the beam keeps only Zone over "ivy", which no tree uses,
    // so it is given up and the sentence parsed exactly (one tree, 0.01).
    let (e, p) = (&exact[1], &pruned[1]);
    assert_eq!(p["exact"], true, "{p}");
    assert_eq!(p["beam"], Value::Null, "{p}");
    assert_eq!(p["beamAbandoned"], true, "{p}");
    assert_eq!(e["beamAbandoned"], false, "{e}");
    let mut as_exact = p.clone();
    as_exact["beamAbandoned"] = json!(false);
    assert_eq!(&as_exact, e, "the exact parse, bit for bit");
    assert!((number(&p["sentenceProbability"]) - 0.01).abs() < 1e-12);

    // `beamSize` alone: a width of `null`.
    let sized = parse(
        &mut client,
        json!({"uri": URI, "sentence": "water fern", "beamSize": 1}),
    )
    .await;
    let s = &sized["result"]["results"][0];
    assert_eq!(s["beam"], json!({"logWidth": null, "maxSymbols": 1}), "{s}");
    client.shutdown().await;
}

#[tokio::test]
async fn a_bad_beam_is_an_invalid_params_error_naming_the_field() {
    let mut client = TestClient::ready(URI, GREENHOUSE_BEAM).await;
    for (extra, says) in [
        (
            json!({"beam": -1}),
            "trellis.parse: `beam` must be a natural-log width of 0 or more, such as 8, not -1",
        ),
        (
            json!({"beamSize": 0}),
            "trellis.parse: `beamSize` must be a whole number of symbols per chart span, 1 or \
             more, such as 20, not 0",
        ),
        (json!({"beam": 2, "beamSize": -1}), "`beamSize`"),
    ] {
        let mut argument = json!({"uri": URI, "sentence": "water fern"});
        for (k, v) in extra.as_object().unwrap() {
            argument[k] = v.clone();
        }
        let response = parse(&mut client, argument).await;
        // JSON-RPC 2.0: -32602 is "Invalid params".
        assert_eq!(response["error"]["code"], -32602, "{response}");
        let message = response["error"]["message"].as_str().unwrap_or_default();
        assert!(message.contains(says), "{extra}: {message}");
    }
    // The server still answers.
    let fine = parse(&mut client, json!({"uri": URI, "sentence": "water fern"})).await;
    assert_eq!(fine["result"]["results"][0]["parsed"], true, "{fine}");
    client.shutdown().await;
}

/// `trellis parse GRAMMAR SENTENCES… --format json ARGS…`, one document per
/// sentence.
fn command_line(grammar: &str, sentences: &[&str], args: &[&str]) -> Vec<Value> {
    let dir = tempfile::tempdir().unwrap();
    std::fs::write(dir.path().join("g.trellis"), grammar).unwrap();
    let out = Command::new(trellis_binary())
        .arg("parse")
        .arg("g.trellis")
        .args(sentences)
        .args(["--format", "json"])
        .args(args)
        .current_dir(dir.path())
        .output()
        .expect("trellis runs");
    assert!(out.status.code().is_some_and(|c| c <= 1), "{out:?}");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .map(|line| serde_json::from_str(line).expect("a JSON line"))
        .collect()
}

#[tokio::test]
async fn the_server_parses_as_the_command_line_does_bit_for_bit_with_and_without_a_beam() {
    let sentences = ["water fern", "water ivy", "north", "gravel water"];
    let mut client = TestClient::ready(URI, GREENHOUSE_BEAM).await;
    for (beam, args) in [
        (json!({}), &[][..]),
        (json!({"beam": 0.5}), &["--beam", "0.5"][..]),
        (json!({"beamSize": 1}), &["--beam-size", "1"][..]),
    ] {
        let mut argument = json!({"uri": URI, "sentences": sentences, "kbest": 2});
        for (k, v) in beam.as_object().unwrap() {
            argument[k] = v.clone();
        }
        let server = parse(&mut client, argument).await;
        let server = server["result"]["results"].as_array().unwrap().clone();
        let mut cli_args = vec!["--kbest", "2"];
        cli_args.extend_from_slice(args);
        let cli = command_line(GREENHOUSE_BEAM, &sentences, &cli_args);
        assert_eq!(server.len(), cli.len());
        for (s, c) in server.iter().zip(&cli) {
            // JSON numbers are written as the shortest decimal that reads
            // back as the same float (serde_json on both sides), so equal
            // values are equal bits.
            let best = &c["best"];
            assert_eq!(s["tree"], best.get("tree").cloned().unwrap_or(Value::Null));
            assert_eq!(
                s["probability"],
                best.get("probability").cloned().unwrap_or(Value::Null),
                "{beam}: {s} vs {c}"
            );
            assert_eq!(
                s["logProbability"],
                best.get("log_probability").cloned().unwrap_or(Value::Null)
            );
            assert_eq!(s["sentenceProbability"], c["sentence_probability"]);
            assert_eq!(s["parseCount"], c["parse_count"]);
            let trees = |v: &Value, tree: &str| -> Vec<(Value, Value)> {
                v[tree]
                    .as_array()
                    .into_iter()
                    .flatten()
                    .map(|t| (t["tree"].clone(), t["probability"].clone()))
                    .collect()
            };
            assert_eq!(trees(s, "kbest"), trees(c, "kbest"));
            // The same word on exactness: absent in the command line's JSON
            // when no beam changed anything.
            assert_eq!(
                s["exact"],
                c.get("exact").cloned().unwrap_or(json!(true)),
                "{s} vs {c}"
            );
            assert_eq!(
                s["beam"]
                    .as_object()
                    .map(|b| (b["logWidth"].clone(), b["maxSymbols"].clone())),
                c.get("beam")
                    .map(|b| (b["log_width"].clone(), b["max_symbols"].clone()))
            );
            assert_eq!(
                s["beamAbandoned"],
                c.get("beam_abandoned").cloned().unwrap_or(json!(false))
            );
        }
    }
    client.shutdown().await;
}
