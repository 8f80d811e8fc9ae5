//! # trellis-lsp — the trellis language server
//!
//! Translates the Language Server Protocol to calls into the pure core
//! (`grammar-lang`) and the probabilistic engine (`trellis-engine`) and
//! back. No grammar logic lives here: positions are converted between LSP's
//! UTF-16 columns and the core's byte spans, files are read from open
//! buffers or disk, and work is scheduled off the protocol loop.
//!
//! `trellis lsp` runs [`serve_stdio`].

pub mod commands;
pub mod convert;
pub mod features;
pub mod guard;
pub mod server;
pub mod transport;
pub mod workspace;

pub use server::{service, Backend, Options};
pub use transport::{serve, serve_stdio, Ending};
