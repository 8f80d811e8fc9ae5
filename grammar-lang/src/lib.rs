//! # grammar-lang — the pure core of trellis
//!
//! Text in, facts out, no I/O and no async:
//!
//! ```text
//! text ──lex──▶ tokens ──parse──▶ SyntaxFile ──lower──▶ Grammar ──check──▶ Diagnostics
//!               (lossless)        (AST + spans)         (exact model)
//! ```
//!
//! * [`syntax`] — logos lexer and a hand-written parser with one recovery mechanism; the
//!   token list keeps every comment and space, so rewrites lose nothing.
//! * [`lower`] — resolves `use`, names and weights into the [`model::Grammar`].
//! * [`check`] — the static analyses, each with a stable [`diagnostic::Code`].
//! * [`analysis`] — the one entry point the shells call: [`analyze`].

pub mod analysis;
pub mod check;
pub mod config;
pub mod diagnostic;
pub mod format;
pub mod lower;
pub mod model;
pub mod print;
pub mod ratio;
pub mod scc;
pub mod source;
pub mod span;
pub mod syntax;
pub mod tree;
pub mod unseen;
pub mod weight;

pub use analysis::{analyze, analyze_text, Analysis};
pub use config::Config;
pub use diagnostic::{Code, Diagnostic, Location, Severity};
pub use format::{format, FormatOptions};
pub use model::Grammar;
pub use source::{FileId, FileLoader, MemoryLoader, SourceMap, Unreadable};
pub use span::{LineCol, LineIndex, Span};
