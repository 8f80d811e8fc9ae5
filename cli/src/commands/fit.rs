//! `trellis fit`: re-estimate the weights of a hand-written grammar from
//! trees written in its own symbols.

use super::{Outcome, Ran};
use crate::output::{emit, Format, Stream, Term};
use crate::render::{human, json};
use crate::shared::{fail, load, CleaningArgs};
use std::path::PathBuf;
use trellis_project::fit::{fit_grammar, FitError, Fitted, Fitting};
use trellis_treebank::fit::Smoothing;

pub const LONG_ABOUT: &str =
    "Re-estimate a grammar's weights from trees written in its symbols.\n\n\
    Reads labelled-bracket trees whose labels are the grammar's block names \
    and whose words are its terminals (a terminal of several words is those \
    words in a row), checks every node against the grammar's rules and counts \
    the rules the trees use. In each block the trees use, a rule's new \
    probability is (count + k) / (total + k·n) for n rules in the block: \
    --smoothing add-K (default add-0.5) or none (maximum likelihood: an unseen \
    rule gets 0). A block no tree uses keeps its weights.\n\n\
    Only weights change: every comment, doc comment, test block and the \
    layout stay as they are. Plain blocks get probabilities in their own \
    notation (exact fractions where a decimal or percentage cannot be \
    exact), so each still sums to exactly 1; `relative` blocks get the \
    smoothed counts. The grammar is printed on standard output, or written \
    to -o OUT, or back to its files with --in-place (atomically). --dry-run \
    prints the old and new probability of every rule instead. After the fit \
    the grammar is analysed again: findings it did not have before (a rule \
    of weight 0, a leak) and test cases that held and no longer do are \
    reported as warnings.\n\n\
    Exit status: 0 when the weights were fitted; 1 when the grammar has \
    errors or a tree is malformed or has a node no rule produces (its file, \
    line and column are named with the rule it needs; --keep-going skips \
    such trees); 2 when a file cannot be read or written or the output \
    cannot hold the change.";

/// Arguments of `trellis fit`.
#[derive(clap::Args, Debug, Clone)]
pub struct FitArgs {
    /// The grammar whose weights to fit (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// Treebank files whose labels are the grammar's symbols, plain or
    /// gzip-compressed
    #[arg(value_name = "TREEBANK", required = true)]
    pub treebanks: Vec<PathBuf>,

    /// Write the fitted grammar here (default: standard output)
    #[arg(
        long,
        short = 'o',
        value_name = "OUT.trellis",
        conflicts_with = "in_place"
    )]
    pub output: Option<PathBuf>,

    /// Write the fitted weights back into the grammar's own files
    #[arg(long)]
    pub in_place: bool,

    /// `add-K` adds K to every rule's count in a block the trees use;
    /// `none` is maximum likelihood (unseen rules get 0)
    #[arg(long, value_name = "add-K|none", default_value = "add-0.5", value_parser = Smoothing::parse)]
    pub smoothing: Smoothing,

    /// Print the old and new probability of every rule; write nothing
    #[arg(long)]
    pub dry_run: bool,

    /// `human` for a table, `json` for one document (then the grammar is
    /// written only with -o or --in-place)
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,

    #[command(flatten)]
    pub cleaning: CleaningArgs,

    /// Skip malformed trees and trees the grammar does not produce (each
    /// is reported, with a count) instead of stopping at the first
    #[arg(long)]
    pub keep_going: bool,
}

/// At most this many skipped trees are listed one by one.
const SKIPPED_SHOWN: usize = 10;

/// Runs `trellis fit`.
pub fn run(args: &FitArgs, term: Term) -> Ran {
    let analysis = load(&args.grammar)?;
    let how = Fitting {
        smoothing: args.smoothing.clone(),
        cleaning: args.cleaning.cleaning(),
        keep_going: args.keep_going,
    };
    let fitted = match fit_grammar(&analysis, &args.grammar, &args.treebanks, &how) {
        Ok(fitted) => fitted,
        Err(FitError::Grammar(errors)) => {
            let shown: Vec<_> = errors.iter().map(|e| e.diagnostic.clone()).collect();
            let mut out = human::diagnostics(&analysis.sources, &shown, term.color(Stream::Stderr));
            out.push_str(&format!(
                "error: {} has {} error{}; fix {} before fitting its weights (`trellis check` lists {})\n",
                args.grammar.display(),
                errors.len(),
                if errors.len() == 1 { "" } else { "s" },
                if errors.len() == 1 { "it" } else { "them" },
                if errors.len() == 1 { "it" } else { "them" },
            ));
            emit(Stream::Stderr, &out);
            return Err(super::Stop(Outcome::Findings));
        }
        Err(FitError::Tree(problem)) if problem.problem.line == 0 => {
            return Err(fail(problem, Outcome::Failure))
        }
        Err(FitError::Tree(problem)) => {
            return Err(fail(
                format!(
                    "{problem}\n  (or pass --keep-going to skip the trees the grammar does not produce)"
                ),
                Outcome::Findings,
            ))
        }
    };
    report_skipped(&fitted);
    if fitted.estimate.trees == 0 {
        return Err(fail(
            "no tree to fit the weights to in the input",
            Outcome::Findings,
        ));
    }
    let others: Vec<String> = fitted
        .changed
        .iter()
        .filter(|r| r.path != fitted.root.path)
        .map(|r| r.path.display().to_string())
        .collect();
    let writes =
        !args.dry_run && (args.in_place || args.output.is_some() || args.format == Format::Human);
    if writes && !args.in_place && !others.is_empty() {
        return Err(fail(
            format!(
                "the fit changes weights in {} too, which {} cannot hold: pass --in-place to write every file, or --dry-run to see the new weights",
                others.join(", "),
                if args.output.is_some() { "-o" } else { "standard output" }
            ),
            Outcome::Failure,
        ));
    }
    match args.format {
        Format::Json => json::write(&json::fitted(&analysis, &fitted, writes)),
        Format::Human if args.dry_run => {
            emit(Stream::Stdout, &human::fit_table(&analysis, &fitted))
        }
        Format::Human => {}
    }
    let mut note = human::fit_summary(&analysis, &fitted);
    if writes {
        if args.in_place {
            for file in &fitted.changed {
                trellis_project::write_atomic(&file.path, &file.text).map_err(|e| {
                    fail(
                        format!("cannot write {}: {e}", file.path.display()),
                        Outcome::Failure,
                    )
                })?;
                note.push_str(&format!("wrote {}\n", file.path.display()));
            }
            if fitted.changed.is_empty() {
                note.push_str("no weight changes: nothing written\n");
            }
        } else if let Some(path) = &args.output {
            trellis_project::write_atomic(path, &fitted.root.text).map_err(|e| {
                fail(
                    format!("cannot write {}: {e}", path.display()),
                    Outcome::Failure,
                )
            })?;
            note.push_str(&format!("wrote {}\n", path.display()));
        } else {
            emit(Stream::Stdout, &fitted.root.text);
        }
    }
    emit(Stream::Stderr, &note);
    Ok(Outcome::Clean)
}

fn report_skipped(fitted: &Fitted) {
    let mut out = String::new();
    for problem in fitted.skipped.iter().take(SKIPPED_SHOWN) {
        out.push_str(&format!("warning: skipped a tree: {problem}\n"));
    }
    if fitted.skipped.len() > SKIPPED_SHOWN {
        out.push_str(&format!(
            "warning: … and {} more trees skipped\n",
            fitted.skipped.len() - SKIPPED_SHOWN
        ));
    }
    emit(Stream::Stderr, &out);
}
