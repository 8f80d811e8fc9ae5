//! The statistics the sampling tests judge by.

/// Pearson's chi-square statistic of observed counts against expected ones.
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

    #[test]
    fn chi_square_sums_squared_deviations_over_expectations() {
        // (12 − 10)²/10 + (8 − 10)²/10 = 0.8, worked by hand.
        assert!((chi_square(&[12.0, 8.0], &[10.0, 10.0]) - 0.8).abs() < 1e-12);
        assert_eq!(chi_square(&[5.0, 5.0], &[5.0, 5.0]), 0.0);
    }
}
