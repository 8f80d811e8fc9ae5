//! What the exact parse count and the k best trees add to a parse, on the
//! generated grammar of `parse.rs` (300 non-terminals, 30,000 binary rules,
//! a 2,000-word lexicon; `support::generated_grammar`) at 40 words.
//!
//! Prints, on the thread's CPU time (least of five interleaved rounds),
//! the overhead ratios the engine is held to: (Viterbi + inside + count) /
//! (Viterbi + inside), and (k-best with k = 10) / (best tree only, k = 1),
//! both without counting;
//! and the bytes of k-best state one sentence needs at k = 10. Criterion
//! then times each configuration.

// A benchmark reports what it measured on the terminal.
#![allow(clippy::print_stdout, clippy::print_stderr)]

mod support;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use std::hint::black_box;
use support::{generated_grammar, sentences};
use trellis_engine::parser::{ParseOptions, Parser};
use trellis_test_support::bench::least_cpu_times;

fn options(kbest: usize, count_parses: bool) -> ParseOptions {
    ParseOptions {
        kbest,
        count_parses,
        explain: false,
        ..ParseOptions::default()
    }
}

fn bench_with(c: &mut Criterion, ambiguity: usize, name: &str) {
    let g = generated_grammar(ambiguity);
    let parser = Parser::new(&g).expect("the generated grammar compiles");
    let sentences = sentences(40, 4, 40);
    let configurations = [
        ("viterbi_inside", options(1, false)),
        ("viterbi_inside_count", options(1, true)),
        ("viterbi_inside_kbest10", options(10, false)),
    ];
    let run = |o: &ParseOptions| {
        for s in &sentences {
            black_box(parser.parse(black_box(s), o).expect("fits"));
        }
    };
    // Warm up once, then the least CPU time of five interleaved rounds of
    // at least 0.2 s each.
    for (_, o) in &configurations {
        run(o);
    }
    let calls: Vec<Box<dyn Fn()>> = configurations
        .iter()
        .map(|(_, o)| Box::new(move || run(o)) as Box<dyn Fn()>)
        .collect();
    let refs: Vec<&dyn Fn()> = calls.iter().map(|f| f.as_ref()).collect();
    let times: Vec<Option<f64>> = least_cpu_times(5, 2e8, &refs)
        .into_iter()
        .map(|t| t.is_finite().then_some(t))
        .collect();
    if let [Some(base), Some(count), Some(kbest)] = times[..] {
        let per = |ns: f64| ns / 1e6 / sentences.len() as f64;
        eprintln!(
            "{name}: on CPU time per sentence: Viterbi + inside {:.1} ms, + count {:.1} ms \
             (ratio {:.3}), k-best 10 {:.1} ms (ratio to best 1: {:.3})",
            per(base),
            per(count),
            count / base,
            per(kbest),
            kbest / base
        );
    }
    let digits: Vec<usize> = sentences
        .iter()
        .map(|s| {
            let out = parser.parse(s, &options(1, true)).expect("fits");
            out.parse_count.map_or(0, |c| c.to_string().len())
        })
        .collect();
    eprintln!("{name}: parse counts of {digits:?} decimal digits");
    let state: Vec<u64> = sentences
        .iter()
        .map(|s| parser.kbest_state_bytes(s, 10).expect("fits"))
        .collect();
    eprintln!(
        "{name}: k-best state at k = 10: {:.2} MiB per sentence at most ({:?} bytes)",
        *state.iter().max().unwrap_or(&0) as f64 / (1 << 20) as f64,
        state
    );
    let mut group = c.benchmark_group(name);
    group.sample_size(10);
    group.throughput(Throughput::Elements(sentences.len() as u64));
    for (label, o) in &configurations {
        group.bench_function(*label, |b| b.iter(|| run(o)));
    }
    group.finish();
}

fn bench_generated(c: &mut Criterion) {
    bench_with(c, 0, "count_kbest_generated_40_words");
    bench_with(c, 4, "count_kbest_ambiguous_lexicon_40_words");
}

criterion_group!(benches, bench_generated);
criterion_main!(benches);
