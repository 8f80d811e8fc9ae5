//! Parsing with a learned grammar.
//!
//! A fixed "lighthouse logbook" grammar (below, built in the setup) stands
//! for the annotator's language: 40 non-terminals — 11 phrase symbols and
//! 29 part-of-speech tags with treebank-style names — and 450 words made
//! from syllables by tag (nouns plain, plural nouns in `-s`, past verbs in
//! `-ed`, gerunds in `-ing`, adverbs in `-ly`, names capitalised), weighted
//! by a falling (Zipf-like) share within each tag. The engine's sampler
//! (fixed seed) draws 10,000 trees from it; `Counts::add_binarized` learns a
//! grammar from them with horizontal order 2, vertical order 2 and rare
//! words (seen once) feeding the unseen-word classes, exactly as `trellis
//! learn --horizontal 2 --vertical 2 --rare 1` would. Test sentences are
//! further samples of exactly 25 words, so some of their words were never
//! seen and are read by their shape class.
//!
//! Reported on stderr: the learned grammar's size, binary-rule evaluations
//! per sentence (`Parser::binary_evaluations`, counted once in the setup),
//! and — on the thread's CPU time, steadier than wall-clock time on a shared
//! machine — sentences per second and evaluations per second for the
//! Viterbi pass and for a full parse (Viterbi + inside, no parse count).
//! Criterion then times a batch of sentences parsed across a rayon pool of
//! one thread and of two (whole sentences per thread).

// A benchmark reports what it measured on the terminal.
#![allow(clippy::print_stdout, clippy::print_stderr)]

use criterion::{criterion_group, criterion_main, Criterion, Throughput};
use rayon::prelude::*;
use std::fmt::Write;
use std::hint::black_box;
use trellis_engine::parser::{ParseOptions, Parser, DEFAULT_MAX_CHART_BYTES};
use trellis_engine::rng::SplitMix64;
use trellis_engine::sample::Sampler;
use trellis_treebank::learn::{Counts, LearnOptions};
use trellis_treebank::Markov;

/// The phrase rules, as trellis `relative` blocks (weights are counts).
const PHRASES: &str = r#"
start TOP
TOP relative {
  18  S PUNCT
  1   UH COMMA S PUNCT
  1   S
}
S relative {
  40  NP VP
  8   NP ADVP VP
  8   PP COMMA NP VP
  6   SBAR COMMA NP VP
  10  NP MD VP
  3   EX VBZ NP
  5   S CC S
}
SBAR relative {
  6  IN S
  4  WHNP S
}
WHNP relative {
  1  WDT
}
NP relative {
  24  DT NN
  12  DT JJ NN
  5   DT ADJP NN
  8   NNS
  8   NNP
  5   NNP NNP
  2   NNPS
  10  PRP
  12  NP PP
  2   NP SBAR
  3   DT NN POS NN
  4   CD NNS
  3   QP NNS
  2   PDT DT NN
}
VP relative {
  22  VBD NP
  10  VBZ NP
  6   VBP NP
  5   VBD
  10  VBD PP
  14  VBD NP PP
  10  VB NP
  4   VBZ SBAR
  5   VBD VPTO
  4   VP CC VP
  5   VBG NP
  5   VBD ADJP
  4   VBN PP
}
VPTO relative {
  1  TO VP
}
PP relative {
  9  IN NP
  1  TO NP
}
ADJP relative {
  5  JJ
  3  RB JJ
  2  JJ CC JJ
  1  JJR
  1  JJS
}
ADVP relative {
  8  RB
  2  RB RB
  1  RBR
}
QP relative {
  5  CD CC CD
  5  RB CD
}
"#;

/// Each tag's words: (tag, how many, how they are made).
const TAGS: &[(&str, usize, Shape)] = &[
    ("NN", 50, Shape::Plain("")),
    ("NNS", 40, Shape::Plain("s")),
    ("NNP", 40, Shape::Capital),
    ("NNPS", 10, Shape::Plural),
    ("JJ", 40, Shape::Plain("ic")),
    ("JJR", 10, Shape::Plain("er")),
    ("JJS", 10, Shape::Plain("est")),
    ("VB", 30, Shape::Plain("e")),
    ("VBD", 40, Shape::Plain("ed")),
    ("VBZ", 25, Shape::Plain("es")),
    ("VBP", 20, Shape::Plain("o")),
    ("VBG", 25, Shape::Plain("ing")),
    ("VBN", 20, Shape::Plain("en")),
    ("RB", 30, Shape::Plain("ly")),
    ("RBR", 5, Shape::Plain("ward")),
    ("CD", 20, Shape::Number),
    ("DT", 6, Shape::Plain("a")),
    ("PDT", 3, Shape::Plain("al")),
    ("IN", 12, Shape::Plain("u")),
    ("TO", 1, Shape::Plain("")),
    ("CC", 3, Shape::Plain("d")),
    ("PRP", 8, Shape::Plain("i")),
    ("MD", 5, Shape::Plain("ould")),
    ("POS", 1, Shape::Plain("")),
    ("WDT", 3, Shape::Plain("ich")),
    ("EX", 1, Shape::Plain("")),
    ("UH", 4, Shape::Plain("h")),
    ("PUNCT", 3, Shape::Symbols(&[".", "!", "?"])),
    ("COMMA", 1, Shape::Symbols(&[","])),
];

#[derive(Clone, Copy)]
enum Shape {
    Plain(&'static str),
    Capital,
    Plural,
    Number,
    Symbols(&'static [&'static str]),
}

const SYLLABLES: &[&str] = &[
    "ka", "lo", "mi", "ren", "to", "sa", "vel", "dor", "bi", "nu", "ge", "fa",
];

/// The `i`-th word of `tag`: syllables by the digits of `i` in base 12
/// (tag-specific offset, so tags share few words), shaped as the tag says.
fn word(tag_index: usize, i: usize, shape: Shape) -> String {
    let n = SYLLABLES.len();
    let code = i + 7 * tag_index + 1;
    let stem = format!(
        "{}{}{}",
        SYLLABLES[code % n],
        SYLLABLES[(code / n + tag_index) % n],
        if i >= n { SYLLABLES[(i / n) % n] } else { "" }
    );
    match shape {
        Shape::Plain(suffix) => format!("{stem}{suffix}"),
        Shape::Capital => {
            let mut c = stem.chars();
            c.next()
                .map(|f| f.to_uppercase().chain(c).collect())
                .unwrap_or_default()
        }
        Shape::Plural => {
            let mut c = stem.chars();
            let capital: String = c
                .next()
                .map(|f| f.to_uppercase().chain(c).collect())
                .unwrap_or_default();
            format!("{capital}s")
        }
        Shape::Number => format!("{}", 3 + 7 * i),
        Shape::Symbols(spellings) => spellings[i % spellings.len()].to_string(),
    }
}

/// The whole logbook grammar as trellis source.
fn logbook_grammar() -> String {
    let mut text = PHRASES.to_string();
    for (t, &(tag, count, shape)) in TAGS.iter().enumerate() {
        let _ = writeln!(text, "{tag} relative {{");
        for i in 0..count {
            // A falling share: the i-th word weighs 60/(i+1), rounded up.
            let _ = writeln!(
                text,
                "  {}  {}",
                60usize.div_ceil(i + 1),
                grammar_lang::syntax::lexer::quote(&word(t, i, shape))
            );
        }
        text.push_str("}\n");
    }
    text
}

const TRAINING_TREES: usize = 10_000;
const SENTENCE_WORDS: usize = 25;
const SENTENCES: usize = 8;

fn bench(c: &mut Criterion) {
    let truth = grammar_lang::analyze_text(&logbook_grammar());
    assert!(!truth.has_errors(), "{:?}", truth.diagnostics);
    let sampler = Sampler::new(&truth.grammar).expect("the logbook grammar samples");
    let start = sampler.start().expect("a start symbol");
    let mut rng = SplitMix64::new(0x10_6b00c);
    let how = Markov {
        horizontal: Some(2),
        vertical: 2,
    };
    let mut counts = Counts::new();
    let mut training_words = 0usize;
    for _ in 0..TRAINING_TREES {
        let tree = sampler.tree(&mut rng, start, 10_000).expect("a tree");
        training_words += tree.words().len();
        counts.add_binarized(&tree, how);
    }
    let source = counts.to_source(&LearnOptions {
        header: Vec::new(),
        rare: 1,
    });
    let learned = grammar_lang::analyze_text(&source);
    assert!(!learned.has_errors(), "{:?}", learned.diagnostics);
    let parser = Parser::new(&learned.grammar).expect("the learned grammar compiles");
    let mut sentences: Vec<Vec<String>> = Vec::new();
    while sentences.len() < SENTENCES {
        let words = sampler.words(&mut rng, start, 10_000).expect("a sentence");
        if words.len() == SENTENCE_WORDS {
            sentences.push(words.iter().map(|w| w.to_string()).collect());
        }
    }
    let unseen: usize = sentences.iter().map(|s| parser.unseen_words(s).len()).sum();
    let evals: u64 = sentences
        .iter()
        .map(|s| {
            parser
                .binary_evaluations(s, DEFAULT_MAX_CHART_BYTES)
                .expect("fits")
        })
        .sum();
    let name = "learned_h2_v2_25_words";
    eprintln!(
        "{name}: learned from {TRAINING_TREES} trees ({:.1} words on average): {} rules over {} \
         non-terminals; compiled {} symbols, {} binary rules",
        training_words as f64 / TRAINING_TREES as f64,
        learned.grammar.rules.len(),
        learned.grammar.nonterminals.len(),
        parser.compiled().symbol_count(),
        parser.compiled().binary_rule_count(),
    );
    eprintln!(
        "{name}: {} binary-rule evaluations per 25-word sentence; {unseen} of {} words read as \
         unseen-word classes",
        evals / SENTENCES as u64,
        SENTENCES * SENTENCE_WORDS
    );
    let options = ParseOptions {
        kbest: 1,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    };
    for s in &sentences {
        let outcome = parser.parse(s, &options).expect("fits");
        assert!(outcome.parsed(), "{}", s.join(" "));
    }
    if let Some(ns) = cpu_time_ns(|| {
        for s in &sentences {
            black_box(parser.best_tree(s, DEFAULT_MAX_CHART_BYTES).expect("fits"));
        }
    }) {
        eprintln!(
            "{name}: Viterbi on one core (CPU time): {:.2} ms per sentence, {:.1} sentences/s, \
             {:.0} M evaluations/s",
            ns / 1e6 / SENTENCES as f64,
            SENTENCES as f64 / ns * 1e9,
            evals as f64 / ns * 1e3
        );
    }
    if let Some(ns) = cpu_time_ns(|| {
        for s in &sentences {
            black_box(parser.parse(s, &options).expect("fits"));
        }
    }) {
        eprintln!(
            "{name}: full parse on one core (CPU time): {:.2} ms per sentence, {:.1} sentences/s",
            ns / 1e6 / SENTENCES as f64,
            SENTENCES as f64 / ns * 1e9
        );
    }
    let mut group = c.benchmark_group(name);
    group.sample_size(10);
    for threads in [1, 2] {
        let pool = rayon::ThreadPoolBuilder::new()
            .num_threads(threads)
            .build()
            .expect("a thread pool");
        let batch = |full: bool| {
            pool.install(|| {
                sentences.par_iter().for_each(|s| {
                    if full {
                        black_box(parser.parse(black_box(s), &options).expect("fits"));
                    } else {
                        black_box(
                            parser
                                .best_tree(black_box(s), DEFAULT_MAX_CHART_BYTES)
                                .expect("fits"),
                        );
                    }
                })
            })
        };
        let started = std::time::Instant::now();
        let rounds = 3;
        for _ in 0..rounds {
            batch(true);
        }
        let wall = started.elapsed().as_secs_f64() / rounds as f64;
        eprintln!(
            "{name}: full parse across {threads} thread{} (wall clock): {:.1} sentences/s",
            if threads == 1 { "" } else { "s" },
            SENTENCES as f64 / wall
        );
        group.throughput(Throughput::Elements(evals));
        group.bench_function(format!("viterbi_evaluations_{threads}_threads"), |b| {
            b.iter(|| batch(false))
        });
        group.throughput(Throughput::Elements(SENTENCES as u64));
        group.bench_function(format!("full_parse_sentences_{threads}_threads"), |b| {
            b.iter(|| batch(true))
        });
    }
    group.finish();
}

/// CPU time of this thread while running `f`, in nanoseconds (Linux
/// `/proc/thread-self/schedstat`; `None` elsewhere).
fn cpu_time_ns(f: impl FnOnce()) -> Option<f64> {
    let read = || -> Option<f64> {
        let text = std::fs::read_to_string("/proc/thread-self/schedstat").ok()?;
        text.split_whitespace().next()?.parse().ok()
    };
    let before = read()?;
    f();
    Some(read()? - before)
}

criterion_group!(benches, bench);
criterion_main!(benches);
