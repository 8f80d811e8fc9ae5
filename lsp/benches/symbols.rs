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

use criterion::{criterion_group, criterion_main, BenchmarkId, Criterion, Throughput};
use serde_json::{json, Value};
use std::fmt::Write as _;
use std::time::{Duration, Instant};
use tokio::io::{AsyncBufReadExt, AsyncReadExt, AsyncWriteExt, BufReader, DuplexStream};
use tokio::runtime::Runtime;

/// The allocator of the `trellis` binary, which runs the server (see
/// `cli/src/main.rs`).
#[global_allocator]
static ALLOCATOR: mimalloc::MiMalloc = mimalloc::MiMalloc;

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

fn frame(body: &str) -> Vec<u8> {
    let mut out = format!("Content-Length: {}\r\n\r\n", body.len()).into_bytes();
    out.extend_from_slice(body.as_bytes());
    out
}

struct Client {
    writer: DuplexStream,
    reader: BufReader<DuplexStream>,
}

impl Client {
    fn start() -> Client {
        let (writer, server_input) = tokio::io::duplex(1 << 22);
        let (server_output, reader) = tokio::io::duplex(1 << 22);
        tokio::spawn(trellis_lsp::serve(
            server_input,
            server_output,
            trellis_lsp::Options::default(),
        ));
        Client {
            writer,
            reader: BufReader::new(reader),
        }
    }

    async fn send(&mut self, message: Value) {
        self.writer
            .write_all(&frame(&message.to_string()))
            .await
            .unwrap();
    }

    /// The next message's body.
    async fn receive(&mut self) -> Vec<u8> {
        let mut length = 0;
        loop {
            let mut line = String::new();
            assert!(
                self.reader.read_line(&mut line).await.unwrap() > 0,
                "server gone"
            );
            let line = line.trim_end();
            if line.is_empty() {
                break;
            }
            if let Some(n) = line.strip_prefix("Content-Length: ") {
                length = n.parse().unwrap();
            }
        }
        let mut body = vec![0; length];
        self.reader.read_exact(&mut body).await.unwrap();
        body
    }

    /// Waits for the response to request `id`; returns its body.
    async fn response(&mut self, id: i64) -> Vec<u8> {
        loop {
            let body = self.receive().await;
            let m: Value = serde_json::from_slice(&body).unwrap();
            if m["id"] == id {
                return body;
            }
        }
    }

    async fn initialize_and_open(&mut self, uri: &str, text: &str) {
        self.send(json!({"jsonrpc": "2.0", "id": 1, "method": "initialize",
                         "params": {"capabilities": {}}}))
            .await;
        self.response(1).await;
        self.send(json!({"jsonrpc": "2.0", "method": "initialized", "params": {}}))
            .await;
        self.send(json!({"jsonrpc": "2.0", "method": "textDocument/didOpen",
            "params": {"textDocument": {"uri": uri, "languageId": "trellis", "version": 1, "text": text}}}))
            .await;
        loop {
            let m: Value = serde_json::from_slice(&self.receive().await).unwrap();
            if m["method"] == "textDocument/publishDiagnostics" && m["params"]["uri"] == uri {
                assert_eq!(
                    m["params"]["diagnostics"],
                    json!([]),
                    "the grammar is clean"
                );
                return;
            }
        }
    }
}

/// Resident memory of this process in KiB (Linux), if known.
fn rss_kib() -> Option<u64> {
    let status = std::fs::read_to_string("/proc/self/status").ok()?;
    status
        .lines()
        .find_map(|l| l.strip_prefix("VmRSS:"))?
        .trim()
        .trim_end_matches("kB")
        .trim()
        .parse()
        .ok()
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
            client.initialize_and_open(&uri, &text).await;
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
