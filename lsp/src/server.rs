//! The server object every handler receives: the client connection, the
//! [`Shared`] state and the [`Options`], with what the handlers do the same
//! way (find a request's analysis, run core work on the blocking pool with
//! panics caught, show messages, turn failures into error responses).

use crate::guard::{run_blocking, Failure};
use crate::state::{Shared, Target};
use crate::workspace::RootResult;
use std::sync::Arc;
use std::time::Duration;
use tower_lsp::jsonrpc::{self, ErrorCode};
use tower_lsp::lsp_types::{MessageType, Url};
use tower_lsp::{Client, LspService};

/// Settings that are not part of the protocol.
#[derive(Clone, Debug)]
pub struct Options {
    /// Accept the hidden command `trellis.debug.panic`, which panics inside
    /// core work on purpose (to test that the server survives it).
    pub debug_commands: bool,
    /// How often to look for edits of `trellis.toml` files when the client
    /// cannot watch files for the server.
    pub config_poll: Duration,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            debug_commands: false,
            config_poll: Duration::from_secs(2),
        }
    }
}

/// The language server; its `LanguageServer` implementation is in
/// `dispatch`.
#[derive(Debug)]
pub struct Backend {
    pub(crate) client: Client,
    pub(crate) shared: Arc<Shared>,
    pub(crate) options: Options,
}

/// Builds the service for any transport (stdio in `trellis lsp`, in-memory
/// streams in tests).
pub fn service(options: Options) -> (LspService<Backend>, tower_lsp::ClientSocket) {
    LspService::new(move |client| Backend {
        client,
        shared: Arc::new(Shared::default()),
        options,
    })
}

/// An LSP error response for core work that failed.
fn failure_error(what: &str, failure: &Failure) -> jsonrpc::Error {
    match failure {
        Failure::Cancelled => jsonrpc::Error::request_cancelled(),
        Failure::Panicked(msg) => jsonrpc::Error {
            code: ErrorCode::InternalError,
            message: format!("trellis failed while {what}: {msg}").into(),
            data: None,
        },
    }
}

/// LSP's `RequestFailed` (-32803): the request was valid but could not be done.
pub fn request_failed(message: impl Into<String>) -> jsonrpc::Error {
    jsonrpc::Error {
        code: ErrorCode::ServerError(-32803),
        message: message.into().into(),
        data: None,
    }
}

impl Backend {
    /// Logs an internal failure to the client and turns it into an error
    /// response.
    async fn report(&self, what: &str, failure: Failure) -> jsonrpc::Error {
        if let Failure::Panicked(msg) = &failure {
            self.client
                .log_message(
                    MessageType::ERROR,
                    format!("trellis: internal error while {what}: {msg}"),
                )
                .await;
        }
        failure_error(what, &failure)
    }

    /// The current analysis for a request about `uri` (see
    /// [`Shared::target`]); `Ok(None)` when the document is not open.
    pub async fn target(&self, uri: &Url) -> jsonrpc::Result<Option<Target>> {
        match self.shared.target(uri).await {
            Ok(target) => Ok(target),
            Err(failure) => Err(self.report("analysing the grammar", failure).await),
        }
    }

    /// The latest analysis of every open document (for searches across
    /// the workspace).
    pub fn latest_results(&self) -> Vec<Arc<RootResult>> {
        self.shared.latest_results()
    }

    /// Sends `window/showMessage`.
    pub async fn show(&self, typ: MessageType, message: String) {
        self.client.show_message(typ, message).await;
    }

    /// Runs core work for a request on the blocking pool; a panic is logged
    /// and becomes an error response.
    pub async fn run<T, F>(&self, what: &str, work: F) -> jsonrpc::Result<T>
    where
        T: Send + 'static,
        F: FnOnce() -> T + Send + 'static,
    {
        match run_blocking(work).await {
            Ok(value) => Ok(value),
            Err(failure) => Err(self.report(what, failure).await),
        }
    }
}
