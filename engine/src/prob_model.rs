//! The numeric view of a grammar shared by sampling and consistency analysis.
//!
//! **Block normalisation (a documented choice).** The engine treats each
//! block as a probability distribution over its rules. A block whose
//! resolved probabilities do not add up to 1 (the `sum-not-one` check
//! reports it as an error) is divided by its mass, i.e. sampled
//! proportionally, and the analyses work on the same rescaled numbers, so
//! what `Sampler` draws and what `consistency` predicts agree. The rescaled
//! blocks are listed so callers can say so. Rules whose probability is zero,
//! negative or not a number are never used.

use grammar_lang::model::{Grammar, NtId, Sym};

/// Relative deviation from 1 below which a block's mass counts as 1.
const MASS_TOLERANCE: f64 = 1e-12;

pub(crate) struct ProbModel {
    /// Per rule: its probability within its block after normalisation
    /// (0 for a rule that is never used).
    pub p: Vec<f64>,
    /// Blocks whose mass was not 1 and were rescaled.
    pub rescaled: Vec<NtId>,
    /// Per non-terminal: has at least one usable rule.
    pub has_rules: Vec<bool>,
    /// Per non-terminal: the non-terminals on the right of its usable rules
    /// (sorted, without repeats).
    pub succ: Vec<Vec<u32>>,
    /// Per non-terminal: derives at least one finite sentence.
    pub productive: Vec<bool>,
}

impl ProbModel {
    pub fn new(g: &Grammar) -> ProbModel {
        let n = g.nonterminals.len();
        let mut p: Vec<f64> = g
            .rules
            .iter()
            .map(|r| {
                if r.p.is_finite() && r.p > 0.0 {
                    r.p
                } else {
                    0.0
                }
            })
            .collect();
        let mut rescaled = Vec::new();
        let mut has_rules = vec![false; n];
        let mut succ = vec![Vec::new(); n];
        for a in g.nt_ids() {
            let rules = &g.nonterminal(a).rules;
            let mass: f64 = rules.iter().map(|r| p[r.index()]).sum();
            if mass > 0.0 {
                has_rules[a.index()] = true;
                if (mass - 1.0).abs() > MASS_TOLERANCE {
                    rescaled.push(a);
                    for r in rules {
                        p[r.index()] /= mass;
                    }
                }
            }
            let s: &mut Vec<u32> = &mut succ[a.index()];
            for r in rules {
                if p[r.index()] > 0.0 {
                    for sym in &g.rule(*r).rhs {
                        if let Sym::N(b) = sym {
                            s.push(b.0);
                        }
                    }
                }
            }
            s.sort_unstable();
            s.dedup();
        }
        let productive = grammar_lang::check::graph::productive_with(g, |r| p[r.index()] > 0.0);
        ProbModel {
            p,
            rescaled,
            has_rules,
            succ,
            productive,
        }
    }

    /// The non-terminals reachable from `root` (itself included) through
    /// usable rules.
    pub fn reachable_from(&self, root: NtId) -> Vec<bool> {
        let mut seen = vec![false; self.succ.len()];
        let mut stack = vec![root.0];
        seen[root.index()] = true;
        while let Some(a) = stack.pop() {
            for &b in &self.succ[a as usize] {
                if !seen[b as usize] {
                    seen[b as usize] = true;
                    stack.push(b);
                }
            }
        }
        seen
    }
}
