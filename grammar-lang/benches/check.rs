//! Speed of the whole front end: `analyze_text` (lex, parse, lower and every
//! check) on large generated grammars.
//!
//! The grammars come from a deterministic generator with a realistic shape:
//! blocks of 3–12 alternatives mixing terminals and non-terminals, weights
//! in all three notations that sum to exactly 1 (some blocks `relative`,
//! some alternatives unweighted), doc comments and comments, every block
//! reachable and productive, no unary cycles. Target: 50,000 rules in under
//! 100 ms on one core.
//!
//! `phases_50000` times the front phases alone (lexing, parsing, parsing
//! plus lowering) so the share of each phase can be read off by difference.

mod common;

use common::generate;
use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use grammar_lang::syntax::{self, lexer::lex};
use grammar_lang::{analyze_text, check, lower, Config, MemoryLoader};
use std::hint::black_box;
use std::path::Path;
use std::time::Duration;

/// The allocator of the `trellis` binary, so the figures are the ones a
/// user gets (see `cli/src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

fn bench_check(c: &mut Criterion) {
    let mut group = c.benchmark_group("analyze_text");
    for rules in [2_000usize, 50_000] {
        let text = generate(rules);
        // The generator must produce what it promises: a clean grammar.
        let analysis = analyze_text(&text);
        assert!(
            analysis.grammar.rules.len() >= rules,
            "generator produced {} rules",
            analysis.grammar.rules.len()
        );
        if let Some(d) = analysis.diagnostics.first() {
            panic!(
                "generated grammar is not clean: {} {} ({} findings)",
                d.code,
                d.message,
                analysis.diagnostics.len()
            );
        }
        group.throughput(Throughput::Elements(rules as u64));
        if rules >= 50_000 {
            group.sample_size(10);
            group.measurement_time(Duration::from_secs(5));
        }
        group.bench_with_input(BenchmarkId::new("rules", rules), &text, |b, text| {
            b.iter(|| analyze_text(black_box(text)))
        });
    }
    group.finish();
}

/// The phases of the 50,000-rule case on their own, to see where the time
/// goes: lexing, syntax (lexing + parsing), syntax + lowering, and the
/// model checks alone on the lowered grammar; the whole analysis is above.
fn bench_phases(c: &mut Criterion) {
    let text = generate(50_000);
    let mut group = c.benchmark_group("phases_50000");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(5));
    group.bench_function("lex", |b| b.iter(|| lex(black_box(&text))));
    group.bench_function("parse", |b| b.iter(|| syntax::parse(black_box(&text))));
    group.bench_function("parse_and_lower", |b| {
        b.iter(|| {
            lower::lower(
                Path::new("generated.trellis"),
                black_box(&text),
                &MemoryLoader::new(),
            )
        })
    });
    let lowered = lower::lower(Path::new("generated.trellis"), &text, &MemoryLoader::new());
    let config = Config::default();
    group.bench_function("checks", |b| {
        b.iter(|| {
            let mut out = Vec::new();
            check::run_checks(
                black_box(&lowered.grammar),
                &lowered.sources,
                &lowered.syntax,
                &config,
                &mut out,
            );
            out
        })
    });
    group.finish();
}

criterion_group!(benches, bench_check, bench_phases);
criterion_main!(benches);
