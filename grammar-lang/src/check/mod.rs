//! The static analyses over the semantic model.

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
    let _ = (grammar, sources, config, out);
}
