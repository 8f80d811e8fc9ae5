//! Exact consistency verdicts for small grammars.
//!
//! Floating point cannot tell a critical grammar from a nearly critical
//! one: at `ρ = 1` the termination probability is a double root, so the
//! numerical solver is accurate only to about 1e-8. Where the grammar is
//! small enough, the verdicts are decided in exact rational arithmetic on
//! the block-normalised rule probabilities instead.
//!
//! **Criterion.** A component `C` of the usage graph (strongly connected,
//! with every component below it already decided) terminates with
//! probability 1 exactly when it is productive, every rule of positive
//! probability leaves it only for components that terminate with
//! probability 1, and the spectral radius of its block `M_C` of the
//! expectation matrix is at most 1 (T. L. Booth and R. A. Thompson,
//! "Applying probability measures to abstract languages", IEEE Trans.
//! Computers C-22(5), 1973, for one component; applied component by
//! component as in K. Etessami and M. Yannakakis, "Recursive Markov
//! chains, stochastic grammars, and monotone systems of nonlinear
//! equations", J. ACM 56(1), 2009 — both recalled from memory).
//!
//! **Deciding `ρ(M_C)` against 1 without eigenvalues.** `I − M_C` is a
//! Z-matrix. For `M ≥ 0`, `ρ(M) < 1` exactly when every leading principal
//! minor of `I − M` is positive (A. Berman and R. J. Plemmons,
//! *Nonnegative Matrices in the Mathematical Sciences*, 1979, ch. 6,
//! Theorem 2.3, condition on leading minors — recalled from memory). For an
//! irreducible `M` (a component), every proper principal submatrix has a
//! smaller spectral radius, and `det(I − tM)` changes sign exactly at
//! `t = 1/ρ`; so with the leading minors of orders `1 … k−1` positive, the
//! sign of `det(I − M)` says whether `ρ` is below, at or above 1, and a
//! non-positive earlier minor means `ρ > 1`. Gaussian elimination without
//! pivoting yields the ratios of consecutive leading minors as its pivots.
//!
//! Past [`MAX_SYMBOLS`] reachable symbols or numbers of more than
//! [`MAX_BITS`] bits the question is left to the numerical analysis.

use crate::prob_model::ProbModel;
use grammar_lang::model::{Grammar, NtId, Ratio, Sym};
use num_traits::{One, Signed, Zero};
use std::cmp::Ordering;

/// The most reachable symbols decided exactly.
pub const MAX_SYMBOLS: usize = 64;
/// The largest numerator or denominator, in bits, computed with.
pub const MAX_BITS: u64 = 4096;

/// The exact answers, per component of the usage graph.
#[derive(Clone, Debug)]
pub(crate) struct ExactVerdict {
    /// Per component: `ρ(M_C)` compared with 1 (`Less` for unreachable ones).
    pub radius_vs_one: Vec<Ordering>,
    /// Per component: every symbol terminates with probability exactly 1.
    pub sure: Vec<bool>,
}

/// `None` when the grammar is too large for exact arithmetic.
pub(crate) fn decide(
    g: &Grammar,
    model: &ProbModel,
    comps: &[Vec<u32>],
    comp_of: &[usize],
    reachable: &[bool],
) -> Option<ExactVerdict> {
    if reachable.iter().filter(|&&r| r).count() > MAX_SYMBOLS {
        return None;
    }
    let p = exact_probabilities(g, model, reachable)?;
    let mut radius_vs_one = vec![Ordering::Less; comps.len()];
    let mut sure = vec![false; comps.len()];
    // `comps` lists sinks first: every component below is decided first.
    for (c, comp) in comps.iter().enumerate() {
        if !reachable[comp[0] as usize] {
            continue;
        }
        radius_vs_one[c] = compare_radius_with_one(&component_matrix(g, &p, comp, comp_of, c))?;
        let leaves_only_to_sure = comp.iter().all(|&a| {
            g.nonterminals[a as usize]
                .rules
                .iter()
                .filter(|r| !p[r.index()].is_zero())
                .all(|r| {
                    g.rules[r.index()].rhs.iter().all(|s| match *s {
                        Sym::N(b) => comp_of[b.index()] == c || sure[comp_of[b.index()]],
                        Sym::T(_) => true,
                    })
                })
        });
        sure[c] = comp.iter().all(|&a| model.productive[a as usize])
            && leaves_only_to_sure
            && radius_vs_one[c] != Ordering::Greater;
    }
    Some(ExactVerdict {
        radius_vs_one,
        sure,
    })
}

fn too_big(r: &Ratio) -> bool {
    r.numer().bits() > MAX_BITS || r.denom().bits() > MAX_BITS
}

/// The block-normalised probability of every rule of a reachable block,
/// exactly as `ProbModel` normalises in floating point (rules of
/// non-positive probability unused); 0 elsewhere.
fn exact_probabilities(g: &Grammar, model: &ProbModel, reachable: &[bool]) -> Option<Vec<Ratio>> {
    let mut p = vec![Ratio::zero(); g.rules.len()];
    for a in g.nt_ids() {
        if !reachable[a.index()] || !model.has_rules[a.index()] {
            continue;
        }
        let rules = &g.nonterminal(a).rules;
        let usable = |r: &&grammar_lang::model::RuleId| model.p[r.index()] > 0.0;
        let mass: Ratio = rules
            .iter()
            .filter(usable)
            .map(|r| &g.rules[r.index()].probability)
            .sum();
        if !mass.is_positive() || too_big(&mass) {
            return None;
        }
        for r in rules.iter().filter(usable) {
            let q = &g.rules[r.index()].probability / &mass;
            if too_big(&q) {
                return None;
            }
            p[r.index()] = q;
        }
    }
    Some(p)
}

/// The block `M_C` of the expectation matrix, dense.
fn component_matrix(
    g: &Grammar,
    p: &[Ratio],
    comp: &[u32],
    comp_of: &[usize],
    c: usize,
) -> Vec<Vec<Ratio>> {
    let k = comp.len();
    let mut m = vec![vec![Ratio::zero(); k]; k];
    for (i, &a) in comp.iter().enumerate() {
        for r in &g.nonterminals[a as usize].rules {
            let q = &p[r.index()];
            if q.is_zero() {
                continue;
            }
            for s in &g.rules[r.index()].rhs {
                if let Sym::N(b) = *s {
                    if comp_of[b.index()] == c {
                        if let Ok(j) = comp.binary_search(&b.0) {
                            m[i][j] = &m[i][j] + q;
                        }
                    }
                }
            }
        }
    }
    m
}

/// `ρ(M)` compared with 1 for an irreducible non-negative `M` (see the
/// module docs); `None` when a number grows past [`MAX_BITS`].
fn compare_radius_with_one(m: &[Vec<Ratio>]) -> Option<Ordering> {
    let k = m.len();
    // A = I − M
    let mut a: Vec<Vec<Ratio>> = m
        .iter()
        .enumerate()
        .map(|(i, row)| {
            row.iter()
                .enumerate()
                .map(|(j, v)| {
                    let diag = if i == j { Ratio::one() } else { Ratio::zero() };
                    diag - v
                })
                .collect()
        })
        .collect();
    for col in 0..k {
        let pivot = a[col][col].clone();
        if col + 1 == k {
            // The last pivot has the sign of det(I − M).
            return Some(if pivot.is_positive() {
                Ordering::Less
            } else if pivot.is_zero() {
                Ordering::Equal
            } else {
                Ordering::Greater
            });
        }
        if !pivot.is_positive() {
            return Some(Ordering::Greater);
        }
        for row in col + 1..k {
            if a[row][col].is_zero() {
                continue;
            }
            let f = &a[row][col] / &pivot;
            let (above, below) = a.split_at_mut(row);
            let source = &above[col];
            for (target, v) in below[0][col..].iter_mut().zip(&source[col..]) {
                let next = &*target - &(&f * v);
                if too_big(&next) {
                    return None;
                }
                *target = next;
            }
        }
    }
    Some(Ordering::Less)
}

/// The probability that a derivation from each symbol never ends,
/// `y = 1 − x`, refined for symbols not known to end surely: Newton's
/// method on `y = 1 − f(1 − y)`, started from the numerical solution's
/// `1 − x` (at or above the answer: the numerical iterates approach `x`
/// from below) and evaluated without the cancellation `1 − x` suffers near
/// 1 (`1 − Π(1 − y_B)` accumulated as `s + y − s·y`). `fixed[a]` holds the
/// known values (0 for a sure symbol, 1 for an unproductive one).
pub(crate) fn refine_survival(
    g: &Grammar,
    model: &ProbModel,
    vars: &[NtId],
    fixed: &[Option<f64>],
    start: &[f64],
) -> Vec<f64> {
    let k = vars.len();
    let mut local = vec![usize::MAX; g.nonterminals.len()];
    for (i, a) in vars.iter().enumerate() {
        local[a.index()] = i;
    }
    let mut y: Vec<f64> = vars
        .iter()
        .map(|a| start[a.index()].clamp(0.0, 1.0))
        .collect();
    let value = |y: &[f64], b: NtId| match local[b.index()] {
        usize::MAX => fixed[b.index()].unwrap_or(0.0),
        i => y[i],
    };
    for _ in 0..200 {
        // h = g(y) − y and the Jacobian of g.
        let mut h = vec![0.0f64; k];
        let mut jac = vec![0.0f64; k * k];
        for (i, &a) in vars.iter().enumerate() {
            for r in &g.nonterminal(a).rules {
                let q = model.p[r.index()];
                if q <= 0.0 {
                    continue;
                }
                let rhs = &g.rules[r.index()].rhs;
                let ys: Vec<(usize, f64)> = rhs
                    .iter()
                    .filter_map(|s| match *s {
                        Sym::N(b) => Some((local[b.index()], value(&y, b))),
                        Sym::T(_) => None,
                    })
                    .collect();
                let mut s = 0.0f64;
                for &(_, v) in &ys {
                    s = s + v - s * v;
                }
                h[i] += q * s;
                for (pos, &(col, _)) in ys.iter().enumerate() {
                    if col == usize::MAX {
                        continue;
                    }
                    let others: f64 = ys
                        .iter()
                        .enumerate()
                        .filter(|&(o, _)| o != pos)
                        .map(|(_, &(_, v))| 1.0 - v)
                        .product();
                    jac[i * k + col] += q * others;
                }
            }
            h[i] -= y[i];
        }
        // (J − I) Δ = −h
        for i in 0..k {
            jac[i * k + i] -= 1.0;
        }
        let mut delta: Vec<f64> = h.iter().map(|v| -v).collect();
        if !crate::linalg::solve_in_place(k, &mut jac, &mut delta) {
            break;
        }
        let mut moved = false;
        for (yi, d) in y.iter_mut().zip(&delta) {
            // The iterates decrease towards the answer; clamping keeps
            // rounding from undoing that.
            let next = (*yi + d).clamp(0.0, *yi);
            if next < *yi {
                moved = true;
            }
            *yi = next;
        }
        let largest_step = delta.iter().fold(0.0f64, |m, d| m.max(d.abs()));
        let scale = y.iter().fold(0.0f64, |m, v| m.max(*v));
        if !moved || largest_step <= scale * 1e-15 {
            break;
        }
    }
    y
}
