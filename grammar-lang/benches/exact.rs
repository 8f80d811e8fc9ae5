//! Exact arithmetic on hostile weights: a block of 3,000 alternatives
//! `1/p` over distinct primes (its exact sum has a 13,000-digit
//! denominator), and one weight written with 200,000 digits. Both are
//! analysed whole by `analyze_text`. And, below the exact-sum limit,
//! 1,000 such weights, summed exactly.
//!
//! Figures on the shared 2-core development machine (load about 10), one
//! analysis each:
//!
//! | case | left-to-right exact sums, no limit | tree sums, 65,536-bit limit |
//! |---|---|---|
//! | `prime_reciprocals_3000` | ≈ 55 s (one warm-up run) | 116 ms (past the limit: floating point) |
//! | `prime_reciprocals_1000_exact` | 2.46 s | 26 ms (exact) |
//! | `weight_200000_digits` | ≈ 31 s (one warm-up run) | 161 ms (read exactly, summed in floating point) |

use criterion::{criterion_group, criterion_main, Criterion};
use grammar_lang::analyze_text;
use std::hint::black_box;
use std::time::Duration;
use trellis_test_support::grammars::prime_reciprocals;

#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn long_weight(digits: usize) -> String {
    format!(
        "grammar harbour\nstart Call\nCall {{\n  0.{} \"ahoy\"\n  \"hail\"\n}}\n",
        "3".repeat(digits)
    )
}

fn bench_exact(c: &mut Criterion) {
    let mut group = c.benchmark_group("exact");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(5));
    let reciprocals = prime_reciprocals(3_000);
    group.bench_function("prime_reciprocals_3000", |b| {
        b.iter(|| analyze_text(black_box(&reciprocals)))
    });
    // Below the limit: 1,000 primes give an exact sum of about 23,000 bits.
    let exact = prime_reciprocals(1_000);
    group.bench_function("prime_reciprocals_1000_exact", |b| {
        b.iter(|| analyze_text(black_box(&exact)))
    });
    let weight = long_weight(200_000);
    group.bench_function("weight_200000_digits", |b| {
        b.iter(|| analyze_text(black_box(&weight)))
    });
    group.finish();
}

criterion_group!(benches, bench_exact);
criterion_main!(benches);
