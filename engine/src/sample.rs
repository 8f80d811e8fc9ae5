//! Ancestral sampling of sentences and trees.
//!
//! A derivation starts at a non-terminal and repeatedly rewrites the
//! leftmost non-terminal with a rule drawn from its block. Choices:
//!
//! * **Draws** use one alias table per block (Walker 1977, with Vose's
//!   1991 construction): one 64-bit random word per choice — its high part
//!   (a 64×64→128-bit multiply) picks the column, the low part decides
//!   between the column's rule and its alias — and none for blocks of one
//!   rule. Reproducible with [`crate::rng::Xoshiro256StarStar`].
//! * **Deficient blocks** (mass ≠ 1) are sampled proportionally, as if
//!   divided by their mass; [`Sampler::rescaled_blocks`] lists them (see
//!   the module `prob_model` for the shared normalisation).
//! * **Undefined and unproductive symbols**: before drawing, the sampler
//!   checks that no symbol reachable from the starting symbol is undefined,
//!   has only zero-weight rules, or derives no finite sentence, and
//!   reports the first such symbol instead of looping.
//! * **Leaky grammars**: a derivation that would use more than `limit`
//!   rules stops with [`SampleError::LimitExceeded`]. The walk uses an
//!   explicit stack, so neither a deep nor a wide derivation can overflow
//!   the call stack; memory is bounded by `limit` × the longest rule.
//! * **Deep trees**: [`Tree`] prints and drops itself recursively, so
//!   [`Sampler::tree`] refuses trees deeper than [`TREE_DEPTH_LIMIT`]
//!   ([`SampleError::TreeTooDeep`]); sentences have no depth limit.

use crate::prob_model::ProbModel;
use crate::rng::RandomSource;
use grammar_lang::model::{Grammar, NtId, RuleId, Sym, TermId};
use grammar_lang::tree::Tree;
use std::fmt;

/// The deepest tree [`Sampler::tree`] returns. [`Tree`]'s printing and
/// dropping recurse once per level; 5,000 levels stay well inside the
/// 2 MiB stack of a spawned thread even in debug builds, and far exceed
/// the depth of any tree people read.
pub const TREE_DEPTH_LIMIT: usize = 5_000;

/// Marks a terminal in the compiled right-hand sides.
const TERM_BIT: u32 = 1 << 31;

/// A derivation size limit for interactive use: generous for any tight
/// grammar, quick to hit for a leaky one, and small enough that the
/// recursive printing and dropping of a [`Tree`] of that depth is safe on
/// a default thread stack.
pub const DEFAULT_LIMIT: usize = 10_000;

#[derive(Clone, Debug, PartialEq, Eq)]
pub enum SampleError {
    /// The grammar declares no `start` and no symbol was given.
    NoStart,
    /// The symbol id does not belong to the grammar.
    UnknownSymbol { id: u32 },
    /// `symbol`, reachable from `from`, has no block.
    Undefined { from: String, symbol: String },
    /// `symbol`, reachable from `from`, has only rules of weight zero.
    NoRules { from: String, symbol: String },
    /// `symbol`, reachable from `from`, derives no finite sentence.
    Unproductive { from: String, symbol: String },
    /// The derivation needed more than `limit` rule applications.
    LimitExceeded { from: String, limit: usize },
    /// The sampled tree is deeper than [`TREE_DEPTH_LIMIT`].
    TreeTooDeep { from: String, limit: usize },
    /// More than 2^31 symbols of one kind.
    TooLarge,
}

impl fmt::Display for SampleError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            SampleError::NoStart => write!(
                f,
                "the grammar has no `start` declaration; name a symbol to sample from"
            ),
            SampleError::UnknownSymbol { id } => write!(f, "no non-terminal with id {id}"),
            SampleError::Undefined { from, symbol } if from == symbol => {
                write!(f, "cannot sample from `{symbol}`: it has no block")
            }
            SampleError::Undefined { from, symbol } => write!(
                f,
                "cannot sample from `{from}`: it can reach `{symbol}`, which has no block"
            ),
            SampleError::NoRules { from, symbol } if from == symbol => write!(
                f,
                "cannot sample from `{symbol}`: every rule of its block has weight 0"
            ),
            SampleError::NoRules { from, symbol } => write!(
                f,
                "cannot sample from `{from}`: it can reach `{symbol}`, whose rules all have weight 0"
            ),
            SampleError::Unproductive { from, symbol } if from == symbol => write!(
                f,
                "cannot sample from `{symbol}`: none of its derivations ever ends in words"
            ),
            SampleError::Unproductive { from, symbol } => write!(
                f,
                "cannot sample from `{from}`: it can reach `{symbol}`, none of whose derivations ever ends in words"
            ),
            SampleError::LimitExceeded { from, limit } => write!(
                f,
                "a derivation from `{from}` grew past {limit} rule applications; \
                 the grammar may give probability to derivations that never end"
            ),
            SampleError::TreeTooDeep { from, limit } => write!(
                f,
                "a tree sampled from `{from}` is more than {limit} levels deep; \
                 sample the sentence instead"
            ),
            SampleError::TooLarge => write!(f, "the grammar is too large to sample from"),
        }
    }
}

impl std::error::Error for SampleError {}

#[derive(Clone, Copy, Debug)]
struct AliasEntry {
    /// The column's own rule is taken when the low word is below this.
    threshold: u64,
    primary: u32,
    alias: u32,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Blocker {
    Undefined(u32),
    NoRules(u32),
    Unproductive(u32),
}

/// A grammar compiled for fast ancestral sampling.
pub struct Sampler<'g> {
    grammar: &'g Grammar,
    /// Per non-terminal, the range of its alias-table columns (len n + 1).
    table_start: Vec<u32>,
    entries: Vec<AliasEntry>,
    /// Per rule, the range of its compiled right-hand side (len rules + 1).
    rhs_start: Vec<u32>,
    /// Right-hand sides reversed (ready to push on the stack), terminals
    /// marked with `TERM_BIT`.
    rhs_rev: Vec<u32>,
    /// Per rule, the range of its non-terminals in `nts_rev`.
    nts_start: Vec<u32>,
    /// Only the non-terminals of each right-hand side, reversed.
    nts_rev: Vec<u32>,
    /// Per non-terminal, why sampling from it cannot work.
    blocked: Vec<Option<Blocker>>,
    rescaled: Vec<NtId>,
}

impl<'g> Sampler<'g> {
    pub fn new(grammar: &'g Grammar) -> Result<Sampler<'g>, SampleError> {
        if grammar.terminals.len() >= TERM_BIT as usize
            || grammar.nonterminals.len() >= TERM_BIT as usize
            || grammar.rules.len() >= u32::MAX as usize
        {
            return Err(SampleError::TooLarge);
        }
        let model = ProbModel::new(grammar);

        let mut rhs_start = Vec::with_capacity(grammar.rules.len() + 1);
        let mut rhs_rev = Vec::new();
        let mut nts_start = Vec::with_capacity(grammar.rules.len() + 1);
        let mut nts_rev = Vec::new();
        rhs_start.push(0u32);
        nts_start.push(0u32);
        for rule in &grammar.rules {
            for sym in rule.rhs.iter().rev() {
                match *sym {
                    Sym::T(t) => rhs_rev.push(t.0 | TERM_BIT),
                    Sym::N(b) => {
                        rhs_rev.push(b.0);
                        nts_rev.push(b.0);
                    }
                }
            }
            rhs_start.push(to_u32(rhs_rev.len())?);
            nts_start.push(to_u32(nts_rev.len())?);
        }

        let mut table_start = Vec::with_capacity(grammar.nonterminals.len() + 1);
        let mut entries = Vec::new();
        table_start.push(0u32);
        for a in grammar.nt_ids() {
            let rules: Vec<(u32, f64)> = grammar
                .nonterminal(a)
                .rules
                .iter()
                .map(|r| (r.0, model.p[r.index()]))
                .filter(|&(_, p)| p > 0.0)
                .collect();
            alias_table(&rules, &mut entries);
            table_start.push(to_u32(entries.len())?);
        }

        let blocked = blockers(grammar, &model);
        Ok(Sampler {
            grammar,
            table_start,
            entries,
            rhs_start,
            rhs_rev,
            nts_start,
            nts_rev,
            blocked,
            rescaled: model.rescaled,
        })
    }

    pub fn grammar(&self) -> &'g Grammar {
        self.grammar
    }

    /// Blocks whose probabilities did not add up to 1 and are sampled
    /// proportionally.
    pub fn rescaled_blocks(&self) -> &[NtId] {
        &self.rescaled
    }

    /// The grammar's start symbol, or [`SampleError::NoStart`].
    pub fn start(&self) -> Result<NtId, SampleError> {
        self.grammar.start.ok_or(SampleError::NoStart)
    }

    /// Whether sampling from `from` can work at all (see the module docs).
    pub fn check(&self, from: NtId) -> Result<(), SampleError> {
        let Some(blocker) = self.blocked.get(from.index()) else {
            return Err(SampleError::UnknownSymbol { id: from.0 });
        };
        let name = |id: u32| self.grammar.nt_name(NtId(id)).to_string();
        match *blocker {
            None => Ok(()),
            Some(Blocker::Undefined(b)) => Err(SampleError::Undefined {
                from: name(from.0),
                symbol: name(b),
            }),
            Some(Blocker::NoRules(b)) => Err(SampleError::NoRules {
                from: name(from.0),
                symbol: name(b),
            }),
            Some(Blocker::Unproductive(b)) => Err(SampleError::Unproductive {
                from: name(from.0),
                symbol: name(b),
            }),
        }
    }

    /// Draws a rule of `nt` (which must have usable rules).
    #[inline]
    fn choose<R: RandomSource + ?Sized>(&self, nt: usize, rng: &mut R) -> usize {
        let first = self.table_start[nt] as usize;
        let n = self.table_start[nt + 1] as usize - first;
        if n == 1 {
            return self.entries[first].primary as usize;
        }
        let wide = rng.next_u64() as u128 * n as u128;
        let column = (wide >> 64) as usize;
        let e = &self.entries[first + column];
        if (wide as u64) < e.threshold {
            e.primary as usize
        } else {
            e.alias as usize
        }
    }

    /// Samples a sentence from `from` into `out` (cleared first), using at
    /// most `limit` rule applications.
    pub fn sentence_into<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
        out: &mut Vec<TermId>,
    ) -> Result<(), SampleError> {
        self.check(from)?;
        out.clear();
        let mut stack: Vec<u32> = Vec::with_capacity(32);
        stack.push(from.0);
        let mut used = 0usize;
        while let Some(sym) = stack.pop() {
            if sym & TERM_BIT != 0 {
                out.push(TermId(sym & !TERM_BIT));
                continue;
            }
            if used == limit {
                return Err(self.limit_error(from, limit));
            }
            used += 1;
            let r = self.choose(sym as usize, rng);
            let (a, b) = (self.rhs_start[r] as usize, self.rhs_start[r + 1] as usize);
            stack.extend_from_slice(&self.rhs_rev[a..b]);
        }
        Ok(())
    }

    /// Samples a sentence from `from` with at most `limit` rule applications.
    pub fn sentence<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
    ) -> Result<Vec<TermId>, SampleError> {
        let mut out = Vec::new();
        self.sentence_into(rng, from, limit, &mut out)?;
        Ok(out)
    }

    /// Samples a sentence and returns its words.
    pub fn words<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
    ) -> Result<Vec<&'g str>, SampleError> {
        let ids = self.sentence(rng, from, limit)?;
        Ok(ids.iter().map(|&t| self.grammar.term_text(t)).collect())
    }

    /// The rules of a leftmost derivation from `from`, in the order they
    /// are applied (a pre-order walk of the tree).
    pub fn derivation_into<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
        out: &mut Vec<RuleId>,
    ) -> Result<(), SampleError> {
        self.check(from)?;
        out.clear();
        let mut stack: Vec<u32> = Vec::with_capacity(32);
        stack.push(from.0);
        while let Some(nt) = stack.pop() {
            if out.len() == limit {
                return Err(self.limit_error(from, limit));
            }
            let r = self.choose(nt as usize, rng);
            out.push(RuleId(r as u32));
            let (a, b) = (self.nts_start[r] as usize, self.nts_start[r + 1] as usize);
            stack.extend_from_slice(&self.nts_rev[a..b]);
        }
        Ok(())
    }

    pub fn derivation<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
    ) -> Result<Vec<RuleId>, SampleError> {
        let mut out = Vec::new();
        self.derivation_into(rng, from, limit, &mut out)?;
        Ok(out)
    }

    /// Samples a tree from `from` with at most `limit` rule applications.
    pub fn tree<R: RandomSource + ?Sized>(
        &self,
        rng: &mut R,
        from: NtId,
        limit: usize,
    ) -> Result<Tree, SampleError> {
        let d = self.derivation(rng, from, limit)?;
        self.build_tree(&d, TREE_DEPTH_LIMIT)
            .ok_or_else(|| SampleError::TreeTooDeep {
                from: self.grammar.nt_name(from).to_string(),
                limit: TREE_DEPTH_LIMIT,
            })
    }

    /// Builds the tree of a leftmost derivation as produced by
    /// [`Sampler::derivation`] (iteratively). Symbols a derivation cut short
    /// never expanded appear as childless nodes. The caller owns the depth
    /// question: see [`TREE_DEPTH_LIMIT`].
    pub fn tree_of(&self, derivation: &[RuleId]) -> Tree {
        self.build_tree(derivation, usize::MAX)
            .unwrap_or_else(|| Tree::node("", Vec::new()))
    }

    /// The tree of `derivation`, or `None` when deeper than `max_depth`
    /// (or empty).
    fn build_tree(&self, derivation: &[RuleId], max_depth: usize) -> Option<Tree> {
        struct Frame {
            rule: usize,
            next: usize,
            children: Vec<Tree>,
        }
        let g = self.grammar;
        let mut rules = derivation.iter();
        let first = rules.next()?;
        let mut frames = vec![Frame {
            rule: first.index(),
            next: 0,
            children: Vec::new(),
        }];
        loop {
            let depth = frames.len();
            let top = frames.last_mut()?;
            let rhs = &g.rules[top.rule].rhs;
            if let Some(&sym) = rhs.get(top.next) {
                top.next += 1;
                match sym {
                    Sym::T(t) => top.children.push(Tree::leaf(g.term_text(t))),
                    Sym::N(b) => match rules.next() {
                        Some(_) if depth >= max_depth => return None,
                        Some(r) => frames.push(Frame {
                            rule: r.index(),
                            next: 0,
                            children: Vec::new(),
                        }),
                        // A derivation cut short: show the symbol unexpanded.
                        None => top.children.push(Tree::node(g.nt_name(b), Vec::new())),
                    },
                }
                continue;
            }
            let done = frames.pop()?;
            let node = Tree::node(g.nt_name(g.rules[done.rule].lhs), done.children);
            match frames.last_mut() {
                Some(parent) => parent.children.push(node),
                None => return Some(node),
            }
        }
    }

    /// Joins terminal ids into the sentence text (words separated by spaces).
    pub fn text(&self, sentence: &[TermId]) -> String {
        let mut out = String::new();
        for (i, &t) in sentence.iter().enumerate() {
            if i > 0 {
                out.push(' ');
            }
            out.push_str(self.grammar.term_text(t));
        }
        out
    }

    fn limit_error(&self, from: NtId, limit: usize) -> SampleError {
        SampleError::LimitExceeded {
            from: self.grammar.nt_name(from).to_string(),
            limit,
        }
    }
}

fn to_u32(n: usize) -> Result<u32, SampleError> {
    u32::try_from(n).map_err(|_| SampleError::TooLarge)
}

/// Appends the alias table of one block (rules with positive probability,
/// already normalised) to `out`: Vose's construction, deterministic because
/// it only uses IEEE arithmetic in a fixed order.
fn alias_table(rules: &[(u32, f64)], out: &mut Vec<AliasEntry>) {
    let n = rules.len();
    if n == 0 {
        return;
    }
    if n == 1 {
        out.push(AliasEntry {
            threshold: u64::MAX,
            primary: rules[0].0,
            alias: rules[0].0,
        });
        return;
    }
    let total: f64 = rules.iter().map(|r| r.1).sum();
    let mut scaled: Vec<f64> = rules.iter().map(|r| r.1 * n as f64 / total).collect();
    let mut prob = vec![1.0; n];
    let mut alias: Vec<usize> = (0..n).collect();
    let mut small: Vec<usize> = Vec::new();
    let mut large: Vec<usize> = Vec::new();
    for (i, &s) in scaled.iter().enumerate().rev() {
        if s < 1.0 {
            small.push(i);
        } else {
            large.push(i);
        }
    }
    while let (Some(&l), Some(&g)) = (small.last(), large.last()) {
        small.pop();
        large.pop();
        prob[l] = scaled[l];
        alias[l] = g;
        scaled[g] = (scaled[g] + scaled[l]) - 1.0;
        if scaled[g] < 1.0 {
            small.push(g);
        } else {
            large.push(g);
        }
    }
    // Whatever is left (in either list, by rounding) keeps its own rule.
    for i in 0..n {
        let threshold = if prob[i] >= 1.0 {
            u64::MAX
        } else {
            // Exact for the 53 significant bits of prob[i]; saturating cast.
            (prob[i] * 18_446_744_073_709_551_616.0) as u64
        };
        let own = rules[i].0;
        let other = if prob[i] >= 1.0 {
            own
        } else {
            rules[alias[i]].0
        };
        out.push(AliasEntry {
            threshold,
            primary: own,
            alias: other,
        });
    }
}

/// For every non-terminal, the first reason sampling from it cannot work:
/// a reachable symbol with no block, with only zero-weight rules, or that
/// derives no finite sentence. Root causes (no block, no rules) take
/// precedence over the unproductiveness they cause upstream.
fn blockers(g: &Grammar, model: &ProbModel) -> Vec<Option<Blocker>> {
    let n = g.nonterminals.len();
    let mut pred: Vec<Vec<u32>> = vec![Vec::new(); n];
    for (a, succ) in model.succ.iter().enumerate() {
        for &b in succ {
            pred[b as usize].push(a as u32);
        }
    }
    let mut blocked: Vec<Option<Blocker>> = vec![None; n];
    let spread = |sources: Vec<(u32, Blocker)>, blocked: &mut Vec<Option<Blocker>>| {
        let mut stack = Vec::new();
        for (s, why) in sources {
            if blocked[s as usize].is_none() {
                blocked[s as usize] = Some(why);
                stack.push(s);
            }
            while let Some(v) = stack.pop() {
                for &u in &pred[v as usize] {
                    if blocked[u as usize].is_none() {
                        blocked[u as usize] = Some(why);
                        stack.push(u);
                    }
                }
            }
        }
    };
    let roots: Vec<(u32, Blocker)> = g
        .nt_ids()
        .filter(|a| !model.has_rules[a.index()])
        .map(|a| {
            if g.nonterminal(a).is_defined() {
                (a.0, Blocker::NoRules(a.0))
            } else {
                (a.0, Blocker::Undefined(a.0))
            }
        })
        .collect();
    spread(roots, &mut blocked);
    let loops: Vec<(u32, Blocker)> = g
        .nt_ids()
        .filter(|a| !model.productive[a.index()])
        .map(|a| (a.0, Blocker::Unproductive(a.0)))
        .collect();
    spread(loops, &mut blocked);
    blocked
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The probability the table gives each rule: column i is drawn with
    /// probability 1/n, then its own rule with threshold/2^64, else its
    /// alias (Walker's method, by definition).
    fn implied(entries: &[AliasEntry], rules: usize) -> Vec<f64> {
        let n = entries.len() as f64;
        let mut p = vec![0.0; rules];
        for e in entries {
            let own = if e.threshold == u64::MAX {
                1.0
            } else {
                e.threshold as f64 / 18_446_744_073_709_551_616.0
            };
            p[e.primary as usize] += own / n;
            p[e.alias as usize] += (1.0 - own) / n;
        }
        p
    }

    #[test]
    fn alias_tables_reproduce_the_block_distribution() {
        let cases: Vec<Vec<f64>> = vec![
            vec![0.5, 0.5],
            vec![0.1, 0.2, 0.7],
            vec![0.001, 0.3, 0.049, 0.25, 0.4],
            (1..=17).map(|i| i as f64 / 153.0).collect(),
        ];
        for probs in cases {
            let rules: Vec<(u32, f64)> = probs
                .iter()
                .enumerate()
                .map(|(i, &p)| (i as u32, p))
                .collect();
            let mut entries = Vec::new();
            alias_table(&rules, &mut entries);
            assert_eq!(entries.len(), probs.len());
            for (got, want) in implied(&entries, probs.len()).iter().zip(&probs) {
                assert!((got - want).abs() < 1e-14, "{got} vs {want}");
            }
        }
    }
}
