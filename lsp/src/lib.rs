//! # trellis-lsp — the trellis language server
//!
//! Translates the Language Server Protocol to calls into the analysis
//! façade (`trellis-ide`), the project layer (`trellis-project`) and the
//! probabilistic engine (`trellis-engine`), and back. No grammar logic
//! lives here: positions are converted between LSP's UTF-16 columns and
//! the core's byte spans, files are read from open buffers or disk, and
//! work is scheduled off the protocol loop.
//!
//! `trellis lsp` runs [`serve_stdio`].
//!
//! ## Code map
//!
//! * [`framing`] — the byte stream cut into messages (`Content-Length`
//!   framing), resynchronising after any framing error.
//! * [`transport`] — the message loop: malformed messages answered, ids
//!   tower-lsp cannot carry stood in for, the rest handed to the service.
//! * [`server`] — the [`Backend`] every handler receives, its [`Options`],
//!   running core work off the loop, error responses.
//! * [`dispatch`] — the `LanguageServer` impl: routes each message to its
//!   handler.
//! * [`capabilities`] — what the server tells the client it can do.
//! * [`state`] — state shared by handlers and worker; how a request finds
//!   its analysis ([`state::Target`]).
//! * [`workspace`] — open documents, latest analyses, pending work.
//! * [`worker`] — the analysis worker and the watch on files edited
//!   outside the editor.
//! * [`publish`] — publishing diagnostics.
//! * [`handlers`] — one file per feature family, LSP ↔ façade;
//!   `handlers::commands` runs the commands of `workspace/executeCommand`.
//! * [`ext`] — the typed protocol extensions (the commands' parameters and
//!   results).
//! * [`convert`] — positions, ranges and diagnostics between the core and
//!   LSP.
//! * [`guard`] — core work on the blocking pool, panics caught,
//!   cancellation.

pub mod capabilities;
pub mod convert;
pub mod dispatch;
pub mod ext;
pub mod framing;
pub mod guard;
pub mod handlers;
pub mod publish;
pub mod server;
pub mod state;
pub mod transport;
pub mod worker;
pub mod workspace;

pub use server::{service, Backend, Options};
pub use transport::{serve, serve_stdio, Ending};
