//! The static analyses over the semantic model.
//!
//! Each analysis lives in its own module and reports under stable
//! [`Code`](crate::diagnostic::Code)s:
//!
//! * [`weights`] — `sum-not-one`, `no-mass-left`, `zero-weight`, `negative-weight`
//! * [`names`] — `undefined`, `no-start`, `unknown-start`, `duplicate-rule`
//! * [`graph`] — `unreachable`, `unproductive`, `unary-cycle`
//! * [`arity`] — `arity`
//!
//! Every analysis is linear (or near-linear) in the size of the grammar:
//! ids index vectors, and nothing compares all pairs of rules or symbols.
//! Diagnostics carry the check's own severity; [`crate::analysis`] then
//! applies the levels configured in `trellis.toml`.

pub mod arity;
pub mod graph;
pub mod names;
pub mod suggest;
pub mod weights;

use crate::config::Config;
use crate::diagnostic::Diagnostic;
use crate::model::Grammar;
use crate::source::SourceMap;

/// Runs every model-level check and appends its findings to `out`.
pub fn run_checks(
    grammar: &Grammar,
    sources: &SourceMap,
    config: &Config,
    out: &mut Vec<Diagnostic>,
) {
    weights::check(grammar, out);
    names::check(grammar, sources, out);
    graph::check(grammar, out);
    arity::check(grammar, config, out);
}
