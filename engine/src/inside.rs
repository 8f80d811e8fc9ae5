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

use crate::chart::{cell_work, fill_cells, kernels, log_add, Layout, Stopped, Watch, Workers};
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
/// derivation). `watch` is asked once per cell; the cells of one span
/// length may be spread over `workers`.
pub(crate) fn fill(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
    workers: &Workers,
) -> Result<InsideChart, Stopped> {
    let layout = vit.layout;
    let n_sym = layout.n_sym;
    let cells = layout.cells();
    let mut log = vec![f64::NEG_INFINITY; cells * n_sym];
    let mut lin = vec![0.0f64; cells * n_sym];
    let mut cell_max = vec![f64::NEG_INFINITY; cells];
    let mut wide = vec![false; cells];
    let rules_per_left = (g.bin.len() / n_sym.max(1)).max(1) as u64;
    for len in 1..=layout.n {
        let first = layout.cell(0, len);
        let count = layout.n - len + 1;
        let (log_done, log_rest) = log.split_at_mut(first * n_sym);
        let (lin_done, lin_rest) = lin.split_at_mut(first * n_sym);
        let (max_done, max_rest) = cell_max.split_at_mut(first);
        let (wide_done, wide_rest) = wide.split_at_mut(first);
        let mut outs: Vec<Out> = log_rest[..count * n_sym]
            .chunks_mut(n_sym)
            .zip(lin_rest[..count * n_sym].chunks_mut(n_sym))
            .zip(max_rest[..count].iter_mut().zip(&mut wide_rest[..count]))
            .map(|((log, lin), (max, wide))| Out {
                log,
                lin,
                max,
                wide,
            })
            .collect();
        let done = Done {
            n_sym,
            vit,
            log: log_done,
            lin: lin_done,
            max: max_done,
            wide: wide_done,
        };
        let work = |i: usize| cell_work(layout, i, len, rules_per_left, |c| vit.present(c).len());
        fill_cells(
            workers,
            watch,
            &mut outs,
            work,
            || Scratch {
                acc: vec![0.0f64; n_sym],
                acc_log: vec![f64::NEG_INFINITY; n_sym],
                pre: vec![f64::NEG_INFINITY; n_sym],
                rmask: vec![0u64; g.mask_words],
            },
            |i, out, scratch| fill_cell(g, words, &done, i, i + len, out, scratch),
        )?;
    }
    Ok(InsideChart { layout, log })
}

/// The finished cells (shorter than the ones being filled).
struct Done<'a> {
    n_sym: usize,
    vit: &'a ViterbiChart,
    log: &'a [f64],
    lin: &'a [f64],
    max: &'a [f64],
    wide: &'a [bool],
}

/// One cell's results: log values, scaled values, largest log value, and
/// whether its values span more than [`RANGE`].
struct Out<'a> {
    log: &'a mut [f64],
    lin: &'a mut [f64],
    max: &'a mut f64,
    wide: &'a mut bool,
}

/// One cell's working rows.
struct Scratch {
    acc: Vec<f64>,
    acc_log: Vec<f64>,
    pre: Vec<f64>,
    rmask: Vec<u64>,
}

/// Fills cell `(i, j)` from the finished shorter cells.
fn fill_cell(
    g: &CompiledGrammar,
    words: &[&str],
    done: &Done,
    i: usize,
    j: usize,
    out: &mut Out,
    scratch: &mut Scratch,
) {
    let vit = done.vit;
    let layout = vit.layout;
    let n_sym = done.n_sym;
    let tiny_rules = g.min_lp < -RANGE;
    let Scratch {
        acc,
        acc_log,
        pre,
        rmask,
    } = scratch;
    let c = layout.cell(i, j);
    acc.fill(0.0);
    acc_log.fill(f64::NEG_INFINITY);
    let mut scale = f64::NEG_INFINITY;
    if j - i == 1 {
        if let Some(entries) = g.lexicon.get(words[i]) {
            for e in entries {
                acc_log[e.sym as usize] = log_add(acc_log[e.sym as usize], e.lp);
            }
        }
    } else {
        for k in i + 1..j {
            let s = done.max[layout.cell(i, k)] + done.max[layout.cell(k, j)];
            scale = scale.max(s);
        }
        for k in i + 1..j {
            let l = layout.cell(i, k);
            let r = layout.cell(k, j);
            let s = done.max[l] + done.max[r];
            if s == f64::NEG_INFINITY {
                continue;
            }
            let scaled = !tiny_rules && !done.wide[l] && !done.wide[r] && s - scale > -RANGE;
            if scaled {
                let f = (s - scale).exp();
                let left = &done.lin[l * n_sym..(l + 1) * n_sym];
                let right = &done.lin[r * n_sym..(r + 1) * n_sym];
                let rp = vit.present(r);
                let mut rmask_ready = false;
                for &b in vit.present(l) {
                    let lb = left[b as usize] * f;
                    let base = b as usize * n_sym;
                    match g.visit(b, rp.len()) {
                        Visit::Scan => {
                            kernels::sum_scan(&g.bin_lin[g.binary_rule_range(b)], lb, right, acc)
                        }
                        Visit::Pairs(table) => {
                            kernels::sum_pairs(&g.bin_lin, table, base, rp, lb, right, acc)
                        }
                        Visit::Mask(table, bmask) => {
                            if !rmask_ready {
                                kernels::fill_mask(rmask, rp);
                                rmask_ready = true;
                            }
                            kernels::sum_mask(&g.bin_lin, table, base, bmask, rmask, lb, right, acc)
                        }
                    }
                }
            } else {
                let left = &done.log[l * n_sym..(l + 1) * n_sym];
                let right = &done.log[r * n_sym..(r + 1) * n_sym];
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
    let row = &mut *out.log;
    for &s in vit.present(c) {
        if !g.in_unary[s as usize] {
            row[s as usize] = pre[s as usize];
        }
    }
    // Summed unary closure: post[A] = Σ_B C[A][B] · pre[B].
    if vit.pruned {
        // Only over symbols the beam kept (see `crate::beam`).
        let kept = &vit.score[c * n_sym..(c + 1) * n_sym];
        for &b in &g.unary_nodes {
            let pb = pre[b as usize];
            if pb == f64::NEG_INFINITY || kept[b as usize] == f64::NEG_INFINITY {
                continue;
            }
            for &(a, lw) in &g.sum_closure[b as usize] {
                if kept[a as usize] > f64::NEG_INFINITY {
                    row[a as usize] = log_add(row[a as usize], lw + pb);
                }
            }
        }
    } else {
        for &b in &g.unary_nodes {
            let pb = pre[b as usize];
            if pb == f64::NEG_INFINITY {
                continue;
            }
            for &(a, lw) in &g.sum_closure[b as usize] {
                row[a as usize] = log_add(row[a as usize], lw + pb);
            }
        }
    }
    let mut mx = f64::NEG_INFINITY;
    for &s in vit.present(c) {
        mx = mx.max(row[s as usize]);
    }
    *out.max = mx;
    for &s in vit.present(c) {
        let d = row[s as usize] - mx;
        if d < -RANGE {
            *out.wide = true;
        }
        out.lin[s as usize] = d.exp();
    }
}
