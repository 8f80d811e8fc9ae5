//! The chart layout shared by the Viterbi, inside, count and k-best passes.
//!
//! Cells `(i, j)` (words `i..j`) are numbered by span length first, then by
//! start, so every cell's sub-spans come before it: a pass fills the flat
//! array front to back and reads finished cells from the part before the
//! current one. Each cell holds one value per compiled symbol, contiguously
//! (`index = cell · n_sym + symbol`).

use std::fmt;
use std::sync::{Arc, Mutex};

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
    /// The estimated work (in rule visits, counted per cell from the rules
    /// indexed under its left children) of one span length's cells below
    /// which the calling thread fills them alone: some 20 µs of work,
    /// about what it takes to wake another thread on a virtual machine.
    /// (Chart arrays are recycled between parses, so a helper thread no
    /// longer pays page faults on fresh memory; measured on the sparse
    /// 40-word benchmark sentence, 1,000,000 kept it on one thread, 20,000
    /// spreads it at 1.26–1.46× on two cores.)
    fn min_work(&self) -> u64 {
        20_000
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

/// Scratch rows a chart pass reuses from cell to cell and from one span
/// length to the next (each is left clean by the cell that used it).
pub(crate) struct Scratches<S>(Mutex<Vec<S>>);

impl<S> Scratches<S> {
    pub fn new() -> Scratches<S> {
        Scratches(Mutex::new(Vec::new()))
    }

    /// A scratch from the pool, or a new one from `make`.
    fn take(&self, make: &impl Fn() -> S) -> S {
        self.lock().pop().unwrap_or_else(make)
    }

    fn give_back(&self, s: S) {
        self.lock().push(s);
    }

    /// A panic elsewhere cannot leave a scratch half-made: the pool is
    /// taken even if poisoned.
    fn lock(&self) -> std::sync::MutexGuard<'_, Vec<S>> {
        self.0.lock().unwrap_or_else(|e| e.into_inner())
    }
}

/// Fills the cells of one span length: `fill(n, &mut outs[n], scratch)` for
/// each, asking `watch` once per cell. With several workers, and an
/// estimated work (`work(n)` per cell) of at least [`Spread::min_work`] in
/// all, every cell is a task of its own (the threads share out uneven
/// cells best that way) and the watch is asked for every cell before they
/// start. Scratch rows come from `scratches` (made by `make` when none is
/// free). Cells of one length depend only on shorter ones, so any order
/// gives the same results.
pub(crate) fn fill_cells<T: Send, S: Send>(
    workers: &Workers,
    watch: Watch,
    outs: &mut [T],
    work: impl Fn(usize) -> u64,
    scratches: &Scratches<S>,
    make: impl Fn() -> S + Sync,
    fill: impl Fn(usize, &mut T, &mut S) + Sync,
) -> Result<(), Stopped> {
    let serial = |outs: &mut [T]| {
        let mut s = scratches.take(&make);
        for (n, out) in outs.iter_mut().enumerate() {
            if let Err(stopped) = watch.check() {
                scratches.give_back(s);
                return Err(stopped);
            }
            fill(n, out, &mut s);
        }
        scratches.give_back(s);
        Ok(())
    };
    let spread = match &workers.0 {
        Some(s) if s.threads() > 1 && outs.len() > 1 => s,
        _ => return serial(outs),
    };
    let total: u64 = (0..outs.len()).map(&work).sum();
    if total < spread.min_work() {
        return serial(outs);
    }
    for _ in 0..outs.len() {
        watch.check()?;
    }
    let (fill, make) = (&fill, &make);
    let tasks = outs
        .iter_mut()
        .enumerate()
        .map(|(n, out)| {
            Box::new(move || {
                let mut s = scratches.take(make);
                fill(n, out, &mut s);
                scratches.give_back(s);
            }) as Task<'_>
        })
        .collect();
    spread.run(tasks);
    Ok(())
}

/// Left symbols waiting for a scan of their rules, up to four split points
/// each (a value of the left symbol `V` and the split's number among the
/// cell's), so that a kernel reads the rules once for all of them.
pub(crate) struct Groups<V> {
    pub lb: Vec<[V; 4]>,
    pub split: Vec<[u32; 4]>,
    /// How many splits are queued per symbol (0 to 4).
    pub count: Vec<u8>,
    /// The symbols queued since the cell began (a symbol may appear more
    /// than once: every time its queue restarts).
    pub touched: Vec<u32>,
    /// The right cell (by number) of each split point of the cell so far;
    /// `split` indexes this.
    pub cells: Vec<u32>,
}

impl<V: Copy + Default> Groups<V> {
    pub fn new(n_sym: usize) -> Groups<V> {
        Groups {
            lb: vec![[V::default(); 4]; n_sym],
            split: vec![[0; 4]; n_sym],
            count: vec![0; n_sym],
            touched: Vec::new(),
            cells: Vec::new(),
        }
    }

    /// Queues `b` with value `v` at split `split`; `true` when its queue
    /// is full, to be scanned (and its count reset) at once.
    #[inline]
    pub fn push(&mut self, b: u32, v: V, split: u32) -> bool {
        let n = self.count[b as usize] as usize;
        if n == 0 {
            self.touched.push(b);
        }
        self.lb[b as usize][n] = v;
        self.split[b as usize][n] = split;
        self.count[b as usize] = n as u8 + 1;
        n == 3
    }
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
    fn present_symbols_are_those_above_minus_infinity_in_order() {
        let mut state = 0x5eed_u64;
        for len in 0..40 {
            let row: Vec<f64> = (0..len)
                .map(|_| {
                    state = state
                        .wrapping_mul(6364136223846793005)
                        .wrapping_add(1442695040888963407);
                    match state >> 61 {
                        0..=3 => f64::NEG_INFINITY,
                        4 => f64::MIN,
                        5 => 0.0,
                        _ => -((state >> 20) as f64) / 1e6,
                    }
                })
                .collect();
            let mut got = vec![7u32];
            kernels::push_present(&row, &mut got);
            let want: Vec<u32> = std::iter::once(7)
                .chain((0..len as u32).filter(|&s| row[s as usize] > f64::NEG_INFINITY))
                .collect();
            assert_eq!(got, want, "{row:?}");
        }
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
        assert_eq!(pre.len(), right.len());
        each_pair(table, base, right.len(), rp, |c, s, e| {
            max_rules(&rules[s..e], lb + right[c], pre)
        });
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
        assert_eq!(pre.len(), right.len());
        each_masked_pair(table, base, right.len(), bmask, rmask, |c, s, e| {
            max_rules(&rules[s..e], lb + right[c], pre)
        });
    }

    /// `pre[A] = max(pre[A], lp + lbc)` for each of `rules`.
    #[inline(always)]
    fn max_rules(rules: &[BinRule], lbc: f64, pre: &mut [f64]) {
        let n = pre.len();
        for rule in rules {
            let a = rule.parent as usize;
            debug_assert!(a < n);
            // SAFETY: a < n_sym = pre.len() (see module doc).
            unsafe {
                let cand = rule.lp + lbc;
                let slot = pre.get_unchecked_mut(a);
                // A select, not a branch: which rule wins is unpredictable.
                *slot = if cand > *slot { cand } else { *slot };
            }
        }
    }

    /// `acc[A] += p · lbc` for each of `rules`.
    #[inline(always)]
    fn sum_rules<L: Lane>(rules: &[LinRule], lbc: L, acc: &mut [L]) {
        let n = acc.len();
        for rule in rules {
            let a = rule.parent as usize;
            debug_assert!(a < n);
            // SAFETY: a < n_sym = acc.len() (see module doc).
            unsafe {
                let slot = acc.get_unchecked_mut(a);
                *slot = slot.add(lbc.weighted(rule.p));
            }
        }
    }

    /// `visit(c, s, e)` for each symbol `c` of `rp` that has rules with the
    /// left child of row `base` of the pair table: `s..e`, never empty.
    #[inline(always)]
    fn each_pair(
        table: &[u32],
        base: usize,
        n: usize,
        rp: &[u32],
        mut visit: impl FnMut(usize, usize, usize),
    ) {
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
                visit(c, s, e);
            }
        }
    }

    /// The same for the set bits of `bmask & rmask` (every pair a bit of
    /// `bmask` stands for has rules).
    #[inline(always)]
    fn each_masked_pair(
        table: &[u32],
        base: usize,
        n: usize,
        bmask: &[u64],
        rmask: &[u64],
        mut visit: impl FnMut(usize, usize, usize),
    ) {
        assert!(base + n < table.len() && bmask.len() == rmask.len() && bmask.len() * 64 >= n);
        for (w, (&bm, &rm)) in bmask.iter().zip(rmask).enumerate() {
            let mut m = bm & rm;
            while m != 0 {
                let c = w * 64 + m.trailing_zeros() as usize;
                m &= m - 1;
                // Bits are only set for symbols < n.
                visit(c, table[base + c] as usize, table[base + c + 1] as usize);
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
        assert_eq!(acc.len(), right.len());
        each_masked_pair(table, base, right.len(), bmask, rmask, |c, s, e| {
            sum_rules(&rules[s..e], lb.mul(right[c]), acc)
        });
    }

    /// Appends to `out`, in increasing order, the symbols whose score in
    /// `row` is above `-inf`: eight at a time, so that rows with few
    /// symbols present cost little more than one comparison per eight.
    #[inline]
    pub fn push_present(row: &[f64], out: &mut Vec<u32>) {
        let mut chunks = row.chunks_exact(8);
        let mut base = 0u32;
        for chunk in &mut chunks {
            let mut m = present_bits(chunk);
            while m != 0 {
                out.push(base + m.trailing_zeros());
                m &= m - 1;
            }
            base += 8;
        }
        for (t, &v) in chunks.remainder().iter().enumerate() {
            if v > f64::NEG_INFINITY {
                out.push(base + t as u32);
            }
        }
    }

    /// Bit `t` set where `chunk[t] > -inf`, for eight values: two at a
    /// time with SSE2 (part of every x86-64 processor), which the compiler
    /// does not find on its own.
    #[cfg(all(target_arch = "x86_64", target_feature = "sse2"))]
    #[inline(always)]
    fn present_bits(chunk: &[f64]) -> u32 {
        use std::arch::x86_64::{_mm_cmpgt_pd, _mm_movemask_pd, _mm_set1_pd, _mm_set_pd};
        // SAFETY: the instructions are SSE2's, which this build targets
        // (the `cfg` above); the values are passed, no memory is read.
        unsafe {
            let floor = _mm_set1_pd(f64::NEG_INFINITY);
            let two = |t: usize| {
                _mm_movemask_pd(_mm_cmpgt_pd(_mm_set_pd(chunk[t + 1], chunk[t]), floor)) as u32
            };
            two(0) | two(2) << 2 | two(4) << 4 | two(6) << 6
        }
    }

    /// Bit `t` set where `chunk[t] > -inf`, for eight values.
    #[cfg(not(all(target_arch = "x86_64", target_feature = "sse2")))]
    #[inline(always)]
    fn present_bits(chunk: &[f64]) -> u32 {
        let mut m = 0u32;
        for (t, &v) in chunk.iter().enumerate() {
            m |= u32::from(v > f64::NEG_INFINITY) << t;
        }
        m
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

    /// [`sum_scan`] for `N` split points at once: the rules of `b` are read
    /// once and each parent's slot is updated once, by
    /// `p · Σₜ lb[t] · right[t][C]`.
    #[inline]
    pub fn sum_scan_n<L: Lane, const N: usize>(
        rules: &[LinRule],
        lb: [L; N],
        right: [&[L]; N],
        acc: &mut [L],
    ) {
        let n = acc.len();
        for row in right {
            assert_eq!(row.len(), n);
        }
        for rule in rules {
            let (r, a) = (rule.right as usize, rule.parent as usize);
            debug_assert!(r < n && a < n);
            // SAFETY: r < n_sym = right[t].len() (see module doc).
            let mut sum = lb[0].mul(unsafe { *right[0].get_unchecked(r) });
            for t in 1..N {
                // SAFETY: as above.
                sum = sum.add(lb[t].mul(unsafe { *right[t].get_unchecked(r) }));
            }
            // SAFETY: a < n_sym = acc.len() (see module doc).
            unsafe {
                let slot = acc.get_unchecked_mut(a);
                *slot = slot.add(sum.weighted(rule.p));
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
        assert_eq!(acc.len(), right.len());
        each_pair(table, base, right.len(), rp, |c, s, e| {
            sum_rules(&rules[s..e], lb.mul(right[c]), acc)
        });
    }
}
