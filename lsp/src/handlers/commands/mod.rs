//! `workspace/executeCommand`: routes each command of `ext` to its file,
//! parsing its one argument into the command's `Params` and serializing
//! its typed `Result`. What the commands share is here: finding a grammar
//! that can run, and answering (and, with `show`, telling the user) from
//! the typed outcome.

mod parse;
mod run_test;
mod sample;

use crate::ext::{ExtCommand, IgnoredError, Parse, Ran, RunTest, Sample, COMMANDS, DEBUG_PANIC};
use crate::server::{request_failed, Backend};
use crate::state::Target;
use grammar_lang::Diagnostic;
use serde_json::Value;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::{ExecuteCommandParams, MessageType, Url};
use trellis_ide::Run;

pub async fn execute(
    backend: &Backend,
    params: ExecuteCommandParams,
) -> jsonrpc::Result<Option<Value>> {
    let arguments = params.arguments;
    match params.command.as_str() {
        Parse::COMMAND => {
            answer::<Parse>(parse::parse(backend, argument::<Parse>(arguments)?).await)
        }
        Sample::COMMAND => {
            answer::<Sample>(sample::sample(backend, argument::<Sample>(arguments)?).await)
        }
        RunTest::COMMAND => {
            answer::<RunTest>(run_test::run_test(backend, argument::<RunTest>(arguments)?).await)
        }
        DEBUG_PANIC if backend.options.debug_commands => {
            backend
                .run("running the debug command", || -> Option<Value> {
                    panic!("deliberate panic from {DEBUG_PANIC}")
                })
                .await
        }
        other => Err(jsonrpc::Error::invalid_params(format!(
            "unknown command `{other}`; trellis knows {}",
            COMMANDS.join(", ")
        ))),
    }
}

/// The one argument of command `C`, as its `Params`.
fn argument<C: ExtCommand>(arguments: Vec<Value>) -> jsonrpc::Result<C::Params> {
    let mut arguments = arguments.into_iter();
    let (Some(first), None) = (arguments.next(), arguments.next()) else {
        return Err(jsonrpc::Error::invalid_params(format!(
            "{} takes exactly one argument, an object",
            C::COMMAND
        )));
    };
    serde_json::from_value(first)
        .map_err(|e| jsonrpc::Error::invalid_params(format!("{}: {e}", C::COMMAND)))
}

/// The response carrying command `C`'s result.
fn answer<C: ExtCommand>(result: jsonrpc::Result<C::Result>) -> jsonrpc::Result<Option<Value>> {
    let value = serde_json::to_value(result?).map_err(|e| jsonrpc::Error {
        code: jsonrpc::ErrorCode::InternalError,
        message: format!(
            "trellis failed while writing the result of {}: {e}",
            C::COMMAND
        )
        .into(),
        data: None,
    })?;
    Ok(Some(value))
}

/// The open grammar of `uri`; a request for a document that is not open
/// fails (shown to the user when `show`). Whether the grammar can run is
/// decided in the command's own work, through `Analysis::run`.
async fn grammar_of(backend: &Backend, uri: &Url, show: bool) -> jsonrpc::Result<Target> {
    let found = match backend.target(uri).await? {
        Some(target) => Ok(target),
        None => Err(jsonrpc::Error::invalid_params(format!(
            "{uri} is not open in the editor"
        ))),
    };
    if let (Err(e), true) = (&found, show) {
        backend
            .show(MessageType::ERROR, e.message.to_string())
            .await;
    }
    found
}

/// What `run` did to the grammar of `target`, for a command's result.
fn ran(target: &Target, run: &Run) -> Ran {
    Ran {
        rescaled: run
            .rescaled_names()
            .into_iter()
            .map(str::to_string)
            .collect(),
        ignored_errors: run
            .ignored_errors()
            .iter()
            .map(|d| ignored_error(target, d))
            .collect(),
    }
}

fn ignored_error(target: &Target, d: &Diagnostic) -> IgnoredError {
    IgnoredError {
        code: d.code.as_str().to_string(),
        message: d.message.clone(),
        location: target.location(d.location.file, d.location.span),
    }
}

/// The lines a command's summary ends with when the run rescaled blocks or
/// ignored errors.
fn ran_summary(ran: &Ran) -> String {
    let mut out = String::new();
    if !ran.rescaled.is_empty() {
        let names: Vec<String> = ran.rescaled.iter().map(|n| format!("`{n}`")).collect();
        out.push_str(&format!(
            "\n(weights of {} rescaled to sum to one)",
            names.join(", ")
        ));
    }
    if !ran.ignored_errors.is_empty() {
        out.push_str(&format!(
            "\n(ran despite {} error{} outside what this run uses)",
            ran.ignored_errors.len(),
            if ran.ignored_errors.len() == 1 {
                ""
            } else {
                "s"
            }
        ));
    }
    out
}

/// Turns the outcome of a command's core work (`Ok(None)`: cancelled; `Err`:
/// why it could not be done) into its response, showing it to the user
/// when `show`, as `summary` writes it.
async fn finish<R>(
    backend: &Backend,
    show: bool,
    outcome: Result<Option<R>, String>,
    summary: fn(&R) -> String,
) -> jsonrpc::Result<R> {
    match outcome {
        Ok(Some(result)) => {
            if show {
                backend.show(MessageType::INFO, summary(&result)).await;
            }
            Ok(result)
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
