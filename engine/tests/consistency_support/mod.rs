//! Builds small grammars for the sampling and consistency tests through
//! the real front end (`grammar_lang::analyze_text`).

#![allow(dead_code)]

use grammar_lang::Grammar;
use trellis_test_support::grammars::grammar_text;

/// The grammar of a `.trellis` text (diagnostics are not the point of these
/// tests: deliberately broken grammars still lower to a model).
pub fn parse(text: &str) -> Grammar {
    grammar_lang::analyze_text(text).grammar
}

/// The grammar of `(lhs, rhs, p)` triples ([`grammar_text`]; a float
/// weight is written so that the model's `p` is the same float), analysed.
pub fn grammar(start: &str, rules: &[(&str, &str, f64)]) -> Grammar {
    parse(&grammar_text(start, rules))
}
