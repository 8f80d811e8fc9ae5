//! Compilation of a checked [`Grammar`] into a parser-ready form.
//!
//! * Rules of any arity are **binarized** from the right: `A → X1 X2 … Xn`
//!   becomes `A → X1 ⟨X2…Xn⟩`, `⟨X2…Xn⟩ → X2 ⟨X3…Xn⟩`, …, where each
//!   intermediate symbol `⟨…⟩` stands for exactly one remaining yield and its
//!   single rule has probability 1. Rules that end in the same suffix share
//!   the intermediates, so the compiled grammar stays small. Every tree of
//!   the user's grammar corresponds to exactly one compiled derivation with
//!   the same probability, and back.
//! * A terminal inside a longer rule gets a hidden **pre-terminal** `⟨"w"⟩ → "w"`
//!   with probability 1.
//! * **Unary rules** `A → B` are not used in the chart loop directly; instead
//!   each cell applies their closure once:
//!   - for Viterbi, the best chain `A ⇒* B` (a simple path: cycles only lower
//!     the probability);
//!   - for inside probabilities, the summed chains `C = Σ Uᵏ = (I − U)⁻¹`,
//!     solved exactly per strongly connected component of the unary-rule graph;
//!   - for parse counts, the number of chains, infinite through a cycle.
//!
//!   A set of unary cycles whose summed probability does not shrink (spectral
//!   radius of the component's matrix ≥ 1, e.g. `A → B 1`, `B → A 1`) is
//!   refused with [`CompileError::UnaryCycle`]: a parse could repeat it forever.

use crate::count::Count;
use grammar_lang::model::{Grammar, NtId, RuleId, Sym, TermId};
use grammar_lang::scc::strongly_connected;
use std::collections::HashMap;
use std::fmt;

/// What a compiled symbol is.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum SymKind {
    /// A non-terminal of the user's grammar.
    User(NtId),
    /// A hidden pre-terminal for a terminal that sits inside a longer rule.
    Preterminal(TermId),
    /// A binarization intermediate: the remaining yield of one or more rules.
    Intermediate,
}

/// Where a compiled rule comes from.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Origin {
    /// The first piece of the user's rule (it carries the rule's probability).
    User(RuleId),
    /// An intermediate or pre-terminal rule (probability 1).
    Internal,
}

/// A binary rule `parent → left right`, stored in groups by left child.
#[derive(Clone, Copy, Debug)]
pub(crate) struct BinRule {
    pub lp: f64,
    pub parent: u32,
    pub right: u32,
}

/// The same rule with its linear probability, for the inside pass.
#[derive(Clone, Copy, Debug)]
pub(crate) struct LinRule {
    pub p: f64,
    pub parent: u32,
    pub right: u32,
}

/// Largest symbol count for which the dense `(left, right) → rules` table
/// is built (`n_sym²` entries of 4 bytes: at most 16 MiB).
const MAX_PAIR_TABLE_SYMBOLS: usize = 2048;

/// The lexical entries of each word.
pub(crate) type Lexicon = HashMap<String, Vec<LexEntry>, rustc_hash::FxBuildHasher>;

/// A lexical entry: `sym → word`.
#[derive(Clone, Copy, Debug)]
pub(crate) struct LexEntry {
    pub sym: u32,
    pub lp: f64,
    pub p: f64,
    pub origin: Origin,
}

/// A unary rule `parent → child` between user non-terminals.
#[derive(Clone, Copy, Debug)]
pub(crate) struct UnaryRule {
    pub parent: u32,
    pub child: u32,
    pub lp: f64,
    pub rule: RuleId,
}

/// A user rule as the Earley recognizer of explanations sees it.
#[derive(Clone, Debug)]
pub(crate) enum Item {
    N(u32),
    T(String),
}

/// Why a grammar cannot be used for parsing.
#[derive(Clone, Debug, PartialEq)]
pub enum CompileError {
    /// The grammar declares no start symbol.
    NoStart,
    /// Unary rules form cycles whose summed probability does not shrink.
    UnaryCycle {
        /// The non-terminals of the strongly connected component.
        symbols: Vec<String>,
        /// The unary rules among them, written `A → B (p)`.
        rules: Vec<String>,
    },
}

impl fmt::Display for CompileError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            CompileError::NoStart => {
                f.write_str("the grammar has no start symbol (declare one with `start Name`)")
            }
            CompileError::UnaryCycle { symbols, rules } => write!(
                f,
                "the unary rules among {} form cycles whose probability does not shrink \
                 ({}): a parse could repeat them forever; lower the weight of at least \
                 one of these rules",
                symbols.join(", "),
                rules.join(", ")
            ),
        }
    }
}

impl std::error::Error for CompileError {}

/// A grammar ready for chart parsing. Built by [`CompiledGrammar::new`].
#[derive(Clone, Debug)]
pub struct CompiledGrammar {
    pub(crate) kinds: Vec<SymKind>,
    /// Names of the user non-terminals, indexed by `NtId`.
    pub(crate) names: Vec<String>,
    pub(crate) start: u32,
    /// Binary rules grouped by left child: rules of left child `b` are
    /// `bin[left_offsets[b]..left_offsets[b + 1]]`.
    pub(crate) left_offsets: Vec<u32>,
    pub(crate) bin: Vec<BinRule>,
    pub(crate) bin_lin: Vec<LinRule>,
    /// When the grammar is small enough: rules with left child `b` and right
    /// child `c` are `bin[pair_offsets[b·n + c]..pair_offsets[b·n + c + 1]]`.
    pub(crate) pair_offsets: Option<Vec<u32>>,
    /// With the pair table: bit `c` of row `b` (`mask_words` words per row)
    /// is set when some rule has left child `b` and right child `c`.
    pub(crate) right_masks: Vec<u64>,
    pub(crate) mask_words: usize,
    /// Per left child `b`, the expected steps of a mask visit per present
    /// right symbol, in 1/65536ths (see [`CompiledGrammar::visit`]).
    mask_cost: Vec<u32>,
    /// Left child, probability and origin of each binary rule (cold data).
    pub(crate) bin_left: Vec<u32>,
    pub(crate) bin_p: Vec<f64>,
    pub(crate) bin_origin: Vec<Origin>,
    /// Binary rule indices by parent.
    pub(crate) by_parent: Vec<Vec<u32>>,
    /// Each word's entries, looked up a few times per word of a sentence
    /// (by a fast hash: a sentence's words are short keys).
    pub(crate) lexicon: Lexicon,
    pub(crate) unary: Vec<UnaryRule>,
    /// Unary rule indices by child.
    pub(crate) unary_by_child: Vec<Vec<u32>>,
    /// Whether a symbol takes part in a unary rule (as parent or child).
    pub(crate) in_unary: Vec<bool>,
    /// Symbols that are children of unary rules, in increasing order.
    pub(crate) unary_children: Vec<u32>,
    /// Symbols that are in the unary graph, in increasing order.
    pub(crate) unary_nodes: Vec<u32>,
    /// By child `B`: `(A, log of the best chain A ⇒+ B)` for `A ≠ B`.
    pub(crate) vit_closure: Vec<Vec<(u32, f64)>>,
    /// First unary rule (index into `unary`) of the best chain `A ⇒+ B`.
    pub(crate) best_first: HashMap<(u32, u32), u32>,
    /// By child `B`: `(A, ln C[A][B])` with `C = (I − U)⁻¹`, diagonal included.
    pub(crate) sum_closure: Vec<Vec<(u32, f64)>>,
    /// By child `B`: `(A, number of chains A ⇒* B)`, diagonal included.
    pub(crate) count_closure: Vec<Vec<(u32, Count)>>,
    /// The same as doubles, when every chain count is finite and below
    /// 2⁵³ (exact in a double): the inside pass counts parses then.
    pub(crate) exact_count_closure: Option<Vec<Vec<(u32, f64)>>>,
    /// The smallest log-probability of any compiled rule.
    pub(crate) min_lp: f64,
    /// The user's rules with positive probability, for explanations.
    pub(crate) user_rules: Vec<(u32, Vec<Item>)>,
    pub(crate) user_rules_of: Vec<Vec<u32>>,
    /// Whether any unseen-word terminal is in the lexicon.
    pub(crate) has_unseen: bool,
}

impl CompiledGrammar {
    /// Compiles `grammar`. Rules with probability 0 (or not a finite
    /// positive number) can never be used and are left out.
    pub fn new(grammar: &Grammar) -> Result<CompiledGrammar, CompileError> {
        let start = grammar.start.ok_or(CompileError::NoStart)?;
        let n_user = grammar.nonterminals.len();
        let mut b = Builder {
            kinds: (0..n_user as u32).map(|i| SymKind::User(NtId(i))).collect(),
            pre: HashMap::new(),
            mids: HashMap::new(),
            bins: Vec::new(),
            lexicon: Lexicon::default(),
        };
        let mut unary = Vec::new();
        let mut user_rules = Vec::new();
        let mut user_rules_of = vec![Vec::new(); n_user];
        for (id, rule) in grammar.rule_ids().zip(&grammar.rules) {
            let p = rule.p;
            if !(p.is_finite() && p > 0.0) || rule.rhs.is_empty() {
                continue;
            }
            let lp = p.ln();
            let lhs = rule.lhs.0;
            user_rules_of[lhs as usize].push(user_rules.len() as u32);
            user_rules.push((
                lhs,
                rule.rhs
                    .iter()
                    .map(|s| match *s {
                        Sym::N(n) => Item::N(n.0),
                        Sym::T(t) => Item::T(grammar.term_text(t).to_string()),
                    })
                    .collect(),
            ));
            match rule.rhs.as_slice() {
                [Sym::T(t)] => b
                    .lexicon
                    .entry(grammar.term_text(*t).to_string())
                    .or_default()
                    .push(LexEntry {
                        sym: lhs,
                        lp,
                        p,
                        origin: Origin::User(id),
                    }),
                [Sym::N(child)] => unary.push(UnaryRule {
                    parent: lhs,
                    child: child.0,
                    lp,
                    rule: id,
                }),
                rhs => {
                    let syms: Vec<u32> = rhs.iter().map(|s| b.sym_for(grammar, *s)).collect();
                    let rest = b.mid(&syms[1..]);
                    b.bins.push((lhs, syms[0], rest, p, Origin::User(id)));
                }
            }
        }
        let n_sym = b.kinds.len();
        // Group binary rules by left child (stable: source order inside a group).
        let mut order: Vec<usize> = (0..b.bins.len()).collect();
        order.sort_by_key(|&i| (b.bins[i].1, b.bins[i].2, b.bins[i].0));
        let mut left_offsets = vec![0u32; n_sym + 1];
        let mut bin = Vec::with_capacity(order.len());
        let mut bin_lin = Vec::with_capacity(order.len());
        let mask_words = n_sym.div_ceil(64);
        let mut right_masks = if n_sym <= MAX_PAIR_TABLE_SYMBOLS {
            vec![0u64; n_sym * mask_words]
        } else {
            Vec::new()
        };
        let mut pair_counts =
            (n_sym <= MAX_PAIR_TABLE_SYMBOLS).then(|| vec![0u32; n_sym * n_sym + 1]);
        let mut bin_left = Vec::with_capacity(order.len());
        let mut bin_p = Vec::with_capacity(order.len());
        let mut bin_origin = Vec::with_capacity(order.len());
        let mut by_parent = vec![Vec::new(); n_sym];
        let mut min_lp = 0.0f64;
        for &i in &order {
            let (parent, left, right, p, origin) = b.bins[i];
            left_offsets[left as usize + 1] += 1;
            by_parent[parent as usize].push(bin.len() as u32);
            bin.push(BinRule {
                lp: p.ln(),
                parent,
                right,
            });
            bin_lin.push(LinRule { p, parent, right });
            if let Some(counts) = pair_counts.as_mut() {
                counts[left as usize * n_sym + right as usize + 1] += 1;
                right_masks[left as usize * mask_words + right as usize / 64] |=
                    1u64 << (right % 64);
            }
            min_lp = min_lp.min(p.ln());
            bin_left.push(left);
            bin_p.push(p);
            bin_origin.push(origin);
        }
        for s in 0..n_sym {
            left_offsets[s + 1] += left_offsets[s];
        }
        // Prefix sums turn the per-pair counts into offsets (rules are
        // sorted by left, then right child).
        if let Some(counts) = pair_counts.as_mut() {
            for x in 1..counts.len() {
                counts[x] += counts[x - 1];
            }
        }
        for entries in b.lexicon.values() {
            for e in entries {
                min_lp = min_lp.min(e.lp);
            }
        }
        for u in &unary {
            min_lp = min_lp.min(u.lp);
        }

        let mut in_unary = vec![false; n_sym];
        let mut unary_by_child = vec![Vec::new(); n_sym];
        for (i, u) in unary.iter().enumerate() {
            in_unary[u.parent as usize] = true;
            in_unary[u.child as usize] = true;
            unary_by_child[u.child as usize].push(i as u32);
        }
        let unary_children: Vec<u32> = (0..n_sym as u32)
            .filter(|&s| !unary_by_child[s as usize].is_empty())
            .collect();
        let unary_nodes: Vec<u32> = (0..n_sym as u32)
            .filter(|&s| in_unary[s as usize])
            .collect();

        let closures = unary_closures(grammar, n_sym, &unary)?;

        // Each present right symbol matches one of b's right children with
        // probability rights(b) / symbols; a match found through the mask
        // costs ~4 steps.
        let kinds = b.kinds.len().max(1) as u64;
        let mask_cost: Vec<u32> = right_masks
            .chunks(mask_words.max(1))
            .map(|row| {
                let rights: u64 = row.iter().map(|m| u64::from(m.count_ones())).sum();
                (((4 * rights) << 16) / kinds) as u32
            })
            .collect();
        let has_unseen = grammar_lang::unseen::terminals().any(|t| b.lexicon.contains_key(t));
        Ok(CompiledGrammar {
            has_unseen,
            kinds: b.kinds,
            names: grammar
                .nonterminals
                .iter()
                .map(|n| n.name.clone())
                .collect(),
            start: start.0,
            left_offsets,
            bin,
            bin_lin,
            pair_offsets: pair_counts,
            right_masks,
            mask_words,
            mask_cost,
            bin_left,
            bin_p,
            bin_origin,
            by_parent,
            lexicon: b.lexicon,
            unary,
            unary_by_child,
            in_unary,
            unary_children,
            unary_nodes,
            vit_closure: closures.vit,
            best_first: closures.best_first,
            sum_closure: closures.sum,
            exact_count_closure: exact_chain_counts(&closures.count),
            count_closure: closures.count,
            min_lp,
            user_rules,
            user_rules_of,
        })
    }

    /// Number of compiled symbols (user, pre-terminal and intermediate).
    pub fn symbol_count(&self) -> usize {
        self.kinds.len()
    }

    /// Number of user non-terminals.
    pub fn user_symbol_count(&self) -> usize {
        self.names.len()
    }

    /// Number of compiled binary rules.
    pub fn binary_rule_count(&self) -> usize {
        self.bin.len()
    }

    /// Number of unary rules between user non-terminals.
    pub fn unary_rule_count(&self) -> usize {
        self.unary.len()
    }

    pub fn kind(&self, sym: u32) -> SymKind {
        self.kinds[sym as usize]
    }

    /// The binary rules of the compiled grammar as `(parent, left, right, p, origin)`.
    pub fn binary_rules(&self) -> impl Iterator<Item = (u32, u32, u32, f64, Origin)> + '_ {
        (0..self.bin.len()).map(move |r| {
            (
                self.bin[r].parent,
                self.bin_left[r],
                self.bin[r].right,
                self.bin_p[r],
                self.bin_origin[r],
            )
        })
    }

    /// The lexical entries for `word` as `(symbol, p, origin)`.
    pub fn lexical_entries(&self, word: &str) -> Vec<(u32, f64, Origin)> {
        self.lexicon
            .get(word)
            .map(|es| es.iter().map(|e| (e.sym, e.p, e.origin)).collect())
            .unwrap_or_default()
    }

    /// The key under which `word` is looked up in the lexicon: the word
    /// itself when some rule produces it, otherwise the unseen-word
    /// terminal of its shape class that the grammar has
    /// ([`grammar_lang::unseen`]), or the word again when there is none.
    pub fn lexicon_key<'w>(&self, word: &'w str) -> &'w str {
        if self.lexicon.contains_key(word) || !self.has_unseen {
            return word;
        }
        grammar_lang::unseen::resolve(word, |t| self.lexicon.contains_key(t)).unwrap_or(word)
    }

    /// The summed unary closure `C[A][B] = Σ over chains A ⇒* B` (1 on the
    /// diagonal plus every cycle through it).
    pub fn unary_sum_closure(&self, a: u32, b: u32) -> f64 {
        if a == b && !self.in_unary[b as usize] {
            return 1.0;
        }
        self.sum_closure[b as usize]
            .iter()
            .find(|&&(x, _)| x == a)
            .map(|&(_, lw)| lw.exp())
            .unwrap_or(0.0)
    }

    pub(crate) fn is_user(&self, sym: u32) -> bool {
        (sym as usize) < self.names.len()
    }

    pub(crate) fn binary_rule_range(&self, left: u32) -> std::ops::Range<usize> {
        self.left_offsets[left as usize] as usize..self.left_offsets[left as usize + 1] as usize
    }

    /// How to visit the rules of left child `b` against a right cell with
    /// `right_present` symbols, whichever takes fewest steps: scan all of
    /// `b`'s rules, look up each `(b, c)` pair, or intersect `b`'s bit mask of
    /// right children with the right cell's (`mask_words` word operations).
    #[inline]
    pub(crate) fn visit(&self, b: u32, right_present: usize) -> Visit<'_> {
        let Some(table) = self.pair_offsets.as_deref() else {
            return Visit::Scan;
        };
        let rules = (self.left_offsets[b as usize + 1] - self.left_offsets[b as usize]) as usize;
        let w = self.mask_words;
        // Rough cost estimates in units of one scanned rule (a random
        // look-up costs a few sequential steps): a pair look-up ~3, a mask
        // word ~1, each expected (b, c) match found through the mask ~4
        // (precomputed per symbol: `mask_cost`).
        let matches = (u64::from(self.mask_cost[b as usize]) * right_present as u64) >> 16;
        let scan = rules;
        let pairs = 3 * right_present;
        let mask = w + matches as usize;
        if scan <= pairs.min(mask) {
            Visit::Scan
        } else if mask < pairs {
            Visit::Mask(
                table,
                &self.right_masks[b as usize * w..(b as usize + 1) * w],
            )
        } else {
            Visit::Pairs(table)
        }
    }
}

/// See [`CompiledGrammar::visit`].
pub(crate) enum Visit<'a> {
    Scan,
    Pairs(&'a [u32]),
    Mask(&'a [u32], &'a [u64]),
}

struct Builder {
    kinds: Vec<SymKind>,
    pre: HashMap<TermId, u32>,
    mids: HashMap<Vec<u32>, u32>,
    bins: Vec<(u32, u32, u32, f64, Origin)>,
    lexicon: Lexicon,
}

impl Builder {
    fn sym_for(&mut self, grammar: &Grammar, sym: Sym) -> u32 {
        match sym {
            Sym::N(n) => n.0,
            Sym::T(t) => {
                if let Some(&s) = self.pre.get(&t) {
                    return s;
                }
                let s = self.kinds.len() as u32;
                self.kinds.push(SymKind::Preterminal(t));
                self.pre.insert(t, s);
                self.lexicon
                    .entry(grammar.term_text(t).to_string())
                    .or_default()
                    .push(LexEntry {
                        sym: s,
                        lp: 0.0,
                        p: 1.0,
                        origin: Origin::Internal,
                    });
                s
            }
        }
    }

    /// The symbol that derives exactly `seq` (one item: the item itself).
    fn mid(&mut self, seq: &[u32]) -> u32 {
        if seq.len() == 1 {
            return seq[0];
        }
        if let Some(&s) = self.mids.get(seq) {
            return s;
        }
        let rest = self.mid(&seq[1..]);
        let s = self.kinds.len() as u32;
        self.kinds.push(SymKind::Intermediate);
        self.mids.insert(seq.to_vec(), s);
        self.bins.push((s, seq[0], rest, 1.0, Origin::Internal));
        s
    }
}

struct Closures {
    vit: Vec<Vec<(u32, f64)>>,
    best_first: HashMap<(u32, u32), u32>,
    sum: Vec<Vec<(u32, f64)>>,
    count: Vec<Vec<(u32, Count)>>,
}

/// Pivots at or below this are taken as zero: the component's cycles do not
/// shrink (common practice for floating-point singularity tests).
const PIVOT_TOLERANCE: f64 = 1e-9;

fn unary_closures(
    grammar: &Grammar,
    n_sym: usize,
    unary: &[UnaryRule],
) -> Result<Closures, CompileError> {
    let mut out_edges: Vec<Vec<u32>> = vec![Vec::new(); n_sym];
    for (i, u) in unary.iter().enumerate() {
        out_edges[u.parent as usize].push(i as u32);
    }
    let nodes: Vec<u32> = {
        let mut v: Vec<u32> = unary.iter().flat_map(|u| [u.parent, u.child]).collect();
        v.sort_unstable();
        v.dedup();
        v
    };
    let children: Vec<Vec<u32>> = out_edges
        .iter()
        .map(|edges| edges.iter().map(|&e| unary[e as usize].child).collect())
        .collect();
    let sccs = strongly_connected(n_sym, nodes.iter().copied(), |a| &children[a as usize]);
    let mut comp_of = vec![u32::MAX; n_sym];
    for (c, members) in sccs.iter().enumerate() {
        for &m in members {
            comp_of[m as usize] = c as u32;
        }
    }

    // Summed closure rows C[a][·] and chain counts, components sinks first
    // (Tarjan's order).
    let mut sum_rows: HashMap<u32, HashMap<u32, f64>> = HashMap::new();
    let mut count_rows: HashMap<u32, HashMap<u32, Count>> = HashMap::new();
    for (c, members) in sccs.iter().enumerate() {
        let s = members.len();
        let local: HashMap<u32, usize> = members.iter().enumerate().map(|(i, &m)| (m, i)).collect();
        let mut m = vec![vec![0.0f64; s]; s];
        for (i, row) in m.iter_mut().enumerate() {
            row[i] = 1.0;
        }
        let mut cyclic = false;
        // Outgoing part: R_i = Σ_{a_i → d, d outside} p · C[d].
        let mut exits: Vec<HashMap<u32, f64>> = vec![HashMap::new(); s];
        for (i, &a) in members.iter().enumerate() {
            for &e in &out_edges[a as usize] {
                let u = unary[e as usize];
                let p = u.lp.exp();
                if comp_of[u.child as usize] == c as u32 {
                    m[i][local[&u.child]] -= p;
                    cyclic = true;
                } else if let Some(row) = sum_rows.get(&u.child) {
                    for (&k, &v) in row {
                        *exits[i].entry(k).or_insert(0.0) += p * v;
                    }
                }
            }
        }
        let inv =
            invert_m_matrix(&m).ok_or_else(|| cycle_error(grammar, members, unary, &out_edges))?;
        for (i, &a) in members.iter().enumerate() {
            let mut row: HashMap<u32, f64> = HashMap::new();
            for (j, &mj) in members.iter().enumerate() {
                let w = inv[i][j];
                if w != 0.0 {
                    *row.entry(mj).or_insert(0.0) += w;
                    for (&k, &v) in &exits[j] {
                        *row.entry(k).or_insert(0.0) += w * v;
                    }
                }
            }
            row.retain(|_, v| *v > 0.0);
            sum_rows.insert(a, row);
        }
        // Chain counts: infinite below a cycle, otherwise summed over edges.
        for &a in members {
            let mut row: HashMap<u32, Count> = HashMap::new();
            if cyclic {
                for &k in sum_rows[&a].keys() {
                    row.insert(k, Count::Infinite);
                }
            } else {
                row.insert(a, Count::one());
                for &e in &out_edges[a as usize] {
                    let child = unary[e as usize].child;
                    if let Some(child_row) = count_rows.get(&child) {
                        for (&k, v) in child_row {
                            let entry = row.entry(k).or_insert_with(Count::zero);
                            *entry = entry.add(v);
                        }
                    }
                }
            }
            count_rows.insert(a, row);
        }
    }

    let mut sum = vec![Vec::new(); n_sym];
    for (&a, row) in &sum_rows {
        for (&b, &w) in row {
            sum[b as usize].push((a, w.ln()));
        }
    }
    let mut count = vec![Vec::new(); n_sym];
    for (&a, row) in &count_rows {
        for (&b, w) in row {
            count[b as usize].push((a, w.clone()));
        }
    }
    for list in &mut sum {
        list.sort_by_key(|&(a, _)| a);
    }
    for list in &mut count {
        list.sort_by_key(|(a, _)| *a);
    }

    // Best chains by label-correcting search from each source; every cycle
    // has probability < 1 here (the component check above), so the search
    // ends and best chains are simple paths.
    let mut vit = vec![Vec::new(); n_sym];
    let mut best_first = HashMap::new();
    for &a in &nodes {
        let mut dist: HashMap<u32, (f64, u32)> = HashMap::new();
        let mut queue = std::collections::VecDeque::new();
        dist.insert(a, (0.0, u32::MAX));
        queue.push_back(a);
        while let Some(x) = queue.pop_front() {
            let (dx, fx) = dist[&x];
            for &e in &out_edges[x as usize] {
                let u = unary[e as usize];
                let cand = dx + u.lp;
                let first = if x == a { e } else { fx };
                let better = match dist.get(&u.child) {
                    Some(&(d, _)) => cand > d,
                    None => true,
                };
                if better && u.child != a {
                    dist.insert(u.child, (cand, first));
                    queue.push_back(u.child);
                }
            }
        }
        for (&b, &(d, first)) in &dist {
            if b != a {
                vit[b as usize].push((a, d));
                best_first.insert((a, b), first);
            }
        }
    }
    for list in &mut vit {
        list.sort_by_key(|&(a, _)| a);
    }
    Ok(Closures {
        vit,
        best_first,
        sum,
        count,
    })
}

fn cycle_error(
    grammar: &Grammar,
    members: &[u32],
    unary: &[UnaryRule],
    out_edges: &[Vec<u32>],
) -> CompileError {
    let mut symbols: Vec<String> = members
        .iter()
        .map(|&m| grammar.nt_name(NtId(m)).to_string())
        .collect();
    symbols.sort();
    let mut rules = Vec::new();
    for &a in members {
        for &e in &out_edges[a as usize] {
            let u = unary[e as usize];
            if members.contains(&u.child) {
                rules.push(format!(
                    "{} ({})",
                    grammar.rule_text(u.rule),
                    grammar_lang::model::Decimal(&grammar.rule(u.rule).probability)
                ));
            }
        }
    }
    rules.sort();
    CompileError::UnaryCycle { symbols, rules }
}

/// Inverts `M = I − U` for a non-negative `U` by Gauss–Jordan elimination
/// without pivoting. A Z-matrix is a non-singular M-matrix exactly when all
/// these pivots are positive (Berman & Plemmons, Nonnegative Matrices in the
/// Mathematical Sciences, ch. 6 — recalled from memory), which is the same as
/// the spectral radius of `U` being below 1, i.e. the series `Σ Uᵏ`
/// converging. Returns `None` when it does not.
fn invert_m_matrix(m: &[Vec<f64>]) -> Option<Vec<Vec<f64>>> {
    let n = m.len();
    let mut a: Vec<Vec<f64>> = m.to_vec();
    let mut inv: Vec<Vec<f64>> = (0..n)
        .map(|i| (0..n).map(|j| if i == j { 1.0 } else { 0.0 }).collect())
        .collect();
    for col in 0..n {
        let pivot = a[col][col];
        if pivot.is_nan() || pivot <= PIVOT_TOLERANCE {
            return None;
        }
        for j in 0..n {
            a[col][j] /= pivot;
            inv[col][j] /= pivot;
        }
        for row in 0..n {
            if row != col {
                let f = a[row][col];
                if f != 0.0 {
                    for j in 0..n {
                        a[row][j] -= f * a[col][j];
                        inv[row][j] -= f * inv[col][j];
                    }
                }
            }
        }
    }
    // The inverse of an M-matrix is entrywise non-negative.
    if inv.iter().flatten().any(|&v| v < -PIVOT_TOLERANCE) {
        return None;
    }
    for v in inv.iter_mut().flatten() {
        *v = v.max(0.0);
    }
    Some(inv)
}

/// Integers below this are exact in a double.
pub(crate) const EXACT_IN_F64: u64 = 1 << 53;

/// Chain counts as doubles, when all are finite and below 2⁵³ (`None`
/// otherwise: the counting pass takes those grammars).
fn exact_chain_counts(count: &[Vec<(u32, Count)>]) -> Option<Vec<Vec<(u32, f64)>>> {
    count
        .iter()
        .map(|row| {
            row.iter()
                .map(|(a, w)| {
                    let w = u64::try_from(w.finite()?).ok()?;
                    (w < EXACT_IN_F64).then_some((*a, w as f64))
                })
                .collect()
        })
        .collect()
}
