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

criterion_group!(benches, bench_sampling);
criterion_main!(benches);
