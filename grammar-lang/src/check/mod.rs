//! The static analyses over the semantic model.
//!
//! Each analysis lives in its own module and reports under stable
//! [`Code`](crate::diagnostic::Code)s:
//!
//! * [`weights`] — `sum-not-one`, `no-mass-left`, `zero-weight`, `negative-weight`,
//!   `approximate-sum`
//! * [`names`] — `undefined`, `no-start`, `unknown-start`, `duplicate-rule`
//! * [`graph`] — `unreachable`, `unproductive`, `unary-cycle`
//! * [`arity`] — `arity`
//! * [`sentences`] — `unknown-word` (over the test blocks as written)
//!
//! (`terminal-spacing` is reported by lowering, which reads each terminal.)
//!
//! Every analysis is linear (or near-linear) in the size of the grammar:
//! ids index vectors, and nothing compares all pairs of rules or symbols.
//! Diagnostics carry the check's own severity; [`crate::analysis`] then
//! applies the levels configured in `trellis.toml`.

pub mod arity;
pub mod graph;
pub mod names;
pub mod sentences;
pub mod suggest;
pub mod weights;

pub use crate::model::FastHash;

use crate::config::Config;
use crate::diagnostic::Diagnostic;
use crate::model::{fraction, Decimal, Grammar, Ratio};
use crate::source::SourceMap;
use crate::syntax::ast::SyntaxFile;
use num_traits::{Signed, ToPrimitive};

/// Runs every model-level check and appends its findings to `out`.
/// `syntax` holds the files' syntax, indexed like `sources` (checks that
/// point inside a string, like `unknown-word`, read it).
pub fn run_checks(
    grammar: &Grammar,
    sources: &SourceMap,
    syntax: &[SyntaxFile],
    config: &Config,
    out: &mut Vec<Diagnostic>,
) {
    weights::check(grammar, out);
    names::check(grammar, sources, out);
    graph::check(grammar, out);
    arity::check(grammar, config, out);
    sentences::check(grammar, sources, syntax, out);
}

/// An exact number for a message: `99/100 (0.99)`, `4/3 (≈1.3333333333)`,
/// or just `1`. Numbers whose fraction would be unreadably long (more than
/// 40 digits in numerator and denominator together) are shown only
/// approximately, in scientific notation when they are very small or large.
pub fn number_text(r: &Ratio) -> String {
    if r.numer().bits() + r.denom().bits() > 133 {
        return approximate(r);
    }
    let f = fraction(r);
    let d = Decimal(r).to_string();
    if f == d {
        f
    } else {
        format!("{f} ({d})")
    }
}

/// A fraction for a label: exact when short, otherwise its approximate
/// value and how long the exact fraction is (`≈2.000000e-1 (exact: a
/// fraction of about 12,000 digits)`), so that a block of thousands of
/// weights does not print a fraction thousands of digits long.
pub fn short_fraction(r: &Ratio) -> String {
    let bits = r.numer().bits() + r.denom().bits();
    if bits <= 133 {
        return crate::model::fraction(r);
    }
    // A number of b bits has about b·log10(2) decimal digits.
    let digits = (bits as f64 * std::f64::consts::LOG10_2).round() as u64;
    format!(
        "{} (exact: a fraction of about {} digits)",
        approximate(r),
        grouped(digits)
    )
}

/// `n` with its digits grouped by thousands: `12,000`.
pub(crate) fn grouped(n: u64) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// `≈1.2e-15051`: the decimal exponent from the bit lengths and the leading
/// digits from the top 64 bits of numerator and denominator.
fn approximate(r: &Ratio) -> String {
    if let Some(x) = r
        .to_f64()
        .filter(|x| x.is_normal() && x.abs() > 1e-300 && x.abs() < 1e300)
    {
        return format!("≈{x:.6e}");
    }
    let lead = |n: &num_bigint::BigInt| -> (f64, i64) {
        let n = n.abs();
        let shift = n.bits().saturating_sub(64);
        let top = (&n >> shift).to_f64().unwrap_or(1.0);
        (top.log10(), shift as i64)
    };
    let (ln, sn) = lead(&r.numer());
    let (ld, sd) = lead(&r.denom());
    let log10 = ln - ld + (sn - sd) as f64 * std::f64::consts::LOG10_2;
    let exponent = log10.floor();
    let mantissa = 10f64.powf(log10 - exponent);
    let sign = if r.is_negative() { "-" } else { "" };
    format!("≈{sign}{mantissa:.1}e{exponent}")
}

#[cfg(test)]
mod tests {
    use super::*;
    use num_bigint::BigInt;

    #[test]
    fn the_fast_hash_spreads_similar_names_over_buckets() {
        use std::hash::BuildHasher;
        // Names that differ only after a common first letter, as generated
        // vocabularies do: the low 12 bits (which pick a bucket in a table
        // of 4096) must still take many values. A uniform hash of 3000 keys
        // into 4096 buckets fills about 4096·(1 − e^(−3000/4096)) ≈ 2129.
        let hasher = FastHash::default();
        let buckets: std::collections::HashSet<u64> = (0..3000)
            .map(|i| hasher.hash_one(format!("w{i}")) & 0xfff)
            .collect();
        assert!(buckets.len() > 1800, "only {} buckets used", buckets.len());
    }

    #[test]
    fn label_fractions_are_shortened_when_huge() {
        let r = |n: BigInt, d: BigInt| Ratio::new(n, d);
        assert_eq!(short_fraction(&r(BigInt::from(3), BigInt::from(4))), "3/4");
        // (2^4000 + 1) / (5 · 2^4000) is 1/5 to far beyond f64 precision;
        // 2^4000 has 1,205 decimal digits (4000 · log10 2 = 1204.1).
        let big = BigInt::from(1) << 4000u32;
        let text = short_fraction(&r(&big + 1, &big * 5));
        assert!(
            text.starts_with("≈2.000000e-1 (exact: a fraction of about 2,"),
            "{text}"
        );
    }

    #[test]
    fn numbers_are_exact_when_short_and_approximate_when_huge() {
        let r = |n: i64, d: i64| Ratio::new(BigInt::from(n), BigInt::from(d));
        assert_eq!(number_text(&r(99, 100)), "99/100 (0.99)");
        assert_eq!(number_text(&r(1, 1)), "1");
        assert_eq!(number_text(&r(1, 3)), "1/3 (≈0.3333333333)");
        // 2^100 = 1.2676506e30 (recalled from memory), so 2^200 =
        // 1.606938e60 and 2^-200 = 6.223015e-61.
        let tiny = Ratio::new(BigInt::from(1), BigInt::from(1) << 200);
        assert_eq!(number_text(&tiny), "≈6.223015e-61");
        // log10 2 = 0.30103 (recalled from memory): 2^-50000 =
        // 10^-15051.4998 = 10^0.5002 · 10^-15052 ≈ 3.2e-15052.
        let tinier = Ratio::new(BigInt::from(1), BigInt::from(1) << 50_000);
        assert_eq!(number_text(&tinier), "≈3.2e-15052");
    }
}
