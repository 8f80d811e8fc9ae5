//! Viterbi CKY in log space: the best derivation of every chart item.
//!
//! The chart stores, per cell and symbol, the log-probability of the best
//! derivation after the cell's unary closure (`-inf` where the symbol does
//! not derive the span), plus a list of the symbols present in each cell.
//! No back-pointers are stored: the best derivation is recovered top-down by
//! re-deriving the arg-max at each item from the finished chart, which keeps
//! the inner loop to one add, one add and one compare per rule.

use crate::beam::Beam;
use crate::chart::{cell_work, fill_cells, kernels, Groups, Layout, Stopped, Watch, Workers};
use crate::compile::{CompiledGrammar, Origin, Visit};
use crate::recycle::{Recycler, Reused};

/// A derivation in the compiled grammar.
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum Deriv {
    /// `sym → words[pos]` by lexical entry number `entry` of that word.
    Lex { sym: u32, pos: usize, entry: u32 },
    /// Binary rule number `rule`.
    Bin {
        rule: u32,
        left: Box<Deriv>,
        right: Box<Deriv>,
    },
    /// Unary rule number `rule` (index into the compiled unary rules).
    Unary { rule: u32, child: Box<Deriv> },
}

pub(crate) struct ViterbiChart {
    pub layout: Layout,
    pub score: Reused<f64>,
    present_start: Vec<u32>,
    present: Vec<u32>,
    /// Whether a [`Beam`] dropped any symbol: pruned symbols score `-inf`
    /// and are absent from the present lists, which the later passes must
    /// then also respect in their unary closures.
    pub pruned: bool,
}

impl ViterbiChart {
    /// The symbols that derive the span of cell `c`, in increasing order.
    #[inline]
    pub fn present(&self, c: usize) -> &[u32] {
        &self.present[self.present_start[c] as usize..self.present_start[c + 1] as usize]
    }

    #[inline]
    pub fn get(&self, i: usize, j: usize, sym: u32) -> f64 {
        self.score[self.layout.cell(i, j) * self.layout.n_sym + sym as usize]
    }

    /// The chart's arrays (scores, list starts, lists), for reuse.
    pub fn into_arrays(self) -> (Reused<f64>, Vec<u32>, Vec<u32>) {
        (self.score, self.present_start, self.present)
    }
}

/// Fills the Viterbi chart for `words`, asking `watch` once per cell; the
/// cells of one span length may be spread over `workers`. With a `beam`,
/// every cell but the whole sentence's is pruned (see [`crate::beam`]).
pub(crate) fn fill(
    g: &CompiledGrammar,
    words: &[&str],
    watch: Watch,
    workers: &Workers,
    beam: Option<&Beam>,
    recycler: &Recycler,
) -> Result<ViterbiChart, Stopped> {
    let layout = Layout::new(words.len(), g.symbol_count());
    let n_sym = layout.n_sym;
    let cells = layout.cells();
    // Each cell writes its whole row (see `fill_cell`).
    let mut score = recycler
        .f64s
        .take_for_overwrite(cells * n_sym, f64::NEG_INFINITY);
    let mut present_start = recycler.u32s.take_empty(cells + 1);
    present_start.push(0u32);
    // Room for a few symbols per cell before the list grows.
    let mut present = recycler.u32s.take_empty(cells * n_sym.min(16));
    let rules_per_left = (g.bin.len() / n_sym.max(1)).max(1) as u64;
    let mut pruned = false;
    // Scratch rows for a beam have a `keep` row (even in the whole
    // sentence's cell, which is not pruned), and are kept apart.
    let beamed = beam.is_some();
    let scratches = if beamed {
        &recycler.viterbi_beam
    } else {
        &recycler.viterbi
    };
    // Each cell's list of present symbols, reused from length to length.
    let mut lists: Vec<Vec<u32>> = Vec::new();
    for len in 1..=layout.n {
        let first = layout.cell(0, len);
        let count = layout.n - len + 1;
        let (done, rest) = score.split_at_mut(first * n_sym);
        let mut outs: Vec<(&mut [f64], Vec<u32>, bool)> = rest[..count * n_sym]
            .chunks_mut(n_sym)
            .map(|row| (row, lists.pop().unwrap_or_default(), false))
            .collect();
        // The whole sentence's cell is never pruned.
        let beam = beam.filter(|_| len < layout.n);
        let done = Done {
            layout,
            score: done,
            present_start: &present_start,
            present: &present,
        };
        let work = |i: usize| cell_work(layout, i, len, rules_per_left, |c| done.present(c).len());
        fill_cells(
            workers,
            watch,
            &mut outs,
            work,
            scratches,
            || ViterbiScratch {
                pre: vec![f64::NEG_INFINITY; n_sym],
                rmask: vec![0u64; g.mask_words],
                groups: Groups::new(n_sym),
                keep: if beamed {
                    vec![false; n_sym]
                } else {
                    Vec::new()
                },
                order: Vec::new(),
            },
            |i, (row, out, dropped), scratch| {
                fill_cell(g, words, &done, i, i + len, row, out, scratch);
                if let Some(beam) = beam {
                    *dropped = prune_cell(g, beam, row, out, scratch);
                }
            },
        )?;
        for (_, mut out, dropped) in outs {
            present.extend_from_slice(&out);
            present_start.push(present.len() as u32);
            pruned |= dropped;
            out.clear();
            lists.push(out);
        }
    }
    Ok(ViterbiChart {
        layout,
        score,
        present_start,
        present,
        pruned,
    })
}

/// The finished part of a Viterbi chart: every cell shorter than the ones
/// being filled.
struct Done<'a> {
    layout: Layout,
    score: &'a [f64],
    present_start: &'a [u32],
    present: &'a [u32],
}

impl Done<'_> {
    #[inline]
    fn present(&self, c: usize) -> &[u32] {
        &self.present[self.present_start[c] as usize..self.present_start[c + 1] as usize]
    }

    #[inline]
    fn row(&self, c: usize) -> &[f64] {
        let n_sym = self.layout.n_sym;
        &self.score[c * n_sym..(c + 1) * n_sym]
    }
}

/// One cell's working rows.
pub(crate) struct ViterbiScratch {
    pre: Vec<f64>,
    rmask: Vec<u64>,
    groups: Groups<f64>,
    /// The symbols a beam keeps (all false between cells).
    keep: Vec<bool>,
    order: Vec<u32>,
}

/// Applies `beam` to the filled cell `row` with present symbols `out`
/// (`scratch.pre` still holding the cell's scores before the unary
/// closure). The kept symbols' closure is taken again over kept symbols
/// only, so every score is that of a surviving derivation; the rest get
/// `-inf` and leave `out`. Returns whether any symbol was dropped.
fn prune_cell(
    g: &CompiledGrammar,
    beam: &Beam,
    row: &mut [f64],
    out: &mut Vec<u32>,
    scratch: &mut ViterbiScratch,
) -> bool {
    let ViterbiScratch {
        pre, keep, order, ..
    } = scratch;
    if !beam.select(row, out, keep, order) {
        for &s in order.iter() {
            keep[s as usize] = false;
        }
        return false;
    }
    for &s in out.iter() {
        row[s as usize] = if keep[s as usize] {
            pre[s as usize]
        } else {
            f64::NEG_INFINITY
        };
    }
    for &b in &g.unary_children {
        let pb = pre[b as usize];
        if pb == f64::NEG_INFINITY || !keep[b as usize] {
            continue;
        }
        for &(a, w) in &g.vit_closure[b as usize] {
            let cand = w + pb;
            if keep[a as usize] && cand > row[a as usize] {
                row[a as usize] = cand;
            }
        }
    }
    for &s in order.iter() {
        keep[s as usize] = false;
    }
    out.retain(|&s| row[s as usize] > f64::NEG_INFINITY);
    true
}

/// Fills `row`, cell `(i, j)`, from the finished shorter cells, and lists
/// its present symbols in `out`.
#[allow(clippy::too_many_arguments)]
fn fill_cell(
    g: &CompiledGrammar,
    words: &[&str],
    done: &Done,
    i: usize,
    j: usize,
    row: &mut [f64],
    out: &mut Vec<u32>,
    scratch: &mut ViterbiScratch,
) {
    let ViterbiScratch {
        pre,
        rmask,
        groups,
        keep,
        ..
    } = scratch;
    // Without unary rules or a beam, the scores before the closure are the
    // final ones: they go straight into the row (set to `-inf` first: the
    // chart's memory may hold an earlier parse). Otherwise `pre` takes
    // them: all `-inf` on entry without a beam (reset below, symbol by
    // symbol), refilled here under one (the beam reads it after the cell),
    // and copied over the whole row.
    let beam = !keep.is_empty();
    let direct = g.unary_children.is_empty() && !beam;
    let target: &mut [f64] = if direct {
        row.fill(f64::NEG_INFINITY);
        row
    } else {
        if beam {
            pre.fill(f64::NEG_INFINITY);
        }
        pre
    };
    if j - i == 1 {
        if let Some(entries) = g.lexicon.get(words[i]) {
            for e in entries {
                let slot = &mut target[e.sym as usize];
                if e.lp > *slot {
                    *slot = e.lp;
                }
            }
        }
    } else {
        fill_grouped(g, done, i, j, target, rmask, groups);
    }
    let row: &[f64] = if direct {
        target
    } else {
        row.copy_from_slice(pre);
        for &b in &g.unary_children {
            let pb = pre[b as usize];
            if pb == f64::NEG_INFINITY {
                continue;
            }
            for &(a, w) in &g.vit_closure[b as usize] {
                let cand = w + pb;
                if cand > row[a as usize] {
                    row[a as usize] = cand;
                }
            }
        }
        row
    };
    kernels::push_present(row, out);
    if !direct && !beam {
        // Every symbol with a score before the closure has one after it.
        for &s in out.iter() {
            pre[s as usize] = f64::NEG_INFINITY;
        }
    }
}

/// The binary rules of cell `(i, j)`, split point by split point, over the
/// present symbols of each left cell: the plain loop [`fill_grouped`] must
/// agree with.
#[cfg(test)]
fn fill_by_split(
    g: &CompiledGrammar,
    done: &Done,
    i: usize,
    j: usize,
    pre: &mut [f64],
    rmask: &mut [u64],
) {
    let layout = done.layout;
    for k in i + 1..j {
        let l = layout.cell(i, k);
        let r = layout.cell(k, j);
        let left = done.row(l);
        let right = done.row(r);
        let rp = done.present(r);
        if rp.is_empty() {
            continue;
        }
        let mut rmask_ready = false;
        for &b in done.present(l) {
            visit_one(
                g,
                b,
                left[b as usize],
                right,
                rp,
                rmask,
                &mut rmask_ready,
                pre,
            );
        }
    }
}

/// Rules `A → b C` over one split point: `pre[A] = max(pre[A], lp + lb +
/// right[C])`, visiting `b`'s rules whichever way [`CompiledGrammar::visit`]
/// finds cheapest.
#[allow(clippy::too_many_arguments)]
#[inline]
fn visit_one(
    g: &CompiledGrammar,
    b: u32,
    lb: f64,
    right: &[f64],
    rp: &[u32],
    rmask: &mut [u64],
    rmask_ready: &mut bool,
    pre: &mut [f64],
) {
    let base = b as usize * right.len();
    match g.visit(b, rp.len()) {
        Visit::Scan => kernels::max_scan(&g.bin[g.binary_rule_range(b)], lb, right, pre),
        Visit::Pairs(table) => kernels::max_pairs(&g.bin, table, base, rp, lb, right, pre),
        Visit::Mask(table, bmask) => {
            if !*rmask_ready {
                kernels::fill_mask(rmask, rp);
                *rmask_ready = true;
            }
            kernels::max_mask(&g.bin, table, base, bmask, rmask, lb, right, pre)
        }
    }
}

/// The binary rules of cell `(i, j)`. A left symbol whose rules are best
/// scanned (see [`CompiledGrammar::visit`]) is queued and its rules are
/// read once for up to four split points; the other visits happen at once.
/// Every candidate is the same sum `lp + lb + right[C]` as in the split by
/// split loop and the maximum does not depend on the order, so the scores
/// are the same bit for bit.
fn fill_grouped(
    g: &CompiledGrammar,
    done: &Done,
    i: usize,
    j: usize,
    pre: &mut [f64],
    rmask: &mut [u64],
    groups: &mut Groups<f64>,
) {
    let layout = done.layout;
    let scan = |groups: &Groups<f64>, b: u32, pre: &mut [f64]| {
        let rules = &g.bin[g.binary_rule_range(b)];
        let (lb, at) = (groups.lb[b as usize], groups.split[b as usize]);
        let row = |t: usize| done.row(groups.cells[at[t] as usize] as usize);
        match groups.count[b as usize] {
            1 => kernels::max_scan(rules, lb[0], row(0), pre),
            2 => kernels::max_scan_n(rules, [lb[0], lb[1]], [row(0), row(1)], pre),
            3 => kernels::max_scan_n(rules, [lb[0], lb[1], lb[2]], [row(0), row(1), row(2)], pre),
            4 => kernels::max_scan_n(rules, lb, [row(0), row(1), row(2), row(3)], pre),
            _ => {}
        }
    };
    for k in i + 1..j {
        let l = layout.cell(i, k);
        let r = layout.cell(k, j);
        let rp = done.present(r);
        if rp.is_empty() {
            continue;
        }
        let (left, right) = (done.row(l), done.row(r));
        let s = groups.cells.len() as u32;
        groups.cells.push(r as u32);
        let mut rmask_ready = false;
        for &b in done.present(l) {
            let lb = left[b as usize];
            if matches!(g.visit(b, rp.len()), Visit::Scan) {
                if groups.push(b, lb, s) {
                    scan(groups, b, pre);
                    groups.count[b as usize] = 0;
                }
            } else {
                visit_one(g, b, lb, right, rp, rmask, &mut rmask_ready, pre);
            }
        }
    }
    for t in 0..groups.touched.len() {
        let b = groups.touched[t];
        scan(groups, b, pre);
        groups.count[b as usize] = 0;
    }
    groups.touched.clear();
    groups.cells.clear();
}

/// The best score of `sym` over `i..j` before the unary closure, with its
/// derivation step: lexical entry or (rule, split).
fn best_pre(
    g: &CompiledGrammar,
    chart: &ViterbiChart,
    words: &[&str],
    i: usize,
    j: usize,
    sym: u32,
) -> Option<(f64, PreStep)> {
    let mut best: Option<(f64, PreStep)> = None;
    if j - i == 1 {
        for (n, e) in g.lexicon.get(words[i]).into_iter().flatten().enumerate() {
            if e.sym == sym && best.as_ref().is_none_or(|(s, _)| e.lp > *s) {
                best = Some((e.lp, PreStep::Lex(n as u32)));
            }
        }
        return best;
    }
    for &r in &g.by_parent[sym as usize] {
        let br = g.bin[r as usize];
        let left = g.bin_left[r as usize];
        for k in i + 1..j {
            let cand = br.lp + chart.get(i, k, left) + chart.get(k, j, br.right);
            if cand > f64::NEG_INFINITY && best.as_ref().is_none_or(|(s, _)| cand > *s) {
                best = Some((cand, PreStep::Bin { rule: r, split: k }));
            }
        }
    }
    best
}

enum PreStep {
    Lex(u32),
    Bin { rule: u32, split: usize },
}

/// The best derivation of `sym` over `i..j` (after the unary closure).
///
/// Iterative, like every walk over a derivation here: a derivation is as
/// deep as the sentence is long, and sentences may be thousands of words.
pub(crate) fn best_derivation(
    g: &CompiledGrammar,
    chart: &ViterbiChart,
    words: &[&str],
    i: usize,
    j: usize,
    sym: u32,
) -> Option<Deriv> {
    enum Step {
        /// Derive `sym` over `i..j`.
        Enter(usize, usize, u32),
        /// Both children of binary rule `rule` are built; wrap the node in
        /// the unary chain (innermost rule last).
        Close { rule: u32, chain: Vec<u32> },
    }
    let mut built: Vec<Deriv> = Vec::new();
    let mut steps = vec![Step::Enter(i, j, sym)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(i, j, sym) => {
                let (target, chain, pre) = best_step(g, chart, words, i, j, sym)?;
                match pre {
                    PreStep::Lex(entry) => built.push(wrap(
                        Deriv::Lex {
                            sym: target,
                            pos: i,
                            entry,
                        },
                        &chain,
                    )),
                    PreStep::Bin { rule, split } => {
                        let left = g.bin_left[rule as usize];
                        let right = g.bin[rule as usize].right;
                        steps.push(Step::Close { rule, chain });
                        steps.push(Step::Enter(split, j, right));
                        steps.push(Step::Enter(i, split, left));
                    }
                }
            }
            Step::Close { rule, chain } => {
                let right = built.pop()?;
                let left = built.pop()?;
                let node = Deriv::Bin {
                    rule,
                    left: Box::new(left),
                    right: Box::new(right),
                };
                built.push(wrap(node, &chain));
            }
        }
    }
    built.pop()
}

/// `node` under the unary rules of `chain` (outermost first).
fn wrap(mut node: Deriv, chain: &[u32]) -> Deriv {
    for &rule in chain.iter().rev() {
        node = Deriv::Unary {
            rule,
            child: Box::new(node),
        };
    }
    node
}

/// How the best derivation of `sym` over `i..j` starts: the symbol B its
/// best unary chain `sym ⇒* B` ends in, that chain's rules (outermost
/// first), and B's own best step. `None` when `sym` does not derive the
/// span.
fn best_step(
    g: &CompiledGrammar,
    chart: &ViterbiChart,
    words: &[&str],
    i: usize,
    j: usize,
    sym: u32,
) -> Option<(u32, Vec<u32>, PreStep)> {
    if chart.get(i, j, sym) == f64::NEG_INFINITY {
        return None;
    }
    let mut target = sym;
    let mut target_score = if g.in_unary[sym as usize] {
        best_pre(g, chart, words, i, j, sym).map_or(f64::NEG_INFINITY, |(s, _)| s)
    } else {
        f64::NEG_INFINITY
    };
    if g.in_unary[sym as usize] {
        let c = chart.layout.cell(i, j);
        for &b in chart.present(c) {
            if b == sym || g.unary_by_child[b as usize].is_empty() {
                continue;
            }
            if let Some(&(_, w)) = g.vit_closure[b as usize].iter().find(|&&(a, _)| a == sym) {
                if let Some((pb, _)) = best_pre(g, chart, words, i, j, b) {
                    if w + pb > target_score {
                        target_score = w + pb;
                        target = b;
                    }
                }
            }
        }
    }
    let (_, pre) = best_pre(g, chart, words, i, j, target)?;
    let mut chain = Vec::new();
    let mut at = sym;
    while at != target {
        let &first = g.best_first.get(&(at, target))?;
        chain.push(first);
        at = g.unary[first as usize].child;
    }
    Some((target, chain, pre))
}

/// The log-probability of a derivation: the sum of its rules' log-probabilities.
pub(crate) fn derivation_logprob(g: &CompiledGrammar, words: &[&str], d: &Deriv) -> f64 {
    let mut total = 0.0;
    let mut stack = vec![d];
    while let Some(d) = stack.pop() {
        total += match d {
            Deriv::Lex { pos, entry, .. } => g
                .lexicon
                .get(words[*pos])
                .and_then(|es| es.get(*entry as usize))
                .map_or(f64::NEG_INFINITY, |e| e.lp),
            Deriv::Bin { rule, left, right } => {
                stack.push(left);
                stack.push(right);
                g.bin[*rule as usize].lp
            }
            Deriv::Unary { rule, child } => {
                stack.push(child);
                g.unary[*rule as usize].lp
            }
        };
    }
    total
}

impl Drop for Deriv {
    /// Takes deep derivations apart without recursing.
    fn drop(&mut self) {
        let mut stack = Vec::new();
        detach_children(self, &mut stack);
        while let Some(mut d) = stack.pop() {
            detach_children(&mut d, &mut stack);
        }
    }
}

/// Moves `d`'s children onto `out`, leaving leaves in their place.
fn detach_children(d: &mut Deriv, out: &mut Vec<Deriv>) {
    const LEAF: Deriv = Deriv::Lex {
        sym: 0,
        pos: 0,
        entry: 0,
    };
    match d {
        Deriv::Lex { .. } => {}
        Deriv::Bin { left, right, .. } => {
            out.push(std::mem::replace(&mut **left, LEAF));
            out.push(std::mem::replace(&mut **right, LEAF));
        }
        Deriv::Unary { child, .. } => out.push(std::mem::replace(&mut **child, LEAF)),
    }
}

/// Converts a compiled derivation to the user's tree: intermediates are
/// spliced out, pre-terminals become plain words, every unary rule of a
/// chain shows as its own node. Iterative.
pub(crate) fn to_user_trees(
    g: &CompiledGrammar,
    words: &[&str],
    d: &Deriv,
) -> Vec<grammar_lang::tree::Tree> {
    use grammar_lang::tree::Tree;
    enum Step<'a> {
        Enter(&'a Deriv),
        /// The child is built: put it under the unary rule's parent.
        CloseUnary(u32),
        /// Both children are built: join them, under the parent if it is
        /// the user's.
        CloseBin(u32),
    }
    // Each finished piece: the trees it contributes to its parent.
    let mut built: Vec<Vec<Tree>> = Vec::new();
    let mut steps = vec![Step::Enter(d)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(Deriv::Lex { sym, pos, .. }) => {
                let leaf = Tree::leaf(words[*pos]);
                built.push(if g.is_user(*sym) {
                    vec![Tree::node(g.names[*sym as usize].clone(), vec![leaf])]
                } else {
                    vec![leaf]
                });
            }
            Step::Enter(Deriv::Unary { rule, child }) => {
                steps.push(Step::CloseUnary(*rule));
                steps.push(Step::Enter(child));
            }
            Step::Enter(Deriv::Bin { rule, left, right }) => {
                steps.push(Step::CloseBin(*rule));
                steps.push(Step::Enter(right));
                steps.push(Step::Enter(left));
            }
            Step::CloseUnary(rule) => {
                let kids = built.pop().unwrap_or_default();
                let parent = g.unary[rule as usize].parent;
                built.push(vec![Tree::node(g.names[parent as usize].clone(), kids)]);
            }
            Step::CloseBin(rule) => {
                let right = built.pop().unwrap_or_default();
                let mut kids = built.pop().unwrap_or_default();
                kids.extend(right);
                let parent = g.bin[rule as usize].parent;
                if g.is_user(parent) {
                    debug_assert!(matches!(g.bin_origin[rule as usize], Origin::User(_)));
                    built.push(vec![Tree::node(g.names[parent as usize].clone(), kids)]);
                } else {
                    built.push(kids);
                }
            }
        }
    }
    built.pop().unwrap_or_default()
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A grammar whose cells hold most symbols: every non-terminal has
    /// binary rules over many pairs and most words belong to several.
    fn dense_grammar() -> CompiledGrammar {
        let mut text = String::from("start N0\n");
        let mut seed = 7u64;
        let mut next = |n: u64| {
            seed = seed
                .wrapping_mul(6364136223846793005)
                .wrapping_add(1442695040888963407);
            (seed >> 33) % n
        };
        for a in 0..16 {
            text.push_str(&format!("N{a} relative {{\n"));
            for _ in 0..40 {
                text.push_str(&format!(
                    "  | {} N{} N{}\n",
                    1 + next(9),
                    next(16),
                    next(16)
                ));
            }
            for w in 0..4 {
                if next(2) == 0 {
                    text.push_str(&format!("  | 1 \"w{w}\"\n"));
                }
            }
            text.push_str("  | 1 \"w4\"\n}\n");
        }
        let analysis = grammar_lang::analyze_text(&text);
        assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
        CompiledGrammar::new(&analysis.grammar).expect("compiles")
    }

    #[test]
    fn grouped_scans_give_the_same_scores_bit_for_bit_as_split_by_split() {
        let g = dense_grammar();
        let words = ["w0", "w4", "w1", "w2", "w4", "w3", "w0", "w1", "w4", "w2"];
        let chart = fill(
            &g,
            &words,
            Watch(&|| false),
            &Workers::default(),
            None,
            &Recycler::new(),
        )
        .expect("runs");
        let done = Done {
            layout: chart.layout,
            score: &chart.score,
            present_start: &chart.present_start,
            present: &chart.present,
        };
        let n_sym = g.symbol_count();
        let mut rmask = vec![0u64; g.mask_words];
        let mut groups = Groups::new(n_sym);
        let mut compared = 0;
        for len in 3..=words.len() {
            for i in 0..=words.len() - len {
                let j = i + len;
                let mut by_split = vec![f64::NEG_INFINITY; n_sym];
                let mut grouped = vec![f64::NEG_INFINITY; n_sym];
                fill_by_split(&g, &done, i, j, &mut by_split, &mut rmask);
                fill_grouped(&g, &done, i, j, &mut grouped, &mut rmask, &mut groups);
                compared += 1;
                let bits = |v: &[f64]| v.iter().map(|x| x.to_bits()).collect::<Vec<_>>();
                assert_eq!(bits(&by_split), bits(&grouped), "cell ({i}, {j})");
            }
        }
        assert!(compared > 10);
        // Grouping happened: some left symbol is scanned at several split
        // points of one cell.
        let (i, j) = (0, words.len());
        let layout = chart.layout;
        let scanned = (i + 1..j)
            .filter(|&k| {
                let rp = done.present(layout.cell(k, j));
                done.present(layout.cell(i, k)).iter().any(|&b| {
                    b == 0 && !rp.is_empty() && matches!(g.visit(b, rp.len()), Visit::Scan)
                })
            })
            .count();
        assert!(scanned >= 2, "N0 is scanned at {scanned} split points");
    }
}
