//! Edit-to-diagnostics latency of the language server: the time from
//! sending `textDocument/didChange` (full text) to receiving the
//! `textDocument/publishDiagnostics` for that version, through the real
//! transport (framing, JSON, tower-lsp, the analysis worker) over in-memory
//! pipes. Targets: median under 10 ms for a 2,000-rule grammar and under
//! 150 ms for a 50,000-rule one.
//!
//! `analysis_alone` times the core's analysis of the same texts, so the
//! server's own share can be read off by difference.
//!
//! Also prints the growth of the process's resident memory (VmRSS from
//! /proc/self/status) from opening the 50,000-rule grammar.

mod support;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use std::fmt::Write as _;
use std::time::{Duration, Instant};
use support::{rss_kib, Client};
use tokio::runtime::Runtime;
use trellis_engine::rng::{RandomSource, SplitMix64};

/// A clean grammar of `rules` rules: blocks of four alternatives in a
/// binary-heap layout (every block reachable, productive, acyclic), weights
/// in the three notations summing to exactly 1, some doc comments, and a
/// few non-ASCII words.
fn generate(rules: usize) -> String {
    let blocks = rules / 4;
    // The engine's own seeded generator, so every run benchmarks the same text.
    let mut rng = SplitMix64::new(0x5eed_f377);
    let mut out = String::with_capacity(rules * 32);
    out.push_str("grammar generated\nstart S0\n");
    for b in 0..blocks {
        if b % 7 == 0 {
            let _ = writeln!(out, "\n## Block {b}.");
        }
        let _ = writeln!(out, "S{b} {{");
        let word = |rng: &mut SplitMix64| {
            let w = rng.below(4001);
            if w.is_multiple_of(50) {
                format!("\"fähre{w}\"")
            } else {
                format!("\"w{w}\"")
            }
        };
        let child = |c: usize, rng: &mut SplitMix64| {
            if c < blocks {
                format!("S{c}")
            } else {
                word(rng)
            }
        };
        let (l, r) = (2 * b + 1, 2 * b + 2);
        let _ = writeln!(out, "  0.25  {} {}", word(&mut rng), word(&mut rng));
        let _ = writeln!(out, "  1/4   {} {}", child(l, &mut rng), word(&mut rng));
        let _ = writeln!(out, "  25%   {} {}", word(&mut rng), child(r, &mut rng));
        let _ = writeln!(out, "  0.25  {}", word(&mut rng));
        out.push_str("}\n");
    }
    out
}

fn bench_latency(c: &mut Criterion) {
    let runtime = Runtime::new().unwrap();
    let mut group = c.benchmark_group("did_change_to_diagnostics");
    for rules in [2_000usize, 50_000] {
        let text = generate(rules);
        let uri = format!("file:///bench/generated_{rules}.trellis");
        let before = rss_kib();
        let mut client = runtime.block_on(async {
            let mut client = Client::start();
            client.initialize().await;
            client.open(&uri, &text).await;
            client
        });
        if let (Some(before), Some(after)) = (before, rss_kib()) {
            eprintln!(
                "{rules} rules ({} KiB of text): resident memory grew by {} KiB after opening (now {} KiB)",
                text.len() / 1024,
                after.saturating_sub(before),
                after
            );
        }
        // Every edit changes the text (a trailing comment), so every
        // version needs a fresh analysis.
        let edited: Vec<String> = (0..2).map(|i| format!("{text}# edit {i}\n")).collect();
        let mut version = 1i64;
        group.throughput(Throughput::Elements(rules as u64));
        if rules >= 50_000 {
            group.sample_size(20);
            group.measurement_time(Duration::from_secs(10));
        }
        group.bench_function(BenchmarkId::new("rules", rules), |b| {
            b.iter_custom(|iterations| {
                runtime.block_on(async {
                    let mut total = Duration::ZERO;
                    for _ in 0..iterations {
                        version += 1;
                        let body = &edited[(version % 2) as usize];
                        let started = Instant::now();
                        client.change(&uri, version, body).await;
                        let n = client.diagnostics(&uri, version).await;
                        total += started.elapsed();
                        assert_eq!(n, 0);
                    }
                    total
                })
            })
        });
    }
    group.finish();
}

/// The core's analysis of the same texts on its own (what the server
/// calls per edit), to tell the server's share of the latency from the
/// analysis's.
fn bench_analysis_alone(c: &mut Criterion) {
    let mut group = c.benchmark_group("analysis_alone");
    for rules in [2_000usize, 50_000] {
        let text = generate(rules);
        let path = std::path::PathBuf::from(format!("/bench/generated_{rules}.trellis"));
        group.throughput(Throughput::Elements(rules as u64));
        if rules >= 50_000 {
            group.sample_size(20);
            group.measurement_time(Duration::from_secs(10));
        }
        group.bench_function(BenchmarkId::new("rules", rules), |b| {
            b.iter(|| {
                grammar_lang::analyze(
                    &path,
                    std::hint::black_box(&text),
                    &grammar_lang::MemoryLoader::new(),
                    &grammar_lang::Config::default(),
                )
            })
        });
    }
    group.finish();
}

criterion_group!(benches, bench_latency, bench_analysis_alone);
criterion_main!(benches);
