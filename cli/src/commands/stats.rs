//! `trellis stats`: does the grammar's probability end on finite sentences,
//! and what do its sentences look like on average?

use super::{Outcome, Ran};
use crate::output::{emit, Format, Stream, Term};
use crate::render::{human, json};
use crate::shared::{fail, load, note_run, prepare};
use std::path::PathBuf;
use trellis_engine::consistency;

pub const LONG_ABOUT: &str = "Show the probabilistic properties of a grammar.\n\n\
    For the start symbol (or --from): whether derivations end with probability 1 \
    (\"tight\") and how much probability leaks to derivations that never end; the \
    spectral radius of the expected-count matrix (below 1: finite expected size; \
    1: critical; above 1: the grammar may leak); the expected sentence length and \
    number of rule applications; and for every non-terminal the probability that \
    its derivations end and how often a sentence uses it on average.\n\n\
    The numbers are those of the weights a run uses: a block that may sum to \
    something other than 1 (trellis.toml sets `sum-not-one` below error) has \
    its weights divided by their sum, as `parse`, `sample` and `test` use them. \
    Errors in blocks the symbol cannot reach do not stop the run.\n\n\
    Exit status: 0 for a tight grammar; 1 when the grammar has errors in what \
    the run uses or leaks probability; 2 when the file cannot be read, the configuration is invalid or \
    --from names no symbol.";

/// Arguments of `trellis stats`.
#[derive(clap::Args, Debug, Clone)]
pub struct StatsArgs {
    /// The grammar file (its `use`d files are read too)
    #[arg(value_name = "GRAMMAR")]
    pub grammar: PathBuf,

    /// Analyse derivations from this non-terminal instead of `start`
    #[arg(long, value_name = "SYMBOL")]
    pub from: Option<String>,

    /// `human` prints a table, `json` one object with every number
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
}

/// Runs `trellis stats`.
pub fn run(args: &StatsArgs, term: Term) -> Ran {
    let analysis = load(&args.grammar)?;
    let run = prepare(
        &analysis,
        args.from.as_deref(),
        true,
        &args.grammar,
        "stats",
        term,
    )?;
    let g = run.grammar();
    let from = run.start();
    let report = consistency::analyze_from(g, from).map_err(|e| fail(e, Outcome::Failure))?;
    // At the level trellis.toml sets, as `check` reports it.
    let leaky = analysis.leak_finding(&report);
    match args.format {
        Format::Json => json::write(&json::stats_document(
            g.nt_name(from),
            &report,
            leaky.as_ref(),
            &analysis.sources,
            &json::Ran::of(&analysis, &run),
        )),
        Format::Human => {
            note_run(&analysis, &run);
            let mut out = human::stats_table(g.nt_name(report.root), &report);
            if let Some(d) = &leaky {
                out.push('\n');
                out.push_str(
                    &human::HumanRenderer::new(&analysis.sources, term.color(Stream::Stdout))
                        .render(d),
                );
            }
            emit(Stream::Stdout, &out);
        }
    }
    Ok(if report.tight {
        Outcome::Clean
    } else {
        Outcome::Findings
    })
}
