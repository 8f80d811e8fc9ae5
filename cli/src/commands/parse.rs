//! `trellis parse`: the most probable trees of sentences, their
//! probabilities, and why a sentence does not parse.

use super::Stop;
use super::{Outcome, Ran};
use crate::output::{emit, ParseFormat, Stream, Term};
use crate::render::{brackets, human, json};
use crate::shared::{fail, load, note_run, parse_error_text, prepare, ParseLimits};
use grammar_lang::Grammar;
use rayon::prelude::*;
use std::io::Read;
use std::path::{Path, PathBuf};
use trellis_engine::parser::{
    Beam, ParseError, ParseOptions, ParseOutcome, ParsedTree, Spread, Task, Workers,
};
use trellis_ide::picture::{tree_picture, Surface};

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
    A grammar whose blocks may sum to something other than 1 (trellis.toml \
    sets `sum-not-one` below error) is run with each such block's weights \
    divided by their sum; a note says which blocks. Errors in blocks the \
    start symbol cannot reach do not stop the run (a note lists them).\n\n\
    Two budgets bound each sentence: --max-chart-mib refuses a sentence \
    whose chart would need more memory, before parsing it, and stops the \
    search for the --kbest trees when it outgrows what the chart leaves; \
    --max-seconds stops a parse that runs longer. A \
    refused or stopped sentence is reported as such, with the option to \
    change.\n\n\
    For very large grammars, --beam WIDTH prunes each chart cell to the \
    symbols whose best log-probability is within WIDTH (natural log) of the \
    cell's best, and --beam-size N to its N best symbols. Pruned results are \
    not exact and say so: probabilities are lower bounds, the best tree may \
    be missed, and the tree count counts surviving trees only. A sentence \
    whose every tree the beam drops is parsed again exactly, and says so. \
    Without either option parsing is exact.\n\n\
    Exit status: 0 when every sentence parses; 1 when the grammar has errors \
    in what the run uses or some sentence does not parse (or is refused by \
    --max-chart-mib or stopped by --max-seconds); 2 when a file cannot be \
    read or the configuration is invalid.";

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

    /// Also list the N most probable trees (N is at least 1)
    #[arg(
        long,
        value_name = "N",
        default_value_t = 1,
        value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..)
    )]
    pub kbest: usize,

    /// Refuse sentences whose chart would need more memory than this (MiB)
    #[arg(long, value_name = "MIB", default_value_t = 1024)]
    pub max_chart_mib: u64,

    /// Stop the parse of a sentence that takes longer than this (seconds;
    /// fractions allowed) [default: no limit]
    #[arg(long, value_name = "SECONDS", value_parser = crate::shared::seconds)]
    pub max_seconds: Option<f64>,

    /// Do not count the trees (faster on large grammars)
    #[arg(long)]
    pub no_count: bool,

    /// Prune each chart cell to the symbols within WIDTH (natural log) of
    /// its best: faster on very large grammars, no longer exact [default:
    /// no pruning]
    #[arg(long, value_name = "WIDTH", value_parser = beam_width)]
    pub beam: Option<f64>,

    /// Keep at most N symbols in each chart cell (N is at least 1; with or
    /// without --beam) [default: no limit]
    #[arg(
        long,
        value_name = "N",
        value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..)
    )]
    pub beam_size: Option<usize>,

    /// Print trees in the labels of the treebank a grammar was learned from
    /// (`trellis learn`): binarization's intermediate symbols dissolved,
    /// annotations dropped, labels unescaped
    #[arg(long)]
    pub treebank_labels: bool,

    /// Also draw each parsed sentence's tree as an SVG picture in FILE (with
    /// several sentences, FILE-1.svg, FILE-2.svg, …; with --kbest N the N
    /// trees side by side)
    #[arg(long, value_name = "FILE")]
    pub svg: Option<PathBuf>,

    /// `human` for people, `json` for one object per sentence, one per
    /// line, `brackets` for labelled-bracket trees with bare words
    #[arg(long, value_enum, default_value_t = ParseFormat::Human)]
    pub format: ParseFormat,
}

/// A beam width: a natural-log width of 0 or more.
fn beam_width(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(w) if w >= 0.0 && w.is_finite() => Ok(w),
        _ => Err(format!(
            "`{text}` is not a beam width (a natural-log width of 0 or more, such as 5)"
        )),
    }
}

/// The beam `--beam` and `--beam-size` ask for, if any.
fn beam_of(args: &ParseArgs) -> Option<Beam> {
    if args.beam.is_none() && args.beam_size.is_none() {
        return None;
    }
    // Both values were checked by their parsers, which is all `Beam::new`
    // checks.
    Beam::new(args.beam.unwrap_or(f64::INFINITY), args.beam_size).ok()
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

/// Where the picture of sentence `n` (0-based) of `count` goes: `path`
/// itself for a single sentence, `stem-N.ext` for several.
fn picture_path(path: &Path, n: usize, count: usize) -> PathBuf {
    if count == 1 {
        return path.to_path_buf();
    }
    let stem = path
        .file_stem()
        .map(|s| s.to_string_lossy().into_owned())
        .unwrap_or_default();
    let ext = path
        .extension()
        .map(|e| e.to_string_lossy().into_owned())
        .unwrap_or_else(|| "svg".to_string());
    path.with_file_name(format!("{stem}-{}.{ext}", n + 1))
}

/// The picture of one sentence's trees (its best, or its `--kbest`), or
/// `None` when it has no tree.
fn draw_picture(
    grammar: &Grammar,
    sentence: &str,
    result: &Result<ParseOutcome, String>,
    kbest: usize,
) -> Option<String> {
    let trees: Vec<ParsedTree> = match result {
        Ok(outcome) if kbest > 1 => outcome.kbest.clone(),
        Ok(outcome) => outcome.best.iter().cloned().collect(),
        Err(_) => Vec::new(),
    };
    if trees.is_empty() {
        return None;
    }
    Some(tree_picture(grammar, sentence, &trees, Surface::Standalone))
}

/// Writes sentence `n`'s picture (of `count` sentences) beside `path` and
/// says where on standard error (standard output keeps the chosen format).
fn write_picture(path: &Path, n: usize, count: usize, svg: Option<&str>) -> Result<(), Stop> {
    let Some(svg) = svg else {
        emit(
            Stream::Stderr,
            &format!("note: no picture for sentence {} (it has no tree)\n", n + 1),
        );
        return Ok(());
    };
    let target = picture_path(path, n, count);
    std::fs::write(&target, svg).map_err(|e| {
        fail(
            format!("cannot write {}: {e}", target.display()),
            Outcome::Failure,
        )
    })?;
    emit(Stream::Stderr, &format!("wrote {}\n", target.display()));
    Ok(())
}

/// What became of one sentence, as the closing summary counts it.
enum Verdict {
    Parsed,
    Unparsed,
    /// Not analysed: refused or stopped by a budget, with the reason.
    Refused(String),
}

impl Verdict {
    /// The verdict on `result`, which it takes (its trees are dropped here).
    fn of(result: Result<ParseOutcome, String>) -> Verdict {
        match result {
            Ok(outcome) if outcome.parsed() => Verdict::Parsed,
            Ok(_) => Verdict::Unparsed,
            Err(e) => Verdict::Refused(e),
        }
    }
}

/// One sentence, done on the thread that parsed it: its output, its
/// verdict, and its picture under `--svg` (the trees themselves are
/// dropped there too, so that the thread writing the output in order does
/// nothing but write).
struct Done {
    text: String,
    verdict: Verdict,
    picture: Option<String>,
}

/// Rewrites an outcome's trees in the labels of the treebank the grammar
/// was learned from.
fn to_treebank_labels(outcome: &mut ParseOutcome) {
    for parsed in outcome.best.iter_mut().chain(outcome.kbest.iter_mut()) {
        parsed.tree = trellis_treebank::debinarize(&parsed.tree);
    }
}

/// The engine's chart passes may spread a long sentence's cells over
/// rayon's threads; with many sentences, rayon's work stealing shares the
/// same threads between the sentences and their cells.
struct RayonThreads;

impl Spread for RayonThreads {
    fn threads(&self) -> usize {
        rayon::current_num_threads()
    }

    fn run<'a>(&self, tasks: Vec<Task<'a>>) {
        tasks.into_par_iter().for_each(|task| task());
    }
}

/// Sentences parsed (in parallel) and written per round.
const ROUND: usize = 1024;

/// Writes `text` to standard output; `false` when it cannot be written
/// (the reader closed the pipe, say), so that no more work is done for it.
fn write_stdout(text: &str) -> bool {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    out.write_all(text.as_bytes())
        .and_then(|()| out.flush())
        .is_ok()
}

/// Runs `trellis parse`.
pub fn run(args: &ParseArgs, term: Term) -> Ran {
    let analysis = load(&args.grammar)?;
    let run = prepare(&analysis, None, false, &args.grammar, "parse", term)?;
    let parser = run.parser().map_err(|e| fail(e, Outcome::Findings))?;
    let sentences = read_sentences(args).map_err(|e| fail(e, Outcome::Failure))?;
    let options = ParseOptions {
        // The best tree always comes in `best`: the list is asked for only
        // when it holds more (a list of one would copy every tree).
        kbest: if args.kbest > 1 { args.kbest } else { 0 },
        max_chart_bytes: args.max_chart_mib.saturating_mul(1 << 20),
        count_parses: !args.no_count,
        explain: true,
        workers: Workers::new(RayonThreads),
        beam: beam_of(args),
    };
    let limits = ParseLimits {
        max_chart_mib: args.max_chart_mib,
        max_seconds: args.max_seconds,
    };
    let ran = json::Ran::of(&analysis, &run);
    if args.format != ParseFormat::Json {
        note_run(&analysis, &run);
    }
    // Parsed and written a round at a time: the first trees come out while
    // the rest are parsed, memory stays bounded however long the input
    // (pictures included), and a closed pipe (`| head`) ends the run.
    let mut unparsed = 0usize;
    let mut refusals: Vec<(usize, String)> = Vec::new();
    for (round, batch) in sentences.chunks(ROUND).enumerate() {
        let first = round * ROUND;
        // Each sentence is parsed, rendered and drawn on its own thread;
        // only the writing is done in order.
        let mut done: Vec<Done> = batch
            .par_iter()
            .enumerate()
            .map(|(k, sentence)| {
                // Each sentence's clock starts when its parse does.
                let deadline = limits.deadline();
                let words: Vec<&str> = sentence.split_whitespace().collect();
                let mut result = parser
                    .parse_until(&words, &options, &|| deadline.passed())
                    .map_err(|e: ParseError| parse_error_text(&e, &limits));
                if let (true, Ok(outcome)) = (args.treebank_labels, &mut result) {
                    to_treebank_labels(outcome);
                }
                let mut text = String::new();
                let n = first + k;
                match args.format {
                    ParseFormat::Human => {
                        if n > 0 {
                            text.push('\n');
                        }
                        text.push_str(&human::parse_report(sentence, &result));
                        text.push_str(&human::unseen_words(&parser.unseen_words(&words)));
                    }
                    ParseFormat::Brackets => {
                        if n > 0 && args.kbest > 1 {
                            text.push('\n');
                        }
                        text.push_str(&brackets::sentence(&result));
                    }
                    ParseFormat::Json => {
                        text.push_str(&json::to_line(&json::parse_document(
                            sentence,
                            &result,
                            args.kbest > 1,
                            &ran,
                        )));
                    }
                }
                let picture = args
                    .svg
                    .as_ref()
                    .and_then(|_| draw_picture(run.grammar(), sentence, &result, args.kbest));
                Done {
                    text,
                    verdict: Verdict::of(result),
                    picture,
                }
            })
            .collect();
        let mut out = String::with_capacity(done.iter().map(|d| d.text.len()).sum());
        for (k, d) in done.iter_mut().enumerate() {
            out.push_str(&d.text);
            match &mut d.verdict {
                Verdict::Parsed => {}
                Verdict::Unparsed => unparsed += 1,
                Verdict::Refused(e) => refusals.push((first + k, std::mem::take(e))),
            }
        }
        if !write_stdout(&out) {
            break;
        }
        if let Some(svg) = &args.svg {
            for (k, d) in done.iter().enumerate() {
                write_picture(svg, first + k, sentences.len(), d.picture.as_deref())?;
            }
        }
    }
    let refused = refusals.len();
    if unparsed + refused > 0 {
        if args.format == ParseFormat::Brackets {
            // The trees go to stdout; why a sentence has none goes here.
            let mut text = String::new();
            for (n, e) in &refusals {
                text.push_str(&format!("sentence {}: {e}\n", n + 1));
            }
            let mut parts = Vec::new();
            if unparsed > 0 {
                parts.push(format!(
                    "{unparsed} of {} sentences did not parse",
                    sentences.len()
                ));
            }
            if refused > 0 {
                parts.push(format!(
                    "{refused} of {} {} not analysed",
                    sentences.len(),
                    if refused == 1 { "was" } else { "were" }
                ));
            }
            text.push_str(&parts.join("; "));
            text.push('\n');
            emit(Stream::Stderr, &text);
        }
        return Ok(Outcome::Findings);
    }
    Ok(Outcome::Clean)
}
