//! Exact parse counts: integers of any size, or infinity when a unary cycle
//! can be repeated inside a parse.

use crate::chart::{Layout, Stopped, Watch};
use crate::compile::{CompiledGrammar, Visit};
use crate::inside::FusedCounts;
use crate::viterbi::ViterbiChart;
use num_bigint::BigUint;
use num_traits::{Bounded, One, Zero};
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
///
/// `fused`: what the inside pass already counted (exact, below 2⁵³): the
/// answer itself, or the cells counting resumes after. Otherwise the pass
/// runs in machine integers while they hold the counts: `u64` first, then
/// `u128`, then big integers. Every addition and multiplication is
/// checked; when a value of some cell does not fit, the finished cells
/// are widened to the next representation and the pass resumes at that
/// cell (no finished cell is counted twice). Only the symbols the Viterbi
/// chart shows present are visited: an item has a derivation exactly when
/// it is present there.
pub(crate) fn count_parses(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
    fused: Option<FusedCounts>,
) -> Result<Count, Stopped> {
    let layout = vit.layout;
    let (exact, start) = match fused {
        Some(FusedCounts::Root(n)) => return Ok(Count::Finite(BigUint::from(n))),
        Some(FusedCounts::Partial {
            values,
            exact_cells,
        }) => (values, exact_cells),
        None => (Vec::new(), 0),
    };
    let mut narrow: Vec<u64> = vec![0; layout.cells() * layout.n_sym];
    // Integers below 2⁵³, so the conversion is exact.
    for (to, from) in narrow.iter_mut().zip(&exact) {
        *to = *from as u64;
    }
    let from = match fill(g, words, vit, watch, &mut narrow, start, false)? {
        Filled::Done => return Ok(root_count(&layout, g, &narrow)),
        Filled::Overflow(cell) => cell,
    };
    let mut wide: Vec<u128> = narrow
        .into_iter()
        .map(|v| if v == u64::MAX { u128::MAX } else { v.into() })
        .collect();
    let from = match fill(g, words, vit, watch, &mut wide, from, true)? {
        Filled::Done => return Ok(root_count(&layout, g, &wide)),
        Filled::Overflow(cell) => cell,
    };
    let mut big: Vec<Count> = wide.iter().map(Tally::to_count).collect();
    drop(wide);
    match fill(g, words, vit, watch, &mut big, from, true)? {
        Filled::Done => Ok(root_count(&layout, g, &big)),
        // Big integers do not overflow.
        Filled::Overflow(_) => Ok(Count::Infinite),
    }
}

fn root_count<T: Tally>(layout: &Layout, g: &CompiledGrammar, counts: &[T]) -> Count {
    let root = layout.cell(0, layout.n);
    counts[root * layout.n_sym + g.start as usize].to_count()
}

/// How a [`fill`] ended.
enum Filled {
    Done,
    /// A value of this cell (by number) does not fit the representation;
    /// every cell before it is finished.
    Overflow(usize),
}

/// A count: zero, a finite number, or infinity (`0 · ∞ = 0`).
trait Tally: Clone {
    const ZERO: Self;
    fn one() -> Self;
    fn is_zero(&self) -> bool;
    /// `None` when a finite `c` does not fit.
    fn from_count(c: &Count) -> Option<Self>;
    fn to_count(&self) -> Count;
    /// `self += a · b`; `false` (and `self` unspecified) when the finite
    /// result does not fit.
    fn add_product(&mut self, a: &Self, b: &Self) -> bool;
    /// `self += a · b` without a branch, for the inner loop: sets `*doubt`
    /// when the result may be wrong (an overflow, or infinity involved);
    /// the cell is then counted again with [`Tally::add_product`].
    fn add_product_fast(&mut self, a: &Self, b: &Self, doubt: &mut bool);
    /// Whether a value needs the careful path (infinity).
    fn is_special(&self) -> bool;
}

macro_rules! machine_tally {
    ($t:ty, $fast:ident) => {
        /// Finite values below `MAX`; `MAX` is infinity.
        impl Tally for $t {
            const ZERO: $t = 0;
            fn one() -> $t {
                1
            }
            #[inline]
            fn is_zero(&self) -> bool {
                *self == 0
            }
            fn from_count(c: &Count) -> Option<$t> {
                match c {
                    Count::Infinite => Some(<$t>::MAX),
                    Count::Finite(n) => <$t>::try_from(n).ok().filter(|&v| v != <$t>::MAX),
                }
            }
            fn to_count(&self) -> Count {
                if *self == <$t>::MAX {
                    Count::Infinite
                } else {
                    Count::Finite(BigUint::from(*self))
                }
            }
            #[inline(always)]
            fn add_product_fast(&mut self, a: &$t, b: &$t, doubt: &mut bool) {
                $fast(self, *a, *b, doubt)
            }
            #[inline]
            fn is_special(&self) -> bool {
                *self == <$t>::MAX
            }
            #[inline]
            fn add_product(&mut self, a: &$t, b: &$t) -> bool {
                match a.checked_mul(*b).and_then(|p| self.checked_add(p)) {
                    Some(v) if v != <$t>::MAX => {
                        *self = v;
                        true
                    }
                    _ => add_product_slow(self, *a, *b),
                }
            }
        }
    };
}

/// The rare cases of `s += a · b` in a machine integer: infinity involved,
/// or an overflow.
#[cold]
fn add_product_slow<T: Copy + PartialEq + Tally + Bounded>(s: &mut T, a: T, b: T) -> bool {
    if a.is_zero() || b.is_zero() {
        // s + 0 overflowed: s is infinite already.
        return true;
    }
    if a == T::max_value() || b == T::max_value() || *s == T::max_value() {
        *s = T::max_value();
        return true;
    }
    false
}

machine_tally!(u64, fast_u64);
machine_tally!(u128, fast_u128);

#[inline(always)]
fn fast_u64(s: &mut u64, a: u64, b: u64, doubt: &mut bool) {
    let (p, o1) = a.overflowing_mul(b);
    let (v, o2) = s.overflowing_add(p);
    *s = v;
    *doubt |= o1 | o2;
}

/// Most factors still fit 64 bits when their products no longer do: one
/// widening multiplication then, the full checked one otherwise.
#[inline(always)]
fn fast_u128(s: &mut u128, a: u128, b: u128, doubt: &mut bool) {
    let p = if (a | b) >> 64 == 0 {
        (a as u64 as u128) * (b as u64 as u128)
    } else {
        match a.checked_mul(b) {
            Some(p) => p,
            None => {
                *doubt = true;
                return;
            }
        }
    };
    let (v, o) = s.overflowing_add(p);
    *s = v;
    *doubt |= o;
}

impl Tally for Count {
    const ZERO: Count = Count::Finite(BigUint::ZERO);
    fn one() -> Count {
        Count::one()
    }
    fn is_zero(&self) -> bool {
        Count::is_zero(self)
    }
    fn from_count(c: &Count) -> Option<Count> {
        Some(c.clone())
    }
    fn to_count(&self) -> Count {
        self.clone()
    }
    fn add_product(&mut self, a: &Count, b: &Count) -> bool {
        Count::add_product(self, a, b);
        true
    }
    fn add_product_fast(&mut self, a: &Count, b: &Count, _: &mut bool) {
        Count::add_product(self, a, b);
    }
    fn is_special(&self) -> bool {
        false
    }
}

/// Fills `counts` (the whole chart, cells before `from` finished) from cell
/// number `from` on. The watch is asked once per cell, but not again for
/// `from` when `resumed` (this pass asked already, before an overflow
/// there).
#[allow(clippy::needless_range_loop)] // cells are addressed by (i, j)
fn fill<T: Tally>(
    g: &CompiledGrammar,
    words: &[&str],
    vit: &ViterbiChart,
    watch: Watch,
    counts: &mut [T],
    from: usize,
    mut resumed: bool,
) -> Result<Filled, Stopped> {
    let layout = vit.layout;
    let n_sym = layout.n_sym;
    let closure: Vec<Vec<(u32, T)>> = g
        .count_closure
        .iter()
        .map(|row| {
            row.iter()
                .map(|(a, w)| (*a, T::from_count(w).unwrap_or(T::ZERO)))
                .collect()
        })
        .collect();
    // A chain count that does not fit this representation: start wider.
    let fits = g
        .count_closure
        .iter()
        .flatten()
        .all(|(_, w)| T::from_count(w).is_some());
    if !fits {
        return Ok(Filled::Overflow(from));
    }
    let mut pre: Vec<T> = vec![T::ZERO; n_sym];
    let mut rmask = vec![0u64; g.mask_words];
    for len in 1..=layout.n {
        for i in 0..=layout.n - len {
            let j = i + len;
            let c = layout.cell(i, j);
            if c < from {
                continue;
            }
            if !std::mem::take(&mut resumed) {
                watch.check()?;
            }
            for x in pre.iter_mut() {
                if !x.is_zero() {
                    *x = T::ZERO;
                }
            }
            let present = vit.present(c);
            if present.is_empty() {
                continue;
            }
            let ok = if len == 1 {
                let mut ok = true;
                if let Some(entries) = g.lexicon.get(words[i]) {
                    for e in entries {
                        ok &= pre[e.sym as usize].add_product(&T::one(), &T::one());
                    }
                }
                ok
            } else {
                let (done, _) = counts.split_at(c * n_sym);
                let mut doubt = false;
                binary::<T, true>(
                    g, &layout, vit, done, i, j, &mut pre, &mut rmask, &mut doubt,
                );
                // Infinity or an overflow somewhere: count the cell again,
                // carefully (rare: only grammars with unary cycles have
                // infinite counts, and an overflow changes representation).
                doubt |= pre.iter().any(Tally::is_special);
                if doubt {
                    for x in pre.iter_mut() {
                        *x = T::ZERO;
                    }
                    binary::<T, false>(
                        g, &layout, vit, done, i, j, &mut pre, &mut rmask, &mut doubt,
                    )
                } else {
                    true
                }
            };
            if !ok {
                return Ok(Filled::Overflow(c));
            }
            let row = &mut counts[c * n_sym..(c + 1) * n_sym];
            for &s in present {
                if !g.in_unary[s as usize] {
                    row[s as usize] = std::mem::replace(&mut pre[s as usize], T::ZERO);
                } else {
                    row[s as usize] = T::ZERO;
                }
            }
            // Under a beam, only over the symbols it kept (`crate::beam`).
            let kept = &vit.score[c * n_sym..(c + 1) * n_sym];
            for &b in &g.unary_nodes {
                let pb = &pre[b as usize];
                if pb.is_zero() || (vit.pruned && kept[b as usize] == f64::NEG_INFINITY) {
                    continue;
                }
                for (a, w) in &closure[b as usize] {
                    if vit.pruned && kept[*a as usize] == f64::NEG_INFINITY {
                        continue;
                    }
                    if !row[*a as usize].add_product(w, pb) {
                        return Ok(Filled::Overflow(c));
                    }
                }
            }
        }
    }
    Ok(Filled::Done)
}

/// `pre[A] += N(B over i..k) · N(C over k..j)` for every rule `A → B C` and
/// split `k`, over the symbols present in the sub-cells. `FAST`: without
/// branches, setting `doubt` where a result may be wrong; otherwise checked,
/// `false` on overflow.
#[allow(clippy::too_many_arguments)]
#[inline]
fn binary<T: Tally, const FAST: bool>(
    g: &CompiledGrammar,
    layout: &Layout,
    vit: &ViterbiChart,
    done: &[T],
    i: usize,
    j: usize,
    pre: &mut [T],
    rmask: &mut [u64],
    doubt: &mut bool,
) -> bool {
    let mut ok = true;
    // A local flag the fast path can keep in a register.
    let mut d = false;
    macro_rules! add {
        ($slot:expr, $a:expr, $b:expr) => {
            if FAST {
                $slot.add_product_fast($a, $b, &mut d);
            } else {
                ok &= $slot.add_product($a, $b);
            }
        };
    }
    let n_sym = layout.n_sym;
    for k in i + 1..j {
        let l = layout.cell(i, k);
        let r = layout.cell(k, j);
        let left = &done[l * n_sym..(l + 1) * n_sym];
        let right = &done[r * n_sym..(r + 1) * n_sym];
        let rp = vit.present(r);
        if rp.is_empty() {
            continue;
        }
        let mut rmask_ready = false;
        for &b in vit.present(l) {
            let lb = &left[b as usize];
            match g.visit(b, rp.len()) {
                Visit::Scan => {
                    // Absent right children count 0: no branch needed.
                    for rule in &g.bin[g.binary_rule_range(b)] {
                        let rc = &right[rule.right as usize];
                        add!(pre[rule.parent as usize], lb, rc);
                    }
                }
                Visit::Pairs(table) => {
                    let base = b as usize * n_sym;
                    for &c in rp {
                        let (s, e) = (
                            table[base + c as usize] as usize,
                            table[base + c as usize + 1] as usize,
                        );
                        let rc = &right[c as usize];
                        for rule in &g.bin[s..e] {
                            add!(pre[rule.parent as usize], lb, rc);
                        }
                    }
                }
                Visit::Mask(table, bmask) => {
                    if !rmask_ready {
                        rmask.fill(0);
                        for &c in rp {
                            rmask[c as usize / 64] |= 1u64 << (c % 64);
                        }
                        rmask_ready = true;
                    }
                    let base = b as usize * n_sym;
                    for (w, (&bm, &rm)) in bmask.iter().zip(rmask.iter()).enumerate() {
                        let mut m = bm & rm;
                        while m != 0 {
                            let c = w * 64 + m.trailing_zeros() as usize;
                            m &= m - 1;
                            let (s, e) = (table[base + c] as usize, table[base + c + 1] as usize);
                            let rc = &right[c];
                            for rule in &g.bin[s..e] {
                                add!(pre[rule.parent as usize], lb, rc);
                            }
                        }
                    }
                }
            }
        }
        if !ok {
            return false;
        }
    }
    *doubt |= d;
    ok
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
