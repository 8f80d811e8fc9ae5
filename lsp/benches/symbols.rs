//! `textDocument/documentSymbol` on learned-size grammars (1 and 5 MB):
//! the time from the request to its answer through the real transport
//! (framing, JSON, the service) over in-memory pipes, with the answer's
//! size and the growth of resident memory (VmRSS from /proc/self/status)
//! printed once per size.
//!
//! The grammars have the shape learned grammars have: a few hundred
//! blocks of hundreds of alternatives and one lexicon block of tens of
//! thousands of words, so the outline's bounds on children per block
//! (`trellis_ide::MAX_CHILDREN`) and in all (`MAX_OUTLINE_CHILDREN`) are
//! what keep the answer small.
//!
//! Measured under a load of about 10 on 2 cores (2026-12-03): with only
//! the per-block bound, 1 MB gave a 9.9 MB outline in 1.9 s (resident
//! memory +176 MiB) and 5 MB a 48 MB outline in 13.3 s (+368 MiB). With
//! the bound in all: 1 MB gives 1.3 MB in 120 ms (+28 MiB), 5 MB 1.5 MB in
//! 144 ms (+18 MiB).

mod support;

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use serde_json::json;
use std::fmt::Write as _;
use std::time::{Duration, Instant};
use support::{rss_kib, Client};
use tokio::runtime::Runtime;

/// A clean grammar of about `bytes` bytes: `S` chooses among the phrase
/// blocks `P0…`, each of 400 alternatives `weight W P(i+1)`-style over a
/// lexicon block `W` holding a quarter of the text.
fn generate(bytes: usize) -> String {
    const ALTERNATIVES: usize = 400;
    let words = bytes / 4 / 16;
    let phrases = (bytes * 3 / 4) / (ALTERNATIVES * 22);
    let mut out = String::with_capacity(bytes + 1024);
    out.push_str("grammar learned\nstart S\nS relative {\n");
    for p in 0..phrases {
        let _ = writeln!(out, "  1 P{p}");
    }
    out.push_str("}\n");
    for p in 0..phrases {
        let _ = writeln!(out, "P{p} relative {{");
        for a in 0..ALTERNATIVES {
            let _ = writeln!(out, "  {} W \"p{p}x{a}\"", 1 + a % 9);
        }
        out.push_str("}\n");
    }
    out.push_str("W relative {\n");
    for w in 0..words {
        let _ = writeln!(out, "  {} \"word{w}\"", 1 + w % 5);
    }
    out.push_str("}\n");
    out
}

fn bench_document_symbols(c: &mut Criterion) {
    let runtime = Runtime::new().unwrap();
    let mut group = c.benchmark_group("document_symbols");
    group.sample_size(10);
    group.measurement_time(Duration::from_secs(10));
    for megabytes in [1usize, 5] {
        let text = generate(megabytes << 20);
        let uri = format!("file:///bench/learned_{megabytes}mb.trellis");
        let mut client = runtime.block_on(async {
            let mut client = Client::start();
            client.initialize().await;
            client.open(&uri, &text).await;
            client
        });
        let mut id = 100;
        let before = rss_kib();
        let answer = runtime.block_on(async {
            id += 1;
            client
                .send(
                    json!({"jsonrpc": "2.0", "id": id, "method": "textDocument/documentSymbol",
                             "params": {"textDocument": {"uri": uri}}}),
                )
                .await;
            client.response(id).await
        });
        eprintln!(
            "{megabytes} MB grammar ({} bytes): the outline is {} bytes; resident memory grew by {} KiB",
            text.len(),
            answer.len(),
            before
                .zip(rss_kib())
                .map_or(0, |(b, a)| a.saturating_sub(b))
        );
        group.throughput(Throughput::Bytes(text.len() as u64));
        group.bench_function(BenchmarkId::new("megabytes", megabytes), |b| {
            b.iter_custom(|iterations| {
                runtime.block_on(async {
                    let mut total = Duration::ZERO;
                    for _ in 0..iterations {
                        id += 1;
                        let started = Instant::now();
                        client
                            .send(json!({"jsonrpc": "2.0", "id": id, "method": "textDocument/documentSymbol",
                                         "params": {"textDocument": {"uri": uri}}}))
                            .await;
                        let answer = client.response(id).await;
                        total += started.elapsed();
                        assert!(answer.len() > 2);
                    }
                    total
                })
            })
        });
    }
    group.finish();
}

criterion_group!(benches, bench_document_symbols);
criterion_main!(benches);
