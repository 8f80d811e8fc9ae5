//! Chart memory kept from one parse for the next.
//!
//! A parse of a 25-word sentence with a learned grammar takes a fraction
//! of a millisecond, and its chart arrays are a few hundred kilobytes: made
//! afresh every time, they cost the allocator's locks, and pages the
//! allocator handed back to the system and must fault in again — on two
//! threads, the two then queue on the same process-wide page tables. A
//! [`Recycler`] (one per [`crate::parser::Parser`], shared by the threads
//! parsing with it) keeps the arrays and the per-cell scratch rows of
//! finished parses for the next ones, up to a bound, so that parsing many
//! sentences allocates almost nothing.
//!
//! Results never depend on what was parsed before: an array taken with
//! [`Pool::take`] is refilled with the value asked for; one taken with
//! [`Pool::take_for_overwrite`] may hold an earlier parse's values, and
//! its user writes every element before reading it (each chart cell sets
//! its own row first); scratch rows are clean by the passes' own invariant
//! (each cell leaves them as it found them).

use std::sync::{Mutex, MutexGuard};

use crate::chart::kernels::Counted;
use crate::chart::Scratches;
use crate::inside::{InsideChart, InsideScratch};
use crate::viterbi::{ViterbiChart, ViterbiScratch};

/// At most this many bytes of arrays are kept per element type (four
/// types): enough for the charts of a parse on each of a few threads, for
/// sentences of the lengths people parse in bulk (a 40-word sentence with
/// 300 symbols has 2 MiB arrays); the charts of longer sentences are freed
/// (their allocation is small beside their parse), and a language server
/// holding many parsers keeps little memory for each.
const KEPT_BYTES: usize = 16 << 20;

/// At most this many arrays are kept per element type.
const KEPT_ARRAYS: usize = 32;

/// Arrays of one element type, kept for reuse.
pub(crate) struct Pool<T> {
    kept: Mutex<Kept<T>>,
}

struct Kept<T> {
    arrays: Vec<Vec<T>>,
    bytes: usize,
}

impl<T: Copy> Pool<T> {
    fn new() -> Pool<T> {
        Pool {
            kept: Mutex::new(Kept {
                arrays: Vec::new(),
                bytes: 0,
            }),
        }
    }

    /// An array of `len` copies of `value`: a kept one, refilled, or a new
    /// one.
    pub fn take(&self, len: usize, value: T) -> Reused<T> {
        let mut array = self.take_for_overwrite(len, value);
        array.fill(value);
        array
    }

    /// An array of `len` elements, each `value` or left from an earlier
    /// use: for arrays the caller writes in full before reading (a chart
    /// whose cells each set their own row first, when the row is hot in
    /// the cache, rather than all rows in one sweep before the parse).
    /// A kept array that already holds `len` elements is handed out
    /// without a write; a shorter one is lengthened with `value`.
    pub fn take_for_overwrite(&self, len: usize, value: T) -> Reused<T> {
        let mut array = self.take_kept(len).unwrap_or_default();
        if array.len() < len {
            array.resize(len, value);
        }
        Reused { array, len }
    }

    /// An empty array with room for at least `len` elements.
    pub fn take_empty(&self, len: usize) -> Vec<T> {
        match self.take_kept(len) {
            Some(mut array) => {
                array.clear();
                array
            }
            None => Vec::with_capacity(len),
        }
    }

    /// The smallest kept array with room for `len` elements (of two as
    /// small, the one that needs less lengthening), if there is one: the
    /// large arrays stay for the large charts, and each array tends to
    /// serve the same part of the next parse.
    fn take_kept(&self, len: usize) -> Option<Vec<T>> {
        let mut kept = self.lock();
        let at = kept
            .arrays
            .iter()
            .enumerate()
            .filter(|(_, a)| a.capacity() >= len)
            .min_by_key(|(_, a)| (a.capacity(), len.saturating_sub(a.len())))
            .map(|(at, _)| at)?;
        let array = kept.arrays.swap_remove(at);
        kept.bytes -= Self::bytes(&array);
        Some(array)
    }

    /// Keeps an array from [`Pool::take`] or [`Pool::take_for_overwrite`],
    /// whole: its elements past what the last use needed stay as they
    /// are, so that a longer use next time need not write them again.
    pub fn give_back_reused(&self, reused: Reused<T>) {
        self.give_back(reused.array);
    }

    /// Keeps `array` for a later [`Pool::take`], unless the pool is full
    /// (then the smallest arrays make way for a larger one, whose parse
    /// would gain the most from it).
    pub fn give_back(&self, array: Vec<T>) {
        let size = Self::bytes(&array);
        if size == 0 || size > KEPT_BYTES {
            return;
        }
        let mut kept = self.lock();
        while kept.arrays.len() >= KEPT_ARRAYS || kept.bytes + size > KEPT_BYTES {
            let smallest = kept
                .arrays
                .iter()
                .enumerate()
                .min_by_key(|(_, a)| a.capacity())
                .map(|(at, a)| (at, Self::bytes(a)));
            match smallest {
                Some((at, bytes)) if bytes < size => {
                    kept.arrays.swap_remove(at);
                    kept.bytes -= bytes;
                }
                _ => return,
            }
        }
        kept.bytes += size;
        kept.arrays.push(array);
    }

    /// What `array` holds on to: its capacity.
    fn bytes(array: &Vec<T>) -> usize {
        array.capacity() * std::mem::size_of::<T>()
    }

    /// A panic elsewhere cannot leave the pool half-changed: it is taken
    /// even if poisoned.
    fn lock(&self) -> MutexGuard<'_, Kept<T>> {
        self.kept.lock().unwrap_or_else(|e| e.into_inner())
    }
}

/// The first `len` elements of an array from a [`Pool`], as a slice. The
/// array underneath keeps its whole length, so that handing it back keeps
/// what a longer use once wrote: a batch of sentences of mixed lengths does
/// not rewrite the tail of its charts each time a longer sentence follows
/// a shorter one.
pub(crate) struct Reused<T> {
    array: Vec<T>,
    len: usize,
}

impl<T> std::ops::Deref for Reused<T> {
    type Target = [T];

    #[inline]
    fn deref(&self) -> &[T] {
        &self.array[..self.len]
    }
}

impl<T> std::ops::DerefMut for Reused<T> {
    #[inline]
    fn deref_mut(&mut self) -> &mut [T] {
        &mut self.array[..self.len]
    }
}

/// The memory one parser keeps between parses (see the module's text).
pub(crate) struct Recycler {
    pub f64s: Pool<f64>,
    pub counted: Pool<Counted>,
    pub u32s: Pool<u32>,
    pub flags: Pool<bool>,
    pub viterbi: Scratches<ViterbiScratch>,
    /// Viterbi scratch rows under a beam (kept apart: a beam leaves its
    /// rows in another state between cells).
    pub viterbi_beam: Scratches<ViterbiScratch>,
    pub inside: Scratches<InsideScratch<f64>>,
    pub inside_counted: Scratches<InsideScratch<Counted>>,
}

impl Recycler {
    pub fn new() -> Recycler {
        Recycler {
            f64s: Pool::new(),
            counted: Pool::new(),
            u32s: Pool::new(),
            flags: Pool::new(),
            viterbi: Scratches::new(),
            viterbi_beam: Scratches::new(),
            inside: Scratches::new(),
            inside_counted: Scratches::new(),
        }
    }

    /// Keeps the arrays of a Viterbi chart the parse is done with.
    pub fn keep_viterbi(&self, chart: ViterbiChart) {
        let (score, present_start, present) = chart.into_arrays();
        self.f64s.give_back_reused(score);
        self.u32s.give_back(present_start);
        self.u32s.give_back(present);
    }

    /// Keeps the array of an inside chart the parse is done with.
    pub fn keep_inside(&self, chart: InsideChart) {
        self.f64s.give_back_reused(chart.log);
    }
}

/// A copy of a parser starts with nothing kept.
impl Clone for Recycler {
    fn clone(&self) -> Recycler {
        Recycler::new()
    }
}

impl std::fmt::Debug for Recycler {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str("Recycler")
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_kept_array_comes_back_refilled_and_the_smallest_fit_is_chosen() {
        let pool = Pool::new();
        pool.give_back(vec![1.5f64; 100]);
        pool.give_back(vec![2.5f64; 10]);
        let small = pool.take(8, -1.0);
        assert_eq!(*small, [-1.0; 8]);
        assert!(small.array.capacity() >= 10 && small.array.capacity() < 100);
        let large = pool.take(50, 0.0);
        assert_eq!(*large, [0.0; 50]);
        assert!(large.array.capacity() >= 100);
        // Nothing left: a new array.
        assert_eq!(*pool.take(3, 7.0), [7.0; 3]);
    }

    #[test]
    fn an_array_lent_for_a_short_use_keeps_its_whole_length_for_a_long_one() {
        let pool = Pool::new();
        let mut long = pool.take_for_overwrite(100, 0.0f64);
        long.fill(5.0);
        pool.give_back_reused(long);
        let short = pool.take_for_overwrite(10, 0.0);
        assert_eq!(short.len(), 10);
        pool.give_back_reused(short);
        // The next long use finds all 100 elements as the first one left
        // them: nothing was written to hand the array out again.
        let again = pool.take_for_overwrite(100, -1.0);
        assert_eq!(*again, [5.0; 100]);
        drop(again);
        // Longer than any use so far: the new tail is written with the
        // value asked for.
        let mut roomy = Vec::with_capacity(200);
        roomy.resize(50, 5.0);
        pool.give_back(roomy);
        let longer = pool.take_for_overwrite(120, -1.0);
        assert_eq!(longer[..50], [5.0; 50]);
        assert_eq!(longer[50..], [-1.0; 70]);
    }

    #[test]
    fn an_empty_take_is_empty_with_room() {
        let pool = Pool::new();
        pool.give_back(vec![9u32; 40]);
        let empty = pool.take_empty(30);
        assert!(empty.is_empty() && empty.capacity() >= 40);
        assert!(pool.take_empty(1000).capacity() >= 1000);
    }

    #[test]
    fn the_pool_keeps_at_most_its_bounds_and_prefers_large_arrays() {
        let pool: Pool<u32> = Pool::new();
        for _ in 0..KEPT_ARRAYS + 5 {
            pool.give_back(vec![0; 4]);
        }
        assert_eq!(pool.lock().arrays.len(), KEPT_ARRAYS);
        // A larger array pushes out a small one.
        pool.give_back(vec![0; 64]);
        let kept = pool.lock();
        assert_eq!(kept.arrays.len(), KEPT_ARRAYS);
        assert!(kept.arrays.iter().any(|a| a.capacity() >= 64));
        assert_eq!(
            kept.bytes,
            kept.arrays.iter().map(|a| a.capacity() * 4).sum::<usize>()
        );
        drop(kept);
        // An array over the whole budget is not kept.
        pool.give_back(vec![0u32; KEPT_BYTES / 4 + 1]);
        assert!(pool.lock().bytes <= KEPT_BYTES);
    }
}
