//! The chart layout shared by the Viterbi, inside, count and k-best passes.
//!
//! Cells `(i, j)` (words `i..j`) are numbered by span length first, then by
//! start, so every cell's sub-spans come before it: a pass fills the flat
//! array front to back and reads finished cells from the part before the
//! current one. Each cell holds one value per compiled symbol, contiguously
//! (`index = cell · n_sym + symbol`).

use std::fmt;
use std::sync::Arc;

/// Sizes and cell numbering of a chart for `n` words and `n_sym` symbols.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Layout {
    pub n: usize,
    pub n_sym: usize,
}

impl Layout {
    pub fn new(n: usize, n_sym: usize) -> Layout {
        Layout { n, n_sym }
    }

    /// Number of cells: `n (n + 1) / 2`.
    pub fn cells(&self) -> usize {
        self.n * (self.n + 1) / 2
    }

    /// The number of cell `(i, j)`, `0 ≤ i < j ≤ n`.
    #[inline]
    pub fn cell(&self, i: usize, j: usize) -> usize {
        let len = j - i;
        // Cells of length l < len: Σ (n − l + 1) for l = 1..len−1.
        let before = (len - 1) * (self.n + 1) - (len - 1) * len / 2;
        before + i
    }
}

/// The chart passes give up when this says so: the caller's stop condition,
/// asked once per chart cell (so a long sentence can be stopped within one
/// cell's work, whichever pass is running).
#[derive(Clone, Copy)]
pub(crate) struct Watch<'a>(pub &'a dyn Fn() -> bool);

/// A pass was stopped by its [`Watch`] before it finished.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) struct Stopped;

impl Watch<'_> {
    /// `Err(Stopped)` when the stop condition holds.
    #[inline]
    pub fn check(&self) -> Result<(), Stopped> {
        if (self.0)() {
            Err(Stopped)
        } else {
            Ok(())
        }
    }
}

/// Something that runs independent pieces of work, possibly on several
/// threads: the shells hand one to the engine (the engine itself starts no
/// threads). Cells of one span length depend only on shorter cells, so a
/// chart pass may fill them in any order, on any thread.
pub trait Spread: Send + Sync {
    /// How many threads the tasks may run on (1: no point in splitting).
    fn threads(&self) -> usize;
    /// Runs every task exactly once, in any order, and returns when all
    /// have finished.
    fn run<'a>(&self, tasks: Vec<Task<'a>>);
    /// The estimated work (in rule visits) of a batch of cells below which
    /// the calling thread fills it alone: handing work to other threads
    /// costs a few microseconds, one rule visit about a nanosecond.
    fn min_work(&self) -> u64 {
        1_000_000
    }
}

/// One piece of work handed to a [`Spread`].
pub type Task<'a> = Box<dyn FnOnce() + Send + 'a>;

/// The threads a parse may use: none beyond the caller's by default.
/// Results never depend on it: every chart cell is computed the same way,
/// by one thread, whichever thread that is.
#[derive(Clone, Default)]
pub struct Workers(Option<Arc<dyn Spread>>);

impl Workers {
    /// Only the calling thread.
    pub fn caller_only() -> Workers {
        Workers(None)
    }

    /// The threads of `spread`.
    pub fn new(spread: impl Spread + 'static) -> Workers {
        Workers(Some(Arc::new(spread)))
    }

    /// How many threads these workers have.
    pub fn threads(&self) -> usize {
        self.0.as_ref().map_or(1, |s| s.threads().max(1))
    }
}

impl fmt::Debug for Workers {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        write!(f, "Workers {{ threads: {} }}", self.threads())
    }
}

impl PartialEq for Workers {
    fn eq(&self, other: &Workers) -> bool {
        match (&self.0, &other.0) {
            (None, None) => true,
            (Some(a), Some(b)) => Arc::ptr_eq(a, b),
            _ => false,
        }
    }
}
/// The estimated binary work of cell `(i, i + len)`, for [`fill_cells`]:
/// per split, a left symbol's rules are scanned, or looked up by each right
/// symbol (a few steps each), whichever is less. `present(c)` is the number
/// of symbols present in finished cell `c`.
#[inline]
pub(crate) fn cell_work(
    layout: Layout,
    i: usize,
    len: usize,
    rules_per_left: u64,
    present: impl Fn(usize) -> usize,
) -> u64 {
    (i + 1..i + len)
        .map(|k| {
            let right = present(layout.cell(k, i + len)) as u64;
            present(layout.cell(i, k)) as u64 * rules_per_left.min(3 * right)
        })
        .sum()
}

/// Fills the cells of one span length: `fill(n, &mut outs[n], scratch)` for
/// each, asking `watch` once per cell. With several workers, batches of
/// cells whose estimated `work(n)` reaches [`Spread::min_work`] are spread over them
/// (the watch is then asked for a batch's cells before it starts).
pub(crate) fn fill_cells<T: Send, S>(
    workers: &Workers,
    watch: Watch,
    outs: &mut [T],
    work: impl Fn(usize) -> u64,
    scratch: impl Fn() -> S + Sync,
    fill: impl Fn(usize, &mut T, &mut S) + Sync,
) -> Result<(), Stopped> {
    let mut own = None;
    let spread = match &workers.0 {
        Some(s) if s.threads() > 1 => s,
        _ => {
            let s = own.get_or_insert_with(&scratch);
            for (n, out) in outs.iter_mut().enumerate() {
                watch.check()?;
                fill(n, out, s);
            }
            return Ok(());
        }
    };
    let batch = 4 * spread.threads();
    let mut first = 0;
    for chunk in outs.chunks_mut(batch) {
        let total: u64 = (first..first + chunk.len()).map(&work).sum();
        if total < spread.min_work() {
            let s = own.get_or_insert_with(&scratch);
            for (n, out) in chunk.iter_mut().enumerate() {
                watch.check()?;
                fill(first + n, out, s);
            }
        } else {
            for _ in 0..chunk.len() {
                watch.check()?;
            }
            let (fill, scratch) = (&fill, &scratch);
            let tasks = chunk
                .iter_mut()
                .enumerate()
                .map(|(n, out)| Box::new(move || fill(first + n, out, &mut scratch())) as Task<'_>)
                .collect();
            spread.run(tasks);
        }
        first += chunk.len();
    }
    Ok(())
}

/// `ln(e^a + e^b)` without overflow; `-inf` is the zero.
#[inline]
pub(crate) fn log_add(a: f64, b: f64) -> f64 {
    if a == f64::NEG_INFINITY {
        return b;
    }
    if b == f64::NEG_INFINITY {
        return a;
    }
    let (hi, lo) = if a > b { (a, b) } else { (b, a) };
    hi + (lo - hi).exp().ln_1p()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn cells_are_numbered_densely_by_length_then_start() {
        let layout = Layout::new(5, 1);
        let mut seen = Vec::new();
        for len in 1..=5 {
            for i in 0..=5 - len {
                seen.push(layout.cell(i, i + len));
            }
        }
        assert_eq!(seen, (0..layout.cells()).collect::<Vec<_>>());
    }

    #[test]
    fn log_add_matches_the_linear_sum() {
        let s = log_add(0.25f64.ln(), 0.5f64.ln());
        assert!((s.exp() - 0.75).abs() < 1e-15);
        assert_eq!(log_add(f64::NEG_INFINITY, -3.0), -3.0);
    }
}

/// The inner loops. Every compiled rule names symbols below `n_sym`
/// (symbols are only ever created by `CompiledGrammar::new`, which numbers
/// them densely), every cell row and the scratch row have exactly `n_sym`
/// entries, and the pair table has `n_sym² + 1`; the kernels check the
/// lengths once per call and index without per-rule bounds checks.
pub(crate) mod kernels {
    use crate::compile::{BinRule, LinRule};

    /// What the sum kernels add up per symbol: a scaled inside probability
    /// (`f64`), or one with the symbol's parse count beside it
    /// ([`Counted`]). Rule probabilities and scale factors weigh only the
    /// probability; products and sums apply to both.
    pub trait Lane: Copy + Send + Sync + 'static {
        /// `self` with its probability multiplied by `w`.
        fn weighted(self, w: f64) -> Self;
        fn mul(self, other: Self) -> Self;
        fn add(self, other: Self) -> Self;
    }

    impl Lane for f64 {
        #[inline(always)]
        fn weighted(self, w: f64) -> f64 {
            self * w
        }
        #[inline(always)]
        fn mul(self, other: f64) -> f64 {
            self * other
        }
        #[inline(always)]
        fn add(self, other: f64) -> f64 {
            self + other
        }
    }

    /// A scaled inside probability and the number of derivations, side by
    /// side so that one vector operation updates both. The count is an
    /// integer held in a double: exact while every value stays below
    /// 2⁵³, which the inside pass checks per cell (counts only grow, so a
    /// cell's final values bound every product and partial sum behind them).
    #[derive(Clone, Copy, Debug, Default, PartialEq)]
    #[repr(C, align(16))]
    pub struct Counted {
        pub lin: f64,
        pub count: f64,
    }

    impl Lane for Counted {
        #[inline(always)]
        fn weighted(self, w: f64) -> Counted {
            Counted {
                lin: self.lin * w,
                count: self.count,
            }
        }
        #[inline(always)]
        fn mul(self, other: Counted) -> Counted {
            Counted {
                lin: self.lin * other.lin,
                count: self.count * other.count,
            }
        }
        #[inline(always)]
        fn add(self, other: Counted) -> Counted {
            Counted {
                lin: self.lin + other.lin,
                count: self.count + other.count,
            }
        }
    }

    /// `pre[A] = max(pre[A], lp + lb + right[C])` for every rule `A → b C`.
    #[inline]
    pub fn max_scan(rules: &[BinRule], lb: f64, right: &[f64], pre: &mut [f64]) {
        let n = right.len();
        assert_eq!(pre.len(), n);
        for rule in rules {
            let (r, a) = (rule.right as usize, rule.parent as usize);
            debug_assert!(r < n && a < n);
            // SAFETY: r, a < n_sym = right.len() = pre.len() (see module doc).
            unsafe {
                let cand = rule.lp + lb + *right.get_unchecked(r);
                let slot = pre.get_unchecked_mut(a);
                // A select, not a branch: which rule wins is unpredictable.
                *slot = if cand > *slot { cand } else { *slot };
            }
        }
    }

    /// [`max_scan`] for `N` split points at once: the rules of `b` are read
    /// once and each parent's slot is updated once for all `N` (the same
    /// maximum of the same sums, `lp + lb + right[C]`, as `N` scans).
    #[inline]
    pub fn max_scan_n<const N: usize>(
        rules: &[BinRule],
        lb: [f64; N],
        right: [&[f64]; N],
        pre: &mut [f64],
    ) {
        let n = pre.len();
        for row in right {
            assert_eq!(row.len(), n);
        }
        for rule in rules {
            let (r, a) = (rule.right as usize, rule.parent as usize);
            debug_assert!(r < n && a < n);
            let mut best = f64::NEG_INFINITY;
            for t in 0..N {
                // SAFETY: r < n_sym = right[t].len() (see module doc).
                let cand = rule.lp + lb[t] + unsafe { *right[t].get_unchecked(r) };
                best = if cand > best { cand } else { best };
            }
            // SAFETY: a < n_sym = pre.len() (see module doc).
            unsafe {
                let slot = pre.get_unchecked_mut(a);
                *slot = if best > *slot { best } else { *slot };
            }
        }
    }

    /// The same over the right cell's present symbols `rp`, looking up the
    /// rules of each `(b, c)` pair in `table` (row `b` starts at `base`).
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn max_pairs(
        rules: &[BinRule],
        table: &[u32],
        base: usize,
        rp: &[u32],
        lb: f64,
        right: &[f64],
        pre: &mut [f64],
    ) {
        let n = right.len();
        assert_eq!(pre.len(), n);
        assert!(base + n < table.len());
        for &c in rp {
            let c = c as usize;
            assert!(c < n);
            // SAFETY: base + c + 1 ≤ base + n < table.len() (asserted above).
            let (s, e) = unsafe {
                (
                    *table.get_unchecked(base + c) as usize,
                    *table.get_unchecked(base + c + 1) as usize,
                )
            };
            if s < e {
                let lbc = lb + right[c];
                for rule in &rules[s..e] {
                    let a = rule.parent as usize;
                    debug_assert!(a < n);
                    // SAFETY: a < n_sym = pre.len() (see module doc).
                    unsafe {
                        let cand = rule.lp + lbc;
                        let slot = pre.get_unchecked_mut(a);
                        *slot = if cand > *slot { cand } else { *slot };
                    }
                }
            }
        }
    }

    /// The same over the set bits of `bmask & rmask` (the right children of
    /// `b` present in the right cell), looking each pair up in `table`.
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn max_mask(
        rules: &[BinRule],
        table: &[u32],
        base: usize,
        bmask: &[u64],
        rmask: &[u64],
        lb: f64,
        right: &[f64],
        pre: &mut [f64],
    ) {
        let n = right.len();
        assert_eq!(pre.len(), n);
        assert!(base + n < table.len() && bmask.len() == rmask.len() && bmask.len() * 64 >= n);
        for (w, (&bm, &rm)) in bmask.iter().zip(rmask).enumerate() {
            let mut m = bm & rm;
            while m != 0 {
                let c = w * 64 + m.trailing_zeros() as usize;
                m &= m - 1;
                // Bits are only set for symbols < n.
                let (s, e) = (table[base + c] as usize, table[base + c + 1] as usize);
                let lbc = lb + right[c];
                for rule in &rules[s..e] {
                    let a = rule.parent as usize;
                    debug_assert!(a < n);
                    // SAFETY: a < n_sym = pre.len() (see module doc).
                    unsafe {
                        let cand = rule.lp + lbc;
                        let slot = pre.get_unchecked_mut(a);
                        *slot = if cand > *slot { cand } else { *slot };
                    }
                }
            }
        }
    }

    /// The sum version of [`max_mask`].
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn sum_mask<L: Lane>(
        rules: &[LinRule],
        table: &[u32],
        base: usize,
        bmask: &[u64],
        rmask: &[u64],
        lb: L,
        right: &[L],
        acc: &mut [L],
    ) {
        let n = right.len();
        assert_eq!(acc.len(), n);
        assert!(base + n < table.len() && bmask.len() == rmask.len() && bmask.len() * 64 >= n);
        for (w, (&bm, &rm)) in bmask.iter().zip(rmask).enumerate() {
            let mut m = bm & rm;
            while m != 0 {
                let c = w * 64 + m.trailing_zeros() as usize;
                m &= m - 1;
                let (s, e) = (table[base + c] as usize, table[base + c + 1] as usize);
                let lbc = lb.mul(right[c]);
                for rule in &rules[s..e] {
                    let a = rule.parent as usize;
                    debug_assert!(a < n);
                    // SAFETY: a < n_sym = acc.len() (see module doc).
                    unsafe {
                        let slot = acc.get_unchecked_mut(a);
                        *slot = slot.add(lbc.weighted(rule.p));
                    }
                }
            }
        }
    }

    /// Sets `mask` to the bit set of `present`.
    #[inline]
    pub fn fill_mask(mask: &mut [u64], present: &[u32]) {
        mask.fill(0);
        for &c in present {
            mask[c as usize / 64] |= 1u64 << (c % 64);
        }
    }

    /// `acc[A] += p · lb · right[C]` for every rule `A → b C`.
    #[inline]
    pub fn sum_scan<L: Lane>(rules: &[LinRule], lb: L, right: &[L], acc: &mut [L]) {
        let n = right.len();
        assert_eq!(acc.len(), n);
        for rule in rules {
            let (r, a) = (rule.right as usize, rule.parent as usize);
            debug_assert!(r < n && a < n);
            // SAFETY: r, a < n_sym = right.len() = acc.len() (see module doc).
            unsafe {
                let slot = acc.get_unchecked_mut(a);
                *slot = slot.add(lb.weighted(rule.p).mul(*right.get_unchecked(r)));
            }
        }
    }

    /// The same by `(b, c)` pair lookups, as [`max_pairs`].
    #[inline]
    #[allow(clippy::too_many_arguments)]
    pub fn sum_pairs<L: Lane>(
        rules: &[LinRule],
        table: &[u32],
        base: usize,
        rp: &[u32],
        lb: L,
        right: &[L],
        acc: &mut [L],
    ) {
        let n = right.len();
        assert_eq!(acc.len(), n);
        assert!(base + n < table.len());
        for &c in rp {
            let c = c as usize;
            assert!(c < n);
            // SAFETY: base + c + 1 ≤ base + n < table.len() (asserted above).
            let (s, e) = unsafe {
                (
                    *table.get_unchecked(base + c) as usize,
                    *table.get_unchecked(base + c + 1) as usize,
                )
            };
            if s < e {
                let lbc = lb.mul(right[c]);
                for rule in &rules[s..e] {
                    let a = rule.parent as usize;
                    debug_assert!(a < n);
                    // SAFETY: a < n_sym = acc.len() (see module doc).
                    unsafe {
                        let slot = acc.get_unchecked_mut(a);
                        *slot = slot.add(lbc.weighted(rule.p));
                    }
                }
            }
        }
    }
}
