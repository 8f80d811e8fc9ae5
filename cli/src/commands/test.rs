//! `trellis test`: run the `test` blocks written in grammars.

use super::{Outcome, Ran, Stop};
use crate::output::{emit, Format, Stream, Term};
use crate::render::human::{self, TestDetail};
use crate::render::json;
use crate::shared::{analyse, note_nothing_found, report_failures};
use grammar_lang::syntax::lexer::quote;
use std::path::PathBuf;
use trellis_project::test_run;
use trellis_project::{paths_or_here, Analysed};

pub const LONG_ABOUT: &str = "Run the tests written in grammars.\n\n\
    A `test \"name\" { ... }` block lists sentences the grammar must accept \
    (`accept \"...\"`), must refuse (`reject \"...\"`), or must give a \
    particular most probable tree (`accept \"...\" as (Label ...)`). An expected \
    tree holds when no tree of the sentence is more probable, compared \
    exactly; a tie holds. Each failing case is shown with its place in the \
    file and why it failed: the explanation of a missing parse, the tree that \
    should not exist, or where the expected and the found tree part and how \
    probable each is.\n\n\
    Paths are found as by `trellis check`: files, or every .trellis file under \
    a directory, each file that another one `use`s being tested as part of \
    that grammar. A grammar with errors is not run (its errors are shown).\n\n\
    Exit status: 0 when every case holds; 1 when some case fails or a grammar \
    has errors; 2 when a path cannot be read, trellis.toml is invalid, or \
    --filter matches no test.";

/// Arguments of `trellis test`.
#[derive(clap::Args, Debug, Clone)]
pub struct TestArgs {
    /// Grammar files or directories [default: the current directory]
    #[arg(value_name = "PATH")]
    pub paths: Vec<PathBuf>,

    /// Only the grammars that read one of these files, as their root or
    /// through `use` (for commit hooks: the files a commit changes; a
    /// lexicon brings in every grammar that uses it)
    #[arg(long, value_name = "FILE", num_args = 1..)]
    pub changed: Vec<PathBuf>,

    /// Run only tests whose name contains TEXT (repeat for several)
    #[arg(long, short = 'f', value_name = "TEXT")]
    pub filter: Vec<String>,

    /// List every case, not only the failing ones
    #[arg(long, short = 'v')]
    pub verbose: bool,

    /// List every case with the most probable tree of each accepted
    /// sentence, written as `accept … as` takes it
    #[arg(long)]
    pub trees: bool,

    /// Fail a case whose chart would need more memory than this (MiB)
    #[arg(long, value_name = "MIB", default_value_t = 1024)]
    pub max_chart_mib: u64,

    /// `human` for people; `json` prints one object with every grammar,
    /// test and case
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
}

/// Runs `trellis test`.
pub fn run(args: &TestArgs, term: Term) -> Ran {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = analyse(&paths, &args.changed, args.format, term)?;
    let max_chart_bytes = args.max_chart_mib.saturating_mul(1 << 20);

    let selection = test_run::Selection::NameContains(&args.filter);
    let suite = test_run::run_suite(&checked, selection, max_chart_bytes);

    if suite.grammars.is_empty() && !args.filter.is_empty() {
        report_failures(&failures);
        let mut message = format!(
            "error: no test name contains {}",
            args.filter
                .iter()
                .map(|f| quote(f))
                .collect::<Vec<_>>()
                .join(" or ")
        );
        if suite.available.is_empty() {
            message.push_str("; the grammars have no tests\n");
        } else {
            let names: Vec<String> = suite.available.iter().map(|n| quote(n)).collect();
            message.push_str(&format!("; the tests are {}\n", names.join(", ")));
        }
        emit(Stream::Stderr, &message);
        return Err(Stop(Outcome::Failure));
    }

    match args.format {
        Format::Human => {
            let color = term.color(Stream::Stdout);
            let detail = TestDetail {
                every_case: args.verbose,
                trees: args.trees,
            };
            let mut out = String::new();
            for run in &suite.grammars {
                out.push_str(&human::test_grammar(run, detail, color));
            }
            out.push_str(&human::test_summary(&suite.tally));
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths, &args.changed);
            }
        }
        Format::Json => json::write(&json::test_document(&suite.grammars, &suite.tally)),
    }
    report_failures(&failures);
    Ok(if !failures.is_empty() {
        Outcome::Failure
    } else if suite.tally.all_held() {
        Outcome::Clean
    } else {
        Outcome::Findings
    })
}
