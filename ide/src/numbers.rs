//! Numbers written for people: exact fractions with their decimals.

use grammar_lang::model::{fraction, Ratio};
use grammar_lang::weight::exact_decimal;
use num_bigint::BigInt;
use num_traits::ToPrimitive;

/// Longest fraction text worth showing; longer ones are only approximated.
const LONGEST_FRACTION: usize = 24;

/// `11/20 = 0.55`, `1/3 ≈ 0.333333`, `1`. Exact as long as that is readable.
pub(crate) fn exact(r: &Ratio) -> String {
    if let (Some(n), Some(d)) = (r.numer().to_u64(), r.denom().to_u64()) {
        return exact_small(n, d);
    }
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

/// [`exact`] for a non-negative ratio `n/d` in lowest terms that fits in
/// machine words: the same text without big-integer arithmetic.
fn exact_small(n: u64, d: u64) -> String {
    if d == 1 {
        return n.to_string();
    }
    let f = format!("{n}/{d}");
    let (mut rest, mut twos, mut fives) = (d, 0u32, 0u32);
    while rest % 2 == 0 {
        rest /= 2;
        twos += 1;
    }
    while rest % 5 == 0 {
        rest /= 5;
        fives += 1;
    }
    let digits = twos.max(fives);
    let decimal = (rest == 1 && digits <= 12).then(|| {
        // n/d = n · (10^digits / d) / 10^digits, all exact in 128 bits.
        let scaled = u128::from(n) * (10u128.pow(digits) / u128::from(d));
        let s = format!("{scaled:0>width$}", width = digits as usize + 1);
        let (int, frac) = s.split_at(s.len() - digits as usize);
        format!("{int}.{frac}")
    });
    match decimal {
        Some(d) if f.len() <= LONGEST_FRACTION => format!("{f} = {d}"),
        Some(d) => d,
        None if f.len() <= LONGEST_FRACTION => format!("{f} ≈ {}", float(n as f64 / d as f64)),
        None => format!("≈ {}", float(n as f64 / d as f64)),
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
    grammar_lang::model::to_f64(r)
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
    fn the_machine_word_path_writes_what_the_exact_path_writes() {
        let big = |n: i64, d: i64| {
            let r = r(n, d);
            let f = fraction(&r);
            match exact_decimal(&r, 12) {
                _ if r.is_integer() => f,
                Some(d) => format!("{f} = {d}"),
                None => format!("{f} ≈ {}", float(ratio_f64(&r))),
            }
        };
        for (n, d) in [
            (11, 20),
            (1, 3),
            (3, 8),
            (1, 1024),
            (7, 1),
            (0, 1),
            (1, 8192),
            (5, 6),
        ] {
            assert_eq!(exact(&r(n, d)), big(n, d), "{n}/{d}");
        }
        assert_eq!(exact(&r(1, 1024)), "1/1024 = 0.0009765625");
        assert_eq!(exact(&r(1, 4096)), "1/4096 = 0.000244140625");
        assert_eq!(exact(&r(1, 8192)), "1/8192 ≈ 0.00012207");
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
