//! Exact weights: decimal `0.125`, fraction `1/8`, percent `12.5%`.

use crate::model::{Notation, Ratio};
use num_bigint::BigInt;
use num_integer::Integer;
use num_traits::{One, Signed, Zero};

/// Parses a weight token's text to an exact rational.
pub fn parse_weight(text: &str) -> Result<(Ratio, Notation), String> {
    if text.contains(',') {
        return Err(format!("`{text}` has a decimal comma"));
    }
    if text.contains(['e', 'E']) {
        return Err(format!(
            "`{text}` is in scientific notation, which a weight cannot be written in"
        ));
    }
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

/// What to write instead of a weight [`parse_weight`] cannot read: the
/// help of a `bad-weight` finding.
pub fn weight_help(text: &str) -> String {
    const NOTATIONS: &str =
        "write a weight as a decimal `0.25`, a fraction `1/4` or a percentage `25%`";
    if text.contains(',') {
        return format!(
            "weights use a decimal point: write `{}`",
            text.replace(',', ".")
        );
    }
    if let Some((mantissa, exponent)) = text.split_once(['e', 'E']) {
        // A short exponent: the same number written out, exactly.
        let written = exponent
            .parse::<i32>()
            .ok()
            .filter(|e| e.abs() <= 12)
            .and_then(|e| {
                let m = parse_decimal(mantissa).ok()?;
                let ten = Ratio::from_integer(BigInt::from(10).pow(e.unsigned_abs()));
                let value = if e < 0 { m / ten } else { m * ten };
                exact_decimal(&value, 24)
            });
        return match written {
            Some(decimal) => format!("scientific notation is not a weight: write `{decimal}`"),
            None => format!("scientific notation is not a weight; {NOTATIONS}"),
        };
    }
    NOTATIONS.to_string()
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
    // Trailing zeros after the point change nothing: dropping them first
    // leaves a mantissa that 10 does not divide, so at most one of 2 and 5
    // divides both it and the scale 10^k, the only factors the scale has.
    // Removing that one factor reduces the fraction without a general gcd,
    // which is quadratic in the length of the numbers (a weight may be
    // written with a hundred thousand digits).
    let frac_part = frac_part.trim_end_matches('0');
    let mantissa: BigInt = format!("{int_part}{frac_part}0")
        .parse::<BigInt>()
        .map_err(|_| format!("`{text}` is not a number"))?
        / BigInt::from(10);
    let places = frac_part.len();
    let value = if mantissa.is_zero() || places == 0 {
        Ratio::from_integer(mantissa)
    } else {
        let (mut numer, mut twos, mut fives) = (mantissa, places, places);
        // Powers of 2 by shifting; powers of 5 in chunks of 5^27 (< 2^63),
        // then one at a time.
        let shift = (numer.trailing_zeros().unwrap_or(0) as usize).min(twos);
        numer >>= shift;
        twos -= shift;
        let five27 = BigInt::from(5u64.pow(27));
        while fives >= 27 && (&numer % &five27).is_zero() {
            numer /= &five27;
            fives -= 27;
        }
        let five = BigInt::from(5);
        while fives > 0 && (&numer % &five).is_zero() {
            numer /= &five;
            fives -= 1;
        }
        let denom = (BigInt::one() << twos) * BigInt::from(5).pow(fives as u32);
        Ratio::from_reduced(numer, denom)
    };
    Ok(if negative { -value } else { value })
}

/// The exact decimal expansion of `r` if it terminates within `max_digits`
/// fractional digits (that is, the reduced denominator has only the prime
/// factors 2 and 5).
pub fn exact_decimal(r: &Ratio, max_digits: usize) -> Option<String> {
    let digits = decimal_places(r)?;
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

/// The most digits after the point a weight written by a rewrite may have
/// in decimal or percent notation: `0.123456`, `12.345678%`. A value that
/// needs more (`1/1024` = `0.0009765625`) is written as a fraction instead:
/// past six places a hand-read weight is harder to check than `p/q`, and
/// the fraction is just as exact.
pub const MAX_DECIMALS: usize = 6;

/// The notation a block is written in, from the notations of its written
/// weights (unweighted alternatives have none): the one most of them use.
/// A tie goes to the first of fraction, decimal, percent that is tied —
/// the order in which a notation can write more values exactly, so a tie
/// never chooses a notation that fails where a tied one would not
/// (fractions always succeed; a percent needs two places more than the
/// decimal of the same value). A block without written weights reads as
/// decimals, the notation of plain numbers.
pub fn block_notation(written: &[Notation]) -> Notation {
    let count = |n: Notation| written.iter().filter(|w| **w == n).count();
    let mut best = (Notation::Decimal, 0);
    // In tie-break order: a later notation wins only with strictly more.
    for n in [Notation::Fraction, Notation::Decimal, Notation::Percent] {
        if count(n) > best.1 {
            best = (n, count(n));
        }
    }
    best.0
}

/// Why an exact value cannot be written exactly in a notation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct NotExact {
    /// The value (in lowest terms) that failed.
    pub value: Ratio,
    pub notation: Notation,
    pub why: Inexact,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Inexact {
    /// The decimal expansion never ends: the reduced denominator has a prime
    /// factor other than 2 and 5 (`1/3`, `8/21`).
    Repeats,
    /// It ends, but after `places` digits, more than [`MAX_DECIMALS`].
    TooLong { places: usize },
}

impl std::fmt::Display for NotExact {
    /// `percentages cannot be exact here: 8/21 has no finite decimal expansion`.
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let kind = match self.notation {
            Notation::Decimal => "decimals",
            Notation::Percent => "percentages",
            Notation::Fraction => "fractions",
        };
        write!(f, "{kind} cannot be exact here: {} ", self.value)?;
        match self.why {
            Inexact::Repeats => f.write_str("has no finite decimal expansion"),
            Inexact::TooLong { places } => match self.notation {
                Notation::Percent => write!(
                    f,
                    "needs {places} decimal places as a percentage, more than {MAX_DECIMALS}"
                ),
                _ => write!(f, "needs {places} decimal places, more than {MAX_DECIMALS}"),
            },
        }
    }
}

/// `value` written exactly in `notation`: a fraction `p/q` (an integer as
/// `0`, `1`), a decimal `0.375` or a percentage `37.5%` with at most
/// [`MAX_DECIMALS`] digits after the point — or why it cannot be. Never
/// rounds.
pub fn write_exact(value: &Ratio, notation: Notation) -> Result<String, NotExact> {
    let (scaled, suffix) = match notation {
        Notation::Fraction => return Ok(crate::model::fraction(value)),
        Notation::Decimal => (value.clone(), ""),
        Notation::Percent => (value * Ratio::from_integer(BigInt::from(100)), "%"),
    };
    let not_exact = |why| NotExact {
        value: value.clone(),
        notation,
        why,
    };
    match decimal_places(&scaled) {
        None => Err(not_exact(Inexact::Repeats)),
        Some(places) if places > MAX_DECIMALS => Err(not_exact(Inexact::TooLong { places })),
        Some(_) => {
            let digits = exact_decimal(&scaled, MAX_DECIMALS).expect("the expansion is short");
            Ok(format!("{digits}{suffix}"))
        }
    }
}

/// The weights of one block as a rewrite writes them.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct BlockWeights {
    /// One text per value, in order.
    pub texts: Vec<String>,
    /// The block's notation ([`block_notation`]).
    pub notation: Notation,
    /// `None` when every text is in the block's notation; otherwise why the
    /// first value that could not be written in it failed, and every text
    /// is an exact fraction.
    pub fallback: Option<NotExact>,
}

/// `values` written for a block whose weights were written in `written`:
/// all in the block's notation ([`block_notation`]) when every value is
/// exact in it ([`write_exact`]), otherwise all as exact fractions, with
/// the reason. A block is never left half in one notation and half in
/// another by a rewrite.
pub fn write_block(values: &[Ratio], written: &[Notation]) -> BlockWeights {
    let notation = block_notation(written);
    match values
        .iter()
        .map(|v| write_exact(v, notation))
        .collect::<Result<Vec<_>, _>>()
    {
        Ok(texts) => BlockWeights {
            texts,
            notation,
            fallback: None,
        },
        Err(why) => BlockWeights {
            texts: values.iter().map(crate::model::fraction).collect(),
            notation,
            fallback: Some(why),
        },
    }
}

/// How many digits after the point `r`'s decimal expansion has, if it
/// terminates.
fn decimal_places(r: &Ratio) -> Option<usize> {
    let mut den = r.denom();
    let (two, five) = (BigInt::from(2), BigInt::from(5));
    let (mut twos, mut fives) = (0usize, 0usize);
    while den.is_even() {
        den /= &two;
        twos += 1;
    }
    while (&den % &five).is_zero() {
        den /= &five;
        fives += 1;
    }
    den.is_one().then_some(twos.max(fives))
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

    use Notation::{Decimal, Fraction, Percent};

    #[test]
    fn a_block_reads_in_the_notation_most_of_its_weights_use() {
        assert_eq!(block_notation(&[Percent, Percent, Decimal]), Percent);
        assert_eq!(block_notation(&[Decimal, Fraction, Decimal]), Decimal);
        assert_eq!(block_notation(&[Fraction]), Fraction);
        // Ties: fraction, then decimal, then percent.
        assert_eq!(
            block_notation(&[Decimal, Decimal, Fraction, Fraction]),
            Fraction
        );
        assert_eq!(block_notation(&[Percent, Decimal]), Decimal);
        assert_eq!(block_notation(&[Percent, Fraction, Decimal]), Fraction);
        assert_eq!(
            block_notation(&[Percent, Percent, Fraction, Fraction]),
            Fraction
        );
        // No written weight: decimals.
        assert_eq!(block_notation(&[]), Decimal);
    }

    #[test]
    fn values_are_written_exactly_in_each_notation_or_not_at_all() {
        let ok = |v: Ratio, n| write_exact(&v, n).unwrap();
        assert_eq!(ok(r(3, 8), Fraction), "3/8");
        assert_eq!(ok(r(3, 8), Decimal), "0.375");
        assert_eq!(ok(r(3, 8), Percent), "37.5%");
        assert_eq!(ok(r(12, 25), Percent), "48%");
        assert_eq!(ok(r(1, 1), Percent), "100%");
        assert_eq!(ok(r(0, 1), Percent), "0%");
        // Integers stay integers in every notation but percent.
        assert_eq!(ok(r(1, 1), Fraction), "1");
        assert_eq!(ok(r(0, 1), Decimal), "0");
        // Six places are allowed in either notation…
        assert_eq!(ok(r(1, 1_000_000), Decimal), "0.000001");
        assert_eq!(ok(r(1, 64), Decimal), "0.015625");
        assert_eq!(ok(r(1, 256), Percent), "0.390625%");
        // …seven are not: 1/128 = 0.0078125, 1/512 = 0.1953125%.
        let too_long = |v: Ratio, n| write_exact(&v, n).unwrap_err();
        assert_eq!(
            too_long(r(1, 128), Decimal),
            NotExact {
                value: r(1, 128),
                notation: Decimal,
                why: Inexact::TooLong { places: 7 }
            }
        );
        assert_eq!(
            too_long(r(1, 512), Percent).why,
            Inexact::TooLong { places: 7 }
        );
        // 1/128 as a percentage is 0.78125%: five places, fine.
        assert_eq!(ok(r(1, 128), Percent), "0.78125%");
        // Repeating expansions: 8/21 = 38.095238…%, 1/3 = 0.333…
        assert_eq!(too_long(r(8, 21), Percent).why, Inexact::Repeats);
        assert_eq!(too_long(r(1, 3), Decimal).why, Inexact::Repeats);
        assert_eq!(
            too_long(r(8, 21), Percent).to_string(),
            "percentages cannot be exact here: 8/21 has no finite decimal expansion"
        );
        assert_eq!(
            too_long(r(1, 128), Decimal).to_string(),
            "decimals cannot be exact here: 1/128 needs 7 decimal places, more than 6"
        );
        assert_eq!(
            too_long(r(1, 512), Percent).to_string(),
            "percentages cannot be exact here: 1/512 needs 7 decimal places as a percentage, more than 6"
        );
    }

    #[test]
    fn a_block_is_written_wholly_in_its_notation_or_wholly_in_fractions() {
        // 60% 30% 20% 15% (sum 125%) renormalized: 48% 24% 16% 12%.
        let values = [r(12, 25), r(6, 25), r(4, 25), r(3, 25)];
        let w = write_block(&values, &[Percent; 4]);
        assert_eq!(w.texts, ["48%", "24%", "16%", "12%"]);
        assert_eq!((w.notation, w.fallback), (Percent, None));
        // 45% 25% 20% 15% (sum 105%): 3/7 = 42.857142…% repeats.
        let values = [r(3, 7), r(5, 21), r(4, 21), r(1, 7)];
        let w = write_block(&values, &[Percent; 4]);
        assert_eq!(w.texts, ["3/7", "5/21", "4/21", "1/7"]);
        assert_eq!(w.fallback.unwrap().value, r(3, 7));
        // One value that fails sends the whole block to fractions, even
        // those that would have been exact (1/2 = 50%).
        let w = write_block(&[r(1, 2), r(1, 6), r(1, 3)], &[Percent; 3]);
        assert_eq!(w.texts, ["1/2", "1/6", "1/3"]);
        assert_eq!(w.fallback.unwrap().value, r(1, 6));
        // Fractions never fall back.
        let w = write_block(&[r(2, 5), r(3, 5)], &[Fraction, Decimal, Fraction]);
        assert_eq!(
            (w.texts, w.fallback),
            (vec!["2/5".into(), "3/5".into()], None)
        );
    }
}
