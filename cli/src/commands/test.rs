//! `trellis test`: run the `test` blocks written in grammars.

use super::{Outcome, Ran, Stop};
use crate::output::{emit, Format, Stream, Term};
use crate::render::human::{self, TestDetail};
use crate::render::json;
use crate::shared::{analyse, note_nothing_found, report_failures};
use grammar_lang::model::GrammarTest;
use grammar_lang::syntax::lexer::quote;
use grammar_lang::Analysis;
use std::path::PathBuf;
use trellis_engine::testing::CaseOutcome;
use trellis_project::test_run::{self, Blocked, RunOptions};
use trellis_project::{grammar_roots, identity, paths_or_here, Analysed};

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

/// One grammar's run.
pub struct GrammarRun<'a> {
    pub analysis: &'a Analysis,
    pub path: PathBuf,
    /// Why the tests were not run, if they were not.
    pub blocked: Option<Blocked>,
    /// The selected tests with the outcome of each case.
    pub tests: Vec<(&'a GrammarTest, Vec<CaseOutcome>)>,
}

impl GrammarRun<'_> {
    pub fn selected_tests(&self) -> usize {
        self.tests.len()
    }
}

/// Runs `trellis test`.
pub fn run(args: &TestArgs, term: Term) -> Ran {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = analyse(&paths, args.format, term)?;
    let max_chart_bytes = args.max_chart_mib.saturating_mul(1 << 20);

    let mut runs = Vec::new();
    let mut available: Vec<&str> = Vec::new();
    for i in grammar_roots(&checked, identity) {
        let analysis = &checked[i].analysis;
        let grammar = &analysis.grammar;
        available.extend(grammar.tests.iter().map(|t| t.name.as_str()));
        let selection = test_run::Selection::NameContains(&args.filter);
        let tests = test_run::selected(analysis, selection);
        if tests.is_empty() {
            continue;
        }
        let mut run = GrammarRun {
            analysis,
            path: checked[i].root.path.clone(),
            blocked: None,
            tests: tests.iter().map(|&t| (t, Vec::new())).collect(),
        };
        let options = RunOptions {
            max_chart_bytes,
            parallel: true,
        };
        match test_run::run(analysis, tests, options, &|| false) {
            Err(blocked) => run.blocked = Some(blocked),
            Ok(Some(done)) => {
                run.tests = done.tests.into_iter().map(|r| (r.test, r.cases)).collect();
            }
            // Never cancelled: a command-line run goes to the end.
            Ok(None) => {}
        }
        runs.push(run);
    }

    if runs.is_empty() && !args.filter.is_empty() {
        report_failures(&failures);
        let mut message = format!(
            "error: no test name contains {}",
            args.filter
                .iter()
                .map(|f| quote(f))
                .collect::<Vec<_>>()
                .join(" or ")
        );
        if available.is_empty() {
            message.push_str("; the grammars have no tests\n");
        } else {
            available.sort_unstable();
            available.dedup();
            let names: Vec<String> = available.iter().map(|n| quote(n)).collect();
            message.push_str(&format!("; the tests are {}\n", names.join(", ")));
        }
        emit(Stream::Stderr, &message);
        return Err(Stop(Outcome::Failure));
    }

    let tally = Tally::of(&runs);
    match args.format {
        Format::Human => {
            let color = term.color(Stream::Stdout);
            let detail = TestDetail {
                every_case: args.verbose,
                trees: args.trees,
            };
            let mut out = String::new();
            for run in &runs {
                out.push_str(&human::test_grammar(run, detail, color));
            }
            out.push_str(&human::test_summary(&tally));
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths);
            }
        }
        Format::Json => json::write(&json::test_document(&runs, &tally)),
    }
    report_failures(&failures);
    Ok(if !failures.is_empty() {
        Outcome::Failure
    } else if tally.tests_failed > 0 || tally.grammars_blocked > 0 {
        Outcome::Findings
    } else {
        Outcome::Clean
    })
}

/// Counts over a whole run.
#[derive(Debug, Default)]
pub struct Tally {
    pub grammars: usize,
    pub grammars_blocked: usize,
    pub tests_passed: usize,
    pub tests_failed: usize,
    pub tests_not_run: usize,
    pub cases_passed: usize,
    pub cases_failed: usize,
}

impl Tally {
    fn of(runs: &[GrammarRun]) -> Tally {
        let mut t = Tally {
            grammars: runs.len(),
            ..Tally::default()
        };
        for run in runs {
            if run.blocked.is_some() {
                t.grammars_blocked += 1;
                t.tests_not_run += run.selected_tests();
                continue;
            }
            for (_, outcomes) in &run.tests {
                let failed = outcomes.iter().filter(|o| !o.passed()).count();
                t.cases_failed += failed;
                t.cases_passed += outcomes.len() - failed;
                if failed > 0 {
                    t.tests_failed += 1;
                } else {
                    t.tests_passed += 1;
                }
            }
        }
        t
    }
}
