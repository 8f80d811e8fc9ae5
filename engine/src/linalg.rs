//! Small dense and sparse linear algebra for the consistency analysis.

/// Solves `a · x = b` in place by Gaussian elimination with partial
/// pivoting (`a` is `n × n`, row-major, and is destroyed; `b` becomes `x`).
/// Returns `false` when the matrix is singular to working precision.
pub(crate) fn solve_in_place(n: usize, a: &mut [f64], b: &mut [f64]) -> bool {
    debug_assert_eq!(a.len(), n * n);
    debug_assert_eq!(b.len(), n);
    let scale = a.iter().fold(0.0f64, |m, v| m.max(v.abs()));
    if scale == 0.0 || !scale.is_finite() {
        return n == 0;
    }
    let tiny = scale * f64::EPSILON * n as f64;
    for col in 0..n {
        let mut piv = col;
        for row in col + 1..n {
            if a[row * n + col].abs() > a[piv * n + col].abs() {
                piv = row;
            }
        }
        if a[piv * n + col].abs() <= tiny || !a[piv * n + col].is_finite() {
            return false;
        }
        if piv != col {
            for k in 0..n {
                a.swap(col * n + k, piv * n + k);
            }
            b.swap(col, piv);
        }
        let d = a[col * n + col];
        for row in col + 1..n {
            let f = a[row * n + col] / d;
            if f != 0.0 {
                for k in col..n {
                    a[row * n + k] -= f * a[col * n + k];
                }
                b[row] -= f * b[col];
            }
        }
    }
    for col in (0..n).rev() {
        let mut s = b[col];
        for k in col + 1..n {
            s -= a[col * n + k] * b[k];
        }
        b[col] = s / a[col * n + col];
    }
    b.iter().all(|v| v.is_finite())
}

/// A square matrix stored by rows as `(column, value)` pairs.
pub(crate) type SparseRows = Vec<Vec<(u32, f64)>>;

/// Relative width of the Collatz–Wielandt bracket at which the Perron root
/// counts as found.
const PERRON_TOLERANCE: f64 = 1e-13;

/// The spectral radius (Perron root) of an irreducible non-negative matrix.
///
/// Every step keeps a certified bracket: for any positive vector `x`,
/// `min_i (Mx)_i / x_i ≤ ρ(M) ≤ max_i (Mx)_i / x_i` (Collatz–Wielandt,
/// e.g. Horn & Johnson, *Matrix Analysis*, §8.1). The iteration stops when
/// the bracket is narrower than `PERRON_TOLERANCE` relative to ρ.
///
/// * Up to 400 rows: Noda's iteration (T. Noda, Numer. Math. 17, 1971):
///   inverse iteration shifted by the current upper bound, which converges
///   superlinearly and stays positive because `σI − M` is a non-singular
///   M-matrix for `σ > ρ`.
/// * Larger: power iteration on `M + I` (primitive, so it converges even for
///   periodic `M`), then Noda steps when it stalls and the size allows.
pub(crate) fn perron_root(rows: &SparseRows) -> f64 {
    let n = rows.len();
    if n == 0 {
        return 0.0;
    }
    if n == 1 {
        return rows[0].iter().map(|&(_, v)| v).sum();
    }
    let mut x = vec![1.0; n];
    let (mut lo, mut hi) = collatz_wielandt(rows, &x);
    if hi - lo <= PERRON_TOLERANCE * hi {
        return 0.5 * (lo + hi);
    }
    if n > 400 {
        let mut y = vec![0.0; n];
        for _ in 0..5000 {
            mul_plus_identity(rows, &x, &mut y);
            let top = y.iter().fold(0.0f64, |m, &v| m.max(v));
            if top <= 0.0 || !top.is_finite() {
                break;
            }
            for (xi, yi) in x.iter_mut().zip(&y) {
                *xi = (yi / top).max(f64::MIN_POSITIVE);
            }
            let (l, h) = collatz_wielandt(rows, &x);
            lo = lo.max(l);
            hi = hi.min(h);
            if hi - lo <= PERRON_TOLERANCE * hi {
                return 0.5 * (lo + hi);
            }
        }
        if n > 3000 {
            return 0.5 * (lo + hi);
        }
    }
    // Noda's iteration from the current bracket.
    let mut a = vec![0.0; n * n];
    for _ in 0..100 {
        let sigma = hi;
        a.iter_mut().for_each(|v| *v = 0.0);
        for (i, row) in rows.iter().enumerate() {
            a[i * n + i] += sigma;
            for &(j, v) in row {
                a[i * n + j as usize] -= v;
            }
        }
        let mut z = x.clone();
        if !solve_in_place(n, &mut a, &mut z) {
            // σ ≥ ρ and σI − M singular: σ is the Perron root itself.
            return sigma;
        }
        let top = z.iter().fold(0.0f64, |m, &v| m.max(v.abs()));
        if top == 0.0 || !top.is_finite() {
            break;
        }
        for (xi, zi) in x.iter_mut().zip(&z) {
            *xi = (zi.abs() / top).max(f64::MIN_POSITIVE);
        }
        let (l, h) = collatz_wielandt(rows, &x);
        let progress = h < hi;
        lo = lo.max(l);
        hi = hi.min(h);
        if hi - lo <= PERRON_TOLERANCE * hi || !progress {
            break;
        }
    }
    0.5 * (lo + hi)
}

fn mul_plus_identity(rows: &SparseRows, x: &[f64], y: &mut [f64]) {
    for (i, row) in rows.iter().enumerate() {
        y[i] = x[i] + row.iter().map(|&(j, v)| v * x[j as usize]).sum::<f64>();
    }
}

/// The Collatz–Wielandt bounds `(min, max)` of `(Mx)_i / x_i`, `x > 0`.
fn collatz_wielandt(rows: &SparseRows, x: &[f64]) -> (f64, f64) {
    let mut lo = f64::INFINITY;
    let mut hi = 0.0f64;
    for (i, row) in rows.iter().enumerate() {
        let r = row.iter().map(|&(j, v)| v * x[j as usize]).sum::<f64>() / x[i];
        lo = lo.min(r);
        hi = hi.max(r);
    }
    (lo.max(0.0), hi)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn solves_a_small_system() {
        // 2x + y = 5, x + 3y = 10 → x = 1, y = 3.
        let mut a = vec![2.0, 1.0, 1.0, 3.0];
        let mut b = vec![5.0, 10.0];
        assert!(solve_in_place(2, &mut a, &mut b));
        assert!((b[0] - 1.0).abs() < 1e-14 && (b[1] - 3.0).abs() < 1e-14);
    }

    #[test]
    fn reports_a_singular_system() {
        let mut a = vec![1.0, 2.0, 2.0, 4.0];
        let mut b = vec![1.0, 2.0];
        assert!(!solve_in_place(2, &mut a, &mut b));
    }

    #[test]
    fn perron_root_of_a_periodic_matrix() {
        // The cyclic permutation scaled by 0.8 has eigenvalues 0.8·ω^k
        // (ω a cube root of unity): every one has modulus 0.8.
        let rows = vec![vec![(1, 0.8)], vec![(2, 0.8)], vec![(0, 0.8)]];
        assert!((perron_root(&rows) - 0.8).abs() < 1e-12);
    }

    #[test]
    fn perron_root_of_a_two_by_two() {
        // [[1, 2], [3, 0]] has eigenvalues 3 and −2 (characteristic
        // polynomial λ² − λ − 6).
        let rows = vec![vec![(0, 1.0), (1, 2.0)], vec![(0, 3.0)]];
        assert!((perron_root(&rows) - 3.0).abs() < 1e-12);
    }
}
