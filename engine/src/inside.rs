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

use crate::chart::kernels::{self, Counted, Lane};
use crate::chart::{
    cell_work, fill_cells, log_add, Groups, Layout, Scratches, Stopped, Watch, Workers,
};
use crate::compile::{CompiledGrammar, Visit, EXACT_IN_F64 as EXACT};
use crate::recycle::{Pool, Recycler, Reused};
use crate::viterbi::ViterbiChart;

/// Dynamic range, in nats, that the scaled path handles: four factors of at
/// least `e^−150` stay above the smallest normal double (`e^−708`).
const RANGE: f64 = 150.0;

pub(crate) struct InsideChart {
    pub layout: Layout,
    pub log: Reused<f64>,
}

impl InsideChart {
    pub fn get(&self, i: usize, j: usize, sym: u32) -> f64 {
        self.log[self.layout.cell(i, j) * self.layout.n_sym + sym as usize]
    }
}

/// Parse counts taken during the inside pass (see [`fill`]).
pub(crate) enum FusedCounts {
    /// The sentence's parse count, exactly (below 2⁵³).
    Root(u64),
    /// The count reached 2⁵³ somewhere below the root: the counting pass
    /// resumes at cell `exact_cells` (by number), after the cells whose
    /// counts are all exact, `values[cell · n_sym + symbol]`.
    Partial {
        values: Vec<f64>,
        exact_cells: usize,
    },
}

/// Fills the inside chart; `vit` provides the symbols present in each cell
/// (a symbol has a positive inside probability exactly where it has a best
/// derivation). `watch` is asked once per cell; the cells of one span
/// length may be spread over [`Workers`].
///
/// With `count`, the pass also counts derivations, in the same loops (the
/// count rides beside the probability, [`kernels::Counted`]). A double
/// holds integers exactly below 2⁵³, so each cell's counts are stored as
/// `min(count, 2⁵³)`: a value below 2⁵³ is exact, and 2⁵³ means "at least
/// that many". The stored values keep that meaning from cell to cell
/// (counts only grow, rounding to nearest is monotone, and a product of a
/// capped value with a nonzero count is at least the cap), so a root count
/// below 2⁵³ is the exact answer, however large the counts of items that
/// take no part in a parse of the whole sentence. Grammars whose unary
/// chains can repeat (infinite counts) or whose chain counts reach 2⁵³ are
/// not counted here. The inside values are the same bit for bit either way.
pub(crate) fn fill(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
    workers: &Workers,
    count: bool,
    recycler: &Recycler,
) -> Result<(InsideChart, Option<FusedCounts>), Stopped> {
    let pass = Pass {
        g,
        words,
        vit,
        watch,
        workers,
        recycler,
    };
    let layout = vit.layout;
    let closure = g.exact_count_closure.as_ref().filter(|_| count);
    let Some(closure) = closure else {
        let mut state = State::<f64>::new(layout, recycler);
        for len in 1..=layout.n {
            pass.fill_length(&mut state, len, &[])?;
        }
        return Ok((state.into_chart(recycler), None));
    };
    let mut state = State::<Counted>::new(layout, recycler);
    for len in 1..=layout.n {
        pass.fill_length(&mut state, len, closure)?;
    }
    let root = state.lin[layout.cell(0, layout.n) * layout.n_sym + g.start as usize].count;
    let counts = if root < EXACT as f64 {
        FusedCounts::Root(root as u64)
    } else {
        let exact_cells = state
            .inexact
            .iter()
            .position(|&x| x)
            .unwrap_or(layout.cells());
        FusedCounts::Partial {
            values: state.lin[..exact_cells * layout.n_sym]
                .iter()
                .map(|x| x.count)
                .collect(),
            exact_cells,
        }
    };
    Ok((state.into_chart(recycler), Some(counts)))
}

/// What a chart item holds in the scaled rows: the probability, and with
/// [`Counted`] the parse count too.
trait Item: Lane + Default {
    const COUNTS: bool;
    /// The recycled arrays of this item type.
    fn pool(r: &Recycler) -> &Pool<Self>;
    /// The recycled scratch rows of this item type.
    fn scratches(r: &Recycler) -> &Scratches<InsideScratch<Self>>;
    fn new(lin: f64, count: f64) -> Self;
    fn lin(self) -> f64;
    fn count(self) -> f64;
}

impl Item for f64 {
    const COUNTS: bool = false;
    fn pool(r: &Recycler) -> &Pool<f64> {
        &r.f64s
    }
    fn scratches(r: &Recycler) -> &Scratches<InsideScratch<f64>> {
        &r.inside
    }
    #[inline(always)]
    fn new(lin: f64, _: f64) -> f64 {
        lin
    }
    #[inline(always)]
    fn lin(self) -> f64 {
        self
    }
    #[inline(always)]
    fn count(self) -> f64 {
        0.0
    }
}

impl Item for Counted {
    const COUNTS: bool = true;
    fn pool(r: &Recycler) -> &Pool<Counted> {
        &r.counted
    }
    fn scratches(r: &Recycler) -> &Scratches<InsideScratch<Counted>> {
        &r.inside_counted
    }
    #[inline(always)]
    fn new(lin: f64, count: f64) -> Counted {
        Counted { lin, count }
    }
    #[inline(always)]
    fn lin(self) -> f64 {
        self.lin
    }
    #[inline(always)]
    fn count(self) -> f64 {
        self.count
    }
}

/// The whole chart as it is filled: log values, scaled values (and
/// counts), each cell's largest log value, whether its values span more
/// than [`RANGE`], and whether a count of it reached 2⁵³ (and was capped).
struct State<L> {
    layout: Layout,
    log: Reused<f64>,
    lin: Reused<L>,
    max: Reused<f64>,
    wide: Reused<bool>,
    inexact: Reused<bool>,
}

impl<L: Item> State<L> {
    fn new(layout: Layout, recycler: &Recycler) -> State<L> {
        let (cells, items) = (layout.cells(), layout.cells() * layout.n_sym);
        State {
            layout,
            // Each cell resets its own rows first (see `fill_cell`).
            log: recycler.f64s.take_for_overwrite(items, f64::NEG_INFINITY),
            lin: L::pool(recycler).take_for_overwrite(items, L::default()),
            max: recycler.f64s.take(cells, f64::NEG_INFINITY),
            wide: recycler.flags.take(cells, false),
            inexact: recycler.flags.take(cells, false),
        }
    }

    /// The log values as the finished chart; the rest goes back to
    /// `recycler`.
    fn into_chart(self, recycler: &Recycler) -> InsideChart {
        L::pool(recycler).give_back_reused(self.lin);
        recycler.f64s.give_back_reused(self.max);
        recycler.flags.give_back_reused(self.wide);
        recycler.flags.give_back_reused(self.inexact);
        InsideChart {
            layout: self.layout,
            log: self.log,
        }
    }
}

/// What every cell of one pass reads.
struct Pass<'a> {
    g: &'a CompiledGrammar,
    words: &'a [&'a str],
    vit: &'a ViterbiChart,
    watch: Watch<'a>,
    workers: &'a Workers,
    recycler: &'a Recycler,
}

impl Pass<'_> {
    /// Fills the cells of span length `len` (every shorter one is done);
    /// `closure`: the unary chain counts, when counting.
    fn fill_length<L: Item>(
        &self,
        state: &mut State<L>,
        len: usize,
        closure: &[Vec<(u32, f64)>],
    ) -> Result<(), Stopped> {
        let (g, vit) = (self.g, self.vit);
        let layout = vit.layout;
        let n_sym = layout.n_sym;
        let rules_per_left = (g.bin.len() / n_sym.max(1)).max(1) as u64;
        let first = layout.cell(0, len);
        let count = layout.n - len + 1;
        let (log_done, log_rest) = state.log.split_at_mut(first * n_sym);
        let (lin_done, lin_rest) = state.lin.split_at_mut(first * n_sym);
        let (max_done, max_rest) = state.max.split_at_mut(first);
        let (wide_done, wide_rest) = state.wide.split_at_mut(first);
        let mut outs: Vec<Out<L>> = log_rest[..count * n_sym]
            .chunks_mut(n_sym)
            .zip(lin_rest[..count * n_sym].chunks_mut(n_sym))
            .zip(max_rest[..count].iter_mut().zip(&mut wide_rest[..count]))
            .zip(state.inexact[first..first + count].iter_mut())
            .map(|(((log, lin), (max, wide)), inexact)| Out {
                log,
                lin,
                max,
                wide,
                inexact,
            })
            .collect();
        let done = Done {
            n_sym,
            vit,
            log: log_done,
            lin: lin_done,
            max: max_done,
            wide: wide_done,
            closure,
        };
        let work = |i: usize| cell_work(layout, i, len, rules_per_left, |c| vit.present(c).len());
        fill_cells(
            self.workers,
            self.watch,
            &mut outs,
            work,
            L::scratches(self.recycler),
            || InsideScratch {
                acc: vec![L::default(); n_sym],
                acc_log: vec![f64::NEG_INFINITY; n_sym],
                pre: vec![f64::NEG_INFINITY; n_sym],
                counts: vec![0.0; if L::COUNTS { n_sym } else { 0 }],
                rmask: vec![0u64; g.mask_words],
                groups: Groups::new(n_sym),
            },
            |i, out, scratch| fill_cell(g, self.words, &done, i, i + len, out, scratch),
        )
    }
}

/// The finished cells (shorter than the ones being filled).
struct Done<'a, L> {
    n_sym: usize,
    vit: &'a ViterbiChart,
    log: &'a [f64],
    lin: &'a [L],
    max: &'a [f64],
    wide: &'a [bool],
    /// Unary chain counts (empty when not counting).
    closure: &'a [Vec<(u32, f64)>],
}

/// One cell's results: log values, scaled values, largest log value,
/// whether its values span more than [`RANGE`], and whether its counts
/// reached 2⁵³.
struct Out<'a, L> {
    log: &'a mut [f64],
    lin: &'a mut [L],
    max: &'a mut f64,
    wide: &'a mut bool,
    inexact: &'a mut bool,
}

/// One cell's working rows.
pub(crate) struct InsideScratch<L> {
    acc: Vec<L>,
    acc_log: Vec<f64>,
    pre: Vec<f64>,
    /// The cell's counts after the unary closure (when counting).
    counts: Vec<f64>,
    rmask: Vec<u64>,
    groups: Groups<L>,
}

/// Scans the rules of `b` once for the splits queued in `groups` (and
/// empties its queue): `acc[A] += p · Σ lb · right[C]` over them, the
/// right rows read from the scaled chart `lin`.
fn scan_group<L: Item>(
    g: &CompiledGrammar,
    groups: &mut Groups<L>,
    lin: &[L],
    n_sym: usize,
    b: u32,
    acc: &mut [L],
) {
    let rules = &g.bin_lin[g.binary_rule_range(b)];
    let (lb, at) = (groups.lb[b as usize], groups.split[b as usize]);
    let row = |t: usize| {
        let c = groups.cells[at[t] as usize] as usize;
        &lin[c * n_sym..(c + 1) * n_sym]
    };
    match groups.count[b as usize] {
        1 => kernels::sum_scan(rules, lb[0], row(0), acc),
        2 => kernels::sum_scan_n(rules, [lb[0], lb[1]], [row(0), row(1)], acc),
        3 => kernels::sum_scan_n(rules, [lb[0], lb[1], lb[2]], [row(0), row(1), row(2)], acc),
        4 => kernels::sum_scan_n(rules, lb, [row(0), row(1), row(2), row(3)], acc),
        _ => {}
    }
    groups.count[b as usize] = 0;
}

/// Fills cell `(i, j)` from the finished shorter cells.
fn fill_cell<L: Item>(
    g: &CompiledGrammar,
    words: &[&str],
    done: &Done<L>,
    i: usize,
    j: usize,
    out: &mut Out<L>,
    scratch: &mut InsideScratch<L>,
) {
    let vit = done.vit;
    let layout = vit.layout;
    let n_sym = done.n_sym;
    let tiny_rules = g.min_lp < -RANGE;
    let InsideScratch {
        acc,
        acc_log,
        pre,
        counts,
        rmask,
        groups,
    } = scratch;
    let c = layout.cell(i, j);
    // The chart's memory may hold an earlier parse: the cell's rows start
    // empty here, while they are hot in the cache.
    out.log.fill(f64::NEG_INFINITY);
    out.lin.fill(L::default());
    // Without a beam, every symbol with a share is present in the cell, and
    // the rows are reset over those at the end; a beam's dropped symbols
    // may have a share too, so under one they are reset in full.
    if vit.pruned {
        acc.fill(L::default());
        acc_log.fill(f64::NEG_INFINITY);
    }
    let mut scale = f64::NEG_INFINITY;
    if j - i == 1 {
        if let Some(entries) = g.lexicon.get(words[i]) {
            for e in entries {
                let s = e.sym as usize;
                acc_log[s] = log_add(acc_log[s], e.lp);
                if L::COUNTS {
                    acc[s] = L::new(acc[s].lin(), acc[s].count() + 1.0);
                }
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
            let left = &done.lin[l * n_sym..(l + 1) * n_sym];
            let right = &done.lin[r * n_sym..(r + 1) * n_sym];
            if scaled {
                let f = (s - scale).exp();
                let rp = vit.present(r);
                let at = groups.cells.len() as u32;
                groups.cells.push(r as u32);
                let mut rmask_ready = false;
                for &b in vit.present(l) {
                    let lb = left[b as usize].weighted(f);
                    let base = b as usize * n_sym;
                    match g.visit(b, rp.len()) {
                        Visit::Scan => {
                            if groups.push(b, lb, at) {
                                scan_group(g, groups, done.lin, n_sym, b, acc);
                            }
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
                let left_log = &done.log[l * n_sym..(l + 1) * n_sym];
                let right_log = &done.log[r * n_sym..(r + 1) * n_sym];
                for &b in vit.present(l) {
                    let lb = left_log[b as usize];
                    let cb = left[b as usize].count();
                    for rule in &g.bin[g.binary_rule_range(b)] {
                        let rc = right_log[rule.right as usize];
                        if rc > f64::NEG_INFINITY {
                            let a = rule.parent as usize;
                            acc_log[a] = log_add(acc_log[a], rule.lp + lb + rc);
                            if L::COUNTS {
                                let n = acc[a].count() + cb * right[rule.right as usize].count();
                                acc[a] = L::new(acc[a].lin(), n);
                            }
                        }
                    }
                }
            }
        }
        for t in 0..groups.touched.len() {
            let b = groups.touched[t];
            scan_group(g, groups, done.lin, n_sym, b, acc);
        }
        groups.touched.clear();
        groups.cells.clear();
    }
    // Pre-closure values in log space.
    for &s in vit.present(c) {
        let a = acc[s as usize].lin();
        let v = if a > 0.0 {
            a.ln() + scale
        } else {
            f64::NEG_INFINITY
        };
        pre[s as usize] = log_add(v, acc_log[s as usize]);
    }
    // The unary nodes that may have a value before the closure. Without a
    // beam, each of them is present in the cell, whose list (in increasing
    // order, as `unary_nodes` is) has its value in `pre` already: the sums
    // below are taken in the same order either way. A beam's dropped
    // symbols may have a share too: then all unary nodes are looked at.
    let sources: &[u32] = if vit.pruned {
        for &s in &g.unary_nodes {
            let a = acc[s as usize].lin();
            if a == 0.0 && acc_log[s as usize] == f64::NEG_INFINITY {
                pre[s as usize] = f64::NEG_INFINITY;
            } else {
                let v = if a > 0.0 {
                    a.ln() + scale
                } else {
                    f64::NEG_INFINITY
                };
                pre[s as usize] = log_add(v, acc_log[s as usize]);
            }
        }
        &g.unary_nodes
    } else {
        vit.present(c)
    };
    let row = &mut *out.log;
    for &s in vit.present(c) {
        if !g.in_unary[s as usize] {
            row[s as usize] = pre[s as usize];
        }
    }
    // Only over symbols a beam kept (see `crate::beam`).
    let kept = &vit.score[c * n_sym..(c + 1) * n_sym];
    let dropped = |s: u32| vit.pruned && kept[s as usize] == f64::NEG_INFINITY;
    // Summed unary closure: post[A] = Σ_B C[A][B] · pre[B].
    for &b in sources {
        let pb = pre[b as usize];
        if !g.in_unary[b as usize] || pb == f64::NEG_INFINITY || dropped(b) {
            continue;
        }
        for &(a, lw) in &g.sum_closure[b as usize] {
            if !dropped(a) {
                row[a as usize] = log_add(row[a as usize], lw + pb);
            }
        }
    }
    if L::COUNTS {
        // The same closure over counts: N(A) = Σ_B chains(A ⇒* B) · N_pre(B).
        for &s in vit.present(c) {
            counts[s as usize] = if g.in_unary[s as usize] {
                0.0
            } else {
                acc[s as usize].count()
            };
        }
        for &b in sources {
            let pb = acc[b as usize].count();
            if !g.in_unary[b as usize] || pb == 0.0 || dropped(b) {
                continue;
            }
            for &(a, w) in &done.closure[b as usize] {
                if !dropped(a) {
                    counts[a as usize] += w * pb;
                }
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
        let mut n = 0.0;
        if L::COUNTS {
            n = counts[s as usize];
            if n >= EXACT as f64 {
                n = EXACT as f64;
                *out.inexact = true;
            }
        }
        out.lin[s as usize] = L::new(d.exp(), n);
        acc[s as usize] = L::default();
        acc_log[s as usize] = f64::NEG_INFINITY;
    }
}
