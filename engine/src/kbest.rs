//! The k best derivations, in order of decreasing probability.
//!
//! Method: lazy k-best in the manner of Huang & Chiang (2005), "Better
//! k-best parsing", Algorithm 3 (recalled from memory). Nothing is computed
//! bottom-up: the Viterbi chart already gives every item's best score, and
//! the r-th best derivation of an item is worked out only when a derivation
//! above it asks for it. An item's derivations come from a heap of
//! candidates, one per incoming hyperedge (a binary rule at a split point)
//! at first, each scored with its children's Viterbi scores; taking the
//! r-th best pushes the successors of the (r−1)-th — from child ranks
//! `(a, b)` only `(a, b + 1)` and, when `b = 0`, `(a + 1, 0)`, so each grid
//! point is reached once — which may in turn ask the children for their
//! next derivations. So the work and the memory grow with k and the number
//! of items the k trees reach, not with the chart.
//!
//! Unary rules inside a cell form a graph that may have cycles (each of
//! probability below 1: the compiler refuses the others), which the
//! hypergraph method assumes away. The derivations of a cell's symbols that
//! take part in unary rules are therefore produced together, lazily, by a
//! Dijkstra-like generator per cell (a generalisation of Knuth's 1977
//! algorithm to k-best lists): one heap holds, for each such symbol, its
//! next derivation without a unary rule on top, plus every derivation
//! `A → B` over a derivation of `B` already produced; the pops come in
//! non-increasing probability (every rule probability is at most 1), so each
//! symbol's list is exact, and a cycle is followed only as long as it still
//! makes some list's top k. The generator runs only as far as the ranks
//! asked for need.
//!
//! Ties (derivations of equal score) come out in the order their
//! candidates were made: the hyperedges of an item in rule order, then
//! split order. The walk is iterative, like every walk over derivations
//! here: a derivation is as deep as the sentence is long.

use crate::chart::{Layout, Stopped, Watch};
use crate::compile::CompiledGrammar;
use crate::viterbi::{Deriv, ViterbiChart};
use std::cmp::Ordering;
use std::collections::{BinaryHeap, HashMap};
use std::hash::{BuildHasherDefault, Hasher};
use std::mem::size_of;

/// Why the k-best pass ended early.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Cut {
    /// The caller's stop condition held.
    Stopped,
    /// The k-best state grew past the budget after `found` trees were
    /// complete; it had reached `used` bytes.
    OverBudget { found: usize, used: u64 },
}

impl From<Stopped> for Cut {
    fn from(_: Stopped) -> Cut {
        Cut::Stopped
    }
}

/// The k best trees and the bytes of state that finding them took.
pub(crate) struct Kbest {
    pub trees: Vec<(Deriv, f64)>,
    pub state_bytes: u64,
}

/// Returns up to `k` best derivations of the start symbol over the whole
/// sentence with their log-probabilities, best first. Gives up when its
/// state would pass `budget` bytes, and asks `watch` once for each cell it
/// visits first and once every [`WATCH_EVERY`] steps.
pub(crate) fn kbest(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    k: usize,
    budget: u64,
    watch: Watch,
) -> Result<Kbest, Cut> {
    let layout = vit.layout;
    let mut lazy = Lazy {
        g,
        words,
        vit,
        layout,
        k,
        budget,
        watch,
        bytes: 0,
        steps: 0,
        found: 0,
        seq: 0,
        visited: vec![false; layout.cells()],
        pre_slot: Map::default(),
        pres: Vec::new(),
        post_slot: Map::default(),
        posts: Vec::new(),
        gen_slot: Map::default(),
        gens: Vec::new(),
    };
    let root = layout.cell(0, layout.n) * layout.n_sym + g.start as usize;
    let mut trees = Vec::new();
    if vit.score[root] == f64::NEG_INFINITY {
        return Ok(Kbest {
            trees,
            state_bytes: 0,
        });
    }
    for rank in 0..k {
        lazy.resolve(lazy.need_post(root, rank as u32))?;
        let Some(score) = lazy.post_entry(root, rank as u32).map(|(s, _)| s) else {
            break;
        };
        if let Some(tree) = lazy.build(0, layout.n, g.start, rank as u32)? {
            trees.push((tree, score));
        }
        lazy.found = rank + 1;
    }
    Ok(Kbest {
        trees,
        state_bytes: lazy.bytes,
    })
}

/// How often (in steps) a long run in few cells asks the stop condition.
const WATCH_EVERY: u64 = 1024;

/// Multiplicative hashing of item numbers (they are dense integers, so a
/// cryptographic hash buys nothing here).
#[derive(Default)]
struct ItemHasher(u64);

impl Hasher for ItemHasher {
    fn finish(&self) -> u64 {
        self.0
    }
    fn write(&mut self, bytes: &[u8]) {
        for &b in bytes {
            self.0 = (self.0.rotate_left(5) ^ u64::from(b)).wrapping_mul(0x9E37_79B9_7F4A_7C15);
        }
    }
    fn write_usize(&mut self, n: usize) {
        // Fibonacci hashing (Knuth, TAOCP vol. 3, 6.4).
        self.0 = (n as u64)
            .wrapping_mul(0x9E37_79B9_7F4A_7C15)
            .rotate_left(26);
    }
}

type Map = HashMap<usize, u32, BuildHasherDefault<ItemHasher>>;

/// Bytes one map entry costs, roughly (key, value, control byte, slack).
const MAP_ENTRY_BYTES: u64 = 24;

/// One step of an item's derivation before the cell's unary rules.
#[derive(Clone, Copy, Debug)]
enum PreStep {
    /// Lexical entry number `entry` of the word.
    Lex { entry: u32 },
    /// Hyperedge `edge` of the item, with its children's ranks.
    Bin { edge: u32, li: u32, ri: u32 },
}

/// One step of the derivation of a symbol that takes part in unary rules.
#[derive(Clone, Copy, Debug)]
enum PostStep {
    /// The symbol's own derivation of this rank (no unary rule on top).
    Pre { rank: u32 },
    /// Unary rule `rule` over the child's derivation of rank `child_rank`.
    Unary { rule: u32, child_rank: u32 },
}

/// A binary rule at a split point, with the item numbers of its children.
#[derive(Clone, Copy, Debug)]
struct Edge {
    rule: u32,
    split: u32,
    left: usize,
    right: usize,
}

/// A heap entry: the best score first; among equal scores the one made
/// first (`seq`), so ties are ordered by when their candidates were made.
struct Cand<T> {
    score: f64,
    seq: u64,
    item: T,
}

impl<T> PartialEq for Cand<T> {
    fn eq(&self, other: &Self) -> bool {
        self.cmp(other) == Ordering::Equal
    }
}
impl<T> Eq for Cand<T> {}
impl<T> PartialOrd for Cand<T> {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}
impl<T> Ord for Cand<T> {
    fn cmp(&self, other: &Self) -> Ordering {
        self.score
            .total_cmp(&other.score)
            .then_with(|| other.seq.cmp(&self.seq))
    }
}

/// An item's derivations without a unary rule on top: lexical entries, or
/// binary rules over the children's derivations.
struct PreItem {
    list: Vec<(f64, PreStep)>,
    heap: BinaryHeap<Cand<(u32, u32, u32)>>,
    edges: Vec<Edge>,
    /// Whether the successors of the last entry of `list` are in `heap`.
    expanded: bool,
}

impl PreItem {
    fn exhausted(&self) -> bool {
        self.expanded && self.heap.is_empty()
    }
}

/// The generator of a cell's derivations of the symbols in unary rules.
struct UnaryCell {
    heap: BinaryHeap<Cand<(u32, PostStep)>>,
    /// A symbol whose own derivation of this rank is to be offered before
    /// the next pop.
    pending: Option<(u32, u32)>,
    started: bool,
}

impl UnaryCell {
    fn exhausted(&self) -> bool {
        self.started && self.pending.is_none() && self.heap.is_empty()
    }
}

/// A rank of an item that some step waits for.
#[derive(Clone, Copy, Debug)]
enum Need {
    /// Derivation `rank` of item `key` without unary rules on top.
    Pre(usize, u32),
    /// Derivation `rank` of item `key` of a symbol in unary rules.
    Unary(usize, u32),
}

/// What one step on a [`Need`] did.
enum Progress {
    Done,
    Advanced,
    Blocked(Need),
}

struct Lazy<'a> {
    g: &'a CompiledGrammar,
    words: &'a [&'a str],
    vit: &'a ViterbiChart,
    layout: Layout,
    k: usize,
    budget: u64,
    watch: Watch<'a>,
    bytes: u64,
    steps: u64,
    /// Trees complete so far (for the budget's report).
    found: usize,
    seq: u64,
    visited: Vec<bool>,
    pre_slot: Map,
    pres: Vec<PreItem>,
    post_slot: Map,
    posts: Vec<Vec<(f64, PostStep)>>,
    gen_slot: Map,
    gens: Vec<UnaryCell>,
}

impl Lazy<'_> {
    fn sym(&self, key: usize) -> u32 {
        (key % self.layout.n_sym) as u32
    }

    /// The need for derivation `rank` of item `key` after its cell's unary
    /// rules.
    fn need_post(&self, key: usize, rank: u32) -> Need {
        if self.g.in_unary[self.sym(key) as usize] {
            Need::Unary(key, rank)
        } else {
            Need::Pre(key, rank)
        }
    }

    fn next_seq(&mut self) -> u64 {
        self.seq += 1;
        self.seq
    }

    fn grow(&mut self, bytes: usize) -> Result<(), Cut> {
        self.bytes += bytes as u64;
        if self.bytes > self.budget {
            return Err(Cut::OverBudget {
                found: self.found,
                used: self.bytes,
            });
        }
        Ok(())
    }

    /// Works until `need` is met (or cannot be: fewer derivations exist).
    fn resolve(&mut self, need: Need) -> Result<(), Cut> {
        let mut stack = vec![need];
        while let Some(&top) = stack.last() {
            self.steps += 1;
            if self.steps.is_multiple_of(WATCH_EVERY) {
                self.watch.check()?;
            }
            match self.step(top)? {
                Progress::Done => {
                    stack.pop();
                }
                Progress::Advanced => {}
                Progress::Blocked(sub) => stack.push(sub),
            }
        }
        Ok(())
    }

    fn step(&mut self, need: Need) -> Result<Progress, Cut> {
        match need {
            Need::Pre(key, rank) => self.step_pre(key, rank),
            Need::Unary(key, rank) => self.step_unary(key, rank),
        }
    }

    /// The derivation `rank` of item `key` after the unary rules, if it is
    /// known to exist: `Some(true)` known, `Some(false)` known not to
    /// exist, `None` not worked out yet.
    fn post_known(&self, key: usize, rank: u32) -> Option<bool> {
        if rank == 0 {
            // Present in the Viterbi chart: it has a best derivation.
            return Some(self.vit.score[key] > f64::NEG_INFINITY);
        }
        if self.g.in_unary[self.sym(key) as usize] {
            let cell = key / self.layout.n_sym;
            let slot = *self.post_slot.get(&key)?;
            if self.posts[slot as usize].len() > rank as usize {
                return Some(true);
            }
            let gen = *self.gen_slot.get(&cell)?;
            self.gens[gen as usize].exhausted().then_some(false)
        } else {
            let item = &self.pres[*self.pre_slot.get(&key)? as usize];
            if item.list.len() > rank as usize {
                Some(true)
            } else {
                item.exhausted().then_some(false)
            }
        }
    }

    /// The score of a derivation that [`Lazy::post_known`] says exists.
    /// Rank 0 is the Viterbi score, materialised or not, so every
    /// candidate is scored the same whenever it is made.
    fn post_score(&self, key: usize, rank: u32) -> f64 {
        if rank == 0 {
            return self.vit.score[key];
        }
        self.post_entry(key, rank)
            .map_or(f64::NEG_INFINITY, |(s, _)| s)
    }

    /// A materialised derivation after the unary rules: its score and, for
    /// symbols in unary rules, its step.
    fn post_entry(&self, key: usize, rank: u32) -> Option<(f64, Option<PostStep>)> {
        if self.g.in_unary[self.sym(key) as usize] {
            let slot = *self.post_slot.get(&key)?;
            let &(s, step) = self.posts[slot as usize].get(rank as usize)?;
            Some((s, Some(step)))
        } else {
            let slot = *self.pre_slot.get(&key)?;
            let &(s, _) = self.pres[slot as usize].list.get(rank as usize)?;
            Some((s, None))
        }
    }

    /// Asks the stop condition when `cell` is visited for the first time.
    fn visit(&mut self, cell: usize) -> Result<(), Cut> {
        if !self.visited[cell] {
            self.visited[cell] = true;
            self.watch.check()?;
        }
        Ok(())
    }

    /// The cell of number `cell` as `(i, j)`.
    fn span(&self, cell: usize) -> (usize, usize) {
        let n = self.layout.n;
        let (mut len, mut before) = (1, 0);
        while before + (n + 1 - len) <= cell {
            before += n + 1 - len;
            len += 1;
        }
        let i = cell - before;
        (i, i + len)
    }

    /// The pre-item's slot, made (with its hyperedges and first candidates)
    /// on first use.
    fn pre_item(&mut self, key: usize) -> Result<usize, Cut> {
        if let Some(&slot) = self.pre_slot.get(&key) {
            return Ok(slot as usize);
        }
        let n_sym = self.layout.n_sym;
        let cell = key / n_sym;
        let a = self.sym(key);
        self.visit(cell)?;
        let (i, j) = self.span(cell);
        let mut item = PreItem {
            list: Vec::new(),
            heap: BinaryHeap::new(),
            edges: Vec::new(),
            expanded: false,
        };
        if j - i == 1 {
            let mut list: Vec<(f64, PreStep)> = self
                .g
                .lexicon
                .get(self.words[i])
                .into_iter()
                .flatten()
                .enumerate()
                .filter(|(_, e)| e.sym == a)
                .map(|(n, e)| (e.lp, PreStep::Lex { entry: n as u32 }))
                .collect();
            // Stable: equal entries stay in the lexicon's order.
            list.sort_by(|x, y| y.0.total_cmp(&x.0));
            item.list = list;
            item.expanded = true;
        } else {
            let (g, vit) = (self.g, self.vit);
            let mut cands = Vec::new();
            // Split by split, so that the two cells' rows stay in cache
            // across the item's rules; but ties are broken in the order of
            // rules, then splits, the order in which the best-tree pass
            // meets them (so the first of the k best is the best tree).
            let splits = (j - i - 1) as u64;
            let base = self.seq;
            self.seq += g.by_parent[a as usize].len() as u64 * splits;
            for split in i + 1..j {
                let lrow = self.layout.cell(i, split) * n_sym;
                let rrow = self.layout.cell(split, j) * n_sym;
                if vit.present(lrow / n_sym).is_empty() || vit.present(rrow / n_sym).is_empty() {
                    continue;
                }
                for (nth, &r) in g.by_parent[a as usize].iter().enumerate() {
                    let rule = g.bin[r as usize];
                    let l = lrow + g.bin_left[r as usize] as usize;
                    let rr = rrow + rule.right as usize;
                    let (sl, sr) = (vit.score[l], vit.score[rr]);
                    if sl == f64::NEG_INFINITY || sr == f64::NEG_INFINITY {
                        continue;
                    }
                    let e = item.edges.len() as u32;
                    item.edges.push(Edge {
                        rule: r,
                        split: split as u32,
                        left: l,
                        right: rr,
                    });
                    cands.push(Cand {
                        score: rule.lp + sl + sr,
                        seq: base + 1 + nth as u64 * splits + (split - i - 1) as u64,
                        item: (e, 0, 0),
                    });
                }
            }
            // Only the k best first candidates can lead to one of the item's
            // k best derivations (every other edge has k better ones ahead
            // of its best), and no item is asked for more than k (Huang &
            // Chiang 2005, §4: a k-selection before the heap).
            if self.k > 0 && cands.len() > self.k {
                cands.select_nth_unstable_by(self.k - 1, |x, y| y.cmp(x));
                cands.truncate(self.k);
                let edges = std::mem::take(&mut item.edges);
                for (n, c) in cands.iter_mut().enumerate() {
                    item.edges.push(edges[c.item.0 as usize]);
                    c.item.0 = n as u32;
                }
            }
            item.heap = BinaryHeap::from(cands);
        }
        let bytes = size_of::<PreItem>()
            + item.list.len() * size_of::<(f64, PreStep)>()
            + item.edges.len() * size_of::<Edge>()
            + item.heap.len() * size_of::<Cand<(u32, u32, u32)>>();
        let slot = self.pres.len();
        self.pres.push(item);
        self.pre_slot.insert(key, slot as u32);
        self.grow(bytes + MAP_ENTRY_BYTES as usize)?;
        Ok(slot)
    }

    fn step_pre(&mut self, key: usize, rank: u32) -> Result<Progress, Cut> {
        let slot = self.pre_item(key)?;
        let item = &self.pres[slot];
        if item.list.len() > rank as usize || item.exhausted() {
            return Ok(Progress::Done);
        }
        if item.expanded || item.list.is_empty() {
            // Take the best candidate.
            let item = &mut self.pres[slot];
            match item.heap.pop() {
                Some(Cand {
                    score,
                    item: (edge, li, ri),
                    ..
                }) => {
                    item.list.push((score, PreStep::Bin { edge, li, ri }));
                    item.expanded = false;
                    self.grow(size_of::<(f64, PreStep)>())?;
                }
                None => item.expanded = true,
            }
            return Ok(Progress::Advanced);
        }
        // Offer the successors of the last derivation taken.
        let Some(&(_, PreStep::Bin { edge, li, ri })) = item.list.last() else {
            self.pres[slot].expanded = true;
            return Ok(Progress::Advanced);
        };
        let e = item.edges[edge as usize];
        let right = self.post_known(e.right, ri + 1);
        let left = if ri == 0 {
            self.post_known(e.left, li + 1)
        } else {
            Some(false)
        };
        let Some(right) = right else {
            return Ok(Progress::Blocked(self.need_post(e.right, ri + 1)));
        };
        let Some(left) = left else {
            return Ok(Progress::Blocked(self.need_post(e.left, li + 1)));
        };
        let lp = self.g.bin[e.rule as usize].lp;
        let mut offers = Vec::with_capacity(2);
        if right {
            let score = lp + self.post_score(e.left, li) + self.post_score(e.right, ri + 1);
            offers.push((score, (edge, li, ri + 1)));
        }
        if left {
            let score = lp + self.post_score(e.left, li + 1) + self.post_score(e.right, 0);
            offers.push((score, (edge, li + 1, 0)));
        }
        let added = offers.len();
        for (score, cand) in offers {
            let seq = self.next_seq();
            self.pres[slot].heap.push(Cand {
                score,
                seq,
                item: cand,
            });
        }
        self.pres[slot].expanded = true;
        self.grow(added * size_of::<Cand<(u32, u32, u32)>>())?;
        Ok(Progress::Advanced)
    }

    /// The list of derivations of `key` (a symbol in unary rules).
    fn post_list(&mut self, key: usize) -> Result<usize, Cut> {
        if let Some(&slot) = self.post_slot.get(&key) {
            return Ok(slot as usize);
        }
        let slot = self.posts.len();
        self.posts.push(Vec::new());
        self.post_slot.insert(key, slot as u32);
        self.grow(size_of::<Vec<(f64, PostStep)>>() + MAP_ENTRY_BYTES as usize)?;
        Ok(slot)
    }

    fn step_unary(&mut self, key: usize, rank: u32) -> Result<Progress, Cut> {
        let n_sym = self.layout.n_sym;
        let cell = key / n_sym;
        let list = self.post_list(key)?;
        let gen = match self.gen_slot.get(&cell) {
            Some(&slot) => slot as usize,
            None => {
                let slot = self.gens.len();
                self.gens.push(UnaryCell {
                    heap: BinaryHeap::new(),
                    pending: None,
                    started: false,
                });
                self.gen_slot.insert(cell, slot as u32);
                self.grow(size_of::<UnaryCell>() + MAP_ENTRY_BYTES as usize)?;
                slot
            }
        };
        if self.posts[list].len() > rank as usize || self.gens[gen].exhausted() {
            return Ok(Progress::Done);
        }
        if !self.gens[gen].started {
            // Each symbol's best derivation without a unary rule on top
            // (rank 0 never waits on anything).
            let (g, vit) = (self.g, self.vit);
            for &x in vit.present(cell) {
                if !g.in_unary[x as usize] {
                    continue;
                }
                let xkey = cell * n_sym + x as usize;
                self.post_list(xkey)?;
                while let Progress::Advanced = self.step_pre(xkey, 0)? {}
                let slot = self.pre_item(xkey)?;
                if let Some(&(score, _)) = self.pres[slot].list.first() {
                    let seq = self.next_seq();
                    self.gens[gen].heap.push(Cand {
                        score,
                        seq,
                        item: (x, PostStep::Pre { rank: 0 }),
                    });
                    self.grow(size_of::<Cand<(u32, PostStep)>>())?;
                }
            }
            self.gens[gen].started = true;
            return Ok(Progress::Advanced);
        }
        if let Some((x, q)) = self.gens[gen].pending {
            let xkey = cell * n_sym + x as usize;
            let slot = self.pre_item(xkey)?;
            let item = &self.pres[slot];
            if let Some(&(score, _)) = item.list.get(q as usize) {
                let seq = self.next_seq();
                let g = &mut self.gens[gen];
                g.heap.push(Cand {
                    score,
                    seq,
                    item: (x, PostStep::Pre { rank: q }),
                });
                g.pending = None;
                self.grow(size_of::<Cand<(u32, PostStep)>>())?;
                return Ok(Progress::Advanced);
            }
            if item.exhausted() {
                self.gens[gen].pending = None;
                return Ok(Progress::Advanced);
            }
            return Ok(Progress::Blocked(Need::Pre(xkey, q)));
        }
        let Some(Cand {
            score,
            item: (a, step),
            ..
        }) = self.gens[gen].heap.pop()
        else {
            return Ok(Progress::Done);
        };
        let akey = cell * n_sym + a as usize;
        let alist = self.post_list(akey)?;
        if self.posts[alist].len() >= self.k {
            // Beyond the k best of `a`: never asked for, and nothing built
            // on it can be in another list's k best either.
            return Ok(Progress::Advanced);
        }
        self.posts[alist].push((score, step));
        self.grow(size_of::<(f64, PostStep)>())?;
        let child_rank = self.posts[alist].len() as u32 - 1;
        if let PostStep::Pre { rank } = step {
            self.gens[gen].pending = Some((a, rank + 1));
        }
        let g = self.g;
        for &u in &g.unary_by_child[a as usize] {
            let rule = g.unary[u as usize];
            let pkey = cell * n_sym + rule.parent as usize;
            let plist = self.post_list(pkey)?;
            if self.posts[plist].len() < self.k {
                let seq = self.next_seq();
                self.gens[gen].heap.push(Cand {
                    score: score + rule.lp,
                    seq,
                    item: (
                        rule.parent,
                        PostStep::Unary {
                            rule: u,
                            child_rank,
                        },
                    ),
                });
                self.grow(size_of::<Cand<(u32, PostStep)>>())?;
            }
        }
        Ok(Progress::Advanced)
    }

    /// The derivation of rank `rank` of `a` over `i..j` (after the unary
    /// rules), working out the ranks of its parts it needs. Iterative.
    /// `None` only if the lists were inconsistent (a rank referred to that
    /// does not exist), which the method rules out.
    fn build(&mut self, i: usize, j: usize, a: u32, rank: u32) -> Result<Option<Deriv>, Cut> {
        enum Step {
            Enter(usize, usize, u32, u32),
            /// The child is built: wrap it in unary rule `rule`.
            Unary(u32),
            /// Both children are built: join them by binary rule `rule`.
            Bin(u32),
        }
        let n_sym = self.layout.n_sym;
        let mut built: Vec<Deriv> = Vec::new();
        let mut steps = vec![Step::Enter(i, j, a, rank)];
        while let Some(step) = steps.pop() {
            match step {
                Step::Enter(i, j, a, rank) => {
                    let key = self.layout.cell(i, j) * n_sym + a as usize;
                    self.resolve(self.need_post(key, rank))?;
                    let pre_rank = match self.post_entry(key, rank) {
                        Some((_, Some(PostStep::Unary { rule, child_rank }))) => {
                            let child = self.g.unary[rule as usize].child;
                            steps.push(Step::Unary(rule));
                            steps.push(Step::Enter(i, j, child, child_rank));
                            continue;
                        }
                        Some((_, Some(PostStep::Pre { rank }))) => {
                            self.resolve(Need::Pre(key, rank))?;
                            rank
                        }
                        Some((_, None)) => rank,
                        None => return Ok(None),
                    };
                    let slot = self.pre_item(key)?;
                    let item = &self.pres[slot];
                    match item.list.get(pre_rank as usize).map(|&(_, s)| s) {
                        Some(PreStep::Lex { entry }) => built.push(Deriv::Lex {
                            sym: a,
                            pos: i,
                            entry,
                        }),
                        Some(PreStep::Bin { edge, li, ri }) => {
                            let e = item.edges[edge as usize];
                            let split = e.split as usize;
                            let rule = &self.g.bin[e.rule as usize];
                            let left = self.g.bin_left[e.rule as usize];
                            steps.push(Step::Bin(e.rule));
                            steps.push(Step::Enter(split, j, rule.right, ri));
                            steps.push(Step::Enter(i, split, left, li));
                        }
                        None => return Ok(None),
                    }
                }
                Step::Unary(rule) => {
                    let Some(child) = built.pop() else {
                        return Ok(None);
                    };
                    built.push(Deriv::Unary {
                        rule,
                        child: Box::new(child),
                    });
                }
                Step::Bin(rule) => {
                    let (Some(right), Some(left)) = (built.pop(), built.pop()) else {
                        return Ok(None);
                    };
                    built.push(Deriv::Bin {
                        rule,
                        left: Box::new(left),
                        right: Box::new(right),
                    });
                }
            }
        }
        Ok(built.pop())
    }
}
