//! Exact weights: decimal `0.125`, fraction `1/8`, percent `12.5%`.

use crate::model::{Notation, Ratio};
use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, Zero};

/// Parses a weight token's text to an exact rational.
pub fn parse_weight(text: &str) -> Result<(Ratio, Notation), String> {
    if let Some(number) = text.strip_suffix('%') {
        let value = parse_decimal(number)?;
        return Ok((
            value / Ratio::from_integer(BigInt::from(100)),
            Notation::Percent,
        ));
    }
    if let Some((num, den)) = text.split_once('/') {
        let num = parse_decimal(num)?;
        let den = parse_decimal(den)?;
        if den.is_zero() {
            return Err(format!("`{text}` divides by zero"));
        }
        return Ok((num / den, Notation::Fraction));
    }
    Ok((parse_decimal(text)?, Notation::Decimal))
}

/// `-12.375` → -12375/1000, exactly.
fn parse_decimal(text: &str) -> Result<Ratio, String> {
    let (negative, digits) = match text.strip_prefix('-') {
        Some(rest) => (true, rest),
        None => (false, text),
    };
    let (int_part, frac_part) = digits.split_once('.').unwrap_or((digits, ""));
    let all_digits = |s: &str| s.bytes().all(|b| b.is_ascii_digit());
    if (int_part.is_empty() && frac_part.is_empty())
        || !all_digits(int_part)
        || !all_digits(frac_part)
    {
        return Err(format!("`{text}` is not a number"));
    }
    let mantissa: BigInt = format!("{int_part}{frac_part}0")
        .parse::<BigInt>()
        .map_err(|_| format!("`{text}` is not a number"))?
        / BigInt::from(10);
    let scale = BigInt::from(10).pow(frac_part.len() as u32);
    let value = Ratio::new(mantissa, scale);
    Ok(if negative { -value } else { value })
}

/// The exact decimal expansion of `r` if it terminates within `max_digits`
/// fractional digits (that is, the reduced denominator has only the prime
/// factors 2 and 5).
pub fn exact_decimal(r: &Ratio, max_digits: usize) -> Option<String> {
    let mut den = r.denom();
    let mut twos = 0usize;
    let mut fives = 0usize;
    let two = BigInt::from(2);
    let five = BigInt::from(5);
    while den.is_even() {
        den /= &two;
        twos += 1;
    }
    while (&den % &five).is_zero() {
        den /= &five;
        fives += 1;
    }
    if !den.is_one() {
        return None;
    }
    let digits = twos.max(fives);
    if digits > max_digits {
        return None;
    }
    let scaled = r * Ratio::from_integer(BigInt::from(10).pow(digits as u32));
    let n = scaled.to_integer();
    let negative = n.is_negative();
    let s = n.abs().to_string();
    let out = if digits == 0 {
        s
    } else {
        let padded = format!("{s:0>width$}", width = digits + 1);
        let (int, frac) = padded.split_at(padded.len() - digits);
        format!("{int}.{frac}")
    };
    Some(if negative { format!("-{out}") } else { out })
}

#[cfg(test)]
mod tests {
    use super::*;

    fn r(n: i64, d: i64) -> Ratio {
        Ratio::new(BigInt::from(n), BigInt::from(d))
    }

    #[test]
    fn three_notations_are_exact() {
        assert_eq!(parse_weight("0.125").unwrap(), (r(1, 8), Notation::Decimal));
        assert_eq!(parse_weight("1/8").unwrap(), (r(1, 8), Notation::Fraction));
        assert_eq!(parse_weight("12.5%").unwrap(), (r(1, 8), Notation::Percent));
        assert_eq!(parse_weight(".5").unwrap().0, r(1, 2));
        assert_eq!(parse_weight("3.").unwrap().0, r(3, 1));
        assert_eq!(parse_weight("-0.25").unwrap().0, r(-1, 4));
        assert_eq!(parse_weight("0.5/2").unwrap().0, r(1, 4));
    }

    #[test]
    fn decimal_sums_are_exact() {
        let sum = parse_weight("0.1").unwrap().0
            + parse_weight("0.2").unwrap().0
            + parse_weight("0.7").unwrap().0;
        assert_eq!(sum, r(1, 1));
    }

    #[test]
    fn division_by_zero_is_an_error() {
        assert!(parse_weight("1/0").unwrap_err().contains("zero"));
    }

    #[test]
    fn decimals_print_exactly_or_not_at_all() {
        assert_eq!(exact_decimal(&r(1, 100), 12).as_deref(), Some("0.01"));
        assert_eq!(exact_decimal(&r(-3, 8), 12).as_deref(), Some("-0.375"));
        assert_eq!(exact_decimal(&r(5, 1), 12).as_deref(), Some("5"));
        assert_eq!(exact_decimal(&r(1, 3), 12), None);
    }
}
