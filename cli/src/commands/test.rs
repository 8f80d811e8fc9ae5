//! `trellis test`: run the `test` blocks written in grammars.

use super::{Outcome, Ran, Stop};
use crate::output::{emit, Stream, Term, TestFormat};
use crate::render::human::{self, TestDetail};
use crate::render::{json, junit};
use crate::shared::{analyse, note_nothing_found, report_failures, working_directory};
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
    With --coverage, each grammar's rule coverage follows its tests: how many \
    of its rules (those of the files it `use`s included) the most probable \
    tree of some passing case uses, per block, and every rule none uses, at \
    its place. --min-coverage PERCENT fails a run in which a grammar's tests \
    cover less.\n\n\
    Exit status: 0 when every case holds; 1 when some case fails, a grammar \
    has errors or its coverage is below --min-coverage; 2 when a path cannot \
    be read, trellis.toml is invalid, or --filter matches no test.";

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

    /// List every case on one line that pastes back into a test block: an
    /// accepted sentence as `accept "…" as (…)` with its most probable
    /// tree, the probability in a trailing `# ok, p ≈ …` comment
    #[arg(long)]
    pub trees: bool,

    /// Fail a case whose chart would need more memory than this (MiB)
    #[arg(long, value_name = "MIB", default_value_t = 1024)]
    pub max_chart_mib: u64,

    /// Fail a case whose parse takes longer than this (seconds; fractions
    /// allowed) [default: no limit]
    #[arg(long, value_name = "SECONDS", value_parser = crate::shared::seconds)]
    pub max_seconds: Option<f64>,

    /// `human` for people; `json` prints one object with every grammar,
    /// test and case; `junit` prints JUnit XML for CI systems (a test suite
    /// per test block, a test case per accept/reject case)
    #[arg(long, value_enum, default_value_t = TestFormat::Human)]
    pub format: TestFormat,

    /// Report which rules the passing cases' most probable trees use: the
    /// share per grammar and per block, and every rule none uses
    #[arg(long)]
    pub coverage: bool,

    /// Fail (exit status 1) when a grammar's tests cover less than PERCENT
    /// of its rules (implies --coverage)
    #[arg(long, value_name = "PERCENT", value_parser = percentage)]
    pub min_coverage: Option<f64>,
}

/// A percentage between 0 and 100 (a trailing `%` is allowed).
fn percentage(text: &str) -> Result<f64, String> {
    let number = text.trim().trim_end_matches('%');
    match number.parse::<f64>() {
        Ok(p) if (0.0..=100.0).contains(&p) => Ok(p),
        _ => Err(format!("`{text}` is not a percentage from 0 to 100")),
    }
}

/// Runs `trellis test`.
pub fn run(args: &TestArgs, term: Term) -> Ran {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = analyse(&paths, &args.changed, args.format, term)?;
    let options = test_run::RunOptions {
        max_chart_bytes: args.max_chart_mib.saturating_mul(1 << 20),
        max_seconds: args.max_seconds,
        parallel: true,
    };
    let selection = test_run::Selection::NameContains(&args.filter);
    let suite = test_run::run_suite(&checked, selection, options);

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

    let coverage = args.coverage || args.min_coverage.is_some();
    let below: Vec<&test_run::GrammarRun> = match args.min_coverage {
        Some(minimum) => suite
            .grammars
            .iter()
            .filter(|run| run.coverage.as_ref().is_some_and(|c| !c.reaches(minimum)))
            .collect(),
        None => Vec::new(),
    };

    match args.format {
        TestFormat::Human => {
            let color = term.color(Stream::Stdout);
            let detail = TestDetail {
                every_case: args.verbose,
                trees: args.trees,
            };
            let mut out = String::new();
            for run in &suite.grammars {
                out.push_str(&human::test_grammar(run, detail, color));
            }
            if coverage {
                for run in &suite.grammars {
                    out.push_str(&human::coverage(run, args.min_coverage, color));
                }
            }
            out.push_str(&human::test_summary(&suite.tally));
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths, &args.changed);
            }
        }
        TestFormat::Json => json::write(&json::test_document(
            &suite.grammars,
            &suite.tally,
            coverage,
        )),
        TestFormat::Junit => emit(
            Stream::Stdout,
            &junit::test_report(&suite.grammars, working_directory().as_deref()),
        ),
    }
    if let (Some(minimum), false) = (args.min_coverage, below.is_empty()) {
        if args.format != TestFormat::Human {
            let text: String = below
                .iter()
                .filter_map(|run| {
                    let c = run.coverage.as_ref()?;
                    Some(format!(
                        "error: {}: the tests cover {:.1}% of the rules ({} of {}), \
                         below --min-coverage {minimum}\n",
                        run.path.display(),
                        c.percent(),
                        c.covered,
                        c.rules
                    ))
                })
                .collect();
            emit(Stream::Stderr, &text);
        }
    }
    report_failures(&failures);
    Ok(if !failures.is_empty() {
        Outcome::Failure
    } else if suite.tally.all_held() && below.is_empty() {
        Outcome::Clean
    } else {
        Outcome::Findings
    })
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_minimum_coverage_is_a_percentage() {
        assert_eq!(percentage("80"), Ok(80.0));
        assert_eq!(percentage("62.5%"), Ok(62.5));
        assert!(percentage("101").is_err());
        assert!(percentage("-1").is_err());
        assert!(percentage("most").is_err());
    }
}
