//! The k best derivations, in order of decreasing probability.
//!
//! Method: bottom-up k-best lists per chart item, in the manner of Huang &
//! Chiang (2005), "Better k-best parsing", Algorithm 2 (recalled from
//! memory): for an item, every incoming hyperedge (a binary rule at a split
//! point) offers the grid of combinations of its children's k-best lists;
//! a heap holding the best unexplored combination of each hyperedge yields
//! the item's k best in order, exploring from `(a, b)` only `(a, b + 1)` and,
//! when `b = 0`, `(a + 1, 0)` — so each grid point is reached exactly once.
//!
//! Unary rules inside a cell are handled by a Dijkstra-like pass over the
//! cell (a generalisation of Knuth's 1977 algorithm to k-best lists): the
//! cell's derivations are popped from one heap in decreasing probability;
//! each accepted derivation of `B` offers `p(A → B)` times itself to every
//! `A → B`. Since every rule probability is at most 1, pops come in
//! non-increasing order, so each list is exact, and unary cycles (probability
//! below 1) are followed only as long as they still make the top k.

use crate::chart::{Layout, Stopped, Watch};
use crate::compile::CompiledGrammar;
use crate::viterbi::{Deriv, ViterbiChart};
use std::cmp::Ordering;
use std::collections::BinaryHeap;

#[derive(Clone, Copy, Debug)]
enum PreStep {
    Lex {
        entry: u32,
    },
    Bin {
        rule: u32,
        split: u32,
        li: u32,
        ri: u32,
    },
}

#[derive(Clone, Copy, Debug)]
enum PostStep {
    Pre { rank: u32 },
    Unary { rule: u32, child_rank: u32 },
}

struct Ranked<T> {
    score: f64,
    item: T,
}

impl<T> PartialEq for Ranked<T> {
    fn eq(&self, other: &Self) -> bool {
        self.score.total_cmp(&other.score) == Ordering::Equal
    }
}
impl<T> Eq for Ranked<T> {}
impl<T> PartialOrd for Ranked<T> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl<T> Ord for Ranked<T> {
    fn cmp(&self, other: &Self) -> Ordering {
        self.score.total_cmp(&other.score)
    }
}

/// Returns up to `k` best derivations of the start symbol over the whole
/// sentence with their log-probabilities, best first. `watch` is asked once
/// per cell.
#[allow(clippy::needless_range_loop)] // cells are addressed by (i, j)
pub(crate) fn kbest(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    k: usize,
    watch: Watch,
) -> Result<Vec<(Deriv, f64)>, Stopped> {
    let layout = vit.layout;
    let n_sym = layout.n_sym;
    let mut pre: Vec<Vec<(f64, PreStep)>> = vec![Vec::new(); layout.cells() * n_sym];
    let mut post: Vec<Vec<(f64, PostStep)>> = vec![Vec::new(); layout.cells() * n_sym];
    for len in 1..=layout.n {
        for i in 0..=layout.n - len {
            let j = i + len;
            let c = layout.cell(i, j);
            watch.check()?;
            for &a in vit.present(c) {
                let list = if len == 1 {
                    let mut list: Vec<(f64, PreStep)> = g
                        .lexicon
                        .get(words[i])
                        .into_iter()
                        .flatten()
                        .enumerate()
                        .filter(|(_, e)| e.sym == a)
                        .map(|(n, e)| (e.lp, PreStep::Lex { entry: n as u32 }))
                        .collect();
                    list.sort_by(|x, y| y.0.total_cmp(&x.0));
                    list.truncate(k);
                    list
                } else {
                    pre_list(g, &layout, &post, &vit.score, i, j, a, k)
                };
                pre[c * n_sym + a as usize] = list;
            }
            post_lists(g, vit, &pre, &mut post, c, n_sym, k);
        }
    }
    let root = layout.cell(0, layout.n) * n_sym + g.start as usize;
    Ok((0..post[root].len())
        .filter_map(|rank| {
            let d = build(g, &layout, &pre, &post, 0, layout.n, g.start, rank)?;
            Some((d, post[root][rank].0))
        })
        .collect())
}

type PostLists = Vec<Vec<(f64, PostStep)>>;

/// `kept` is the Viterbi chart's scores: under a beam, a symbol it pruned
/// (`-inf`) may appear inside a unary chain of its cell but is never used
/// as a child (see `crate::beam`).
#[allow(clippy::too_many_arguments)]
fn pre_list(
    g: &CompiledGrammar,
    layout: &Layout,
    post: &PostLists,
    kept: &[f64],
    i: usize,
    j: usize,
    a: u32,
    k: usize,
) -> Vec<(f64, PreStep)> {
    let n_sym = layout.n_sym;
    let mut edges: Vec<(u32, u32, usize, usize)> = Vec::new();
    let mut heap = BinaryHeap::new();
    for &r in &g.by_parent[a as usize] {
        let rule = g.bin[r as usize];
        let left = g.bin_left[r as usize];
        for split in i + 1..j {
            let l = layout.cell(i, split) * n_sym + left as usize;
            let rr = layout.cell(split, j) * n_sym + rule.right as usize;
            if post[l].is_empty()
                || post[rr].is_empty()
                || kept[l] == f64::NEG_INFINITY
                || kept[rr] == f64::NEG_INFINITY
            {
                continue;
            }
            let e = edges.len() as u32;
            edges.push((r, split as u32, l, rr));
            heap.push(Ranked {
                score: rule.lp + post[l][0].0 + post[rr][0].0,
                item: (e, 0u32, 0u32),
            });
        }
    }
    let mut out = Vec::with_capacity(k.min(16));
    while out.len() < k {
        let Some(Ranked {
            score,
            item: (e, li, ri),
        }) = heap.pop()
        else {
            break;
        };
        let (rule, split, l, rr) = edges[e as usize];
        out.push((
            score,
            PreStep::Bin {
                rule,
                split,
                li,
                ri,
            },
        ));
        let lp = g.bin[rule as usize].lp;
        if (ri as usize + 1) < post[rr].len() {
            heap.push(Ranked {
                score: lp + post[l][li as usize].0 + post[rr][ri as usize + 1].0,
                item: (e, li, ri + 1),
            });
        }
        if ri == 0 && (li as usize + 1) < post[l].len() {
            heap.push(Ranked {
                score: lp + post[l][li as usize + 1].0 + post[rr][0].0,
                item: (e, li + 1, 0),
            });
        }
    }
    out
}

fn post_lists(
    g: &CompiledGrammar,
    vit: &ViterbiChart,
    pre: &[Vec<(f64, PreStep)>],
    post: &mut PostLists,
    c: usize,
    n_sym: usize,
    k: usize,
) {
    let mut heap = BinaryHeap::new();
    for &a in vit.present(c) {
        let idx = c * n_sym + a as usize;
        if g.in_unary[a as usize] {
            for (rank, &(score, _)) in pre[idx].iter().enumerate() {
                heap.push(Ranked {
                    score,
                    item: (a, PostStep::Pre { rank: rank as u32 }),
                });
            }
        } else {
            post[idx] = pre[idx]
                .iter()
                .enumerate()
                .map(|(rank, &(score, _))| (score, PostStep::Pre { rank: rank as u32 }))
                .collect();
        }
    }
    while let Some(Ranked {
        score,
        item: (a, step),
    }) = heap.pop()
    {
        let idx = c * n_sym + a as usize;
        if post[idx].len() >= k {
            continue;
        }
        post[idx].push((score, step));
        let rank = post[idx].len() as u32 - 1;
        for &u in &g.unary_by_child[a as usize] {
            let rule = g.unary[u as usize];
            let parent = c * n_sym + rule.parent as usize;
            if post[parent].len() < k {
                heap.push(Ranked {
                    score: score + rule.lp,
                    item: (
                        rule.parent,
                        PostStep::Unary {
                            rule: u,
                            child_rank: rank,
                        },
                    ),
                });
            }
        }
    }
}

/// The derivation of rank `rank` of `a` over `i..j`. Iterative: a
/// derivation is as deep as the sentence is long.
#[allow(clippy::too_many_arguments)]
fn build(
    g: &CompiledGrammar,
    layout: &Layout,
    pre: &[Vec<(f64, PreStep)>],
    post: &PostLists,
    i: usize,
    j: usize,
    a: u32,
    rank: usize,
) -> Option<Deriv> {
    enum Step {
        Enter(usize, usize, u32, usize),
        /// The child is built: wrap it in unary rule `rule`.
        Unary(u32),
        /// Both children are built: join them by binary rule `rule`.
        Bin(u32),
    }
    let mut built: Vec<Deriv> = Vec::new();
    let mut steps = vec![Step::Enter(i, j, a, rank)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(i, j, a, rank) => {
                let idx = layout.cell(i, j) * layout.n_sym + a as usize;
                match post[idx].get(rank)?.1 {
                    PostStep::Unary { rule, child_rank } => {
                        let child = g.unary[rule as usize].child;
                        steps.push(Step::Unary(rule));
                        steps.push(Step::Enter(i, j, child, child_rank as usize));
                    }
                    PostStep::Pre { rank } => match pre[idx].get(rank as usize)?.1 {
                        PreStep::Lex { entry } => built.push(Deriv::Lex {
                            sym: a,
                            pos: i,
                            entry,
                        }),
                        PreStep::Bin {
                            rule,
                            split,
                            li,
                            ri,
                        } => {
                            let split = split as usize;
                            let left = g.bin_left[rule as usize];
                            let right = g.bin[rule as usize].right;
                            steps.push(Step::Bin(rule));
                            steps.push(Step::Enter(split, j, right, ri as usize));
                            steps.push(Step::Enter(i, split, left, li as usize));
                        }
                    },
                }
            }
            Step::Unary(rule) => {
                let child = built.pop()?;
                built.push(Deriv::Unary {
                    rule,
                    child: Box::new(child),
                });
            }
            Step::Bin(rule) => {
                let right = built.pop()?;
                let left = built.pop()?;
                built.push(Deriv::Bin {
                    rule,
                    left: Box::new(left),
                    right: Box::new(right),
                });
            }
        }
    }
    built.pop()
}
