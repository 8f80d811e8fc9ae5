//! Exact rational numbers that stay small in the usual case.
//!
//! Hand-written weights, their sums and the probabilities resolved from them
//! almost always have numerators and denominators that fit in 64 bits. A
//! [`Ratio`] keeps such a value inline, as two machine integers computed
//! with 128-bit intermediates, and switches to a big rational only when a
//! result does not fit. Either way every operation is exact, and a value
//! has one representation (reduced, denominator positive, inline whenever
//! it fits), so equality and hashing work on the representation.

use num_bigint::BigInt;
use num_rational::BigRational;
use num_traits::{Num, One, PrimInt, Signed, ToPrimitive, Zero};
use std::cmp::Ordering;
use std::fmt;
use std::iter::Sum;
use std::ops::{Add, AddAssign, Div, DivAssign, Mul, MulAssign, Neg, Rem, Sub, SubAssign};

/// An exact rational number.
#[derive(Clone, PartialEq, Eq, Hash)]
pub struct Ratio(Repr);

#[derive(Clone, PartialEq, Eq, Hash)]
enum Repr {
    /// `n/d` reduced, `d > 0`, `n > i64::MIN` (so that `-n` fits too).
    Small(i64, i64),
    /// A reduced value that does not fit `Small`.
    Big(Box<BigRational>),
}

impl Ratio {
    /// `numer / denom`, reduced. Panics if `denom` is zero, like
    /// [`BigRational::new`].
    pub fn new(numer: BigInt, denom: BigInt) -> Ratio {
        Ratio::from_big(BigRational::new(numer, denom))
    }

    /// `numer / denom` for machine integers, reduced. Panics if `denom` is zero.
    pub fn new_i64(numer: i64, denom: i64) -> Ratio {
        assert!(denom != 0, "denominator == 0");
        Ratio::from_i128(i128::from(numer), i128::from(denom))
    }

    pub fn from_integer(n: BigInt) -> Ratio {
        Ratio::from_big(BigRational::from_integer(n))
    }

    /// The value of a big rational, stored inline if it fits.
    pub fn from_big(r: BigRational) -> Ratio {
        match (r.numer().to_i64(), r.denom().to_i64()) {
            (Some(n), Some(d)) if n != i64::MIN => Ratio(Repr::Small(n, d)),
            _ => Ratio(Repr::Big(Box::new(r))),
        }
    }

    /// `n / d` for `d ≠ 0`, reduced.
    fn from_i128(n: i128, d: i128) -> Ratio {
        debug_assert!(d != 0);
        if let (Ok(n), Ok(d)) = (i64::try_from(n), i64::try_from(d)) {
            if n != i64::MIN && d != i64::MIN {
                return Ratio::from_i64(n, d);
            }
        }
        let g = gcd(n.unsigned_abs(), d.unsigned_abs());
        // g divides both, so the quotients of the magnitudes fit in u128
        // and, being at most the magnitudes, the signed quotients fit i128
        // unless n or d is i128::MIN with g = 1, which 64-bit operands
        // (the only source of values here) never produce.
        let (mut n, mut d) = (n / g as i128, d / g as i128);
        if d < 0 {
            (n, d) = (-n, -d);
        }
        match (i64::try_from(n), i64::try_from(d)) {
            (Ok(n), Ok(d)) if n != i64::MIN => Ratio(Repr::Small(n, d)),
            _ => Ratio(Repr::Big(Box::new(BigRational::new_raw(
                BigInt::from(n),
                BigInt::from(d),
            )))),
        }
    }

    /// `n / d` for `d ≠ 0` and neither `i64::MIN`, reduced, in 64-bit
    /// arithmetic.
    fn from_i64(n: i64, d: i64) -> Ratio {
        let (n, d) = if d < 0 { (-n, -d) } else { (n, d) };
        if d == 1 {
            return Ratio(Repr::Small(n, 1));
        }
        let g = gcd64(n.unsigned_abs(), d.unsigned_abs());
        // 1 ≤ g ≤ d ≤ i64::MAX.
        let g = g as i64;
        Ratio(Repr::Small(n / g, d / g))
    }

    /// The numerator and denominator as machine integers, when they fit.
    pub fn to_i64_pair(&self) -> Option<(i64, i64)> {
        match self.0 {
            Repr::Small(n, d) => Some((n, d)),
            Repr::Big(_) => None,
        }
    }

    /// The value as a big rational.
    pub fn to_big(&self) -> BigRational {
        match &self.0 {
            Repr::Small(n, d) => BigRational::new_raw(BigInt::from(*n), BigInt::from(*d)),
            Repr::Big(b) => (**b).clone(),
        }
    }

    /// The numerator of the reduced fraction (negative for negative values).
    pub fn numer(&self) -> BigInt {
        match &self.0 {
            Repr::Small(n, _) => BigInt::from(*n),
            Repr::Big(b) => b.numer().clone(),
        }
    }

    /// The denominator of the reduced fraction (always positive).
    pub fn denom(&self) -> BigInt {
        match &self.0 {
            Repr::Small(_, d) => BigInt::from(*d),
            Repr::Big(b) => b.denom().clone(),
        }
    }

    pub fn is_integer(&self) -> bool {
        match &self.0 {
            Repr::Small(_, d) => *d == 1,
            Repr::Big(b) => b.is_integer(),
        }
    }

    /// The integer part, rounded towards zero.
    pub fn to_integer(&self) -> BigInt {
        match &self.0 {
            Repr::Small(n, d) => BigInt::from(n / d),
            Repr::Big(b) => b.to_integer(),
        }
    }

    /// The size of the value: the bits of its numerator's magnitude and of
    /// its denominator, together. What exact arithmetic on it costs grows
    /// with this number.
    pub fn bits(&self) -> u64 {
        match &self.0 {
            Repr::Small(n, d) => {
                u64::from(64 - n.unsigned_abs().leading_zeros())
                    + u64::from(64 - d.unsigned_abs().leading_zeros())
            }
            Repr::Big(b) => b.numer().bits() + b.denom().bits(),
        }
    }

    /// The exact value of a finite float (`None` for infinities and NaN).
    pub fn from_f64(x: f64) -> Option<Ratio> {
        BigRational::from_float(x).map(Ratio::from_big)
    }

    /// A value already in lowest terms with a positive denominator, taken
    /// as it is (no gcd): for callers that reduced it more cheaply than a
    /// general gcd can, knowing where the denominator came from.
    pub(crate) fn from_reduced(numer: BigInt, denom: BigInt) -> Ratio {
        debug_assert!(denom.is_positive());
        Ratio::from_big(BigRational::new_raw(numer, denom))
    }

    fn add_ref(&self, other: &Ratio) -> Ratio {
        match (&self.0, &other.0) {
            (Repr::Small(an, ad), Repr::Small(bn, bd)) => {
                let (an, ad, bn, bd) = wide(*an, *ad, *bn, *bd);
                if ad == bd {
                    return Ratio::from_i128(an + bn, ad);
                }
                // Each factor is below 2^63, so products stay below 2^126
                // and their sum below 2^127.
                Ratio::from_i128(an * bd + bn * ad, ad * bd)
            }
            _ => Ratio::from_big(self.to_big() + other.to_big()),
        }
    }

    fn sub_ref(&self, other: &Ratio) -> Ratio {
        self.add_ref(&other.neg_ref())
    }

    fn mul_ref(&self, other: &Ratio) -> Ratio {
        match (&self.0, &other.0) {
            (Repr::Small(an, ad), Repr::Small(bn, bd)) => {
                let (an, ad, bn, bd) = wide(*an, *ad, *bn, *bd);
                Ratio::from_i128(an * bn, ad * bd)
            }
            _ => Ratio::from_big(self.to_big() * other.to_big()),
        }
    }

    /// `self / other`. Panics if `other` is zero, like [`BigRational`].
    fn div_ref(&self, other: &Ratio) -> Ratio {
        match (&self.0, &other.0) {
            (Repr::Small(an, ad), Repr::Small(bn, bd)) => {
                assert!(*bn != 0, "division by zero");
                let (an, ad, bn, bd) = wide(*an, *ad, *bn, *bd);
                Ratio::from_i128(an * bd, ad * bn)
            }
            _ => Ratio::from_big(self.to_big() / other.to_big()),
        }
    }

    fn neg_ref(&self) -> Ratio {
        match &self.0 {
            Repr::Small(n, d) => Ratio(Repr::Small(-n, *d)),
            Repr::Big(b) => Ratio::from_big(-(**b).clone()),
        }
    }
}

fn wide(an: i64, ad: i64, bn: i64, bd: i64) -> (i128, i128, i128, i128) {
    (
        i128::from(an),
        i128::from(ad),
        i128::from(bn),
        i128::from(bd),
    )
}

/// Greatest common divisor by the binary method (no division), 1 for
/// `gcd(0, 0)` so that it can always divide. Values that fit 64 bits take
/// the cheaper 64-bit path.
fn gcd(a: u128, b: u128) -> u128 {
    match (u64::try_from(a), u64::try_from(b)) {
        (Ok(a), Ok(b)) => u128::from(gcd64(a, b)),
        _ => binary_gcd(a, b),
    }
}

fn gcd64(a: u64, b: u64) -> u64 {
    binary_gcd(a, b)
}

/// Stein's binary gcd (Knuth, TAOCP vol. 2, 4.5.2, Algorithm B): strip
/// common factors of two, then subtract the smaller odd value from the
/// larger until they meet.
fn binary_gcd<T: PrimInt>(a: T, b: T) -> T {
    if a.is_zero() || b.is_zero() {
        return (a | b).max(T::one());
    }
    let shift = (a | b).trailing_zeros() as usize;
    let (mut a, mut b) = (a >> a.trailing_zeros() as usize, b);
    loop {
        b = b >> b.trailing_zeros() as usize;
        if a > b {
            std::mem::swap(&mut a, &mut b);
        }
        b = b - a;
        if b.is_zero() {
            return a << shift;
        }
    }
}

impl Default for Ratio {
    fn default() -> Self {
        Ratio::zero()
    }
}

impl From<BigRational> for Ratio {
    fn from(r: BigRational) -> Self {
        Ratio::from_big(r)
    }
}

impl From<i64> for Ratio {
    fn from(n: i64) -> Self {
        Ratio::new_i64(n, 1)
    }
}

impl PartialOrd for Ratio {
    fn partial_cmp(&self, other: &Self) -> Option<Ordering> {
        Some(self.cmp(other))
    }
}

impl Ord for Ratio {
    fn cmp(&self, other: &Self) -> Ordering {
        match (&self.0, &other.0) {
            (Repr::Small(an, ad), Repr::Small(bn, bd)) => {
                let (an, ad, bn, bd) = wide(*an, *ad, *bn, *bd);
                (an * bd).cmp(&(bn * ad))
            }
            _ => self.to_big().cmp(&other.to_big()),
        }
    }
}

/// `n` or `n/d`, as big rationals print.
impl fmt::Display for Ratio {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match &self.0 {
            Repr::Small(n, 1) => write!(f, "{n}"),
            Repr::Small(n, d) => write!(f, "{n}/{d}"),
            Repr::Big(b) => write!(f, "{b}"),
        }
    }
}

impl fmt::Debug for Ratio {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        fmt::Display::fmt(self, f)
    }
}

macro_rules! binary_op {
    ($trait:ident, $method:ident, $by_ref:ident) => {
        impl $trait<&Ratio> for &Ratio {
            type Output = Ratio;
            fn $method(self, other: &Ratio) -> Ratio {
                self.$by_ref(other)
            }
        }
        impl $trait<Ratio> for &Ratio {
            type Output = Ratio;
            fn $method(self, other: Ratio) -> Ratio {
                self.$by_ref(&other)
            }
        }
        impl $trait<&Ratio> for Ratio {
            type Output = Ratio;
            fn $method(self, other: &Ratio) -> Ratio {
                (&self).$by_ref(other)
            }
        }
        impl $trait<Ratio> for Ratio {
            type Output = Ratio;
            fn $method(self, other: Ratio) -> Ratio {
                (&self).$by_ref(&other)
            }
        }
    };
}

binary_op!(Add, add, add_ref);
binary_op!(Mul, mul, mul_ref);
binary_op!(Div, div, div_ref);

binary_op!(Sub, sub, sub_ref);

/// `a op= b` for borrowed and owned right-hand sides.
macro_rules! assign_op {
    ($trait:ident, $method:ident, $by_ref:ident) => {
        impl $trait<&Ratio> for Ratio {
            fn $method(&mut self, other: &Ratio) {
                *self = self.$by_ref(other);
            }
        }
        impl $trait<Ratio> for Ratio {
            fn $method(&mut self, other: Ratio) {
                *self = self.$by_ref(&other);
            }
        }
    };
}

assign_op!(AddAssign, add_assign, add_ref);
assign_op!(SubAssign, sub_assign, sub_ref);
assign_op!(MulAssign, mul_assign, mul_ref);
assign_op!(DivAssign, div_assign, div_ref);

impl Neg for Ratio {
    type Output = Ratio;
    fn neg(self) -> Ratio {
        self.neg_ref()
    }
}
impl Neg for &Ratio {
    type Output = Ratio;
    fn neg(self) -> Ratio {
        self.neg_ref()
    }
}

/// Sums without reducing after every term: the running fraction `n/d` is
/// reduced only when it no longer fits 64 bits (terms with the running
/// denominator, the usual case for weights like `0.25 0.30 0.45`, add no
/// factor at all), and once at the end. Past 64 bits the rest is summed by
/// [`tree_sum`].
fn sum_of<'a>(terms: impl Iterator<Item = &'a Ratio>) -> Ratio {
    capped_sum(terms, u64::MAX).expect("no limit, so never over it")
}

/// The exact sum of `terms` if no term and no partial sum needs more than
/// `max_bits` bits (numerator and denominator together, see
/// [`Ratio::bits`]); `None` as soon as one does. The work done before giving
/// up is bounded by the limit, not by the size of the terms' exact sum.
pub fn capped_sum<'a>(mut terms: impl Iterator<Item = &'a Ratio>, max_bits: u64) -> Option<Ratio> {
    let (mut n, mut d) = (0i128, 1i128);
    while let Some(term) = terms.next() {
        let Repr::Small(tn, td) = term.0 else {
            let so_far = Ratio::from_i128(n, d);
            return tree_sum(so_far, std::iter::once(term).chain(terms), max_bits);
        };
        let (tn, td) = (i128::from(tn), i128::from(td));
        // |n|, d, |tn|, td < 2^63, so nothing here overflows i128.
        (n, d) = if td == d {
            (n + tn, d)
        } else {
            (n * td + tn * d, d * td)
        };
        if i64::try_from(n).is_err() || i64::try_from(d).is_err() {
            let g = gcd(n.unsigned_abs(), d.unsigned_abs()) as i128;
            (n, d) = (n / g, d / g);
            if i64::try_from(n).is_err() || i64::try_from(d).is_err() {
                let so_far = Ratio::from_i128(n, d);
                return tree_sum(so_far, terms, max_bits);
            }
        }
    }
    let sum = Ratio::from_i128(n, d);
    (sum.bits() <= max_bits).then_some(sum)
}

/// Sums by a balanced tree of additions, level by level: adding the terms
/// one after the other makes every addition work on the growing sum, which
/// is quadratic in the size of the result when the denominators share no
/// factors (`1/2 + 1/3 + 1/5 + …`); pairing them keeps both operands of each
/// addition about the same size, so only the last few additions are large
/// (the product-tree idea of D. J. Bernstein's "Fast multiplication and its
/// applications", 2008 — recalled from memory — applied to sums of
/// fractions). `None` as soon as a term or a partial sum needs more than
/// `max_bits` bits.
fn tree_sum<'a>(
    first: Ratio,
    terms: impl Iterator<Item = &'a Ratio>,
    max_bits: u64,
) -> Option<Ratio> {
    let mut level: Vec<Ratio> = vec![first];
    for term in terms {
        if term.bits() > max_bits {
            return None;
        }
        level.push(term.clone());
    }
    while level.len() > 1 {
        let mut next = Vec::with_capacity(level.len().div_ceil(2));
        let mut pairs = level.chunks_exact(2);
        for pair in &mut pairs {
            let sum = pair[0].add_ref(&pair[1]);
            if sum.bits() > max_bits {
                return None;
            }
            next.push(sum);
        }
        next.extend(pairs.remainder().iter().cloned());
        level = next;
    }
    Some(level.pop().unwrap_or_else(Ratio::zero))
}

impl<'a> Sum<&'a Ratio> for Ratio {
    fn sum<I: Iterator<Item = &'a Ratio>>(iter: I) -> Ratio {
        sum_of(iter)
    }
}

impl Sum<Ratio> for Ratio {
    fn sum<I: Iterator<Item = Ratio>>(iter: I) -> Ratio {
        let terms: Vec<Ratio> = iter.collect();
        sum_of(terms.iter())
    }
}

impl Zero for Ratio {
    fn zero() -> Self {
        Ratio(Repr::Small(0, 1))
    }
    fn is_zero(&self) -> bool {
        matches!(self.0, Repr::Small(0, _))
    }
}

impl One for Ratio {
    fn one() -> Self {
        Ratio(Repr::Small(1, 1))
    }
    fn is_one(&self) -> bool {
        matches!(self.0, Repr::Small(1, 1))
    }
}

/// The remainder of truncated division, as for big rationals.
impl Rem<&Ratio> for &Ratio {
    type Output = Ratio;
    fn rem(self, other: &Ratio) -> Ratio {
        Ratio::from_big(self.to_big() % other.to_big())
    }
}
impl Rem for Ratio {
    type Output = Ratio;
    fn rem(self, other: Ratio) -> Ratio {
        &self % &other
    }
}

impl Num for Ratio {
    type FromStrRadixErr = <BigRational as Num>::FromStrRadixErr;
    fn from_str_radix(text: &str, radix: u32) -> Result<Self, Self::FromStrRadixErr> {
        BigRational::from_str_radix(text, radix).map(Ratio::from_big)
    }
}

impl Signed for Ratio {
    fn abs(&self) -> Self {
        if self.is_negative() {
            -self
        } else {
            self.clone()
        }
    }
    fn abs_sub(&self, other: &Self) -> Self {
        if self <= other {
            Ratio::zero()
        } else {
            self - other
        }
    }
    fn signum(&self) -> Self {
        match self.cmp(&Ratio::zero()) {
            Ordering::Less => -Ratio::one(),
            Ordering::Equal => Ratio::zero(),
            Ordering::Greater => Ratio::one(),
        }
    }
    fn is_positive(&self) -> bool {
        match &self.0 {
            Repr::Small(n, _) => *n > 0,
            Repr::Big(b) => b.is_positive(),
        }
    }
    fn is_negative(&self) -> bool {
        match &self.0 {
            Repr::Small(n, _) => *n < 0,
            Repr::Big(b) => b.is_negative(),
        }
    }
}

impl ToPrimitive for Ratio {
    fn to_i64(&self) -> Option<i64> {
        self.to_integer().to_i64()
    }
    fn to_u64(&self) -> Option<u64> {
        self.to_integer().to_u64()
    }
    /// The nearest float (`None` if the value is beyond the float range).
    fn to_f64(&self) -> Option<f64> {
        match &self.0 {
            // Both convert exactly, so the one rounding of the division gives
            // the nearest float, as the big-rational conversion does.
            Repr::Small(n, d) if n.unsigned_abs() <= 1 << 53 && *d <= 1 << 53 => {
                Some(*n as f64 / *d as f64)
            }
            _ => self.to_big().to_f64(),
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn big(n: i128, d: i128) -> BigRational {
        BigRational::new(BigInt::from(n), BigInt::from(d))
    }

    /// Values at the edges of the inline form and beyond it.
    fn samples() -> Vec<BigRational> {
        let max = i128::from(i64::MAX);
        let min = i128::from(i64::MIN);
        vec![
            big(0, 1),
            big(1, 1),
            big(-1, 1),
            big(1, 3),
            big(-7, 10),
            big(33, 100),
            big(max, 1),
            big(-max, 1),
            big(min, 1),
            big(1, max),
            big(max, max - 1),
            big(-5, max),
            big(max * 4, 3),
            big(1, max * 2),
            BigRational::new(BigInt::from(1), BigInt::from(1) << 100),
        ]
    }

    #[test]
    fn arithmetic_agrees_with_big_rationals() {
        // num-rational's BigRational is the reference: every operation on
        // every pair of samples gives the same reduced value.
        for a in samples() {
            for b in samples() {
                let (ra, rb) = (Ratio::from_big(a.clone()), Ratio::from_big(b.clone()));
                assert_eq!((&ra + &rb).to_big(), &a + &b, "{a} + {b}");
                assert_eq!((&ra - &rb).to_big(), &a - &b, "{a} - {b}");
                assert_eq!((&ra * &rb).to_big(), &a * &b, "{a} * {b}");
                if !b.is_zero() {
                    assert_eq!((&ra / &rb).to_big(), &a / &b, "{a} / {b}");
                }
                assert_eq!(ra.cmp(&rb), a.cmp(&b), "{a} <=> {b}");
                assert_eq!(ra == rb, a == b);
            }
        }
    }

    #[test]
    fn sums_agree_with_big_rational_sums() {
        // Every prefix of the samples (big ones included), forwards and
        // backwards, and long runs of small terms whose denominators grow
        // past 64 bits unless reduced.
        let all = samples();
        for len in 0..=all.len() {
            for terms in [
                all[..len].to_vec(),
                all[..len].iter().rev().cloned().collect(),
            ] {
                let expected: BigRational = terms.iter().sum();
                let ours: Vec<Ratio> = terms.into_iter().map(Ratio::from_big).collect();
                assert_eq!(ours.iter().sum::<Ratio>().to_big(), expected);
            }
        }
        let primes = [
            3i64, 7, 11, 13, 17, 19, 23, 29, 31, 37, 41, 43, 47, 53, 59, 61,
        ];
        let terms: Vec<Ratio> = primes
            .iter()
            .cycle()
            .take(100)
            .enumerate()
            .map(|(i, &p)| Ratio::new_i64(i as i64 - 40, p))
            .collect();
        let expected: BigRational = terms.iter().map(Ratio::to_big).sum();
        assert_eq!(terms.iter().sum::<Ratio>().to_big(), expected);
    }

    #[test]
    fn one_representation_per_value() {
        // A value that fits is inline however it was computed, so equality
        // of representations is equality of values.
        let max = Ratio::new_i64(i64::MAX, 1);
        let back = &(&max * &Ratio::new_i64(4, 1)) / &Ratio::new_i64(4, 1);
        assert_eq!(back, max);
        assert_eq!(back.to_i64_pair(), Some((i64::MAX, 1)));
        let min = Ratio::from_big(big(i128::from(i64::MIN), 1));
        assert_eq!(min.to_i64_pair(), None);
        assert_eq!(-(-&min), min);
        assert_eq!(Ratio::new_i64(2, -4), Ratio::new_i64(-1, 2));
    }

    #[test]
    fn conversions_print_and_round_like_big_rationals() {
        for a in samples() {
            let r = Ratio::from_big(a.clone());
            assert_eq!(r.to_string(), a.to_string());
            assert_eq!(r.to_f64(), a.to_f64(), "{a}");
            assert_eq!(r.numer(), *a.numer());
            assert_eq!(r.denom(), *a.denom());
            assert_eq!(r.is_integer(), a.is_integer());
            assert_eq!(r.to_integer(), a.to_integer());
            assert_eq!(r.is_negative(), a.is_negative());
            assert_eq!(r.is_positive(), a.is_positive());
        }
    }

    #[test]
    fn decimal_weights_sum_exactly() {
        // 0.1 + 0.2 + 0.7 = 1 exactly; 0.33 · 3 = 0.99, 1/100 short.
        let sum: Ratio = [(1, 10), (2, 10), (7, 10)]
            .iter()
            .map(|&(n, d)| Ratio::new_i64(n, d))
            .sum();
        assert!(sum.is_one());
        let thirds = &Ratio::new_i64(33, 100) * &Ratio::new_i64(3, 1);
        assert_eq!(Ratio::one() - thirds, Ratio::new_i64(1, 100));
    }

    #[test]
    fn binary_gcd_agrees_with_euclid() {
        fn euclid(mut a: u128, mut b: u128) -> u128 {
            while b != 0 {
                (a, b) = (b, a % b);
            }
            a.max(1)
        }
        let values = [
            0u128,
            1,
            2,
            12,
            18,
            1 << 70,
            3 << 65,
            u128::from(u64::MAX),
            u128::from(u64::MAX) * 6,
            1_000_000_007,
        ];
        for &a in &values {
            for &b in &values {
                assert_eq!(gcd(a, b), euclid(a, b), "gcd({a}, {b})");
                if let (Ok(a64), Ok(b64)) = (u64::try_from(a), u64::try_from(b)) {
                    assert_eq!(u128::from(gcd64(a64, b64)), euclid(a, b));
                }
            }
        }
    }
}
