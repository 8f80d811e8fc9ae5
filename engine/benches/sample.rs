//! Sampling throughput on the bundled ferry kiosk grammar.
//!
//! Reports sentences per second (criterion "elements"); the target is at
//! least 500,000 sentences/s on one core.

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use grammar_lang::{analyze, Config, MemoryLoader};
use std::hint::black_box;
use std::path::Path;
use trellis_engine::consistency::analyze as consistency;
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{Sampler, DEFAULT_LIMIT};

const KIOSK: &str = include_str!("../../examples/ferry_kiosk.trellis");
const LEXICON: &str = include_str!("../../examples/ferry_lexicon.trellis");

fn kiosk() -> grammar_lang::Grammar {
    let loader = MemoryLoader::new().with("examples/ferry_lexicon.trellis", LEXICON);
    let analysis = analyze(
        Path::new("examples/ferry_kiosk.trellis"),
        KIOSK,
        &loader,
        &Config::default(),
    );
    assert!(
        analysis.grammar.start.is_some(),
        "the ferry kiosk grammar did not load: {:?}",
        analysis.diagnostics
    );
    analysis.grammar
}

fn bench_sampling(c: &mut Criterion) {
    let g = kiosk();
    let start = g.start.expect("checked in kiosk()");
    let sampler = Sampler::new(&g).expect("the kiosk grammar compiles");
    const BATCH: u64 = 1_000;
    let mut group = c.benchmark_group("sample");
    group.throughput(Throughput::Elements(BATCH));
    group.bench_function("ferry_kiosk_sentences", |b| {
        let mut rng = Xoshiro256StarStar::seed_from_u64(1);
        let mut out = Vec::new();
        b.iter(|| {
            let mut words = 0usize;
            for _ in 0..BATCH {
                sampler
                    .sentence_into(&mut rng, start, DEFAULT_LIMIT, &mut out)
                    .expect("the kiosk grammar is tight");
                words += out.len();
            }
            black_box(words)
        })
    });
    group.bench_function("ferry_kiosk_trees", |b| {
        let mut rng = Xoshiro256StarStar::seed_from_u64(1);
        b.iter(|| {
            for _ in 0..BATCH {
                black_box(sampler.tree(&mut rng, start, DEFAULT_LIMIT).expect("tight"));
            }
        })
    });
    group.finish();

    c.bench_function("consistency_ferry_kiosk", |b| {
        b.iter(|| black_box(consistency(&g).expect("has a start")))
    });
}

/// A grammar of `n` mutually recursive symbols (one strongly connected
/// component): N_i → N_{i+1} N_j (0.3) | "w" N_k (0.2) | "w" (0.5), with j
/// and k spread by fixed strides. Subcritical (each use makes 0.8 more).
fn recursive_grammar(n: usize) -> grammar_lang::Grammar {
    let mut text = String::from("start N0\n");
    for i in 0..n {
        let (a, b, c) = ((i + 1) % n, (i * 7 + 3) % n, (i * 13 + 5) % n);
        text.push_str(&format!(
            "N{i} {{\n  0.3 N{a} N{b}\n  0.2 \"w\" N{c}\n  0.5 \"w\"\n}}\n"
        ));
    }
    grammar_lang::analyze_text(&text).grammar
}

fn bench_consistency(c: &mut Criterion) {
    let mut group = c.benchmark_group("consistency_recursive");
    group.sample_size(10);
    for n in [50usize, 200] {
        let g = recursive_grammar(n);
        group.bench_function(format!("{n}_symbols"), |b| {
            b.iter(|| black_box(consistency(&g).expect("has a start")))
        });
    }
    group.finish();
}

criterion_group!(benches, bench_sampling, bench_consistency);
criterion_main!(benches);
