//! The typed protocol extensions (`trellis_lsp::ext`) over the wire: what
//! the code lenses send is what `workspace/executeCommand` takes, and the
//! answers are the typed results, with the counts the project layer gives.

mod common;

use common::{harbour_with_tests, TestClient};
use serde_json::{json, Value};
use trellis_lsp::ext::{
    ExtCommand, Parse, ParseParams, RunTest, RunTestParams, RunTestResult, Sample, SampleParams,
    SampleResult,
};
use trellis_project::test_run::{self, RunOptions, Selection};

const URI: &str = "file:///grammars/harbour.trellis";

fn uri() -> tower_lsp::lsp_types::Url {
    URI.parse().unwrap()
}

/// Runs a lens's command exactly as the lens carries it.
async fn run_lens(client: &mut TestClient, lens: &Value) -> Value {
    let command = &lens["command"];
    client
        .call(
            "workspace/executeCommand",
            json!({"command": command["command"], "arguments": command["arguments"]}),
        )
        .await
}

/// The one argument a lens's command carries, parsed as `C`'s params.
fn lens_params<C: ExtCommand>(lens: &Value) -> C::Params {
    assert_eq!(lens["command"]["command"], C::COMMAND, "{lens}");
    let arguments = lens["command"]["arguments"].as_array().expect("arguments");
    assert_eq!(arguments.len(), 1, "{lens}");
    serde_json::from_value(arguments[0].clone()).expect("the argument is the command's params")
}

#[tokio::test]
async fn code_lens_arguments_are_taken_by_execute_command_as_they_are() {
    let mut client = TestClient::ready(URI, &harbour_with_tests()).await;
    let lenses = client
        .request(
            "textDocument/codeLens",
            json!({"textDocument": {"uri": URI}}),
        )
        .await;
    let lenses = lenses.as_array().expect("lenses");
    assert_eq!(lenses.len(), 5, "{lenses:?}");

    // Parse: no sentence (the editor asks for one), shown to the user.
    let parse = lens_params::<Parse>(&lenses[0]);
    assert_eq!(
        parse,
        ParseParams {
            uri: uri(),
            sentences: vec![],
            sentence: None,
            kbest: None,
            show: true,
            picture: false,
            beam: None,
            beam_size: None,
        }
    );
    // As it is, the argument is understood: only the sentence is missing.
    let response = run_lens(&mut client, &lenses[0]).await;
    assert_eq!(response["error"]["code"], -32602, "{response}");
    let message = response["error"]["message"].as_str().unwrap();
    assert!(message.contains("needs a sentence"), "{message}");
    // With the sentence the editor adds, it parses.
    let mut argument = lenses[0]["command"]["arguments"][0].clone();
    argument["sentence"] = json!("ferries sail");
    let response = client.execute(Parse::COMMAND, argument).await;
    assert_eq!(
        response["result"]["results"][0]["parsed"], true,
        "{response}"
    );

    // Sample: ten sentences, shown.
    let sample = lens_params::<Sample>(&lenses[1]);
    assert_eq!(
        sample,
        SampleParams {
            uri: uri(),
            count: Some(10),
            seed: None,
            trees: false,
            show: true,
        }
    );
    let response = run_lens(&mut client, &lenses[1]).await;
    let result: SampleResult =
        serde_json::from_value(response["result"].clone()).expect("a sample result");
    assert_eq!(result.samples.len(), 10);

    // Run all tests, then each test by name.
    let expected_tests = [None, Some("good"), Some("bad")];
    for (lens, test) in lenses[2..].iter().zip(expected_tests) {
        let params = lens_params::<RunTest>(lens);
        assert_eq!(
            params,
            RunTestParams {
                uri: uri(),
                test: test.map(str::to_string),
                show: true,
            }
        );
        let response = run_lens(&mut client, lens).await;
        let result: RunTestResult =
            serde_json::from_value(response["result"].clone()).expect("a test-run result");
        let names: Vec<&str> = result.tests.iter().map(|t| t.name.as_str()).collect();
        match test {
            Some(name) => assert_eq!(names, [name]),
            None => assert_eq!(names, ["good", "bad"]),
        }
    }
    client.shutdown().await;
}

#[tokio::test]
async fn run_test_gives_the_counts_of_the_project_test_run() {
    let text = harbour_with_tests();
    let analysis = trellis_ide::analyze_text(&text);
    let mut client = TestClient::ready(URI, &text).await;
    for name in [None, Some("good"), Some("bad")] {
        let selection = match name {
            Some(name) => Selection::Named {
                name,
                file: grammar_lang::FileId(0),
            },
            None => Selection::All,
        };
        let tests = test_run::selected(&analysis, selection);
        let run = test_run::run(&analysis, tests, RunOptions::default(), &|| false)
            .unwrap()
            .unwrap();

        let mut argument = json!({"uri": URI});
        if let Some(name) = name {
            argument["test"] = json!(name);
        }
        let response = client.execute(RunTest::COMMAND, argument).await;
        let result: RunTestResult =
            serde_json::from_value(response["result"].clone()).expect("a test-run result");
        assert_eq!(result.passed, run.counts.cases_passed, "{name:?}");
        assert_eq!(result.failed, run.counts.cases_failed, "{name:?}");
        let per_test: Vec<(String, bool, usize)> = result
            .tests
            .iter()
            .map(|t| (t.name.clone(), t.passed, t.cases.len()))
            .collect();
        let expected: Vec<(String, bool, usize)> = run
            .tests
            .iter()
            .map(|t| (t.test.name.clone(), t.passed(), t.cases.len()))
            .collect();
        assert_eq!(per_test, expected, "{name:?}");
    }
    // And those counts are the ones worked out by hand above.
    let response = client.execute(RunTest::COMMAND, json!({"uri": URI})).await;
    assert_eq!(response["result"]["passed"], 3);
    assert_eq!(response["result"]["failed"], 2);
    client.shutdown().await;
}
