//! Shared helpers for the acceptance tests: the bundled example grammars
//! read through the front end. The statistics the tests judge by are
//! `trellis_test_support::stats`.
//!
//! The tests themselves live in `tests/` beside this file; each checks a
//! whole path through trellis (grammar text → front end → engine) against
//! something outside the project: a mathematical identity, a classic
//! closed form, or a standard statistical test.

use grammar_lang::model::Grammar;
use grammar_lang::{Config, MemoryLoader};
use std::path::Path;

/// Reads `examples/<root>` and the example files it uses, analyses it as
/// the command line would, and insists it has no errors.
pub fn example(root: &str, used: &[&str]) -> Grammar {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let read = |name: &str| {
        std::fs::read_to_string(dir.join(name))
            .unwrap_or_else(|e| panic!("examples/{name} cannot be read: {e}"))
    };
    let mut loader = MemoryLoader::new();
    for name in used {
        loader = loader.with(dir.join(name), read(name));
    }
    let analysis = grammar_lang::analyze(&dir.join(root), &read(root), &loader, &Config::default());
    assert!(
        !analysis.has_errors(),
        "examples/{root} has errors: {:?}",
        analysis.diagnostics
    );
    analysis.grammar
}

/// Analyses grammar text that must have no errors.
pub fn grammar(text: &str) -> Grammar {
    let analysis = grammar_lang::analyze_text(text);
    assert!(!analysis.has_errors(), "{text}\n{:?}", analysis.diagnostics);
    analysis.grammar
}
