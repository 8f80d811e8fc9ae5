//! Exact parse counts: big integers, or infinity when a unary cycle can be
//! repeated inside a parse.

use crate::chart::{Stopped, Watch};
use crate::compile::CompiledGrammar;
use crate::viterbi::ViterbiChart;
use num_bigint::BigUint;
use num_traits::{One, Zero};
use std::fmt;

/// The number of distinct parses (derivations) of a sentence.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Count {
    /// Exactly this many.
    Finite(BigUint),
    /// Without bound: some parse goes through a unary cycle, which can be
    /// repeated any number of times.
    Infinite,
}

impl Count {
    pub fn zero() -> Count {
        Count::Finite(BigUint::zero())
    }

    pub fn one() -> Count {
        Count::Finite(BigUint::one())
    }

    pub fn is_zero(&self) -> bool {
        matches!(self, Count::Finite(n) if n.is_zero())
    }

    pub fn is_infinite(&self) -> bool {
        matches!(self, Count::Infinite)
    }

    /// The finite value, if any.
    pub fn finite(&self) -> Option<&BigUint> {
        match self {
            Count::Finite(n) => Some(n),
            Count::Infinite => None,
        }
    }

    pub fn add(&self, other: &Count) -> Count {
        match (self, other) {
            (Count::Finite(a), Count::Finite(b)) => Count::Finite(a + b),
            _ => Count::Infinite,
        }
    }

    /// `0 · ∞ = 0`: a part with no derivation makes the whole impossible.
    pub fn mul(&self, other: &Count) -> Count {
        if self.is_zero() || other.is_zero() {
            return Count::zero();
        }
        match (self, other) {
            (Count::Finite(a), Count::Finite(b)) => Count::Finite(a * b),
            _ => Count::Infinite,
        }
    }

    /// `self += a · b` without temporaries when all are finite.
    pub(crate) fn add_product(&mut self, a: &Count, b: &Count) {
        if a.is_zero() || b.is_zero() {
            return;
        }
        match (&mut *self, a, b) {
            (Count::Finite(s), Count::Finite(a), Count::Finite(b)) => {
                if a.is_one() {
                    *s += b;
                } else if b.is_one() {
                    *s += a;
                } else {
                    *s += a * b;
                }
            }
            _ => *self = Count::Infinite,
        }
    }
}

impl fmt::Display for Count {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            Count::Finite(n) => write!(f, "{n}"),
            Count::Infinite => f.write_str("infinitely many"),
        }
    }
}

/// Counts the derivations of every chart item bottom-up; returns the count
/// of the start symbol over the whole sentence. `watch` is asked once per
/// cell.
#[allow(clippy::needless_range_loop)] // cells are addressed by (i, j)
pub(crate) fn count_parses(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
) -> Result<Count, Stopped> {
    let layout = vit.layout;
    let n_sym = layout.n_sym;
    let mut counts: Vec<Count> = vec![Count::zero(); layout.cells() * n_sym];
    let mut pre: Vec<Count> = vec![Count::zero(); n_sym];
    for len in 1..=layout.n {
        for i in 0..=layout.n - len {
            let j = i + len;
            let c = layout.cell(i, j);
            watch.check()?;
            for x in pre.iter_mut() {
                if !x.is_zero() {
                    *x = Count::zero();
                }
            }
            if len == 1 {
                if let Some(entries) = g.lexicon.get(words[i]) {
                    for e in entries {
                        let slot = &mut pre[e.sym as usize];
                        *slot = slot.add(&Count::one());
                    }
                }
            } else {
                let (done, _) = counts.split_at(c * n_sym);
                for k in i + 1..j {
                    let l = layout.cell(i, k);
                    let r = layout.cell(k, j);
                    for &b in vit.present(l) {
                        let lb = &done[l * n_sym + b as usize];
                        for rule in g.binary_rule_range(b) {
                            let br = g.bin[rule];
                            let rc = &done[r * n_sym + br.right as usize];
                            if !rc.is_zero() {
                                pre[br.parent as usize].add_product(lb, rc);
                            }
                        }
                    }
                }
            }
            let row = &mut counts[c * n_sym..(c + 1) * n_sym];
            for &s in vit.present(c) {
                if !g.in_unary[s as usize] {
                    row[s as usize] = std::mem::replace(&mut pre[s as usize], Count::zero());
                }
            }
            // Under a beam, only over the symbols it kept (`crate::beam`).
            let kept = &vit.score[c * n_sym..(c + 1) * n_sym];
            for &b in &g.unary_nodes {
                let pb = &pre[b as usize];
                if pb.is_zero() || (vit.pruned && kept[b as usize] == f64::NEG_INFINITY) {
                    continue;
                }
                for (a, w) in &g.count_closure[b as usize] {
                    if !vit.pruned || kept[*a as usize] > f64::NEG_INFINITY {
                        row[*a as usize].add_product(w, pb);
                    }
                }
            }
        }
    }
    let root = layout.cell(0, layout.n);
    Ok(counts[root * n_sym + g.start as usize].clone())
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn zero_times_infinity_is_zero_and_infinity_absorbs_sums() {
        assert!(Count::zero().mul(&Count::Infinite).is_zero());
        assert!(Count::one().add(&Count::Infinite).is_infinite());
        assert_eq!(
            Count::Finite(BigUint::from(6u32)).mul(&Count::Finite(BigUint::from(7u32))),
            Count::Finite(BigUint::from(42u32))
        );
    }
}
