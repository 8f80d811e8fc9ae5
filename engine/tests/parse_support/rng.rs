//! The small seeded generator of the engine's tests and benchmarks (the
//! benchmarks include this file by path), so that both draw the same
//! numbers from the same seeds.

/// SplitMix64 (Steele, Lea & Flood 2014): a small seeded generator. Unlike
/// `trellis_engine::rng`, `below` reduces by remainder, which the seeds of
/// the tests and the benchmarks' generated grammars were chosen with.
pub struct Rng(pub u64);

impl Rng {
    pub fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^ (z >> 31)
    }

    pub fn below(&mut self, n: usize) -> usize {
        (self.next() % n as u64) as usize
    }
}
