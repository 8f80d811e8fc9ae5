//! Consistency analysis: does the grammar's probability mass end up on
//! finite sentences, and what do its sentences look like on average?
//!
//! All numbers use the block-normalised probabilities of `prob_model`
//! (the same ones the sampler draws from), so a `sum-not-one` block is
//! reported by the checker, not here as a leak.
//!
//! **Termination probabilities.** For every non-terminal `A`, the
//! probability `x_A` that a derivation from `A` ends is the least
//! non-negative solution of `x_A = Σ_{A → α} p · Π_{B ∈ α} x_B`. It is
//! computed by the decomposed Newton method of K. Etessami and
//! M. Yannakakis ("Recursive Markov chains, stochastic grammars, and
//! monotone systems of nonlinear equations", J. ACM 56(1), 2009):
//! unproductive symbols get 0 first, then each strongly connected
//! component of the rest is solved bottom-up by Newton's iteration from 0,
//! which increases monotonically to the least fixed point — quadratically
//! in general, linearly (at least one bit per step, Esparza, Kiefer and
//! Luttenberger, SIAM J. Comput. 39(6), 2010) when the component is
//! critical. At a critical component the fixed point is a double root, so
//! floating point evaluation of `f(x) − x` limits the accuracy to about the
//! square root of machine epsilon (≈ 1e-8); hence [`TIGHT_TOLERANCE`].
//!
//! **First moments.** `M[A][B] = Σ_{A → α} p · (number of B in α)` over the
//! symbols reachable from the root through rules of positive probability
//! (productive or not; a reachable unproductive symbol is exactly where
//! counts blow up; unreachable symbols play no part). Its spectral radius
//! `ρ` classifies the grammar (T. L. Booth and R. A. Thompson, "Applying
//! probability measures to abstract languages", IEEE Trans. Computers
//! C-22(5), 1973): `ρ < 1` consistent with finite expected size, `ρ = 1`
//! critical, `ρ > 1` mass may leak. `ρ` is the largest Perron root of the
//! diagonal blocks of the strongly connected components (see
//! `linalg::perron_root`). Expected counts `e = e_root (I − M)^{-1}` are
//! solved component by component from the root downwards; a component with
//! `ρ ≥ 1`, and everything below it, has infinite expected counts.

use crate::exact;
use crate::linalg::{perron_root, solve_in_place, SparseRows};
use crate::numbers::probability;
use crate::prob_model::ProbModel;
use grammar_lang::diagnostic::{Code, Diagnostic, Location};
use grammar_lang::model::{Grammar, NtId, Sym};
use grammar_lang::scc::all_components;
use std::cmp::Ordering;
use std::fmt;

/// A grammar whose start symbol terminates with probability within this of
/// 1 counts as tight (see the module docs for why not tighter).
pub const TIGHT_TOLERANCE: f64 = 1e-6;

/// `|ρ − 1|` below this counts as critical.
pub const CRITICAL_TOLERANCE: f64 = 1e-9;

/// The Booth–Thompson regime of the expected-count matrix.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Regime {
    /// `ρ < 1`: finite expected size; tight if every symbol is defined.
    Subcritical,
    /// `ρ = 1`: may be tight, but the expected size is infinite.
    Critical,
    /// `ρ > 1`: the expected size is infinite and mass usually leaks.
    Supercritical,
}

impl Regime {
    pub fn as_str(self) -> &'static str {
        match self {
            Regime::Subcritical => "subcritical",
            Regime::Critical => "critical",
            Regime::Supercritical => "supercritical",
        }
    }
}

/// How the verdicts (tight, regime) were reached.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Verdict {
    /// In exact rational arithmetic (see `exact`): small grammars.
    Exact,
    /// In floating point: tight within `tolerance` of probability 1,
    /// critical within [`CRITICAL_TOLERANCE`] of radius 1.
    Numerical { tolerance: f64 },
}

impl Verdict {
    pub fn as_str(self) -> &'static str {
        match self {
            Verdict::Exact => "exact",
            Verdict::Numerical { .. } => "numerical",
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct SymbolStats {
    pub nt: NtId,
    pub name: String,
    /// Reachable from the root through rules of positive probability.
    pub reachable: bool,
    /// Probability that a derivation from this symbol ends.
    pub termination_probability: f64,
    /// Expected number of occurrences in a derivation from the root
    /// (the root's own occurrence included); `None` when infinite, 0 when
    /// unreachable.
    pub expected_uses: Option<f64>,
}

/// Why mass is lost at a leak source.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum LeakCause {
    /// The symbol has no block.
    Undefined,
    /// Every rule of the block has weight 0.
    NoRules,
    /// No derivation from these symbols ever ends.
    NeverEnds,
    /// The symbols' recursion is expected to reproduce them `growth`
    /// times per use (the component's spectral radius).
    Recursion { growth: f64 },
}

/// A place where probability mass leaks out of the grammar.
#[derive(Clone, Debug, PartialEq)]
pub struct LeakSource {
    /// The strongly connected symbols responsible, in id order.
    pub symbols: Vec<NtId>,
    pub cause: LeakCause,
    /// The smallest termination probability among `symbols`.
    pub termination_probability: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct ConsistencyReport {
    /// The symbol the report is about (the grammar's `start` by default).
    pub root: NtId,
    /// The root terminates with probability 1: exactly, or within
    /// [`TIGHT_TOLERANCE`] (see `verdict`).
    pub tight: bool,
    /// Whether `tight` and `regime` were decided exactly.
    pub verdict: Verdict,
    /// Spectral radius of the expected-count matrix on reachable symbols.
    pub spectral_radius: f64,
    pub regime: Regime,
    /// `1 −` the termination probability of the root; exactly 0 when
    /// `tight` (the solver's rounding is not a leak).
    pub leak: f64,
    /// Expected sentence length; `None` when infinite or not tight.
    pub expected_length: Option<f64>,
    /// Expected number of rule applications; `None` when infinite or not
    /// tight.
    pub expected_derivation_size: Option<f64>,
    /// One entry per non-terminal, in id order.
    pub symbols: Vec<SymbolStats>,
    /// Per rule: expected uses per derivation from the root; `None` when
    /// infinite.
    pub rule_expected_uses: Vec<Option<f64>>,
    /// Where leaking mass is lost (empty when tight), ordered by symbol id.
    pub leak_sources: Vec<LeakSource>,
    /// Blocks whose probabilities did not add up to 1 and were rescaled.
    pub rescaled_blocks: Vec<NtId>,
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ConsistencyError {
    NoStart,
    UnknownSymbol { id: u32 },
}

impl fmt::Display for ConsistencyError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            ConsistencyError::NoStart => write!(f, "the grammar has no `start` declaration"),
            ConsistencyError::UnknownSymbol { id } => write!(f, "no non-terminal with id {id}"),
        }
    }
}

impl std::error::Error for ConsistencyError {}

/// The consistency report of the grammar from its `start` symbol.
pub fn analyze(g: &Grammar) -> Result<ConsistencyReport, ConsistencyError> {
    let root = g.start.ok_or(ConsistencyError::NoStart)?;
    analyze_from(g, root)
}

/// The consistency report of derivations from `root`.
pub fn analyze_from(g: &Grammar, root: NtId) -> Result<ConsistencyReport, ConsistencyError> {
    if root.index() >= g.nonterminals.len() {
        return Err(ConsistencyError::UnknownSymbol { id: root.0 });
    }
    let model = ProbModel::new(g);
    let n = g.nonterminals.len();
    let x = solve_termination(g, &model);
    let reachable = model.reachable_from(root);

    // Components of the usage graph, sinks first, and their spectral radii.
    let comps = all_components(n, &model.succ);
    let mut comp_of = vec![0usize; n];
    for (c, comp) in comps.iter().enumerate() {
        for &a in comp {
            comp_of[a as usize] = c;
        }
    }
    let mut radius = vec![0.0f64; comps.len()];
    for (c, comp) in comps.iter().enumerate() {
        if reachable[comp[0] as usize] {
            radius[c] = perron_root(&component_matrix(g, &model, comp, &comp_of, c));
        }
    }
    let mut spectral_radius = radius.iter().copied().fold(0.0, f64::max);
    let exact = exact::decide(g, &model, &comps, &comp_of, &reachable);
    // Per component: `ρ` compared with 1, exactly where possible.
    let radius_vs_one: Vec<Ordering> = match &exact {
        Some(v) => v.radius_vs_one.clone(),
        None => radius
            .iter()
            .map(|&r| {
                if r < 1.0 - CRITICAL_TOLERANCE {
                    Ordering::Less
                } else if r > 1.0 + CRITICAL_TOLERANCE {
                    Ordering::Greater
                } else {
                    Ordering::Equal
                }
            })
            .collect(),
    };
    let worst = comps
        .iter()
        .zip(&radius_vs_one)
        .filter(|(comp, _)| reachable[comp[0] as usize])
        .map(|(_, &o)| o)
        .max()
        .unwrap_or(Ordering::Less);
    let regime = match worst {
        Ordering::Less => Regime::Subcritical,
        Ordering::Equal => Regime::Critical,
        Ordering::Greater => Regime::Supercritical,
    };
    if exact.is_some() {
        // The printed radius agrees with the exact regime.
        spectral_radius = match regime {
            Regime::Critical => 1.0,
            Regime::Subcritical => spectral_radius.min(1.0 - f64::EPSILON / 2.0),
            Regime::Supercritical => spectral_radius.max(1.0 + f64::EPSILON),
        };
    }
    let unbounded: Vec<bool> = radius_vs_one.iter().map(|&o| o != Ordering::Less).collect();

    let e = expected_counts(g, &model, root, &comps, &comp_of, &unbounded, &reachable);

    // Termination: exact verdicts, and the survival probability refined
    // where a symbol does not end surely; or the numerical solution.
    let (x, tight, leak, leaking, verdict) = match &exact {
        Some(v) => {
            let mut x = x;
            let sure = |a: usize| v.sure[comp_of[a]];
            let fixed: Vec<Option<f64>> = (0..n)
                .map(|a| {
                    if sure(a) {
                        Some(0.0)
                    } else if !model.productive[a] {
                        Some(1.0)
                    } else {
                        None
                    }
                })
                .collect();
            let vars: Vec<NtId> = (0..n)
                .filter(|&a| reachable[a] && fixed[a].is_none())
                .map(|a| NtId(a as u32))
                .collect();
            let start: Vec<f64> = x.iter().map(|xa| 1.0 - xa).collect();
            let y = exact::refine_survival(g, &model, &vars, &fixed, &start);
            let mut survival = vec![0.0f64; n];
            for (a, ya) in vars.iter().zip(&y) {
                survival[a.index()] = *ya;
                x[a.index()] = 1.0 - ya;
            }
            for (a, xa) in x.iter_mut().enumerate() {
                if reachable[a] && sure(a) {
                    *xa = 1.0;
                }
            }
            let tight = sure(root.index());
            let leak = if tight {
                0.0
            } else if fixed[root.index()].is_some() {
                1.0 - x[root.index()]
            } else {
                survival[root.index()]
            };
            let leaking: Vec<bool> = (0..n).map(|a| !sure(a)).collect();
            (x, tight, leak, leaking, Verdict::Exact)
        }
        None => {
            let shortfall = (1.0 - x[root.index()]).max(0.0);
            let tight = shortfall <= TIGHT_TOLERANCE;
            // A tight grammar leaks nothing by definition: what is left of
            // `shortfall` is the solver's rounding, not lost probability.
            let leak = if tight { 0.0 } else { shortfall };
            let leaking: Vec<bool> = x.iter().map(|&xa| xa < 1.0 - TIGHT_TOLERANCE).collect();
            let verdict = Verdict::Numerical {
                tolerance: TIGHT_TOLERANCE,
            };
            (x, tight, leak, leaking, verdict)
        }
    };
    let all_finite = (0..n).all(|a| !reachable[a] || e[a].is_some());
    let (expected_length, expected_derivation_size) = if tight && all_finite {
        let mut length = 0.0;
        let mut size = 0.0;
        for a in g.nt_ids() {
            let Some(ea) = e[a.index()].filter(|_| reachable[a.index()]) else {
                continue;
            };
            size += ea;
            for (r, rule) in g.rules_of(a) {
                let words = rule.rhs.iter().filter(|s| matches!(s, Sym::T(_))).count();
                length += ea * model.p[r.index()] * words as f64;
            }
        }
        (Some(length), Some(size))
    } else {
        (None, None)
    };

    let symbols = g
        .nt_ids()
        .map(|a| SymbolStats {
            nt: a,
            name: g.nt_name(a).to_string(),
            reachable: reachable[a.index()],
            termination_probability: x[a.index()],
            expected_uses: if reachable[a.index()] {
                e[a.index()]
            } else {
                Some(0.0)
            },
        })
        .collect();
    let rule_expected_uses = g
        .rules
        .iter()
        .enumerate()
        .map(|(i, rule)| {
            let a = rule.lhs.index();
            if !reachable[a] || model.p[i] == 0.0 {
                Some(0.0)
            } else {
                e[a].map(|ea| ea * model.p[i])
            }
        })
        .collect();

    let leak_sources = if tight {
        Vec::new()
    } else {
        let places = Places {
            comps: &comps,
            comp_of: &comp_of,
            radius: &radius,
            radius_vs_one: &radius_vs_one,
            reachable: &reachable,
            leaking: &leaking,
        };
        leak_sources(g, &model, &x, &places)
    };

    Ok(ConsistencyReport {
        root,
        tight,
        verdict,
        spectral_radius,
        regime,
        leak,
        expected_length,
        expected_derivation_size,
        symbols,
        rule_expected_uses,
        leak_sources,
        rescaled_blocks: model.rescaled,
    })
}

/// The termination probability of every non-terminal (see the module docs).
pub fn termination_probabilities(g: &Grammar) -> Vec<f64> {
    solve_termination(g, &ProbModel::new(g))
}

/// Residual `max |f(x) − x|` at which Newton's iteration stops.
const NEWTON_RESIDUAL: f64 = 1e-15;
const NEWTON_MAX_STEPS: usize = 200;

fn solve_termination(g: &Grammar, model: &ProbModel) -> Vec<f64> {
    let n = g.nonterminals.len();
    let mut x = vec![0.0f64; n];
    // The cleaned system: rules of positive probability all of whose
    // symbols are productive (the others contribute 0 to the polynomial).
    let clean: Vec<bool> = g
        .rules
        .iter()
        .enumerate()
        .map(|(i, r)| {
            model.p[i] > 0.0
                && model.productive[r.lhs.index()]
                && r.rhs.iter().all(|s| match s {
                    Sym::N(b) => model.productive[b.index()],
                    Sym::T(_) => true,
                })
        })
        .collect();
    let mut succ: Vec<Vec<u32>> = vec![Vec::new(); n];
    for (i, r) in g.rules.iter().enumerate() {
        if clean[i] {
            for s in &r.rhs {
                if let Sym::N(b) = s {
                    succ[r.lhs.index()].push(b.0);
                }
            }
        }
    }
    for s in &mut succ {
        s.sort_unstable();
        s.dedup();
    }
    let mut local = vec![usize::MAX; n];
    for comp in all_components(n, &succ) {
        if !model.productive[comp[0] as usize] {
            continue;
        }
        if let [a] = comp[..] {
            if succ[a as usize].binary_search(&a).is_err() {
                // Not recursive: every value it needs is known already, so
                // its equation is its solution (the usual case, and the
                // bulk of a large grammar).
                x[a as usize] = g.nonterminals[a as usize]
                    .rules
                    .iter()
                    .filter(|r| clean[r.index()])
                    .map(|r| {
                        g.rules[r.index()]
                            .rhs
                            .iter()
                            .fold(model.p[r.index()], |acc, s| {
                                acc * match *s {
                                    Sym::T(_) => 1.0,
                                    Sym::N(b) => x[b.index()],
                                }
                            })
                    })
                    .sum::<f64>()
                    .min(1.0);
                continue;
            }
        }
        for (i, &a) in comp.iter().enumerate() {
            local[a as usize] = i;
        }
        let xc = newton_component(g, model, &clean, &comp, &local, &x);
        for (i, &a) in comp.iter().enumerate() {
            x[a as usize] = xc[i];
            local[a as usize] = usize::MAX;
        }
    }
    x
}

/// Newton's iteration from 0 on one component; `x` holds the values of
/// the components below, `local` maps the component's symbols to 0..k.
fn newton_component(
    g: &Grammar,
    model: &ProbModel,
    clean: &[bool],
    comp: &[u32],
    local: &[usize],
    x: &[f64],
) -> Vec<f64> {
    let k = comp.len();
    let mut xc = vec![0.0f64; k];
    let mut f = vec![0.0f64; k];
    let mut jac = vec![0.0f64; k * k];
    let value = |sym: &Sym, xc: &[f64]| -> f64 {
        match *sym {
            Sym::T(_) => 1.0,
            Sym::N(b) => match local[b.index()] {
                usize::MAX => x[b.index()],
                i => xc[i],
            },
        }
    };
    // f(x) and, when asked, the Jacobian of the component's equations.
    let eval = |xc: &[f64], f: &mut [f64], jac: Option<&mut [f64]>| {
        f.iter_mut().for_each(|v| *v = 0.0);
        let mut jac = jac;
        if let Some(j) = jac.as_deref_mut() {
            j.iter_mut().for_each(|v| *v = 0.0);
        }
        for (i, &a) in comp.iter().enumerate() {
            for &r in &g.nonterminals[a as usize].rules {
                if !clean[r.index()] {
                    continue;
                }
                let p = model.p[r.index()];
                let rhs = &g.rules[r.index()].rhs;
                f[i] += rhs.iter().fold(p, |acc, s| acc * value(s, xc));
                if let Some(j) = jac.as_deref_mut() {
                    for (pos, s) in rhs.iter().enumerate() {
                        let Sym::N(b) = *s else { continue };
                        let col = local[b.index()];
                        if col == usize::MAX {
                            continue;
                        }
                        let d = rhs
                            .iter()
                            .enumerate()
                            .filter(|&(q, _)| q != pos)
                            .fold(p, |acc, (_, s2)| acc * value(s2, xc));
                        j[i * k + col] += d;
                    }
                }
            }
        }
    };
    let mut newton_failed = false;
    let mut previous_step = f64::INFINITY;
    for _ in 0..NEWTON_MAX_STEPS {
        eval(&xc, &mut f, Some(&mut jac));
        let residual = f
            .iter()
            .zip(&xc)
            .fold(0.0f64, |m, (fi, xi)| m.max((fi - xi).abs()));
        if residual <= NEWTON_RESIDUAL {
            break;
        }
        // (I − J) Δ = f(x) − x
        let mut a = jac.iter().map(|v| -v).collect::<Vec<f64>>();
        for i in 0..k {
            a[i * k + i] += 1.0;
        }
        let mut delta: Vec<f64> = f.iter().zip(&xc).map(|(fi, xi)| fi - xi).collect();
        if !solve_in_place(k, &mut a, &mut delta) {
            newton_failed = true;
            break;
        }
        let mut step = 0.0f64;
        for (xi, d) in xc.iter_mut().zip(&delta) {
            // Exact Newton iterates increase monotonically and stay below
            // the least fixed point, which is at most 1 for normalised
            // blocks; clamping only removes rounding noise.
            let next = (*xi + d).clamp(*xi, 1.0);
            step = step.max(next - *xi);
            *xi = next;
        }
        // Converged, or down in rounding noise: near the fixed point the
        // steps at least halve (linear rate 1/2 at worst, Esparza, Kiefer and
        // Luttenberger 2010), so small steps that stop shrinking are noise.
        if step <= 1e-15 || (step < 1e-7 && step > 0.9 * previous_step) {
            break;
        }
        previous_step = step;
    }
    if newton_failed {
        // Kleene iteration x ← f(x) is monotone from below as well.
        for _ in 0..100_000 {
            eval(&xc, &mut f, None);
            let mut step = 0.0f64;
            for (xi, fi) in xc.iter_mut().zip(&f) {
                let next = fi.clamp(*xi, 1.0);
                step = step.max(next - *xi);
                *xi = next;
            }
            if step <= NEWTON_RESIDUAL {
                break;
            }
        }
    }
    xc
}

/// The diagonal block of `M` for component `c`, as sparse rows.
fn component_matrix(
    g: &Grammar,
    model: &ProbModel,
    comp: &[u32],
    comp_of: &[usize],
    c: usize,
) -> SparseRows {
    let pos = |b: u32| comp.binary_search(&b).ok();
    comp.iter()
        .map(|&a| {
            let mut row: Vec<(u32, f64)> = Vec::new();
            for &r in &g.nonterminals[a as usize].rules {
                let p = model.p[r.index()];
                if p == 0.0 {
                    continue;
                }
                for s in &g.rules[r.index()].rhs {
                    if let Sym::N(b) = *s {
                        if comp_of[b.index()] == c {
                            if let Some(j) = pos(b.0) {
                                row.push((j as u32, p));
                            }
                        }
                    }
                }
            }
            row.sort_by_key(|&(j, _)| j);
            let mut merged: Vec<(u32, f64)> = Vec::with_capacity(row.len());
            for (j, v) in row {
                match merged.last_mut() {
                    Some(last) if last.0 == j => last.1 += v,
                    _ => merged.push((j, v)),
                }
            }
            merged
        })
        .collect()
}

/// `e = e_root (I − M)^{-1}` on the reachable symbols, component by
/// component from the root down; `None` where infinite.
fn expected_counts(
    g: &Grammar,
    model: &ProbModel,
    root: NtId,
    comps: &[Vec<u32>],
    comp_of: &[usize],
    unbounded: &[bool],
    reachable: &[bool],
) -> Vec<Option<f64>> {
    let n = g.nonterminals.len();
    let mut e: Vec<Option<f64>> = vec![Some(0.0); n];
    let mut inflow = vec![0.0f64; n];
    let mut infinite_inflow = vec![false; n];
    inflow[root.index()] = 1.0;
    // `comps` lists sinks first, so walk it backwards.
    for (c, comp) in comps.iter().enumerate().rev() {
        if !reachable[comp[0] as usize] {
            continue;
        }
        let k = comp.len();
        let infinite = unbounded[c] || comp.iter().any(|&a| infinite_inflow[a as usize]);
        if infinite {
            for &a in comp {
                e[a as usize] = None;
            }
        } else {
            // (I − M_CC)ᵀ e_C = inflow_C
            let mut a_mat = vec![0.0f64; k * k];
            for i in 0..k {
                a_mat[i * k + i] = 1.0;
            }
            let rows = component_matrix(g, model, comp, comp_of, c);
            for (i, row) in rows.iter().enumerate() {
                for &(j, v) in row {
                    a_mat[j as usize * k + i] -= v;
                }
            }
            let mut b: Vec<f64> = comp.iter().map(|&a| inflow[a as usize]).collect();
            if solve_in_place(k, &mut a_mat, &mut b) {
                for (i, &a) in comp.iter().enumerate() {
                    e[a as usize] = Some(b[i]);
                }
            } else {
                for &a in comp {
                    e[a as usize] = None;
                }
            }
        }
        // Pass the expected counts on to the components below.
        for &a in comp {
            let ea = e[a as usize];
            for &r in &g.nonterminals[a as usize].rules {
                let p = model.p[r.index()];
                if p == 0.0 {
                    continue;
                }
                for s in &g.rules[r.index()].rhs {
                    if let Sym::N(b) = *s {
                        if comp_of[b.index()] != c {
                            match ea {
                                Some(v) => inflow[b.index()] += v * p,
                                None => infinite_inflow[b.index()] = true,
                            }
                        }
                    }
                }
            }
        }
    }
    e
}

/// The components where mass is lost: reachable components with a
/// termination probability below 1 whose own successors all terminate
/// (the mass is lost here, not further down), plus supercritical
/// components, which lose mass of their own whatever lies below them.
/// The components and what is known of each, for [`leak_sources`].
struct Places<'a> {
    comps: &'a [Vec<u32>],
    comp_of: &'a [usize],
    radius: &'a [f64],
    radius_vs_one: &'a [Ordering],
    reachable: &'a [bool],
    /// Per symbol: terminates with probability below 1.
    leaking: &'a [bool],
}

fn leak_sources(g: &Grammar, model: &ProbModel, x: &[f64], at: &Places) -> Vec<LeakSource> {
    let Places {
        comps,
        comp_of,
        radius,
        radius_vs_one,
        reachable,
        leaking,
    } = at;
    let leaks = |a: u32| leaking[a as usize];
    let mut out = Vec::new();
    for (c, comp) in comps.iter().enumerate() {
        if !reachable[comp[0] as usize] || !comp.iter().any(|&a| leaks(a)) {
            continue;
        }
        let below_leaks = comp.iter().any(|&a| {
            model.succ[a as usize]
                .iter()
                .any(|&b| comp_of[b as usize] != c && leaks(b))
        });
        let supercritical = radius_vs_one[c] == Ordering::Greater;
        if below_leaks && !supercritical {
            continue;
        }
        let first = comp[0] as usize;
        let cause = if !model.has_rules[first] {
            if g.nonterminals[first].is_defined() {
                LeakCause::NoRules
            } else {
                LeakCause::Undefined
            }
        } else if comp.iter().all(|&a| x[a as usize] == 0.0) {
            LeakCause::NeverEnds
        } else {
            LeakCause::Recursion { growth: radius[c] }
        };
        out.push(LeakSource {
            symbols: comp.iter().map(|&a| NtId(a)).collect(),
            cause,
            termination_probability: comp
                .iter()
                .map(|&a| x[a as usize])
                .fold(f64::INFINITY, f64::min),
        });
    }
    out.sort_by_key(|s| s.symbols[0]);
    out
}

/// A growth rate for messages: four decimals, or two significant digits
/// in scientific notation when small.
fn show(p: f64) -> String {
    if p != 0.0 && p.abs() < 1e-3 {
        format!("{p:.1e}")
    } else {
        let s = format!("{p:.4}");
        let s = s.trim_end_matches('0').trim_end_matches('.');
        s.to_string()
    }
}

/// The `leaky` diagnostic for a report that is not tight, at the `start`
/// declaration (or, without one, at the root's block), naming the symbols
/// where the mass is lost. `None` for a tight grammar or when there is no
/// place to put it.
pub fn leaky_diagnostic(g: &Grammar, report: &ConsistencyReport) -> Option<Diagnostic> {
    if report.tight {
        return None;
    }
    let root_name = g.nonterminals.get(report.root.index())?.name.as_str();
    let location = if g.start == Some(report.root) {
        g.start_location
    } else {
        None
    }
    .or_else(|| symbol_location(g, report.root))?;
    let finish = 1.0 - report.leak;
    let mut d = Diagnostic::new(
        Code::Leaky,
        location,
        format!(
            "probability mass leaks: derivations from `{root_name}` end with probability {}, \
             so {} of the mass goes to derivations that never end",
            probability(finish),
            probability(report.leak),
        ),
    )
    .with_label(format!("leaks {}", probability(report.leak)));
    let mut growing = Vec::new();
    for source in &report.leak_sources {
        let names: Vec<String> = source
            .symbols
            .iter()
            .map(|&a| format!("`{}`", g.nt_name(a)))
            .collect();
        let names = names.join(", ");
        let message = match source.cause {
            LeakCause::Undefined => {
                format!("{names} has no block, so no derivation through it ends")
            }
            LeakCause::NoRules => {
                format!("every rule of {names} has weight 0, so no derivation through it ends")
            }
            LeakCause::NeverEnds => format!("no derivation from {names} ever ends in words"),
            LeakCause::Recursion { growth } => {
                growing.push(names.clone());
                format!(
                    "{names} recurses too much: on average each use leads to {} more \
                     (derivations stay finite only below 1); it ends with probability {}",
                    show(growth),
                    probability(source.termination_probability)
                )
            }
        };
        let Some(at) = source.symbols.first().and_then(|&a| symbol_location(g, a)) else {
            continue;
        };
        d = d.with_related(at, message);
    }
    if !growing.is_empty() {
        d = d.with_help(format!(
            "lower the weights of the recursive alternatives of {} relative to the ones that end",
            growing.join(", ")
        ));
    }
    Some(d)
}

/// The `leaky` diagnostic of the grammar from its start symbol, if it leaks.
/// Same as [`leaky_diagnostic`] of the full [`analyze`] report, but a tight
/// grammar (the usual case, checked on every edit in the editor) costs only
/// the termination probabilities.
pub fn leak_finding(g: &Grammar) -> Option<Diagnostic> {
    let root = g.start.filter(|r| r.index() < g.nonterminals.len())?;
    let x = solve_termination(g, &ProbModel::new(g));
    // Numerically tight: a large grammar is taken at its word; a small one
    // is decided exactly (a leak below the tolerance is still a leak).
    if (1.0 - x[root.index()]).max(0.0) <= TIGHT_TOLERANCE
        && g.nonterminals.len() > exact::MAX_SYMBOLS
    {
        return None;
    }
    let report = analyze_from(g, root).ok()?;
    leaky_diagnostic(g, &report)
}

/// Where a symbol is best shown: the name of its block, else its first use.
fn symbol_location(g: &Grammar, a: NtId) -> Option<Location> {
    let nt = g.nonterminals.get(a.index())?;
    nt.block
        .as_ref()
        .map(|b| b.name)
        .or_else(|| nt.references.first().copied())
}
