//! Viterbi CKY in log space: the best derivation of every chart item.
//!
//! The chart stores, per cell and symbol, the log-probability of the best
//! derivation after the cell's unary closure (`-inf` where the symbol does
//! not derive the span), plus a list of the symbols present in each cell.
//! No back-pointers are stored: the best derivation is recovered top-down by
//! re-deriving the arg-max at each item from the finished chart, which keeps
//! the inner loop to one add, one add and one compare per rule.

use crate::chart::{fill_cells, kernels, Layout, Stopped, Watch, Workers};
use crate::compile::{CompiledGrammar, Origin, Visit};

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
    pub score: Vec<f64>,
    present_start: Vec<u32>,
    present: Vec<u32>,
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
}

/// Fills the Viterbi chart for `words`, asking `watch` once per cell; the
/// cells of one span length may be spread over `workers`.
pub(crate) fn fill(
    g: &CompiledGrammar,
    words: &[&str],
    watch: Watch,
    workers: &Workers,
) -> Result<ViterbiChart, Stopped> {
    let layout = Layout::new(words.len(), g.symbol_count());
    let n_sym = layout.n_sym;
    let cells = layout.cells();
    let mut score = vec![f64::NEG_INFINITY; cells * n_sym];
    let mut present_start = Vec::with_capacity(cells + 1);
    present_start.push(0u32);
    let mut present: Vec<u32> = Vec::new();
    let rules_per_left = (g.bin.len() / n_sym.max(1)).max(1) as u64;
    for len in 1..=layout.n {
        let first = layout.cell(0, len);
        let count = layout.n - len + 1;
        let (done, rest) = score.split_at_mut(first * n_sym);
        let mut outs: Vec<(&mut [f64], Vec<u32>)> = rest[..count * n_sym]
            .chunks_mut(n_sym)
            .map(|row| (row, Vec::new()))
            .collect();
        let done = Done {
            layout,
            score: done,
            present_start: &present_start,
            present: &present,
        };
        let work = |i: usize| -> u64 {
            (i + 1..i + len)
                .map(|k| done.present(layout.cell(i, k)).len() as u64 * rules_per_left)
                .sum()
        };
        fill_cells(
            workers,
            watch,
            &mut outs,
            work,
            || Scratch {
                pre: vec![f64::NEG_INFINITY; n_sym],
                rmask: vec![0u64; g.mask_words],
            },
            |i, (row, out), scratch| fill_cell(g, words, &done, i, i + len, row, out, scratch),
        )?;
        for (_, out) in outs {
            present.extend_from_slice(&out);
            present_start.push(present.len() as u32);
        }
    }
    Ok(ViterbiChart {
        layout,
        score,
        present_start,
        present,
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
struct Scratch {
    pre: Vec<f64>,
    rmask: Vec<u64>,
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
    scratch: &mut Scratch,
) {
    let layout = done.layout;
    let n_sym = layout.n_sym;
    let Scratch { pre, rmask } = scratch;
    pre.fill(f64::NEG_INFINITY);
    if j - i == 1 {
        if let Some(entries) = g.lexicon.get(words[i]) {
            for e in entries {
                let slot = &mut pre[e.sym as usize];
                if e.lp > *slot {
                    *slot = e.lp;
                }
            }
        }
    } else {
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
                let lb = left[b as usize];
                let base = b as usize * n_sym;
                match g.visit(b, rp.len()) {
                    Visit::Scan => {
                        kernels::max_scan(&g.bin[g.binary_rule_range(b)], lb, right, pre)
                    }
                    Visit::Pairs(table) => {
                        kernels::max_pairs(&g.bin, table, base, rp, lb, right, pre)
                    }
                    Visit::Mask(table, bmask) => {
                        if !rmask_ready {
                            kernels::fill_mask(rmask, rp);
                            rmask_ready = true;
                        }
                        kernels::max_mask(&g.bin, table, base, bmask, rmask, lb, right, pre)
                    }
                }
            }
        }
    }
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
    for (s, &v) in row.iter().enumerate() {
        if v > f64::NEG_INFINITY {
            out.push(s as u32);
        }
    }
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
