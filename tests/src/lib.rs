//! Shared helpers for the acceptance tests: the bundled example grammars
//! read through the front end, and the statistics the tests judge by.
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

/// Pearson's chi-square statistic of observed against expected counts.
pub fn chi_square(observed: &[f64], expected: &[f64]) -> f64 {
    observed
        .iter()
        .zip(expected)
        .map(|(o, e)| (o - e) * (o - e) / e)
        .sum()
}

/// The upper `alpha` quantile of the chi-square distribution with `df`
/// degrees of freedom by the Wilson–Hilferty cube-root approximation
/// (Wilson & Hilferty 1931: (X/df)^(1/3) is close to normal with mean
/// 1 − 2/(9 df) and variance 2/(9 df)); `z` is the standard normal quantile
/// of 1 − alpha. Accurate to a fraction of a percent for df ≥ 30.
pub fn chi_square_critical(df: usize, z: f64) -> f64 {
    let k = df as f64;
    let v = 2.0 / (9.0 * k);
    k * (1.0 - v + z * v.sqrt()).powi(3)
}

/// The standard normal quantile of 0.999 (α = 0.001), 3.0902 to four
/// decimals (standard normal table).
pub const Z_0_999: f64 = 3.0902;

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_wilson_hilferty_quantile_matches_the_table() {
        // Standard chi-square table, α = 0.001: df 30 → 59.703,
        // df 100 → 149.449 (recalled from memory).
        assert!((chi_square_critical(30, Z_0_999) - 59.703).abs() < 0.3);
        assert!((chi_square_critical(100, Z_0_999) - 149.449).abs() < 0.3);
    }
}
