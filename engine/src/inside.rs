//! The inside algorithm: the total probability of all derivations.
//!
//! Values are kept per cell and symbol as natural logs (no underflow on long
//! sentences). The inner loop runs in linear space on *scaled* values: each
//! cell also stores `lin = exp(log − cell_max)`, so a split point combines
//! `p · lin_left · lin_right` with plain multiply-adds and one common scale
//! `exp(max_left + max_right − S)` per split. Where that could underflow
//! (a cell whose values span more than [`RANGE`] nats, a split far below the
//! best one, or a grammar with a rule below `e^−RANGE`), that split is
//! combined with exact log-sum-exp instead. Both paths meet in log space.

use crate::chart::{kernels, log_add, Layout, Stopped, Watch};
use crate::compile::{CompiledGrammar, Visit};
use crate::viterbi::ViterbiChart;

/// Dynamic range, in nats, that the scaled path handles: four factors of at
/// least `e^−150` stay above the smallest normal double (`e^−708`).
const RANGE: f64 = 150.0;

pub(crate) struct InsideChart {
    pub layout: Layout,
    pub log: Vec<f64>,
}

impl InsideChart {
    pub fn get(&self, i: usize, j: usize, sym: u32) -> f64 {
        self.log[self.layout.cell(i, j) * self.layout.n_sym + sym as usize]
    }
}

/// Fills the inside chart; `vit` provides the symbols present in each cell
/// (a symbol has a positive inside probability exactly where it has a best
/// derivation). `watch` is asked once per cell.
pub(crate) fn fill(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
) -> Result<InsideChart, Stopped> {
    let layout = vit.layout;
    let n_sym = layout.n_sym;
    let cells = layout.cells();
    let mut log = vec![f64::NEG_INFINITY; cells * n_sym];
    let mut lin = vec![0.0f64; cells * n_sym];
    let mut cell_max = vec![f64::NEG_INFINITY; cells];
    let mut wide = vec![false; cells];
    let tiny_rules = g.min_lp < -RANGE;
    let mut acc = vec![0.0f64; n_sym];
    let mut acc_log = vec![f64::NEG_INFINITY; n_sym];
    let mut pre = vec![f64::NEG_INFINITY; n_sym];
    let mut rmask = vec![0u64; g.mask_words];
    for len in 1..=layout.n {
        for i in 0..=layout.n - len {
            let j = i + len;
            let c = layout.cell(i, j);
            watch.check()?;
            acc.fill(0.0);
            acc_log.fill(f64::NEG_INFINITY);
            let mut scale = f64::NEG_INFINITY;
            if len == 1 {
                if let Some(entries) = g.lexicon.get(words[i]) {
                    for e in entries {
                        acc_log[e.sym as usize] = log_add(acc_log[e.sym as usize], e.lp);
                    }
                }
            } else {
                for k in i + 1..j {
                    let s = cell_max[layout.cell(i, k)] + cell_max[layout.cell(k, j)];
                    scale = scale.max(s);
                }
                let (log_done, _) = log.split_at(c * n_sym);
                let (lin_done, _) = lin.split_at(c * n_sym);
                for k in i + 1..j {
                    let l = layout.cell(i, k);
                    let r = layout.cell(k, j);
                    let s = cell_max[l] + cell_max[r];
                    if s == f64::NEG_INFINITY {
                        continue;
                    }
                    let scaled = !tiny_rules && !wide[l] && !wide[r] && s - scale > -RANGE;
                    if scaled {
                        let f = (s - scale).exp();
                        let left = &lin_done[l * n_sym..(l + 1) * n_sym];
                        let right = &lin_done[r * n_sym..(r + 1) * n_sym];
                        let rp = vit.present(r);
                        let mut rmask_ready = false;
                        for &b in vit.present(l) {
                            let lb = left[b as usize] * f;
                            let base = b as usize * n_sym;
                            match g.visit(b, rp.len()) {
                                Visit::Scan => kernels::sum_scan(
                                    &g.bin_lin[g.binary_rule_range(b)],
                                    lb,
                                    right,
                                    &mut acc,
                                ),
                                Visit::Pairs(table) => kernels::sum_pairs(
                                    &g.bin_lin, table, base, rp, lb, right, &mut acc,
                                ),
                                Visit::Mask(table, bmask) => {
                                    if !rmask_ready {
                                        kernels::fill_mask(&mut rmask, rp);
                                        rmask_ready = true;
                                    }
                                    kernels::sum_mask(
                                        &g.bin_lin, table, base, bmask, &rmask, lb, right, &mut acc,
                                    )
                                }
                            }
                        }
                    } else {
                        let left = &log_done[l * n_sym..(l + 1) * n_sym];
                        let right = &log_done[r * n_sym..(r + 1) * n_sym];
                        for &b in vit.present(l) {
                            let lb = left[b as usize];
                            for rule in &g.bin[g.binary_rule_range(b)] {
                                let rc = right[rule.right as usize];
                                if rc > f64::NEG_INFINITY {
                                    let slot = &mut acc_log[rule.parent as usize];
                                    *slot = log_add(*slot, rule.lp + lb + rc);
                                }
                            }
                        }
                    }
                }
            }
            // Pre-closure values in log space.
            for &s in vit.present(c) {
                let a = acc[s as usize];
                let v = if a > 0.0 {
                    a.ln() + scale
                } else {
                    f64::NEG_INFINITY
                };
                pre[s as usize] = log_add(v, acc_log[s as usize]);
            }
            for &s in &g.unary_nodes {
                if acc[s as usize] == 0.0 && acc_log[s as usize] == f64::NEG_INFINITY {
                    pre[s as usize] = f64::NEG_INFINITY;
                } else {
                    let a = acc[s as usize];
                    let v = if a > 0.0 {
                        a.ln() + scale
                    } else {
                        f64::NEG_INFINITY
                    };
                    pre[s as usize] = log_add(v, acc_log[s as usize]);
                }
            }
            let row = &mut log[c * n_sym..(c + 1) * n_sym];
            for &s in vit.present(c) {
                if !g.in_unary[s as usize] {
                    row[s as usize] = pre[s as usize];
                }
            }
            // Summed unary closure: post[A] = Σ_B C[A][B] · pre[B].
            for &b in &g.unary_nodes {
                let pb = pre[b as usize];
                if pb == f64::NEG_INFINITY {
                    continue;
                }
                for &(a, lw) in &g.sum_closure[b as usize] {
                    row[a as usize] = log_add(row[a as usize], lw + pb);
                }
            }
            let mut mx = f64::NEG_INFINITY;
            for &s in vit.present(c) {
                mx = mx.max(row[s as usize]);
            }
            cell_max[c] = mx;
            let lrow = &mut lin[c * n_sym..(c + 1) * n_sym];
            for &s in vit.present(c) {
                let d = row[s as usize] - mx;
                if d < -RANGE {
                    wide[c] = true;
                }
                lrow[s as usize] = d.exp();
            }
        }
    }
    Ok(InsideChart { layout, log })
}
