//! How a number is written for people, the same in every message and
//! command: six significant digits without trailing zeros, in plain decimals
//! from 1e-4 up (`0.0833333`, `0.5`, `1`, `12.5`) and in scientific notation
//! below (`2.69165e-5`). Probabilities, expected counts and lengths and
//! spectral radii all use it. Log probabilities are natural logarithms and
//! are written `ln p = …` by whoever shows them.

/// `p` written as every number is ([`number`]).
pub fn probability(p: f64) -> String {
    number(p)
}

/// `p` with six significant digits: plain decimals from 1e-4 up,
/// scientific notation below; trailing zeros dropped.
pub fn number(p: f64) -> String {
    if p == 0.0 {
        return "0".to_string();
    }
    if !p.is_finite() {
        return format!("{p}");
    }
    if p.abs() < 1e-4 {
        let s = format!("{p:.5e}");
        return match s.split_once('e') {
            Some((mantissa, exponent)) => {
                format!("{}e{exponent}", trim_zeros(mantissa))
            }
            None => s,
        };
    }
    let magnitude = p.abs().log10().floor();
    // 5 − magnitude decimals leave six significant digits; magnitude ≥ −4.
    let decimals = if magnitude >= 5.0 {
        0
    } else {
        (5.0 - magnitude) as usize
    };
    trim_zeros(&format!("{p:.decimals$}")).to_string()
}

/// A natural log probability for people: four decimals.
pub fn log_probability(ln_p: f64) -> String {
    if ln_p == f64::NEG_INFINITY {
        return "−∞".to_string();
    }
    format!("{ln_p:.4}")
}

fn trim_zeros(s: &str) -> &str {
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.')
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    use super::probability;

    #[test]
    fn six_significant_digits_and_scientific_only_below_1e_minus_4() {
        assert_eq!(probability(1.0 / 12.0), "0.0833333");
        assert_eq!(probability(1.0 / 6.0), "0.166667");
        assert_eq!(probability(0.5), "0.5");
        assert_eq!(probability(1.0), "1");
        assert_eq!(probability(0.0), "0");
        assert_eq!(probability(0.0875), "0.0875");
        assert_eq!(probability(3.0 / 400.0), "0.0075");
        assert_eq!(probability(1e-4), "0.0001");
        assert_eq!(probability(2.691650e-5), "2.69165e-5");
        assert_eq!(probability(1.0 / 3.0 * 1e-7), "3.33333e-8");
        assert_eq!(probability(0.999_999_9), "1");
    }

    #[test]
    fn numbers_that_are_not_probabilities_follow_the_same_rule() {
        use super::number;
        assert_eq!(number(2.5), "2.5");
        assert_eq!(number(123456.7), "123457");
        assert_eq!(number(1.0 / 3.0 + 1.0), "1.33333");
        assert_eq!(number(3.0 * 1e-6), "3e-6");
    }
}
