//! Numbers written for people: exact fractions with their decimals.

use crate::model::{fraction, Ratio};
use crate::weight::exact_decimal;
use num_bigint::BigInt;
use num_traits::ToPrimitive;

/// Longest fraction text worth showing; longer ones are only approximated.
const LONGEST_FRACTION: usize = 24;

/// `11/20 = 0.55`, `1/3 ≈ 0.333333`, `1`. Exact as long as that is readable.
pub(crate) fn exact(r: &Ratio) -> String {
    if r.is_integer() {
        return r.to_integer().to_string();
    }
    let f = fraction(r);
    match exact_decimal(r, 12) {
        Some(d) if f.len() <= LONGEST_FRACTION => format!("{f} = {d}"),
        Some(d) => d,
        None if f.len() <= LONGEST_FRACTION => format!("{f} ≈ {}", float(ratio_f64(r))),
        None => format!("≈ {}", float(ratio_f64(r))),
    }
}

/// A ratio as a percentage: `55%`, `≈ 33.3333%`.
pub(crate) fn percent(r: &Ratio) -> String {
    let hundred = r * Ratio::from_integer(BigInt::from(100));
    match exact_decimal(&hundred, 4) {
        Some(d) => format!("{d}%"),
        None => format!("≈ {}%", float(ratio_f64(&hundred))),
    }
}

pub(crate) fn ratio_f64(r: &Ratio) -> f64 {
    crate::model::to_f64(r)
}

/// A float with six significant digits, without trailing zeros.
pub(crate) fn float(x: f64) -> String {
    if !x.is_finite() {
        return if x.is_nan() {
            "not a number".to_string()
        } else if x > 0.0 {
            "∞".to_string()
        } else {
            "−∞".to_string()
        };
    }
    if x == 0.0 {
        return "0".to_string();
    }
    let magnitude = x.abs().log10().floor();
    if !(-4.0..6.0).contains(&magnitude) {
        return format!("{x:.5e}");
    }
    let decimals = (5.0 - magnitude).clamp(0.0, 12.0).to_usize().unwrap_or(0);
    let s = format!("{x:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// `text` as a markdown code span, whatever backticks it contains.
pub(crate) fn code(text: &str) -> String {
    let mut longest = 0;
    let mut run = 0;
    for c in text.chars() {
        if c == '`' {
            run += 1;
            longest = longest.max(run);
        } else {
            run = 0;
        }
    }
    if longest == 0 {
        return format!("`{text}`");
    }
    let fence = "`".repeat(longest + 1);
    format!("{fence} {text} {fence}")
}

#[cfg(test)]
mod tests {
    use super::*;

    fn r(n: i64, d: i64) -> Ratio {
        Ratio::new(BigInt::from(n), BigInt::from(d))
    }

    #[test]
    fn exact_values_show_fraction_and_decimal() {
        assert_eq!(exact(&r(11, 20)), "11/20 = 0.55");
        assert_eq!(exact(&r(1, 3)), "1/3 ≈ 0.333333");
        assert_eq!(exact(&r(1, 1)), "1");
        assert_eq!(exact(&r(0, 1)), "0");
        assert_eq!(percent(&r(11, 20)), "55%");
        assert_eq!(percent(&r(1, 3)), "≈ 33.3333%");
    }

    #[test]
    fn floats_keep_six_significant_digits() {
        assert_eq!(float(0.825), "0.825");
        assert_eq!(float(2.0 / 3.0), "0.666667");
        assert_eq!(float(1234.5678), "1234.57");
        assert_eq!(float(1.0), "1");
        assert_eq!(float(1e-9), "1.00000e-9");
    }

    #[test]
    fn code_spans_survive_backticks() {
        assert_eq!(code("a"), "`a`");
        assert_eq!(code("a`b"), "`` a`b ``");
    }
}
