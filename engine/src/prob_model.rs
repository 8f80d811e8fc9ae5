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

/// Strongly connected components of the graph `succ` (Tarjan's algorithm
/// with an explicit stack, so deep grammars cannot overflow the call
/// stack). Components come in reverse topological order: every edge leaving
/// a component points into one listed earlier.
pub(crate) fn sccs(succ: &[Vec<u32>]) -> Vec<Vec<u32>> {
    const UNSEEN: u32 = u32::MAX;
    let n = succ.len();
    let mut index = vec![UNSEEN; n];
    let mut low = vec![0u32; n];
    let mut on_stack = vec![false; n];
    let mut stack: Vec<u32> = Vec::new();
    let mut calls: Vec<(u32, usize)> = Vec::new();
    let mut counter = 0u32;
    let mut out = Vec::new();
    for root in 0..n {
        if index[root] != UNSEEN {
            continue;
        }
        index[root] = counter;
        low[root] = counter;
        counter += 1;
        stack.push(root as u32);
        on_stack[root] = true;
        calls.push((root as u32, 0));
        while let Some(&mut (v, ref mut next)) = calls.last_mut() {
            let v = v as usize;
            if let Some(&w) = succ[v].get(*next) {
                *next += 1;
                let w = w as usize;
                if index[w] == UNSEEN {
                    index[w] = counter;
                    low[w] = counter;
                    counter += 1;
                    stack.push(w as u32);
                    on_stack[w] = true;
                    calls.push((w as u32, 0));
                } else if on_stack[w] {
                    low[v] = low[v].min(index[w]);
                }
            } else {
                calls.pop();
                if let Some(&(u, _)) = calls.last() {
                    low[u as usize] = low[u as usize].min(low[v]);
                }
                if low[v] == index[v] {
                    let mut comp = Vec::new();
                    while let Some(w) = stack.pop() {
                        on_stack[w as usize] = false;
                        comp.push(w);
                        if w as usize == v {
                            break;
                        }
                    }
                    comp.sort_unstable();
                    out.push(comp);
                }
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn components_come_sinks_first() {
        // 0 → 1 ⇄ 2 → 3, 3 → 3
        let succ = vec![vec![1], vec![2], vec![1, 3], vec![3]];
        let comps = sccs(&succ);
        assert_eq!(comps, vec![vec![3], vec![1, 2], vec![0]]);
    }

    #[test]
    fn a_long_chain_does_not_overflow_the_stack() {
        let n = 200_000;
        let succ: Vec<Vec<u32>> = (0..n)
            .map(|i| {
                if i + 1 < n {
                    vec![i as u32 + 1]
                } else {
                    vec![0]
                }
            })
            .collect();
        let comps = sccs(&succ);
        assert_eq!(comps.len(), 1);
        assert_eq!(comps[0].len(), n);
    }
}
