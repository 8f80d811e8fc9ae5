//! Parsing speed.
//!
//! (a) A generated grammar of the size of a treebank grammar: 300
//!     non-terminals (50 word classes, 250 phrase symbols), 30,000 binary
//!     rules and a 2,000-word lexicon; 40-word sentences. Reports binary-rule
//!     evaluations per second (one rule tried at one split point with both
//!     children present — counted once in the setup by
//!     `Parser::binary_evaluations`, never in the timed loop) and sentences
//!     per second, for the Viterbi pass alone and for a full parse
//!     (Viterbi + inside; no parse count, which uses big integers). Run
//!     twice: with a nearly unambiguous lexicon (most cells hold few
//!     symbols, so index look-ups weigh more than evaluations) and with every
//!     word in about five word classes (denser cells).
//!     The same 40-word sentences are also parsed under per-cell beams
//!     (`ParseOptions::beam`), printing the speed ratio against the exact
//!     Viterbi + inside, whether the best tree stayed the same, and how much
//!     of the sentence probability survived.
//! (b) The ferry-kiosk example grammar (`examples/ferry_kiosk.trellis`) with
//!     15-word sentences sampled from it: full parse including the parse count.

// A benchmark reports what it measured on the terminal.
#![allow(clippy::print_stdout, clippy::print_stderr)]

mod support;

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use grammar_lang::model::{Grammar, NtId, Sym};
use grammar_lang::MemoryLoader;
use std::hint::black_box;
use std::path::Path;
use support::{generated_grammar, Rng, WORDS};
use trellis_engine::parser::{
    Beam, ParseOptions, Parser, Spread, Task, Workers, DEFAULT_MAX_CHART_BYTES,
};
use trellis_test_support::bench::cpu_time_ns;
use trellis_test_support::dense_cky::AgainstDense;

fn bench_generated(c: &mut Criterion) {
    for ambiguity in [0, 4] {
        let g = generated_grammar(ambiguity);
        for words in [20, 40] {
            report_against_baseline(&g, ambiguity, words);
        }
        report_beams(&g, ambiguity, 40);
    }
    bench_generated_with(c, 0, "generated_300nt_30k_rules_40_words");
    bench_generated_with(c, 4, "generated_ambiguous_lexicon_40_words");
}

fn bench_generated_with(c: &mut Criterion, ambiguity: usize, name: &str) {
    let g = generated_grammar(ambiguity);
    let parser = Parser::new(&g).expect("the generated grammar compiles");
    let sentences = support::sentences(40, 4, 40);
    let evals: u64 = sentences
        .iter()
        .map(|s| {
            parser
                .binary_evaluations(s, DEFAULT_MAX_CHART_BYTES)
                .expect("fits")
        })
        .sum();
    eprintln!(
        "{name}: {} compiled symbols, {} binary rules; {} binary-rule evaluations per 40-word sentence",
        parser.compiled().symbol_count(),
        parser.compiled().binary_rule_count(),
        evals / sentences.len() as u64
    );
    let options = ParseOptions {
        kbest: 1,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    };
    // The machine is shared, so wall-clock figures vary with the load; the
    // thread's own CPU time gives a steadier figure next to criterion's.
    if let Some(ns) = cpu_time_ns(|| {
        for s in &sentences {
            black_box(parser.best_tree(s, DEFAULT_MAX_CHART_BYTES).expect("fits"));
        }
    }) {
        eprintln!(
            "{name}: Viterbi on CPU time: {:.1} ms per sentence, {:.0} M evaluations/s",
            ns / 1e6 / sentences.len() as f64,
            evals as f64 / ns * 1e3
        );
    }
    if let Some(ns) = cpu_time_ns(|| {
        for s in &sentences {
            black_box(parser.parse(s, &options).expect("fits"));
        }
    }) {
        eprintln!(
            "{name}: full parse on CPU time: {:.1} ms per sentence ({:.1} sentences/s)",
            ns / 1e6 / sentences.len() as f64,
            sentences.len() as f64 / ns * 1e9
        );
    }
    let mut group = c.benchmark_group(name);
    group.sample_size(10);
    group.throughput(Throughput::Elements(evals));
    group.bench_function("viterbi_evaluations", |b| {
        b.iter(|| {
            for s in &sentences {
                black_box(
                    parser
                        .best_tree(black_box(s), DEFAULT_MAX_CHART_BYTES)
                        .expect("fits"),
                );
            }
        })
    });
    group.bench_function("viterbi_and_inside_evaluations", |b| {
        b.iter(|| {
            for s in &sentences {
                black_box(parser.parse(black_box(s), &options).expect("fits"));
            }
        })
    });
    group.throughput(Throughput::Elements(sentences.len() as u64));
    let beam = ParseOptions {
        beam: Some(Beam::new(5.0, None).expect("a valid beam")),
        ..options.clone()
    };
    group.bench_function("viterbi_and_inside_beam_5_sentences", |b| {
        b.iter(|| {
            for s in &sentences {
                black_box(parser.parse(black_box(s), &beam).expect("fits"));
            }
        })
    });
    group.bench_function("full_parse_sentences", |b| {
        b.iter(|| {
            for s in &sentences {
                black_box(parser.parse(black_box(s), &options).expect("fits"));
            }
        })
    });
    group.finish();
}

/// Up to four random `len`-word strings of the generated lexicon that the
/// grammar parses (a string it does not parse skips the inside pass), drawn
/// from `seed`.
fn parsable_sentences(parser: &Parser, seed: u64, len: usize) -> Vec<Vec<String>> {
    let mut rng = Rng(seed);
    let sentences: Vec<Vec<String>> = std::iter::repeat_with(|| {
        (0..len)
            .map(|_| format!("w{}", rng.below(WORDS)))
            .collect::<Vec<_>>()
    })
    .take(2000)
    .filter(|s| {
        parser
            .best_tree(s, DEFAULT_MAX_CHART_BYTES)
            .is_ok_and(|t| t.is_some())
    })
    .take(4)
    .collect();
    assert!(!sentences.is_empty(), "no random {len}-word string parses");
    sentences
}

/// Prints the time of the Viterbi pass (best tree) and of the inside pass
/// (a parse without count, less the best tree) against the dense CKY of `trellis_test_support` on the
/// same sentences, in thread CPU time, and the chart bytes per sentence.
fn report_against_baseline(g: &Grammar, ambiguity: usize, len: usize) {
    let parser = Parser::new(g).expect("the generated grammar compiles");
    let sentences = parsable_sentences(&parser, len as u64, len);
    let options = ParseOptions {
        kbest: 1,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    };
    // The machine is shared: thread CPU time, the four measurements
    // interleaved, least of five rounds.
    let Some(times) = AgainstDense::measure(
        g,
        &sentences,
        &|s| {
            black_box(parser.best_tree(s, DEFAULT_MAX_CHART_BYTES).expect("fits"));
        },
        &|s| {
            black_box(parser.parse(s, &options).expect("fits"));
        },
    ) else {
        return;
    };
    eprintln!(
        "baseline ratio, ambiguity {ambiguity}, {len} words: {}; chart {:.1} MiB per sentence",
        times.describe(),
        parser.chart_bytes(len, &options) as f64 / (1 << 20) as f64
    );
    // One long sentence on one and on two threads (wall clock, least of
    // five rounds): the chart passes spread each span length's cells. For
    // comparison, the same sentences parsed side by side (one per thread,
    // no spreading within a sentence): what two cores give this machine
    // on independent work.
    if len >= 30 {
        let wall = |threads: usize, within: bool| {
            let pool = rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("a thread pool");
            let spread = ParseOptions {
                workers: Workers::new(RayonThreads),
                ..options.clone()
            };
            pool.install(|| {
                (0..5)
                    .map(|_| {
                        let start = std::time::Instant::now();
                        let mut runs = 0;
                        while start.elapsed().as_secs_f64() < 0.6 {
                            if within {
                                for s in &sentences {
                                    black_box(parser.parse(s, &spread).expect("fits"));
                                }
                            } else {
                                use rayon::prelude::*;
                                sentences.par_iter().for_each(|s| {
                                    black_box(parser.parse(s, &options).expect("fits"));
                                });
                            }
                            runs += sentences.len();
                        }
                        start.elapsed().as_secs_f64() / runs as f64
                    })
                    .fold(f64::INFINITY, f64::min)
            })
        };
        let (one, two) = (wall(1, true), wall(2, true));
        let (side_one, side_two) = (wall(1, false), wall(2, false));
        eprintln!(
            "threads, ambiguity {ambiguity}, {len} words: Viterbi + inside {:.2} ms on 1 thread, \
             {:.2} ms on 2 ({:.2}×); {} sentences side by side: {:.2}× on 2",
            one * 1e3,
            two * 1e3,
            one / two,
            sentences.len(),
            side_one / side_two
        );
    }
}

/// Viterbi + inside under a few beams against the exact parse on the same
/// parsable sentences (thread CPU time, least of three rounds): the speed
/// ratio, how many sentences kept the exact best tree, and the share of the
/// sentence probability that survived (the pruned one is a lower bound).
fn report_beams(g: &Grammar, ambiguity: usize, len: usize) {
    let parser = Parser::new(g).expect("the generated grammar compiles");
    let sentences = parsable_sentences(&parser, len as u64 + 1000, len);
    let exact_options = ParseOptions {
        kbest: 1,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    };
    let time = |options: &ParseOptions| {
        (0..3)
            .map(|_| {
                cpu_time_ns(|| {
                    for s in &sentences {
                        black_box(parser.parse(s, options).expect("fits"));
                    }
                })
                .unwrap_or(f64::NAN)
            })
            .fold(f64::INFINITY, f64::min)
            / sentences.len() as f64
    };
    let exact: Vec<_> = sentences
        .iter()
        .map(|s| parser.parse(s, &exact_options).expect("fits"))
        .collect();
    let exact_ns = time(&exact_options);
    for beam in [
        Beam::new(10.0, None).expect("a valid beam"),
        Beam::new(5.0, None).expect("a valid beam"),
        Beam::new(5.0, Some(30)).expect("a valid beam"),
    ] {
        let options = ParseOptions {
            beam: Some(beam),
            ..exact_options.clone()
        };
        let pruned: Vec<_> = sentences
            .iter()
            .map(|s| parser.parse(s, &options).expect("fits"))
            .collect();
        let same_best = pruned
            .iter()
            .zip(&exact)
            .filter(|(p, e)| p.best.as_ref().map(|t| &t.tree) == e.best.as_ref().map(|t| &t.tree))
            .count();
        let kept: f64 = pruned
            .iter()
            .zip(&exact)
            .map(|(p, e)| (p.sentence_log_probability - e.sentence_log_probability).exp())
            .fold(f64::INFINITY, f64::min);
        let ns = time(&options);
        eprintln!(
            "beam, ambiguity {ambiguity}, {len} words, {}: Viterbi + inside {:.2}× the exact speed ({:.2} vs {:.2} ms); best tree the same in {same_best} of {} sentences; at least {:.3} of P(sentence) kept",
            beam.describe(),
            exact_ns / ns,
            ns / 1e6,
            exact_ns / 1e6,
            sentences.len(),
            kept
        );
    }
}

/// rayon's threads for the chart passes, as the command line hands them in.
struct RayonThreads;

impl Spread for RayonThreads {
    fn threads(&self) -> usize {
        rayon::current_num_threads()
    }

    fn run<'a>(&self, tasks: Vec<Task<'a>>) {
        use rayon::prelude::*;
        tasks.into_par_iter().for_each(|task| task());
    }
}

/// Samples a sentence top-down; `None` past `limit` words.
fn sample(
    g: &Grammar,
    rng: &mut Rng,
    sym: NtId,
    limit: usize,
    out: &mut Vec<String>,
) -> Option<()> {
    let r = rng.next() as f64 / u64::MAX as f64;
    let mut acc = 0.0;
    let rules: Vec<_> = g.rules_of(sym).collect();
    let (_, rule) = rules
        .iter()
        .find(|(_, rule)| {
            acc += rule.p;
            r < acc
        })
        .or(rules.last())?;
    for &item in &rule.rhs {
        match item {
            Sym::T(t) => out.push(g.term_text(t).to_string()),
            Sym::N(n) => sample(g, rng, n, limit, out)?,
        }
        if out.len() > limit {
            return None;
        }
    }
    Some(())
}

fn bench_ferry(c: &mut Criterion) {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let read =
        |name: &str| std::fs::read_to_string(dir.join(name)).expect("the ferry example exists");
    let loader = MemoryLoader::new().with(
        dir.join("ferry_lexicon.trellis"),
        read("ferry_lexicon.trellis"),
    );
    let analysis = grammar_lang::analyze(
        &dir.join("ferry_kiosk.trellis"),
        &read("ferry_kiosk.trellis"),
        &loader,
        &grammar_lang::Config::default(),
    );
    assert!(
        !analysis.has_errors(),
        "the ferry example has errors: {:?}",
        analysis.diagnostics
    );
    let g = analysis.grammar;
    let parser = Parser::new(&g).expect("the ferry grammar compiles");
    let mut rng = Rng(15);
    let mut sentences = Vec::new();
    let start = g.start.expect("the ferry grammar has a start");
    while sentences.len() < 20 {
        let mut words = Vec::new();
        if sample(&g, &mut rng, start, 15, &mut words).is_some() && words.len() == 15 {
            sentences.push(words);
        }
    }
    let options = ParseOptions::default();
    for s in &sentences {
        assert!(
            parser.parse(s, &options).expect("fits").parsed(),
            "sampled sentence must parse"
        );
    }
    if let Some(ns) = cpu_time_ns(|| {
        for _ in 0..10 {
            for s in &sentences {
                black_box(parser.parse(s, &options).expect("fits"));
            }
        }
    }) {
        eprintln!(
            "ferry kiosk: full parse with count on CPU time: {:.3} ms per 15-word sentence",
            ns / 1e6 / (10 * sentences.len()) as f64
        );
    }
    let mut group = c.benchmark_group("ferry_kiosk_15_words");
    group.throughput(Throughput::Elements(sentences.len() as u64));
    group.bench_function("full_parse_sentences", |b| {
        b.iter(|| {
            for s in &sentences {
                black_box(parser.parse(black_box(s), &options).expect("fits"));
            }
        })
    });
    group.finish();
}

criterion_group!(benches, bench_generated, bench_ferry);
criterion_main!(benches);
