//! Parsing with a learned grammar.
//!
//! A fixed "lighthouse logbook" grammar (below, built in the setup) stands
//! for the annotator's language: 40 non-terminals — 11 phrase symbols and
//! 29 part-of-speech tags with treebank-style names — and about 800 words
//! made from syllables by tag (nouns plain, plural nouns in `-s`, past verbs
//! in `-ed`, gerunds in `-ing`, adverbs in `-ly`, names capitalised; tags of
//! one stem group share stems, so the lexicon is ambiguous), the i-th word
//! of a tag weighing 20000/(i+1)² (a Zipf-like head and a long tail of
//! words seldom or never seen). The engine's sampler
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
use trellis_test_support::bench::{cpu_time_ns, least_wall_times};
use trellis_test_support::dense_cky::AgainstDense;
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
  4   NP VP COMMA SBAR
  3   ADVP COMMA NP VP
  2   S COMMA CC S
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
  4   DT JJ JJ NN
  4   DT NN NN
  2   NP COMMA NP CC NP
  2   DT JJ NN NN
  2   NNP NNP NNP
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
  5   VBD NP PP PP
  3   VBD NP ADVP
  3   VBD ADVP PP
  2   VBZ ADJP PP
  2   MD ADVP VP
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

/// Each tag's words: (tag, how many, stem group, how they are made). Tags
/// of one stem group share stems, as English "sail" is a noun and a verb:
/// the lexicon is ambiguous, as a treebank's is.
const TAGS: &[(&str, usize, usize, Shape)] = &[
    ("NN", 240, 0, Shape::Plain("")),
    ("VB", 40, 0, Shape::Plain("")),
    ("VBP", 30, 0, Shape::Plain("")),
    ("JJ", 120, 0, Shape::Plain("")),
    ("JJR", 10, 0, Shape::Plain("er")),
    ("JJS", 10, 0, Shape::Plain("est")),
    ("RBR", 5, 0, Shape::Plain("er")),
    ("NNS", 120, 1, Shape::Plain("s")),
    ("VBZ", 30, 1, Shape::Plain("s")),
    ("VBD", 100, 2, Shape::Plain("ed")),
    ("VBN", 30, 2, Shape::Plain("ed")),
    ("VBG", 30, 3, Shape::Plain("ing")),
    ("RB", 30, 4, Shape::Plain("ly")),
    ("NNP", 200, 5, Shape::Capital("")),
    ("NNPS", 10, 5, Shape::Capital("s")),
    ("DT", 6, 6, Shape::Plain("")),
    ("PDT", 3, 6, Shape::Plain("")),
    ("WDT", 3, 6, Shape::Plain("")),
    ("IN", 12, 7, Shape::Plain("")),
    ("TO", 1, 7, Shape::Plain("")),
    ("CC", 3, 8, Shape::Plain("")),
    ("PRP", 8, 9, Shape::Plain("")),
    ("MD", 5, 10, Shape::Plain("")),
    ("EX", 1, 11, Shape::Plain("")),
    ("UH", 4, 12, Shape::Plain("")),
    ("POS", 1, 13, Shape::Symbols(&["'s"])),
    ("CD", 20, 14, Shape::Number),
    ("PUNCT", 3, 15, Shape::Symbols(&[".", "!", "?"])),
    ("COMMA", 1, 16, Shape::Symbols(&[","])),
];

#[derive(Clone, Copy)]
enum Shape {
    Plain(&'static str),
    Capital(&'static str),
    Number,
    Symbols(&'static [&'static str]),
}

const SYLLABLES: &[&str] = &[
    "ka", "lo", "mi", "ren", "to", "sa", "vel", "dor", "bi", "nu", "ge", "fa",
];

/// The `i`-th word of a tag: the syllables of `i + 37·group` in base 12
/// (two or three), shaped as the tag says.
fn word(group: usize, i: usize, shape: Shape) -> String {
    let n = SYLLABLES.len();
    let code = i + 37 * group;
    let mut stem = String::new();
    stem.push_str(SYLLABLES[code % n]);
    stem.push_str(SYLLABLES[(code / n) % n]);
    if code >= n * n {
        stem.push_str(SYLLABLES[(code / (n * n)) % n]);
    }
    match shape {
        Shape::Plain(suffix) => format!("{stem}{suffix}"),
        Shape::Capital(suffix) => {
            let mut c = stem.chars();
            let capital: String = c
                .next()
                .map(|f| f.to_uppercase().chain(c).collect())
                .unwrap_or_default();
            format!("{capital}{suffix}")
        }
        Shape::Number => format!("{}", 3 + 7 * i),
        Shape::Symbols(spellings) => spellings[i % spellings.len()].to_string(),
    }
}

/// The whole logbook grammar as trellis source.
fn logbook_grammar() -> String {
    let mut text = PHRASES.to_string();
    for &(tag, count, group, shape) in TAGS {
        let _ = writeln!(text, "{tag} relative {{");
        for i in 0..count {
            // A falling share: the i-th word weighs 20000/(i+1)², rounded
            // up, so the large classes end in a tail of words seldom seen.
            let _ = writeln!(
                text,
                "  {}  {}",
                20_000usize.div_ceil((i + 1) * (i + 1)),
                grammar_lang::syntax::lexer::quote(&word(group, i, shape))
            );
        }
        text.push_str("}\n");
    }
    text
}

const TRAINING_TREES: usize = 10_000;
const SENTENCE_WORDS: usize = 25;
const SENTENCES: usize = 16;

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
    // Whole batches, repeated until a second of wall-clock time has passed.
    let rounds_of = |work: &dyn Fn()| {
        let started = std::time::Instant::now();
        let mut rounds = 0u32;
        let ns = cpu_time_ns(|| {
            while rounds == 0 || started.elapsed().as_secs_f64() < 1.0 {
                work();
                rounds += 1;
            }
        });
        ns.map(|ns| ns / f64::from(rounds))
    };
    if let Some(ns) = rounds_of(&|| {
        for s in &sentences {
            black_box(parser.best_tree(s, DEFAULT_MAX_CHART_BYTES).expect("fits"));
        }
    }) {
        eprintln!(
            "{name}: Viterbi on one core (CPU time): {:.2} ms per sentence, {:.1} sentences/s, \
             {:.1} M evaluations/s",
            ns / 1e6 / SENTENCES as f64,
            SENTENCES as f64 / ns * 1e9,
            evals as f64 / ns * 1e3
        );
    }
    if let Some(ns) = rounds_of(&|| {
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
    // Against the plain dense CKY (as in the engine's parse benchmark), on
    // sentences whose words the learned lexicon has (the dense CKY knows
    // no unseen-word classes): thread CPU time, least of five interleaved
    // rounds of at least 0.1 s.
    let known: Vec<Vec<String>> = std::iter::repeat_with(|| {
        sampler
            .words(&mut rng, start, 10_000)
            .expect("a sentence")
            .iter()
            .map(|w| w.to_string())
            .collect::<Vec<String>>()
    })
    .filter(|s| s.len() == SENTENCE_WORDS && parser.unseen_words(s).is_empty())
    .take(SENTENCES)
    .collect();
    if let Some(times) = AgainstDense::measure(
        &learned.grammar,
        &known,
        &|s| {
            black_box(parser.best_tree(s, DEFAULT_MAX_CHART_BYTES).expect("fits"));
        },
        &|s| {
            black_box(parser.parse(s, &options).expect("fits"));
        },
    ) {
        eprintln!(
            "{name}: baseline ratio, {} sentences of known words: {}",
            known.len(),
            times.describe()
        );
    }
    let pools: Vec<rayon::ThreadPool> = [1, 2]
        .iter()
        .map(|&threads| {
            rayon::ThreadPoolBuilder::new()
                .num_threads(threads)
                .build()
                .expect("a thread pool")
        })
        .collect();
    let batch = |pool: &rayon::ThreadPool, full: bool| {
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
    // Wall clock (the work is spread), the two pools interleaved, least
    // of five rounds of at least half a second.
    let (one, two) = (|| batch(&pools[0], true), || batch(&pools[1], true));
    if let [one, two] = least_wall_times(5, 5e8, &[&one, &two])[..] {
        eprintln!(
            "{name}: full parse of {SENTENCES} sentences across 1 thread {:.1} sentences/s, \
             across 2 threads {:.1} sentences/s ({:.2}×) (wall clock)",
            SENTENCES as f64 / one * 1e9,
            SENTENCES as f64 / two * 1e9,
            one / two
        );
    }
    let mut group = c.benchmark_group(name);
    group.sample_size(10);
    for (threads, pool) in [1, 2].into_iter().zip(&pools) {
        group.throughput(Throughput::Elements(evals));
        group.bench_function(format!("viterbi_evaluations_{threads}_threads"), |b| {
            b.iter(|| batch(pool, false))
        });
        group.throughput(Throughput::Elements(SENTENCES as u64));
        group.bench_function(format!("full_parse_sentences_{threads}_threads"), |b| {
            b.iter(|| batch(pool, true))
        });
    }
    group.finish();
}

criterion_group!(benches, bench);
criterion_main!(benches);
