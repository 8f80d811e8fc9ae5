//! Learning speed: 40,000 treebank trees of 25 words each, read from text,
//! cleaned, binarized (h = 2, v = 2) and counted (`Counts::add_binarized`:
//! counted while binarizing, each derived name built once), then the
//! grammar written.
//! Target (issue tracker): under 2 s on one core. Also prints both ways of
//! counting (binarized trees counted afterwards, and counted while
//! binarizing) on the thread's CPU time.

// A benchmark reports what it measured on the terminal.
#![allow(clippy::print_stdout, clippy::print_stderr)]

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::fmt::Write;
use trellis_test_support::bench::cpu_time_ns;
use trellis_treebank::learn::{Counts, LearnOptions};
use trellis_treebank::{binarize, clean, Cleaning, Markov, TreeReader};

/// A deterministic pseudo-random treebank: 25-word sentences bracketed
/// into phrases of 1–4 pre-terminals under a clause, over a 2,000-word
/// lexicon and 40 tags (SplitMix64 for the choices).
fn treebank(trees: usize) -> String {
    let mut state = 0x5eed_u64;
    let mut next = move |n: u64| {
        state = state.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = state;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        (z ^ (z >> 31)) % n
    };
    let phrases = ["NP", "VP", "PP", "ADJP", "ADVP", "SBAR", "QP", "PRN"];
    let mut out = String::with_capacity(trees * 600);
    for _ in 0..trees {
        out.push_str("(S");
        let mut words = 0;
        while words < 25 {
            let len = (1 + next(4) as usize).min(25 - words);
            let _ = write!(out, " ({}-SBJ", phrases[next(8) as usize]);
            for _ in 0..len {
                let _ = write!(out, " (T{} w{})", next(40), next(2000));
            }
            out.push(')');
            words += len;
        }
        out.push_str(")\n");
    }
    out
}

fn bench(c: &mut Criterion) {
    let text = treebank(40_000);
    let how = Markov {
        horizontal: Some(2),
        vertical: 2,
    };
    let cleaning = Cleaning {
        strip_functions: true,
        drop_empty: true,
        collapse_unary: false,
    };
    let learn = |fused: bool| {
        let mut counts = Counts::new();
        for tree in TreeReader::new(text.as_bytes()) {
            let tree = tree.expect("well-formed");
            if let Some(tree) = clean(tree, &cleaning) {
                if fused {
                    counts.add_binarized(&tree, how);
                } else {
                    counts.add(&binarize(&tree, how));
                }
            }
        }
        counts.to_source(&LearnOptions::default()).len()
    };
    // The machine is shared, so wall-clock figures vary with the load; the
    // thread's own CPU time gives a steadier figure next to criterion's.
    for (fused, what) in [
        (false, "binarized trees, then counted"),
        (true, "counted while binarizing"),
    ] {
        if let Some(ns) = cpu_time_ns(|| {
            std::hint::black_box(learn(fused));
        }) {
            eprintln!("learn 40k trees, {what}: {:.2} s of CPU time", ns / 1e9);
        }
    }
    let mut group = c.benchmark_group("learn");
    group.sample_size(10);
    group.throughput(Throughput::Elements(40_000));
    group.bench_function("40k trees of 25 words, h=2 v=2", |b| b.iter(|| learn(true)));
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
