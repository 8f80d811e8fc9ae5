//! Checking a directory whose grammar files form one `use` chain, against
//! checking the chain from its first file: a run reads and parses each
//! file once and analyses only the head of the chain, so both should cost
//! about the same (before, a directory run analysed every file as a root of
//! its own, re-reading the rest of the chain each time: quadratic).
//!
//! `cargo bench -p trellis-project --bench use_chain`

use criterion::{criterion_group, criterion_main, Criterion};
use std::fmt::Write;
use std::path::Path;
use trellis_project::{analyse_paths, identity, select};

/// The files of the chain.
const FILES: usize = 100;
/// Filler blocks per file: about 24 KB each, 2.4 MB in all.
const BLOCKS: usize = 100;

/// File `i` of the chain: block `B{i}` reaches its filler blocks and
/// `B{i+1}` in the next file, which it `use`s.
fn chain_file(i: usize) -> String {
    let mut text = String::new();
    if i == 0 {
        text.push_str("start B0\n");
    }
    if i + 1 < FILES {
        writeln!(text, "use \"link{:03}.trellis\"", i + 1).unwrap();
    }
    text.push_str(&format!("B{i} {{\n"));
    for k in 0..BLOCKS {
        writeln!(text, "  | F{i}x{k}").unwrap();
    }
    if i + 1 < FILES {
        writeln!(text, "  | B{}", i + 1).unwrap();
    }
    text.push_str("}\n");
    for k in 0..BLOCKS {
        writeln!(
            text,
            "F{i}x{k} {{ \"ferry\" \"ticket\" | \"harbour\" \"pass\" | \"deck\" }}"
        )
        .unwrap();
    }
    text
}

fn check(path: &Path) -> usize {
    let analysed = analyse_paths(&[path.to_path_buf()])
        .ok()
        .expect("no config");
    select(&analysed.checked, identity).findings.len()
}

fn use_chain(c: &mut Criterion) {
    let dir = tempfile::tempdir().expect("a temporary directory");
    let mut bytes = 0;
    for i in 0..FILES {
        let text = chain_file(i);
        bytes += text.len();
        std::fs::write(dir.path().join(format!("link{i:03}.trellis")), text).expect("written");
    }
    let first = dir.path().join("link000.trellis");
    // The same findings either way.
    assert_eq!(check(dir.path()), check(&first));
    let mut group = c.benchmark_group(format!("use_chain_{FILES}_files_{}_kb", bytes / 1000));
    group.sample_size(10);
    group.bench_function("check_dir", |b| b.iter(|| check(dir.path())));
    group.bench_function("check_first_file", |b| b.iter(|| check(&first)));
    group.finish();
}

criterion_group!(benches, use_chain);
criterion_main!(benches);
