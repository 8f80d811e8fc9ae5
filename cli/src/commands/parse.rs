//! `trellis parse`: the most probable trees of sentences, their
//! probabilities, and why a sentence does not parse.

use super::{emit, Outcome, Stream};
use crate::shared::load_runnable;
use rayon::prelude::*;
use serde::Serialize;
use std::io::Read;
use std::path::PathBuf;
use trellis_engine::count::Count;
use trellis_engine::explain::Explanation;
use trellis_engine::parser::{ParseError, ParseOptions, ParseOutcome, ParsedTree, Parser};

pub const LONG_ABOUT: &str = "Parse sentences with a grammar.\n\n\
    Each sentence is split on whitespace into words, which must match the \
    grammar's terminals exactly. For each sentence trellis prints the most \
    probable tree in the grammar's own rules, its probability, the \
    probability of the sentence (summed over all its trees) and the number \
    of trees; with --kbest N the N most probable trees. When a sentence has \
    no parse, trellis says why: unknown words with the closest known ones, \
    where every analysis from the start symbol breaks down, and the largest \
    pieces that do analyse.\n\n\
    Sentences come from the command line, or one per line from --input FILE \
    or standard input (blank lines are skipped). Batches are parsed in \
    parallel; output keeps the input order.\n\n\
    Exit status: 0 when every sentence parses; 1 when the grammar has errors \
    or some sentence does not parse (or is too long for --max-chart-mib); 2 \
    when a file cannot be read or the configuration is invalid.";

/// Output format of `trellis parse`.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum ParseFormat {
    /// A readable report per sentence.
    Text,
    /// One JSON object per sentence, one per line.
    Json,
    /// Labelled brackets with bare words, one tree per line (an empty line
    /// for a sentence without parse; with --kbest, a blank line between sentences).
    Brackets,
}

/// Arguments of `trellis parse`.
#[derive(clap::Args, Debug, Clone)]
pub struct ParseArgs {
    /// The grammar file (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// Sentences to parse; without any, sentences are read one per line
    #[arg(value_name = "SENTENCE")]
    pub sentences: Vec<String>,

    /// Read sentences from this file, one per line (`-`: standard input)
    #[arg(long, short = 'i', value_name = "FILE", conflicts_with = "sentences")]
    pub input: Option<PathBuf>,

    /// Also list the N most probable trees
    #[arg(long, value_name = "N", default_value_t = 1)]
    pub kbest: usize,

    /// Refuse sentences whose chart would need more memory than this (MiB)
    #[arg(long, value_name = "MIB", default_value_t = 1024)]
    pub max_chart_mib: u64,

    /// Do not count the trees (faster on large grammars)
    #[arg(long)]
    pub no_count: bool,

    #[arg(long, value_enum, default_value_t = ParseFormat::Text)]
    pub format: ParseFormat,
}

#[derive(Serialize)]
struct JsonTree {
    tree: String,
    probability: f64,
    log_probability: f64,
}

impl From<&ParsedTree> for JsonTree {
    fn from(t: &ParsedTree) -> Self {
        JsonTree {
            tree: t.tree.to_brackets(),
            probability: t.probability,
            log_probability: t.log_probability,
        }
    }
}

#[derive(Serialize)]
struct JsonSentence<'a> {
    sentence: &'a str,
    parsed: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    best: Option<JsonTree>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    kbest: Vec<JsonTree>,
    sentence_probability: f64,
    /// `null` when the sentence does not parse (the log of 0).
    sentence_log_probability: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    parse_count: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    explanation: Option<JsonExplanation<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<String>,
}

/// Why a sentence has no parse: the engine's [`Explanation`], field by field.
#[derive(Serialize)]
struct JsonExplanation<'a> {
    unknown_words: Vec<JsonUnknownWord<'a>>,
    fragments: Vec<JsonFragment<'a>>,
    breakdown: JsonBreakdown<'a>,
}

#[derive(Serialize)]
struct JsonUnknownWord<'a> {
    position: usize,
    word: &'a str,
    suggestions: &'a [String],
}

#[derive(Serialize)]
struct JsonFragment<'a> {
    start: usize,
    end: usize,
    text: &'a str,
    categories: Vec<JsonCategory<'a>>,
}

#[derive(Serialize)]
struct JsonCategory<'a> {
    symbol: &'a str,
    log_probability: f64,
}

#[derive(Serialize)]
struct JsonBreakdown<'a> {
    start_symbol: &'a str,
    prefix_words: usize,
    stuck_at: Option<JsonWordAt<'a>>,
    expected: &'a [String],
    more_expected: usize,
}

#[derive(Serialize)]
struct JsonWordAt<'a> {
    position: usize,
    word: &'a str,
}

impl<'a> From<&'a Explanation> for JsonExplanation<'a> {
    fn from(e: &'a Explanation) -> Self {
        let b = &e.breakdown;
        JsonExplanation {
            unknown_words: e
                .unknown_words
                .iter()
                .map(|u| JsonUnknownWord {
                    position: u.position,
                    word: &u.word,
                    suggestions: &u.suggestions,
                })
                .collect(),
            fragments: e
                .fragments
                .iter()
                .map(|f| JsonFragment {
                    start: f.start,
                    end: f.end,
                    text: &f.text,
                    categories: f
                        .categories
                        .iter()
                        .map(|c| JsonCategory {
                            symbol: &c.symbol,
                            log_probability: c.log_probability,
                        })
                        .collect(),
                })
                .collect(),
            breakdown: JsonBreakdown {
                start_symbol: &b.start_symbol,
                prefix_words: b.prefix_words,
                stuck_at: b.stuck_at.as_ref().map(|at| JsonWordAt {
                    position: at.position,
                    word: &at.word,
                }),
                expected: &b.expected,
                more_expected: b.more_expected,
            },
        }
    }
}

fn read_sentences(args: &ParseArgs) -> Result<Vec<String>, String> {
    if !args.sentences.is_empty() {
        return Ok(args.sentences.clone());
    }
    let text = match args.input.as_deref() {
        Some(path) if path.as_os_str() != "-" => trellis_project::read_text(path)
            .map_err(|reason| format!("cannot read {}: {reason}", path.display()))?,
        _ => {
            let mut text = String::new();
            std::io::stdin()
                .read_to_string(&mut text)
                .map_err(|e| format!("cannot read standard input: {e}"))?;
            text
        }
    };
    Ok(text
        .lines()
        .filter(|l| !l.trim().is_empty())
        .map(str::to_string)
        .collect())
}

fn count_text(c: &Count) -> String {
    match c {
        Count::Finite(n) => n.to_string(),
        Count::Infinite => "infinite".to_string(),
    }
}

fn text_report(sentence: &str, result: &Result<ParseOutcome, ParseError>) -> String {
    let mut out = format!("sentence: {sentence}\n");
    match result {
        Err(e) => out.push_str(&format!("  error: {e}\n")),
        Ok(o) => match &o.best {
            Some(best) => {
                out.push_str(&format!(
                    "  best tree (p = {:.6e}, log p = {:.4}):\n{}\n",
                    best.probability,
                    best.log_probability,
                    best.tree.to_indented("    ")
                ));
                for (rank, t) in o.kbest.iter().enumerate().skip(1) {
                    out.push_str(&format!(
                        "  tree {} (p = {:.6e}, log p = {:.4}):\n{}\n",
                        rank + 1,
                        t.probability,
                        t.log_probability,
                        t.tree.to_indented("    ")
                    ));
                }
                out.push_str(&format!(
                    "  P(sentence) = {:.6e} (log {:.4})\n",
                    o.sentence_probability, o.sentence_log_probability
                ));
                if let Some(c) = &o.parse_count {
                    out.push_str(&format!("  trees: {c}\n"));
                }
            }
            None => {
                out.push_str("  no parse\n");
                if let Some(e) = &o.explanation {
                    for line in e.render() {
                        out.push_str(&format!("  {line}\n"));
                    }
                }
            }
        },
    }
    out
}

/// Runs `trellis parse`.
pub fn run(args: &ParseArgs) -> Outcome {
    let analysis = match load_runnable(&args.grammar, "parse") {
        Ok(l) => l,
        Err(outcome) => return outcome,
    };
    let parser = match Parser::new(&analysis.grammar) {
        Ok(p) => p,
        Err(e) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Outcome::Findings;
        }
    };
    let sentences = match read_sentences(args) {
        Ok(s) => s,
        Err(e) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Outcome::Failure;
        }
    };
    let options = ParseOptions {
        kbest: args.kbest,
        max_chart_bytes: args.max_chart_mib.saturating_mul(1 << 20),
        count_parses: !args.no_count,
        explain: true,
    };
    let results: Vec<Result<ParseOutcome, ParseError>> = sentences
        .par_iter()
        .map(|s| parser.parse_line(s, &options))
        .collect();
    let mut out = String::new();
    for (n, (sentence, result)) in sentences.iter().zip(&results).enumerate() {
        match args.format {
            ParseFormat::Text => {
                if n > 0 {
                    out.push('\n');
                }
                out.push_str(&text_report(sentence, result));
            }
            ParseFormat::Brackets => {
                if n > 0 && args.kbest > 1 {
                    out.push('\n');
                }
                match result {
                    Ok(o) if o.parsed() => {
                        let trees: Vec<&ParsedTree> = if o.kbest.is_empty() {
                            o.best.iter().collect()
                        } else {
                            o.kbest.iter().collect()
                        };
                        for t in trees {
                            out.push_str(&t.tree.to_treebank());
                            out.push('\n');
                        }
                    }
                    _ => out.push('\n'),
                }
            }
            ParseFormat::Json => {
                let doc = match result {
                    Ok(o) => JsonSentence {
                        sentence,
                        parsed: o.parsed(),
                        best: o.best.as_ref().map(JsonTree::from),
                        kbest: if args.kbest > 1 {
                            o.kbest.iter().map(JsonTree::from).collect()
                        } else {
                            Vec::new()
                        },
                        sentence_probability: o.sentence_probability,
                        sentence_log_probability: o
                            .sentence_log_probability
                            .is_finite()
                            .then_some(o.sentence_log_probability),
                        parse_count: o.parse_count.as_ref().map(count_text),
                        explanation: o.explanation.as_ref().map(JsonExplanation::from),
                        error: None,
                    },
                    Err(e) => JsonSentence {
                        sentence,
                        parsed: false,
                        best: None,
                        kbest: Vec::new(),
                        sentence_probability: 0.0,
                        sentence_log_probability: None,
                        parse_count: None,
                        explanation: None,
                        error: Some(e.to_string()),
                    },
                };
                out.push_str(
                    &serde_json::to_string(&doc)
                        .unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}")),
                );
                out.push('\n');
            }
        }
    }
    emit(Stream::Stdout, &out);
    let failed = results
        .iter()
        .filter(|r| !matches!(r, Ok(o) if o.parsed()))
        .count();
    if failed > 0 {
        if args.format == ParseFormat::Brackets {
            emit(
                Stream::Stderr,
                &format!("{failed} of {} sentences did not parse\n", sentences.len()),
            );
        }
        return Outcome::Findings;
    }
    Outcome::Clean
}
