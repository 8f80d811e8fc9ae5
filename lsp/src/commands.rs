//! `workspace/executeCommand`: the engine's parser and sampler for the
//! grammar of an open document.
//!
//! * `trellis.parse` — arguments `[{"uri": U, "sentences": ["…", …],
//!   "kbest": K}]` (or `"sentence": "…"` for one). Returns
//!   `{"results": [{"sentence", "parsed", "tree", "probability",
//!   "logProbability", "sentenceProbability", "parseCount", "kbest",
//!   "explanation", "error"}]}`; trees are labelled brackets.
//! * `trellis.sample` — arguments `[{"uri": U, "count": N, "seed": S,
//!   "trees": bool}]`. Returns `{"samples": [{"sentence", "tree"?}]}`.
//! * `trellis.runTest` — arguments `[{"uri": U, "test": NAME?}]`: the test
//!   block named NAME in that document, or without a name every test of the
//!   grammar. Returns `{"passed", "failed", "tests": [{"name", "location",
//!   "passed", "cases": [{"expect", "sentence", "location", "passed",
//!   "tied", "tree", "probability", "failure"}]}]}` (counts are of cases;
//!   `failure` is a list of readable lines).
//!
//! All refuse a grammar with errors (the diagnostics say what to fix) and
//! stop between sentences when the request is cancelled.

use crate::guard::CancelFlag;
use crate::server::{request_failed, Backend, Options, DEBUG_PANIC};
use grammar_lang::syntax::lexer::quote;
use serde::Deserialize;
use serde_json::{json, Value};
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::{ExecuteCommandParams, MessageType, Url};
use trellis_engine::parser::{ParseOptions, Parser, DEFAULT_MAX_CHART_BYTES};
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{Sampler, DEFAULT_LIMIT};
use trellis_engine::testing::run_case;

pub const PARSE: &str = "trellis.parse";
pub const SAMPLE: &str = "trellis.sample";
pub const RUN_TEST: &str = "trellis.runTest";

/// The commands advertised in the server's capabilities.
pub const NAMES: &[&str] = &[PARSE, SAMPLE, RUN_TEST];

/// The most sentences one `trellis.sample` call produces.
pub const MAX_SAMPLES: usize = 10_000;

#[derive(Debug, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
struct ParseArgs {
    uri: Url,
    #[serde(default)]
    sentences: Vec<String>,
    sentence: Option<String>,
    kbest: Option<usize>,
    /// Also show the outcome to the user (`window/showMessage`), for
    /// commands started from a code lens, whose result no one reads.
    #[serde(default)]
    show: bool,
}

#[derive(Debug, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
struct SampleArgs {
    uri: Url,
    count: Option<usize>,
    seed: Option<u64>,
    #[serde(default)]
    trees: bool,
    #[serde(default)]
    show: bool,
}

#[derive(Debug, Deserialize)]
#[serde(rename_all = "camelCase", deny_unknown_fields)]
struct RunTestArgs {
    uri: Url,
    /// The test block to run; every test of the grammar when absent.
    test: Option<String>,
    #[serde(default)]
    show: bool,
}

fn one_argument<T: for<'de> Deserialize<'de>>(
    command: &str,
    arguments: Vec<Value>,
) -> jsonrpc::Result<T> {
    let mut arguments = arguments.into_iter();
    let (Some(first), None) = (arguments.next(), arguments.next()) else {
        return Err(jsonrpc::Error::invalid_params(format!(
            "{command} takes exactly one argument, an object"
        )));
    };
    serde_json::from_value(first)
        .map_err(|e| jsonrpc::Error::invalid_params(format!("{command}: {e}")))
}

pub async fn execute(
    backend: &Backend,
    options: &Options,
    params: ExecuteCommandParams,
) -> jsonrpc::Result<Option<Value>> {
    match params.command.as_str() {
        PARSE => parse(backend, one_argument(PARSE, params.arguments)?).await,
        SAMPLE => sample(backend, one_argument(SAMPLE, params.arguments)?).await,
        RUN_TEST => run_test(backend, one_argument(RUN_TEST, params.arguments)?).await,
        DEBUG_PANIC if options.debug_commands => {
            backend
                .run("running the debug command", || -> Option<Value> {
                    panic!("deliberate panic from {DEBUG_PANIC}")
                })
                .await
        }
        other => Err(jsonrpc::Error::invalid_params(format!(
            "unknown command `{other}`; trellis knows {}",
            NAMES.join(", ")
        ))),
    }
}

/// The grammar of `uri`, refusing one with errors.
async fn grammar_of(
    backend: &Backend,
    uri: &Url,
    show: bool,
) -> jsonrpc::Result<crate::server::Target> {
    let found = usable_grammar(backend, uri).await;
    if let (Err(e), true) = (&found, show) {
        backend
            .show(MessageType::ERROR, e.message.to_string())
            .await;
    }
    found
}

async fn usable_grammar(backend: &Backend, uri: &Url) -> jsonrpc::Result<crate::server::Target> {
    let Some(target) = backend.target(uri).await? else {
        return Err(jsonrpc::Error::invalid_params(format!(
            "{uri} is not open in the editor"
        )));
    };
    let errors = target.analysis().count(grammar_lang::Severity::Error);
    if errors > 0 {
        return Err(request_failed(format!(
            "the grammar has {errors} error{}; fix {} first (see the diagnostics)",
            if errors == 1 { "" } else { "s" },
            if errors == 1 { "it" } else { "them" },
        )));
    }
    Ok(target)
}

async fn parse(backend: &Backend, args: ParseArgs) -> jsonrpc::Result<Option<Value>> {
    let mut sentences = args.sentences;
    sentences.extend(args.sentence);
    if sentences.is_empty() {
        let message = "trellis.parse needs a sentence (`sentence` or `sentences`); \
                       the editor asks for one when it supports it";
        if args.show {
            backend
                .show(MessageType::WARNING, message.to_string())
                .await;
        }
        return Err(jsonrpc::Error::invalid_params(message));
    }
    let target = grammar_of(backend, &args.uri, args.show).await?;
    let options = ParseOptions {
        kbest: args.kbest.unwrap_or(1).max(1),
        ..ParseOptions::default()
    };
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome: Result<Option<Value>, String> = backend
        .run("parsing", move || {
            let parser = Parser::new(&target.result.analysis.grammar)
                .map_err(|e| format!("the grammar cannot be parsed with: {e}"))?;
            let mut results = Vec::new();
            for sentence in &sentences {
                if cancel.is_cancelled() {
                    return Ok(None);
                }
                results.push(match parser.parse_line(sentence, &options) {
                    Err(e) => {
                        json!({"sentence": sentence, "parsed": false, "error": e.to_string()})
                    }
                    Ok(out) => json!({
                        "sentence": sentence,
                        "parsed": out.parsed(),
                        "tree": out.best.as_ref().map(|t| t.tree.to_brackets()),
                        "probability": out.best.as_ref().map(|t| t.probability),
                        "logProbability": out.best.as_ref().map(|t| t.log_probability),
                        "sentenceProbability": out.sentence_probability,
                        "parseCount": out.parse_count.as_ref().map(|c| c.to_string()),
                        "kbest": out.kbest.iter().map(|t| json!({
                            "tree": t.tree.to_brackets(),
                            "probability": t.probability,
                        })).collect::<Vec<_>>(),
                        "explanation": out.explanation.as_ref().map(|e| e.to_string()),
                    }),
                });
            }
            Ok(Some(json!({ "results": results })))
        })
        .await?;
    guard.disarm();
    finish(backend, args.show, outcome, parse_summary).await
}

/// A short text for the user about a `trellis.parse` result.
fn parse_summary(value: &Value) -> String {
    let mut lines = Vec::new();
    for r in value["results"].as_array().into_iter().flatten() {
        let sentence = r["sentence"].as_str().unwrap_or_default();
        lines.push(match (r["tree"].as_str(), r["probability"].as_f64()) {
            (Some(tree), Some(p)) => format!("{sentence}: {tree}  p = {p:.6e}"),
            _ => {
                let why = r["error"]
                    .as_str()
                    .or(r["explanation"].as_str())
                    .unwrap_or("no parse");
                format!("{sentence}: no parse — {why}")
            }
        });
    }
    lines.join("\n")
}

/// A short text for the user about a `trellis.sample` result.
fn sample_summary(value: &Value) -> String {
    value["samples"]
        .as_array()
        .into_iter()
        .flatten()
        .filter_map(|s| s["tree"].as_str().or(s["sentence"].as_str()))
        .collect::<Vec<_>>()
        .join("\n")
}

/// Turns the outcome of a command into its response, showing it to the
/// user when asked.
async fn finish(
    backend: &Backend,
    show: bool,
    outcome: Result<Option<Value>, String>,
    summary: fn(&Value) -> String,
) -> jsonrpc::Result<Option<Value>> {
    match outcome {
        Ok(Some(value)) => {
            if show {
                backend.show(MessageType::INFO, summary(&value)).await;
            }
            Ok(Some(value))
        }
        Ok(None) => Err(jsonrpc::Error::request_cancelled()),
        Err(message) => {
            if show {
                backend.show(MessageType::ERROR, message.clone()).await;
            }
            Err(request_failed(message))
        }
    }
}

async fn sample(backend: &Backend, args: SampleArgs) -> jsonrpc::Result<Option<Value>> {
    let count = args.count.unwrap_or(10);
    if count > MAX_SAMPLES {
        return Err(jsonrpc::Error::invalid_params(format!(
            "trellis.sample makes at most {MAX_SAMPLES} sentences per call, not {count}"
        )));
    }
    let target = grammar_of(backend, &args.uri, args.show).await?;
    let seed = args.seed.unwrap_or(0);
    let trees = args.trees;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome: Result<Option<Value>, String> = backend
        .run("sampling", move || {
            let grammar = &target.result.analysis.grammar;
            let sampler = Sampler::new(grammar).map_err(|e| e.to_string())?;
            let start = sampler.start().map_err(|e| e.to_string())?;
            let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
            let mut samples = Vec::with_capacity(count);
            for _ in 0..count {
                if cancel.is_cancelled() {
                    return Ok(None);
                }
                let sample = if trees {
                    let tree = sampler
                        .tree(&mut rng, start, DEFAULT_LIMIT)
                        .map_err(|e| e.to_string())?;
                    json!({"sentence": tree.words().join(" "), "tree": tree.to_brackets()})
                } else {
                    let words = sampler
                        .words(&mut rng, start, DEFAULT_LIMIT)
                        .map_err(|e| e.to_string())?;
                    json!({"sentence": words.join(" ")})
                };
                samples.push(sample);
            }
            Ok(Some(json!({ "seed": seed, "samples": samples })))
        })
        .await?;
    guard.disarm();
    finish(backend, args.show, outcome, sample_summary).await
}

async fn run_test(backend: &Backend, args: RunTestArgs) -> jsonrpc::Result<Option<Value>> {
    let target = grammar_of(backend, &args.uri, args.show).await?;
    let name = args.test;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome: Result<Option<Value>, String> = backend
        .run("running tests", move || {
            let grammar = &target.result.analysis.grammar;
            let tests: Vec<_> = grammar
                .tests
                .iter()
                .filter(|t| match &name {
                    Some(name) => t.name == *name && t.location.file == target.file,
                    None => true,
                })
                .collect();
            if tests.is_empty() {
                return Err(match &name {
                    Some(name) => format!("this document has no test named {}", quote(name)),
                    None => "the grammar has no test blocks".to_string(),
                });
            }
            let parser = Parser::new(grammar)
                .map_err(|e| format!("the grammar cannot be parsed with: {e}"))?;
            let (mut passed, mut failed) = (0, 0);
            let mut results = Vec::new();
            for test in tests {
                let mut cases = Vec::new();
                for case in &test.cases {
                    if cancel.is_cancelled() {
                        return Ok(None);
                    }
                    let outcome = run_case(&parser, grammar, case, DEFAULT_MAX_CHART_BYTES);
                    if outcome.passed() {
                        passed += 1;
                    } else {
                        failed += 1;
                    }
                    let best = outcome.best();
                    cases.push(json!({
                        "expect": case.expect.keyword(),
                        "sentence": case.sentence,
                        "location": target.location(case.location.file, case.location.span),
                        "passed": outcome.passed(),
                        "tied": outcome.tied(),
                        "tree": best.map(|b| b.tree.to_brackets()),
                        "probability": best.map(|b| b.probability),
                        "failure": outcome.reasons(),
                    }));
                }
                let all = cases.iter().all(|c| c["passed"] == true);
                results.push(json!({
                    "name": test.name,
                    "location": target.location(test.location.file, test.location.span),
                    "passed": all,
                    "cases": cases,
                }));
            }
            Ok(Some(
                json!({"passed": passed, "failed": failed, "tests": results}),
            ))
        })
        .await?;
    guard.disarm();
    finish(backend, args.show, outcome, test_summary).await
}

/// A short text for the user about a `trellis.runTest` result: a line per
/// test, and the reasons of each failing case.
fn test_summary(value: &Value) -> String {
    let mut lines = Vec::new();
    for test in value["tests"].as_array().into_iter().flatten() {
        let cases = test["cases"].as_array().map_or(0, Vec::len);
        let failing: Vec<&Value> = test["cases"]
            .as_array()
            .into_iter()
            .flatten()
            .filter(|c| c["passed"] == false)
            .collect();
        let name = quote(test["name"].as_str().unwrap_or_default());
        if failing.is_empty() {
            lines.push(format!(
                "test {name}: all {cases} case{} held",
                if cases == 1 { "" } else { "s" }
            ));
            continue;
        }
        lines.push(format!("test {name}: {} of {cases} failed", failing.len()));
        for case in failing {
            let line = case["location"]["range"]["start"]["line"]
                .as_u64()
                .map_or(String::new(), |l| format!("line {}: ", l + 1));
            lines.push(format!(
                "  {line}{} {}",
                case["expect"].as_str().unwrap_or_default(),
                quote(case["sentence"].as_str().unwrap_or_default())
            ));
            for reason in case["failure"].as_array().into_iter().flatten() {
                lines.push(format!("    {}", reason.as_str().unwrap_or_default()));
            }
        }
    }
    lines.join("\n")
}
