//! Speed of the editor services on a large grammar: one 50,000-rule file
//! (about 2 MB), analysed once, with its [`IdeIndex`]. Each request must
//! cost a binary search plus the size of its answer, or at most one linear
//! scan (references, rename, completion lists, whole-file semantic tokens),
//! never a re-analysis. Building the index is measured on its own.
//!
//! Measured once (release build, a 2-core machine shared with other
//! builds, so only the orders of magnitude matter): definition ≈ 1 µs,
//! hover on a symbol ≈ 3 µs, on a rule ≈ 20 µs, on a word ≈ 60 µs; one
//! screen of semantic tokens ≈ 70 µs and of inlay hints ≈ 90 µs; workspace
//! symbols ≈ 5 ms, completion ≈ 7 ms, references ≈ 10 ms; index ≈ 33 ms,
//! whole-file semantic tokens ≈ 35 ms, the 56,000-entry outline ≈ 140 ms.

use criterion::{criterion_group, criterion_main, Criterion};
use grammar_lang::source::FileId;
use grammar_lang::{analyze_text, Span};
use std::fmt::Write;
use std::hint::black_box;
use std::time::Duration;
use trellis_ide::{self as ide, IdeIndex};

/// 64-bit LCG (Knuth's MMIX constants), so every run sees the same text.
struct Lcg(u64);

impl Lcg {
    fn below(&mut self, n: usize) -> usize {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        ((self.0 >> 33) as usize) % n
    }
}

/// Blocks `N0…` of eight alternatives each (weights 1/8, or `relative`),
/// referring to later blocks and to a 3,000-word vocabulary; every block
/// has a doc comment and a comment.
fn generate(rules: usize) -> String {
    let blocks = rules / 8;
    let mut rng = Lcg(0x1de_2026);
    let mut out = String::from("grammar bench\nstart N0\n");
    for b in 0..blocks {
        let _ = writeln!(out, "\n## Block number {b}.");
        let relative = b % 5 == 4;
        let _ = writeln!(out, "N{b}{} {{", if relative { " relative" } else { "" });
        for a in 0..8 {
            out.push_str(if relative { "  3  " } else { "  1/8  " });
            let _ = write!(out, "\"w{}\"", (b * 8 + a) % 3000);
            for _ in 0..rng.below(3) {
                let child = b + 1 + rng.below(blocks.saturating_sub(b + 1).clamp(1, 40));
                if child < blocks {
                    let _ = write!(out, " N{child}");
                } else {
                    let _ = write!(out, " \"w{}\"", rng.below(3000));
                }
            }
            if a == 0 {
                out.push_str("   # the first alternative");
            }
            out.push('\n');
        }
        out.push_str("}\n");
    }
    out
}

fn bench(c: &mut Criterion) {
    let text = generate(50_000);
    let a = analyze_text(&text);
    assert_eq!(a.grammar.rules.len(), 50_000);
    let index = IdeIndex::new(&a);
    let f = FileId(0);
    // Offsets spread over the file: a name, a weight, a word.
    let mid = text.len() / 2;
    let name = mid + text[mid..].find("\nN").unwrap_or(0) + 1;
    let weight = mid + text[mid..].find("1/8").unwrap_or(0);
    let word = mid + text[mid..].find("\"w").unwrap_or(0) + 1;
    let use_of = mid + text[mid..].find(" N").unwrap_or(0) + 2;

    let mut group = c.benchmark_group("ide_50k_rules");
    group.measurement_time(Duration::from_secs(3));
    group.sample_size(20);
    group.bench_function("index_new", |b| b.iter(|| IdeIndex::new(black_box(&a))));
    group.bench_function("hover_rule", |b| {
        b.iter(|| ide::hover(&a, &index, f, black_box(weight), None))
    });
    group.bench_function("hover_non_terminal", |b| {
        b.iter(|| ide::hover(&a, &index, f, black_box(name), None))
    });
    group.bench_function("hover_terminal", |b| {
        b.iter(|| ide::hover(&a, &index, f, black_box(word), None))
    });
    group.bench_function("definition", |b| {
        b.iter(|| ide::definition(&a, f, black_box(use_of)))
    });
    group.bench_function("references", |b| {
        b.iter(|| ide::references(&a, f, black_box(use_of), true))
    });
    group.bench_function("completion_on_rhs", |b| {
        b.iter(|| ide::completions(&a, f, black_box(use_of)))
    });
    group.bench_function("semantic_tokens_whole_file", |b| {
        b.iter(|| ide::semantic_tokens(&a, f, None))
    });
    group.bench_function("semantic_tokens_one_screen", |b| {
        b.iter(|| ide::semantic_tokens(&a, f, Some(Span::new(mid, mid + 4000))))
    });
    group.bench_function("inlay_hints_one_screen", |b| {
        b.iter(|| ide::inlay_hints(&a, f, Span::new(mid, mid + 4000)))
    });
    group.bench_function("document_symbols", |b| {
        b.iter(|| ide::document_symbols(&a, f))
    });
    group.bench_function("workspace_symbols", |b| {
        b.iter(|| ide::workspace_symbols(&a, black_box("N42"), 100))
    });
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
