//! `trellis eval`: PARSEVAL scores of predicted trees against gold trees.

use super::{Outcome, Ran};
use crate::output::{emit, Format, Stream};
use crate::render::{human, json};
use crate::shared::fail;
use std::path::PathBuf;
use trellis_project::evaluate::evaluate;
use trellis_treebank::eval::EvalOptions;

pub const LONG_ABOUT: &str = "Score predicted trees against gold trees.\n\n\
    Both files hold labelled-bracket trees, one per sentence, in the same \
    order (`trellis parse --format brackets` writes such a file). The scores \
    are PARSEVAL's labelled brackets: precision, recall and F1 overall and \
    per label, the share of sentences parsed exactly, and crossing brackets. \
    Pre-terminals (a node over one word) are not brackets; brackets match \
    as multisets.\n\n\
    Exit status: 0 when every pair was scored; 1 when a tree is malformed, \
    the files hold different numbers of trees, or a pair's words differ (the \
    place is named); 2 when a file cannot be read.";

/// Arguments of `trellis eval`.
#[derive(clap::Args, Debug, Clone)]
pub struct EvalArgs {
    /// The gold trees
    #[arg(value_name = "GOLD")]
    pub gold: PathBuf,

    /// The predicted trees, one per gold tree, in the same order
    #[arg(value_name = "PREDICTED")]
    pub predicted: PathBuf,

    /// Do not count the root's bracket
    #[arg(long)]
    pub ignore_root: bool,

    /// Pre-terminal labels of punctuation, comma-separated: their words are
    /// removed before spans are compared (e.g. `,` `.` `:`)
    #[arg(long, value_name = "LABELS", value_delimiter = ',')]
    pub punctuation: Vec<String>,

    /// Labels that count as one, comma-separated (repeatable): `ADVP,PRT`
    #[arg(long, value_name = "LABELS")]
    pub equivalent: Vec<String>,

    /// Leave sentences longer than N words out of the totals
    #[arg(long, value_name = "N")]
    pub max_length: Option<usize>,

    /// `human` for a table, `json` for every sentence and the totals
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
}

/// Runs `trellis eval`.
pub fn run(args: &EvalArgs) -> Ran {
    let options = EvalOptions {
        ignore_root: args.ignore_root,
        punctuation: args.punctuation.clone(),
        equivalent: args
            .equivalent
            .iter()
            .map(|class| class.split(',').map(str::to_string).collect())
            .collect(),
        max_length: args.max_length,
    };
    let evaluation = evaluate(&args.gold, &args.predicted, &options).map_err(|problem| {
        let outcome = if problem.line == 0 {
            Outcome::Failure
        } else {
            Outcome::Findings
        };
        fail(problem, outcome)
    })?;
    match args.format {
        Format::Human => emit(Stream::Stdout, &human::evaluation(&evaluation)),
        Format::Json => emit(
            Stream::Stdout,
            &json::to_line(&json::evaluation(&evaluation)),
        ),
    }
    Ok(Outcome::Clean)
}
