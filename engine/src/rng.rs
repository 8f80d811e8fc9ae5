//! A small, reproducible pseudo-random number generator.
//!
//! Sampling must give the same sentences for the same seed on every run and
//! every platform, so the engine carries its own generator instead of relying
//! on a library whose stream may change between versions:
//!
//! * [`Xoshiro256StarStar`] — xoshiro256** by D. Blackman and S. Vigna,
//!   "Scrambled linear pseudorandom number generators", ACM TOMS 47(4), 2021.
//!   256 bits of state, period 2^256 − 1, passes BigCrush.
//! * [`SplitMix64`] — the seeding generator the same authors recommend for
//!   turning one `u64` into a full xoshiro state (G. Steele, D. Lea,
//!   C. Flood, "Fast splittable pseudorandom number generators", OOPSLA 2014).
//!
//! Everything here is integer arithmetic (wrapping multiplications, shifts
//! and rotations), and the float conversion is exact, so the streams are
//! bit-identical everywhere.

/// A source of uniformly distributed 64-bit words.
pub trait RandomSource {
    fn next_u64(&mut self) -> u64;

    /// A uniform float in `[0, 1)` with 53 random bits (exact conversion).
    fn next_f64(&mut self) -> f64 {
        (self.next_u64() >> 11) as f64 * (1.0 / (1u64 << 53) as f64)
    }

    /// A uniform integer in `0..n` (`n > 0`) by a 64×64→128-bit multiply.
    /// The bias is at most `n / 2^64`, far below anything measurable.
    fn below(&mut self, n: u64) -> u64 {
        ((self.next_u64() as u128 * n as u128) >> 64) as u64
    }
}

/// SplitMix64: a 64-bit state advanced by a Weyl sequence and mixed.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SplitMix64 {
    state: u64,
}

impl SplitMix64 {
    pub fn new(seed: u64) -> Self {
        SplitMix64 { state: seed }
    }
}

impl RandomSource for SplitMix64 {
    fn next_u64(&mut self) -> u64 {
        self.state = self.state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
}

/// xoshiro256**: the general-purpose generator of the xoshiro family.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Xoshiro256StarStar {
    s: [u64; 4],
}

impl Xoshiro256StarStar {
    /// The generator seeded from one word through [`SplitMix64`], as the
    /// authors of xoshiro recommend. Different seeds give unrelated streams.
    pub fn seed_from_u64(seed: u64) -> Self {
        let mut sm = SplitMix64::new(seed);
        // SplitMix64's output function is a bijection and its states are
        // distinct, so at most one of the four words is zero: the state is
        // never all zero.
        let s = [sm.next_u64(), sm.next_u64(), sm.next_u64(), sm.next_u64()];
        Xoshiro256StarStar { s }
    }

    /// The generator with an explicit state; `None` for the all-zero state,
    /// which is a fixed point of the transition.
    pub fn from_state(s: [u64; 4]) -> Option<Self> {
        if s == [0; 4] {
            None
        } else {
            Some(Xoshiro256StarStar { s })
        }
    }

    pub fn state(&self) -> [u64; 4] {
        self.s
    }

    /// Advances the state by 2^128 draws: calling it `k` times on copies
    /// of one generator gives `k` non-overlapping streams for parallel work.
    pub fn jump(&mut self) {
        // The jump polynomial published with the reference implementation.
        const JUMP: [u64; 4] = [
            0x180e_c6d3_3cfd_0aba,
            0xd5a6_1266_f0c9_392c,
            0xa958_2618_e03f_c9aa,
            0x39ab_dc45_29b1_661c,
        ];
        let mut acc = [0u64; 4];
        for word in JUMP {
            for bit in 0..64 {
                if word & (1u64 << bit) != 0 {
                    for (a, s) in acc.iter_mut().zip(self.s.iter()) {
                        *a ^= *s;
                    }
                }
                self.next_u64();
            }
        }
        self.s = acc;
    }
}

impl RandomSource for Xoshiro256StarStar {
    #[inline]
    fn next_u64(&mut self) -> u64 {
        let s = &mut self.s;
        let result = s[1].wrapping_mul(5).rotate_left(7).wrapping_mul(9);
        let t = s[1] << 17;
        s[2] ^= s[0];
        s[3] ^= s[1];
        s[1] ^= s[2];
        s[0] ^= s[3];
        s[2] ^= t;
        s[3] = s[3].rotate_left(45);
        result
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn xoshiro_from_state_one_two_three_four_matches_a_hand_computation() {
        // By hand from the algorithm in Blackman & Vigna (2021): with
        // s = [1, 2, 3, 4] the first output is rotl(2·5, 7)·9 = 1280·9 =
        // 11520; the update makes s[1] = (2 ^ (3 ^ 1)) = 0, so the second
        // output is rotl(0, 7)·9 = 0.
        let mut rng = Xoshiro256StarStar::from_state([1, 2, 3, 4]).unwrap();
        assert_eq!(rng.next_u64(), 11520);
        assert_eq!(rng.next_u64(), 0);
    }

    #[test]
    fn the_all_zero_state_is_refused() {
        assert!(Xoshiro256StarStar::from_state([0; 4]).is_none());
    }

    #[test]
    fn floats_lie_in_the_unit_interval_and_below_stays_below() {
        let mut rng = Xoshiro256StarStar::seed_from_u64(7);
        for _ in 0..1000 {
            let x = rng.next_f64();
            assert!((0.0..1.0).contains(&x));
            assert!(rng.below(3) < 3);
        }
    }
}
