//! # trellis-test-support — tests as data
//!
//! What several test suites of trellis share, used only as a
//! dev-dependency:
//!
//! * [`fixture`] — grammar texts written with their expected diagnostics
//!   as caret annotations under the lines they point at, one or more files
//!   in one string, a cursor marker and marked ranges; [`check`] analyses a
//!   fixture and insists that exactly the annotated diagnostics are
//!   reported; [`apply_edits`] applies an answer's edits to a text;
//!   [`FixtureFile::utf16`] and its kin give positions as the Language
//!   Server Protocol counts them (UTF-16 columns).
//! * [`grammars`] — the small grammars (with their sources and hand-worked
//!   numbers) that more than one suite uses, and the rule-list writer.
//! * [`stats`] — the statistics the sampling tests are judged by.
//! * [`bench`] and [`dense_cky`] — the benchmarks' CPU clock, and the
//!   plain dense CKY the engine's speed is measured against.

pub mod bench;
pub mod dense_cky;
pub mod fixture;
pub mod grammars;
pub mod stats;

pub use fixture::{
    apply_edits, assert_diagnostics, check, check_with, Annotation, Cursor, Fixture, FixtureFile,
    Message,
};
