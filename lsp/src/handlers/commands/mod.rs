//! `workspace/executeCommand`: routes each command of `ext` to its file,
//! parsing its one argument into the command's `Params` and serializing
//! its typed `Result`. What the commands share is here: finding a grammar
//! that can run, and answering (and, with `show`, telling the user) from
//! the typed outcome.

mod parse;
mod run_test;
mod sample;

use crate::ext::{ExtCommand, Parse, RunTest, Sample, COMMANDS, DEBUG_PANIC};
use crate::server::{request_failed, Backend};
use crate::state::Target;
use serde_json::Value;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::{ExecuteCommandParams, MessageType, Url};
use trellis_ide::NotRunnable;

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

/// The grammar of `uri`, refusing one that cannot run; the refusal is also
/// shown to the user when `show`.
async fn grammar_of(backend: &Backend, uri: &Url, show: bool) -> jsonrpc::Result<Target> {
    let found = runnable_grammar(backend, uri).await;
    if let (Err(e), true) = (&found, show) {
        backend
            .show(MessageType::ERROR, e.message.to_string())
            .await;
    }
    found
}

async fn runnable_grammar(backend: &Backend, uri: &Url) -> jsonrpc::Result<Target> {
    let Some(target) = backend.target(uri).await? else {
        return Err(jsonrpc::Error::invalid_params(format!(
            "{uri} is not open in the editor"
        )));
    };
    match target.analysis().runnable() {
        Ok(_) => Ok(target),
        Err(why @ NotRunnable::Errors(_)) => {
            Err(request_failed(format!("{why} (see the diagnostics)")))
        }
        Err(other) => Err(request_failed(other.to_string())),
    }
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
