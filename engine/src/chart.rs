//! The chart layout shared by the Viterbi, inside, count and k-best passes.
//!
//! Cells `(i, j)` (words `i..j`) are numbered by span length first, then by
//! start, so every cell's sub-spans come before it: a pass fills the flat
//! array front to back and reads finished cells from the part before the
//! current one. Each cell holds one value per compiled symbol, contiguously
//! (`index = cell · n_sym + symbol`).

/// Sizes and cell numbering of a chart for `n` words and `n_sym` symbols.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Layout {
    pub n: usize,
    pub n_sym: usize,
}

impl Layout {
    pub fn new(n: usize, n_sym: usize) -> Layout {
        Layout { n, n_sym }
    }

    /// Number of cells: `n (n + 1) / 2`.
    pub fn cells(&self) -> usize {
        self.n * (self.n + 1) / 2
    }

    /// The number of cell `(i, j)`, `0 ≤ i < j ≤ n`.
    #[inline]
    pub fn cell(&self, i: usize, j: usize) -> usize {
        let len = j - i;
        // Cells of length l < len: Σ (n − l + 1) for l = 1..len−1.
        let before = (len - 1) * (self.n + 1) - (len - 1) * len / 2;
        before + i
    }
}

/// `ln(e^a + e^b)` without overflow; `-inf` is the zero.
#[inline]
pub(crate) fn log_add(a: f64, b: f64) -> f64 {
    if a == f64::NEG_INFINITY {
        return b;
    }
    if b == f64::NEG_INFINITY {
        return a;
    }
    let (hi, lo) = if a > b { (a, b) } else { (b, a) };
    hi + (lo - hi).exp().ln_1p()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_numbered_densely_by_length_then_start() {
        let layout = Layout::new(5, 1);
        let mut seen = Vec::new();
        for len in 1..=5 {
            for i in 0..=5 - len {
                seen.push(layout.cell(i, i + len));
            }
        }
        assert_eq!(seen, (0..layout.cells()).collect::<Vec<_>>());
    }

    #[test]
    fn log_add_matches_the_linear_sum() {
        let s = log_add(0.25f64.ln(), 0.5f64.ln());
        assert!((s.exp() - 0.75).abs() < 1e-15);
        assert_eq!(log_add(f64::NEG_INFINITY, -3.0), -3.0);
    }
}
