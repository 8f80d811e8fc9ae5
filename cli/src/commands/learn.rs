//! `trellis learn`: a grammar with maximum-likelihood weights from
//! annotated trees.

use super::{Outcome, Ran};
use crate::output::{emit, Stream};
use crate::shared::{fail, CleaningArgs};
use std::io::IsTerminal;
use std::path::PathBuf;
use trellis_project::learn::{learn_from_files, learned_source, Learning};
use trellis_treebank::Markov;

pub const LONG_ABOUT: &str = "Learn a grammar from annotated trees.\n\n\
    Reads labelled-bracket trees (`(S (NP (DT the) (NN ferry)) (VP …))`, any \
    number per file, spread over lines as you like; gzip files are read as \
    they are), binarizes them and counts every rule; each alternative's \
    weight is its count among its block's (maximum likelihood). The grammar \
    is written in canonical layout with the counts as `relative` weights and \
    a header saying how it was learned.\n\n\
    Binarization is lossless by default (intermediate symbols remember every \
    child still to come); --horizontal H remembers only the last H children \
    generated, and --vertical V annotates each phrasal node with its V−1 \
    nearest ancestors. README's \"Learning from trees\" explains the names.\n\n\
    --rare K lets words seen at most K times also count for the unseen-word \
    terminal of their shape class (`\"<unseen:suffix-ing>\"`, …): the parser \
    reads a word it does not know as its class, so the grammar parses \
    sentences with new words (README, \"Unseen words\").\n\n\
    Exit status: 0 when the grammar was written; 1 when a tree is malformed \
    (its file, line and column are named; --keep-going skips such trees and \
    counts them); 2 when a file cannot be read or written.";

/// Arguments of `trellis learn`.
#[derive(clap::Args, Debug, Clone)]
pub struct LearnArgs {
    /// Treebank files: labelled-bracket trees, plain or gzip-compressed
    #[arg(value_name = "TREEBANK", required = true)]
    pub treebanks: Vec<PathBuf>,

    /// Write the grammar here (default: standard output)
    #[arg(long, short = 'o', value_name = "OUT.trellis")]
    pub output: Option<PathBuf>,

    /// Horizontal markovization: intermediate symbols remember only the
    /// last H children generated
    #[arg(long, value_name = "H", conflicts_with = "lossless")]
    pub horizontal: Option<usize>,

    /// Vertical markovization: annotate phrasal nodes with their V−1
    /// nearest ancestors (1 = none, 2 = parent, 3 = grandparent too)
    #[arg(
        long,
        value_name = "V",
        default_value_t = 1,
        value_parser = clap::builder::RangedU64ValueParser::<usize>::new().range(1..=8)
    )]
    pub vertical: usize,

    /// Lossless binarization (the default): intermediate symbols remember
    /// every child still to come
    #[arg(long)]
    pub lossless: bool,

    #[command(flatten)]
    pub cleaning: CleaningArgs,

    /// Words seen at most K times also count for the unseen-word class of
    /// their shape (`"<unseen:capitalised>"`, …), so the grammar reads
    /// words it never saw (0: off)
    #[arg(long, value_name = "K", default_value_t = 0)]
    pub rare: u64,

    /// Skip malformed trees (each is reported, with a count at the end)
    /// instead of stopping at the first
    #[arg(long)]
    pub keep_going: bool,
}

/// At most this many skipped trees are listed one by one.
const SKIPPED_SHOWN: usize = 10;

/// Runs `trellis learn`.
pub fn run(args: &LearnArgs) -> Ran {
    let how = Learning {
        markov: Markov {
            horizontal: args.horizontal,
            vertical: args.vertical,
        },
        cleaning: args.cleaning.cleaning(),
        keep_going: args.keep_going,
        rare: args.rare,
    };
    let interactive = std::io::stderr().is_terminal();
    let bar = interactive.then(|| {
        let bar = indicatif::ProgressBar::new_spinner();
        bar.set_style(
            indicatif::ProgressStyle::with_template("{spinner} reading trees: {pos} ({per_sec})")
                .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner()),
        );
        bar
    });
    let learned = learn_from_files(&args.treebanks, &how, |n| {
        if let Some(bar) = &bar {
            if n % 256 == 0 {
                bar.set_position(n);
            }
        }
    });
    if let Some(bar) = &bar {
        bar.finish_and_clear();
    }
    let learned = match learned {
        Ok(learned) => learned,
        Err(problem) if problem.line == 0 => return Err(fail(problem, Outcome::Failure)),
        Err(problem) => {
            return Err(fail(
                format!(
                    "{problem}\n  (fix the tree, or pass --keep-going to skip malformed trees)"
                ),
                Outcome::Findings,
            ))
        }
    };
    for problem in learned.skipped.iter().take(SKIPPED_SHOWN) {
        emit(
            Stream::Stderr,
            &format!("warning: skipped a malformed tree: {problem}\n"),
        );
    }
    if learned.skipped.len() > SKIPPED_SHOWN {
        emit(
            Stream::Stderr,
            &format!(
                "warning: … and {} more malformed trees\n",
                learned.skipped.len() - SKIPPED_SHOWN
            ),
        );
    }
    if learned.counts.trees() == 0 {
        return Err(fail(
            "no tree to learn from in the input",
            Outcome::Findings,
        ));
    }
    let source = learned_source(&learned, &args.treebanks, &how);
    let counted = learned.counts.trees();
    let summary = format!(
        "learned {} rules from {counted} tree{}{}\n",
        learned.counts.rule_count(),
        if counted == 1 { "" } else { "s" },
        if learned.skipped.is_empty() {
            String::new()
        } else {
            format!(" ({} malformed trees skipped)", learned.skipped.len())
        }
    );
    match &args.output {
        Some(path) => {
            trellis_project::write_atomic(path, &source).map_err(|e| {
                fail(
                    format!("cannot write {}: {e}", path.display()),
                    Outcome::Failure,
                )
            })?;
            emit(
                Stream::Stderr,
                &format!("{summary}wrote {}\n", path.display()),
            );
        }
        None => {
            emit(Stream::Stdout, &source);
            emit(Stream::Stderr, &summary);
        }
    }
    Ok(Outcome::Clean)
}
