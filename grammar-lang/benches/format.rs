//! Speed of the formatter: `format` (lex, parse and lay out) on a generated
//! 50,000-rule grammar, and the minimal edits from the original text to the
//! formatted one (what the language server answers). Target: formatting
//! 50,000 rules in under 150 ms.

mod common;

use common::generate;
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use grammar_lang::format::{format, minimal_edits, FormatOptions};
use std::hint::black_box;
use std::time::Duration;

/// The allocator of the `trellis` binary, so the figures are the ones a
/// user gets (see `cli/src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn bench_format(c: &mut Criterion) {
    let mut group = c.benchmark_group("format");
    let options = FormatOptions::default();
    for rules in [2_000usize, 50_000] {
        let text = generate(rules);
        let formatted = format(&text, &options).expect("the generated grammar parses");
        // The generator's layout is not the canonical one: there is work to do.
        assert_ne!(formatted, text);
        group.throughput(Throughput::Elements(rules as u64));
        if rules >= 50_000 {
            group.sample_size(10);
            group.measurement_time(Duration::from_secs(5));
        }
        group.bench_with_input(BenchmarkId::new("rules", rules), &text, |b, text| {
            b.iter(|| format(black_box(text), &options))
        });
        group.bench_with_input(
            BenchmarkId::new("minimal_edits", rules),
            &(&text, &formatted),
            |b, (text, formatted)| b.iter(|| minimal_edits(black_box(text), black_box(formatted))),
        );
    }
    group.finish();
}

criterion_group!(benches, bench_format);
criterion_main!(benches);
