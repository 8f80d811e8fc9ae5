//! The public parsing API: [`Parser::new`] compiles a grammar once,
//! [`Parser::parse`] analyses one sentence.
//!
//! ```
//! # use grammar_lang::model::*;
//! # use grammar_lang::{FileId, Location, Span};
//! # let mut g = Grammar::new();
//! # let s = g.intern_nt("S");
//! # let w = g.intern_term("hello");
//! # let loc = Location::new(FileId(0), Span::new(0, 0));
//! # g.start = Some(s);
//! # g.push_rule(Rule { lhs: s, rhs: vec![Sym::T(w)], weight: None,
//! #     probability: Ratio::from_integer(1.into()), p: 1.0, location: loc, doc: None });
//! use trellis_engine::parser::{ParseOptions, Parser};
//! let parser = Parser::new(&g).unwrap();
//! let outcome = parser.parse(&["hello"], &ParseOptions::default()).unwrap();
//! assert_eq!(outcome.best.unwrap().tree.to_brackets(), r#"(S "hello")"#);
//! ```

pub use crate::beam::Beam;
pub use crate::chart::{Spread, Task, Workers};
use crate::chart::{Stopped, Watch};
use crate::compile::{CompileError, CompiledGrammar};
use crate::count::{count_parses, Count};
use crate::explain::{explain, Explanation};
use crate::recycle::Recycler;
use crate::viterbi::{best_derivation, derivation_logprob, to_user_trees, Deriv};
use crate::{inside, kbest, viterbi};
use grammar_lang::model::Grammar;
use grammar_lang::tree::Tree;
use std::fmt;

/// Default limit on the chart's memory: 1 GiB.
pub const DEFAULT_MAX_CHART_BYTES: u64 = 1 << 30;

/// What to compute for a sentence.
#[derive(Clone, Debug, PartialEq)]
pub struct ParseOptions {
    /// How many best trees to list in [`ParseOutcome::kbest`] (0: none).
    pub kbest: usize,
    /// Refuse sentences whose chart would need more memory than this.
    pub max_chart_bytes: u64,
    /// Count the parses exactly (machine integers while the counts fit, big
    /// integers past them; about one more Viterbi-sized pass).
    pub count_parses: bool,
    /// Explain a failed parse.
    pub explain: bool,
    /// Threads the chart passes may spread one sentence's cells over (only
    /// the calling thread by default). Results are the same bit for bit
    /// whatever the threads; small sentences and grammars stay on the
    /// calling thread.
    pub workers: Workers,
    /// Prune the Viterbi chart with a per-cell beam ([`crate::beam`]); `None`
    /// (the default) parses exactly. Under a beam the sentence probability
    /// is a lower bound, the best tree may be missed and the parse count
    /// counts surviving trees only; see [`ParseOutcome::beam`].
    pub beam: Option<Beam>,
}

impl Default for ParseOptions {
    fn default() -> Self {
        ParseOptions {
            kbest: 1,
            max_chart_bytes: DEFAULT_MAX_CHART_BYTES,
            count_parses: true,
            explain: true,
            workers: Workers::default(),
            beam: None,
        }
    }
}

/// One parse tree in the user's own rules.
#[derive(Clone, Debug, PartialEq)]
pub struct ParsedTree {
    pub tree: Tree,
    pub probability: f64,
    /// Natural log of `probability` (exact even where `probability` underflows).
    pub log_probability: f64,
}

/// The result of parsing one sentence.
#[derive(Clone, Debug, PartialEq)]
pub struct ParseOutcome {
    /// The most probable tree, if the sentence parses.
    pub best: Option<ParsedTree>,
    /// The `kbest` most probable trees, best first (fewer if there are fewer).
    pub kbest: Vec<ParsedTree>,
    /// P(sentence): the sum over all its trees (0 if none).
    pub sentence_probability: f64,
    /// Natural log of the sentence probability (`-inf` if it does not parse).
    pub sentence_log_probability: f64,
    /// The number of distinct trees, when counting was asked for.
    pub parse_count: Option<Count>,
    /// Why the sentence does not parse (only when it does not and it was asked for).
    pub explanation: Option<Explanation>,
    /// The beam that pruned the chart, when one dropped any symbol: the
    /// results are then not exact. `None` when the results are exact (no
    /// beam asked for, or it dropped nothing, or it was given up: see
    /// [`ParseOutcome::beam_abandoned`]).
    pub beam: Option<Beam>,
    /// The beam asked for, when it dropped every tree of a sentence that
    /// has trees: it was given up for this sentence, which was parsed again
    /// exactly, so the results are exact (and `beam` is `None`). A sentence
    /// with no tree at all is simply not parsed, beam or no beam.
    pub beam_abandoned: Option<Beam>,
}

impl ParseOutcome {
    pub fn parsed(&self) -> bool {
        self.best.is_some()
    }
}

/// Why a sentence could not be analysed at all.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum ParseError {
    /// No words.
    EmptySentence,
    /// The chart would need more memory than allowed.
    ChartTooLarge {
        words: usize,
        needed_bytes: u64,
        limit_bytes: u64,
    },
    /// The chart itself fits, but finding the `kbest` most probable trees
    /// needs more memory than the limit leaves (the k-best state grows with
    /// the number of chart items the trees reach, and is counted as it
    /// grows): `needed_bytes` is what the chart and that state had reached
    /// when they crossed the limit, so at least that much is needed.
    /// `fits` trees (at least 1) were complete within the limit: asking for
    /// that many fits.
    KbestTooLarge {
        words: usize,
        kbest: usize,
        needed_bytes: u64,
        limit_bytes: u64,
        fits: usize,
    },
    /// The caller's stop condition held before the parse finished.
    Stopped,
}

impl ParseError {
    /// What was refused or stopped, without the advice on what to change
    /// (each shell names its own option for that).
    pub fn refusal(&self) -> String {
        let mib = |bytes: u64| bytes.div_ceil(1 << 20);
        match self {
            ParseError::EmptySentence => "the sentence is empty: there is nothing to parse".into(),
            ParseError::ChartTooLarge {
                words,
                needed_bytes,
                limit_bytes,
            } => format!(
                "a sentence of {words} words needs a chart of about {} MiB, more than the limit of {} MiB",
                mib(*needed_bytes),
                limit_bytes / (1 << 20)
            ),
            ParseError::KbestTooLarge {
                words,
                kbest,
                limit_bytes,
                fits,
                ..
            } => format!(
                "finding the {kbest} most probable trees of a sentence of {words} words needs \
                 more memory than the limit of {} MiB; the sentence itself fits, and so do \
                 the {fits} most probable tree{}",
                limit_bytes / (1 << 20),
                if *fits == 1 { "" } else { "s" }
            ),
            ParseError::Stopped => "the parse was stopped before it finished".into(),
        }
    }
}

impl fmt::Display for ParseError {
    /// [`ParseError::refusal`] with advice in general terms.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.refusal())?;
        match self {
            ParseError::EmptySentence => Ok(()),
            ParseError::ChartTooLarge { .. } => {
                f.write_str("; split the input into shorter sentences or raise the limit")
            }
            ParseError::KbestTooLarge { fits, .. } => {
                write!(f, "; ask for at most {fits} trees or raise the limit")
            }
            ParseError::Stopped => f.write_str(" (it ran out of time or was cancelled)"),
        }
    }
}

impl std::error::Error for ParseError {}

impl From<Stopped> for ParseError {
    fn from(_: Stopped) -> ParseError {
        ParseError::Stopped
    }
}

/// A grammar compiled for parsing. Cheap to share between threads.
#[derive(Clone, Debug)]
pub struct Parser {
    grammar: CompiledGrammar,
    /// Chart memory kept between parses.
    recycler: Recycler,
}

impl Parser {
    /// Compiles `grammar` for parsing. Grammars with errors are the caller's
    /// concern (check them first); this refuses only what cannot be parsed
    /// with at all: no start symbol, or unary cycles that do not shrink.
    pub fn new(grammar: &Grammar) -> Result<Parser, CompileError> {
        Ok(Parser {
            grammar: CompiledGrammar::new(grammar)?,
            recycler: Recycler::new(),
        })
    }

    pub fn compiled(&self) -> &CompiledGrammar {
        &self.grammar
    }

    /// Estimated memory of the chart for `words` words with `options`, in bytes.
    pub fn chart_bytes(&self, words: usize, options: &ParseOptions) -> u64 {
        let n = words as u128;
        let cells = n * (n + 1) / 2;
        let n_sym = self.grammar.symbol_count().max(1) as u128;
        // Viterbi score + present list + inside log and scaled values.
        let mut per_item: u128 = 8 + 4 + 8 + 8;
        if options.count_parses {
            // A count beside each scaled inside value, and machine integers
            // for the counting pass when a count reaches 2⁵³ (wider ones,
            // and big integers, only after an overflow).
            per_item += 16;
        }
        // The k-best pass keeps nothing per item: its state grows with the
        // items the k trees reach, and is budgeted as it grows (what is left
        // of `max_chart_bytes` after this estimate).
        let per_cell: u128 = 8 + 1 + 4 + u128::from(options.kbest > 1);
        let total = cells * (n_sym * per_item + per_cell);
        u64::try_from(total).unwrap_or(u64::MAX)
    }

    /// Parses one sentence (a sequence of words, matched exactly).
    pub fn parse<S: AsRef<str>>(
        &self,
        words: &[S],
        options: &ParseOptions,
    ) -> Result<ParseOutcome, ParseError> {
        self.parse_until(words, options, &|| false)
    }

    /// [`Parser::parse`], giving up with [`ParseError::Stopped`] as soon as
    /// `stop` returns true. Every chart pass (Viterbi, inside, count) asks
    /// `stop` once per chart cell, and the lazy k-best pass once per cell it
    /// visits and every thousand steps or so, so a long sentence stops
    /// within one cell's work of the request (a cancelled editor request,
    /// a time budget).
    pub fn parse_until<S: AsRef<str>>(
        &self,
        words: &[S],
        options: &ParseOptions,
        stop: &dyn Fn() -> bool,
    ) -> Result<ParseOutcome, ParseError> {
        let words = self.check_size(words, options)?;
        let keys = self.keys(&words);
        let watch = Watch(stop);
        let g = &self.grammar;
        let n = words.len();
        let recycler = &self.recycler;
        let mut vit = viterbi::fill(
            g,
            &keys,
            watch,
            &options.workers,
            options.beam.as_ref(),
            recycler,
        )?;
        let mut beam_abandoned = None;
        if vit.pruned && vit.get(0, n, g.start) == f64::NEG_INFINITY {
            // No tree survived the beam: parse exactly instead, and say so
            // when the exact parse has a tree (the beam dropped them all).
            let exact = viterbi::fill(g, &keys, watch, &options.workers, None, recycler)?;
            recycler.keep_viterbi(std::mem::replace(&mut vit, exact));
            if vit.get(0, n, g.start) > f64::NEG_INFINITY {
                beam_abandoned = options.beam;
            }
        }
        let beam = options.beam.filter(|_| vit.pruned);
        let root_score = vit.get(0, n, g.start);
        if root_score == f64::NEG_INFINITY {
            let explanation = options
                .explain
                .then(|| in_own_words(explain(g, &keys, &vit), &words));
            recycler.keep_viterbi(vit);
            return Ok(ParseOutcome {
                best: None,
                kbest: Vec::new(),
                sentence_probability: 0.0,
                sentence_log_probability: f64::NEG_INFINITY,
                parse_count: options.count_parses.then(Count::zero),
                explanation,
                beam,
                beam_abandoned,
            });
        }
        let best =
            best_derivation(g, &vit, &keys, 0, n, g.start).map(|d| self.tree_of(&keys, &words, &d));
        let (ins, fused) = inside::fill(
            g,
            &keys,
            &vit,
            watch,
            &options.workers,
            options.count_parses,
            recycler,
        )?;
        let sentence_log_probability = ins.get(0, n, g.start);
        let kbest = match options.kbest {
            0 => Vec::new(),
            1 => best.iter().cloned().collect(),
            k => {
                let chart = self.chart_bytes(n, options);
                let budget = options.max_chart_bytes.saturating_sub(chart);
                match kbest::kbest(g, &keys, &vit, k, budget, watch) {
                    Ok(found) => found
                        .trees
                        .into_iter()
                        .map(|(d, _)| self.tree_of(&keys, &words, &d))
                        .collect(),
                    Err(kbest::Cut::Stopped) => return Err(ParseError::Stopped),
                    Err(kbest::Cut::OverBudget { found, used }) => {
                        return Err(ParseError::KbestTooLarge {
                            words: n,
                            kbest: k,
                            needed_bytes: chart.saturating_add(used),
                            limit_bytes: options.max_chart_bytes,
                            fits: found.max(1),
                        })
                    }
                }
            }
        };
        let parse_count = if options.count_parses {
            Some(count_parses(g, &keys, &vit, watch, fused)?)
        } else {
            None
        };
        recycler.keep_viterbi(vit);
        recycler.keep_inside(ins);
        Ok(ParseOutcome {
            best,
            kbest,
            sentence_probability: sentence_log_probability.exp(),
            sentence_log_probability,
            parse_count,
            explanation: None,
            beam,
            beam_abandoned,
        })
    }

    /// Only the most probable tree (the Viterbi pass): the fast path when
    /// nothing else is needed. `Ok(None)` when the sentence does not parse.
    pub fn best_tree<S: AsRef<str>>(
        &self,
        words: &[S],
        max_chart_bytes: u64,
    ) -> Result<Option<ParsedTree>, ParseError> {
        self.best_tree_until(words, max_chart_bytes, &|| false)
    }

    /// [`Parser::best_tree`], stopped as [`Parser::parse_until`] is.
    pub fn best_tree_until<S: AsRef<str>>(
        &self,
        words: &[S],
        max_chart_bytes: u64,
        stop: &dyn Fn() -> bool,
    ) -> Result<Option<ParsedTree>, ParseError> {
        let options = ParseOptions {
            max_chart_bytes,
            ..ParseOptions::default()
        };
        self.best_tree_with(words, &options, stop)
    }

    /// [`Parser::best_tree_until`] with the chart limit and the workers of
    /// `options` (the rest of `options` is not used).
    pub fn best_tree_with<S: AsRef<str>>(
        &self,
        words: &[S],
        options: &ParseOptions,
        stop: &dyn Fn() -> bool,
    ) -> Result<Option<ParsedTree>, ParseError> {
        let options = ParseOptions {
            kbest: 1,
            count_parses: false,
            explain: false,
            ..options.clone()
        };
        let words = self.check_size(words, &options)?;
        let keys = self.keys(&words);
        let g = &self.grammar;
        let vit = viterbi::fill(
            g,
            &keys,
            Watch(stop),
            &options.workers,
            None,
            &self.recycler,
        )?;
        let best = best_derivation(g, &vit, &keys, 0, words.len(), g.start)
            .map(|d| self.tree_of(&keys, &words, &d));
        self.recycler.keep_viterbi(vit);
        Ok(best)
    }

    /// The number of binary-rule evaluations one chart pass makes for
    /// `words`: one rule tried at one split point with both children present.
    /// Counted in a separate pass over a filled chart (for benchmarks; the
    /// parsing loops themselves count nothing).
    pub fn binary_evaluations<S: AsRef<str>>(
        &self,
        words: &[S],
        max_chart_bytes: u64,
    ) -> Result<u64, ParseError> {
        let options = ParseOptions {
            max_chart_bytes,
            count_parses: false,
            ..ParseOptions::default()
        };
        let words = self.check_size(words, &options)?;
        let keys = self.keys(&words);
        let g = &self.grammar;
        let vit = viterbi::fill(
            g,
            &keys,
            Watch(&|| false),
            &Workers::default(),
            None,
            &self.recycler,
        )?;
        let layout = vit.layout;
        let mut evals = 0u64;
        for len in 2..=layout.n {
            for i in 0..=layout.n - len {
                let j = i + len;
                for k in i + 1..j {
                    let r = layout.cell(k, j) * layout.n_sym;
                    for &b in vit.present(layout.cell(i, k)) {
                        evals += g.bin[g.binary_rule_range(b)]
                            .iter()
                            .filter(|rule| vit.score[r + rule.right as usize] > f64::NEG_INFINITY)
                            .count() as u64;
                    }
                }
            }
        }
        Ok(evals)
    }

    /// The bytes of state the k-best pass needs to find the `kbest` most
    /// probable trees of `words` (for benchmarks: it grows with `kbest` and
    /// the number of chart items those trees reach, not with the chart).
    pub fn kbest_state_bytes<S: AsRef<str>>(
        &self,
        words: &[S],
        kbest: usize,
    ) -> Result<u64, ParseError> {
        let options = ParseOptions {
            kbest,
            count_parses: false,
            explain: false,
            ..ParseOptions::default()
        };
        let words = self.check_size(words, &options)?;
        let keys = self.keys(&words);
        let g = &self.grammar;
        let watch = Watch(&|| false);
        let vit = viterbi::fill(g, &keys, watch, &Workers::default(), None, &self.recycler)?;
        match kbest::kbest(g, &keys, &vit, kbest, u64::MAX, watch) {
            Ok(found) => Ok(found.state_bytes),
            Err(_) => Err(ParseError::Stopped),
        }
    }

    fn check_size<'w, S: AsRef<str>>(
        &self,
        words: &'w [S],
        options: &ParseOptions,
    ) -> Result<Vec<&'w str>, ParseError> {
        if words.is_empty() {
            return Err(ParseError::EmptySentence);
        }
        let needed = self.chart_bytes(words.len(), options);
        if needed > options.max_chart_bytes {
            return Err(ParseError::ChartTooLarge {
                words: words.len(),
                needed_bytes: needed,
                limit_bytes: options.max_chart_bytes,
            });
        }
        Ok(words.iter().map(|w| w.as_ref()).collect())
    }

    /// Parses a line of text split on whitespace (the language's one rule,
    /// [`grammar_lang::model::words`], by which terminals are split too).
    pub fn parse_line(
        &self,
        line: &str,
        options: &ParseOptions,
    ) -> Result<ParseOutcome, ParseError> {
        let words: Vec<&str> = grammar_lang::model::words(line).collect();
        self.parse(&words, options)
    }

    /// What each word is looked up as ([`CompiledGrammar::lexicon_key`]):
    /// the word itself, or the unseen-word terminal of its shape class.
    fn keys<'w>(&self, words: &[&'w str]) -> Vec<&'w str> {
        words.iter().map(|w| self.grammar.lexicon_key(w)).collect()
    }

    /// The words of a sentence the grammar reads as unseen-word terminals
    /// ([`grammar_lang::unseen`]), each with its position and the terminal
    /// it is read as, in sentence order.
    pub fn unseen_words<'w, S: AsRef<str>>(
        &self,
        words: &'w [S],
    ) -> Vec<(usize, &'w str, &'static str)> {
        words
            .iter()
            .enumerate()
            .filter_map(|(i, w)| {
                let w = w.as_ref();
                let key = self.grammar.lexicon_key(w);
                grammar_lang::unseen::terminals()
                    .find(|t| *t == key && *t != w)
                    .map(|t| (i, w, t))
            })
            .collect()
    }

    /// The tree of derivation `d` over the lexicon keys `keys`, with the
    /// sentence's own `words` at its leaves.
    fn tree_of(&self, keys: &[&str], words: &[&str], d: &Deriv) -> ParsedTree {
        let log_probability = derivation_logprob(&self.grammar, keys, d);
        let tree = to_user_trees(&self.grammar, words, d)
            .into_iter()
            .next()
            .unwrap_or_else(|| {
                Tree::node(
                    self.grammar.names[self.grammar.start as usize].clone(),
                    Vec::new(),
                )
            });
        ParsedTree {
            tree,
            probability: log_probability.exp(),
            log_probability,
        }
    }
}

/// An explanation computed over lexicon keys, told in the sentence's own
/// words (an unseen word is shown as written, not as its class).
fn in_own_words(mut e: Explanation, words: &[&str]) -> Explanation {
    for u in &mut e.unknown_words {
        if let Some(w) = words.get(u.position) {
            u.word = (*w).to_string();
        }
    }
    for f in &mut e.fragments {
        if let Some(ws) = words.get(f.start..f.end) {
            f.text = ws.join(" ");
        }
    }
    if let Some(at) = &mut e.breakdown.stuck_at {
        if let Some(w) = words.get(at.position) {
            at.word = (*w).to_string();
        }
    }
    e
}
