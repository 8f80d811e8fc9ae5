//! Running the `test` blocks of a grammar and counting the outcomes, for
//! `trellis test` and the editor's `trellis.runTest` alike.
//!
//! The engine judges each case (`trellis_engine::testing::run_case`, exact
//! tree scores); this module picks the tests, refuses a grammar that cannot
//! run, spreads the cases over the cores when asked, stops between cases
//! when the caller cancels, and counts.

use crate::coverage::{coverage, Coverage};
use crate::discover::identity;
use crate::grammars::{grammar_roots, Checked};
use grammar_lang::model::GrammarTest;
use grammar_lang::Diagnostic;
use grammar_lang::FileId;
use rayon::prelude::*;
use std::path::PathBuf;
pub use trellis_engine::parser::DEFAULT_MAX_CHART_BYTES;
use trellis_engine::testing::{run_case, CaseOutcome};
use trellis_ide::{Analysis, NotRunnable};

/// Which tests of a grammar to run.
#[derive(Clone, Copy, Debug)]
pub enum Selection<'a> {
    /// Every test block.
    All,
    /// The tests whose name contains any of these texts (all tests when
    /// the list is empty).
    NameContains(&'a [String]),
    /// The test of this exact name written in this file.
    Named { name: &'a str, file: FileId },
}

impl Selection<'_> {
    pub fn includes(&self, test: &GrammarTest) -> bool {
        match self {
            Selection::All => true,
            Selection::NameContains(texts) => {
                texts.is_empty() || texts.iter().any(|t| test.name.contains(t.as_str()))
            }
            Selection::Named { name, file } => test.name == *name && test.location.file == *file,
        }
    }
}

/// How to run the cases.
#[derive(Clone, Copy, Debug)]
pub struct RunOptions {
    /// A case whose chart would need more memory than this fails.
    pub max_chart_bytes: u64,
    /// Spread the cases over every core.
    pub parallel: bool,
}

impl Default for RunOptions {
    fn default() -> Self {
        RunOptions {
            max_chart_bytes: DEFAULT_MAX_CHART_BYTES,
            parallel: false,
        }
    }
}

/// One test block and the outcome of each of its cases, in order.
#[derive(Debug)]
pub struct TestResult<'g> {
    pub test: &'g GrammarTest,
    pub cases: Vec<CaseOutcome>,
}

impl TestResult<'_> {
    /// How many cases failed.
    pub fn failed(&self) -> usize {
        self.cases.iter().filter(|o| !o.passed()).count()
    }

    /// Whether every case held.
    pub fn passed(&self) -> bool {
        self.failed() == 0
    }
}

/// Tests and cases that held and that failed.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Counts {
    pub tests_passed: usize,
    pub tests_failed: usize,
    pub cases_passed: usize,
    pub cases_failed: usize,
}

impl Counts {
    pub fn add(&mut self, other: Counts) {
        self.tests_passed += other.tests_passed;
        self.tests_failed += other.tests_failed;
        self.cases_passed += other.cases_passed;
        self.cases_failed += other.cases_failed;
    }

    fn of(results: &[TestResult]) -> Counts {
        let mut counts = Counts::default();
        for result in results {
            let failed = result.failed();
            counts.cases_failed += failed;
            counts.cases_passed += result.cases.len() - failed;
            if failed > 0 {
                counts.tests_failed += 1;
            } else {
                counts.tests_passed += 1;
            }
        }
        counts
    }
}

/// The outcome of running the selected tests of one grammar.
#[derive(Debug)]
pub struct TestRun<'g> {
    pub tests: Vec<TestResult<'g>>,
    pub counts: Counts,
    /// What the run did to the grammar: see [`Ran`].
    pub ran: Ran<'g>,
}

/// What a run of a grammar's tests did to it (the façade's
/// [`trellis_ide::Run`], kept for the report).
#[derive(Debug, Default)]
pub struct Ran<'g> {
    /// Blocks whose weights were divided by their sum, by name.
    pub rescaled: Vec<String>,
    /// A sentence saying so, when there are any.
    pub rescaled_note: Option<String>,
    /// Errors outside what the tests use, which did not stop them.
    pub ignored_errors: Vec<&'g Diagnostic>,
}

/// The tests of `analysis`'s grammar that `selection` picks, in order.
pub fn selected<'g>(analysis: &'g Analysis, selection: Selection) -> Vec<&'g GrammarTest> {
    analysis
        .grammar
        .tests
        .iter()
        .filter(|t| selection.includes(t))
        .collect()
}

/// Runs `tests` (tests of `analysis`'s grammar). `Ok(None)` when
/// `cancelled` said so between two cases; an error when the grammar cannot
/// run (errors in what the tests use, or the engine cannot compile it).
/// Every case is judged with the weights a run uses
/// ([`Analysis::run_tests`]): the user's, divided by their block's sum
/// where `trellis.toml` lets a block's sum be off.
pub fn run<'g>(
    analysis: &'g Analysis,
    tests: Vec<&'g GrammarTest>,
    options: RunOptions,
    cancelled: &(dyn Fn() -> bool + Sync),
) -> Result<Option<TestRun<'g>>, NotRunnable> {
    let prepared = analysis.run_tests(&tests)?;
    let parser = prepared.parser()?;
    let grammar = prepared.grammar();
    let cases: Vec<(usize, &grammar_lang::model::TestCase)> = tests
        .iter()
        .enumerate()
        .flat_map(|(t, test)| test.cases.iter().map(move |c| (t, c)))
        .collect();
    let judge = |case| {
        if cancelled() {
            None
        } else {
            Some(run_case(&parser, grammar, case, options.max_chart_bytes))
        }
    };
    let outcomes: Option<Vec<CaseOutcome>> = if options.parallel {
        cases.par_iter().map(|(_, case)| judge(case)).collect()
    } else {
        cases.iter().map(|(_, case)| judge(case)).collect()
    };
    let Some(outcomes) = outcomes else {
        return Ok(None);
    };
    let mut results: Vec<TestResult> = tests
        .into_iter()
        .map(|test| TestResult {
            test,
            cases: Vec::with_capacity(test.cases.len()),
        })
        .collect();
    for ((t, _), outcome) in cases.into_iter().zip(outcomes) {
        results[t].cases.push(outcome);
    }
    let counts = Counts::of(&results);
    Ok(Some(TestRun {
        tests: results,
        counts,
        ran: Ran {
            rescaled: prepared
                .rescaled_names()
                .into_iter()
                .map(str::to_string)
                .collect(),
            rescaled_note: prepared.rescaled_note(),
            ignored_errors: prepared.ignored_errors().to_vec(),
        },
    }))
}

/// One grammar's part of a run over several grammars: its selected tests
/// with the outcome of each case, or the reason none ran (then every test
/// has an empty list of outcomes).
#[derive(Debug)]
pub struct GrammarRun<'g> {
    pub analysis: &'g Analysis,
    /// The grammar's root file, as the user named or found it.
    pub path: PathBuf,
    /// Why none of its tests ran, if they did not.
    pub blocked: Option<NotRunnable>,
    /// What the run did to the grammar (empty when it did not run).
    pub ran: Ran<'g>,
    pub tests: Vec<TestResult<'g>>,
    /// Which rules the passing cases' most probable trees use (when the
    /// tests ran).
    pub coverage: Option<Coverage>,
}

/// Counts over a run of several grammars.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Tally {
    /// Grammars with at least one selected test.
    pub grammars: usize,
    /// Of those, the ones that could not run.
    pub grammars_blocked: usize,
    /// Selected tests of blocked grammars.
    pub tests_not_run: usize,
    /// Tests and cases of the grammars that ran.
    pub counts: Counts,
}

impl Tally {
    /// Every selected test: passed, failed and not run.
    pub fn tests(&self) -> usize {
        self.counts.tests_passed + self.counts.tests_failed + self.tests_not_run
    }

    /// Whether everything selected ran and held.
    pub fn all_held(&self) -> bool {
        self.counts.tests_failed == 0 && self.grammars_blocked == 0
    }
}

/// The tests of several analysed grammars (a command-line run).
#[derive(Debug)]
pub struct Suite<'g> {
    /// The grammars with at least one selected test, in order.
    pub grammars: Vec<GrammarRun<'g>>,
    pub tally: Tally,
    /// The name of every test of every grammar, selected or not, sorted and
    /// without repeats: what a selection that matched nothing could have named.
    pub available: Vec<&'g str>,
}

/// Runs the selected tests of every grammar that stands on its own among
/// `checked` (a lexicon `use`d by another grammar is tested as part of it),
/// each grammar's cases spread over the cores.
pub fn run_suite<'g>(
    checked: &'g [Checked],
    selection: Selection,
    max_chart_bytes: u64,
) -> Suite<'g> {
    let options = RunOptions {
        max_chart_bytes,
        parallel: true,
    };
    let mut grammars = Vec::new();
    let mut tally = Tally::default();
    let mut available = Vec::new();
    for i in grammar_roots(checked, identity) {
        let analysis = &checked[i].analysis;
        available.extend(analysis.grammar.tests.iter().map(|t| t.name.as_str()));
        let tests = selected(analysis, selection);
        if tests.is_empty() {
            continue;
        }
        tally.grammars += 1;
        let not_run = |tests: &[&'g GrammarTest]| {
            tests
                .iter()
                .map(|&test| TestResult {
                    test,
                    cases: Vec::new(),
                })
                .collect()
        };
        let (blocked, tests, ran) = match run(analysis, tests.clone(), options, &|| false) {
            Ok(Some(done)) => {
                tally.counts.add(done.counts);
                (None, done.tests, done.ran)
            }
            Err(blocked) => {
                tally.grammars_blocked += 1;
                tally.tests_not_run += tests.len();
                (Some(blocked), not_run(&tests), Ran::default())
            }
            // Never cancelled: a command-line run goes to the end.
            Ok(None) => (None, not_run(&tests), Ran::default()),
        };
        let coverage = blocked
            .is_none()
            .then(|| coverage(&analysis.grammar, &tests));
        grammars.push(GrammarRun {
            analysis,
            path: checked[i].root.path.clone(),
            blocked,
            ran,
            tests,
            coverage,
        });
    }
    available.sort_unstable();
    available.dedup();
    Suite {
        grammars,
        tally,
        available,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use trellis_test_support::grammars::HARBOUR;

    /// Test blocks for the shared harbour grammar, in which every sentence
    /// has exactly one tree: "ferries sail" has probability
    /// 0.6 · 1/2 · 0.75 = 0.225 (worked by hand).
    const TESTS: &str = "
test \"sailing\" {
  accept \"ferries sail\"
  accept \"sail\" as (S (VP \"sail\"))
}

test \"sinking\" {
  accept \"boats sink\"
  reject \"sink boats\"
  accept \"boats\"
}
";

    /// The shared harbour grammar with these tests.
    fn harbour() -> String {
        format!("{HARBOUR}{TESTS}")
    }

    #[test]
    fn cases_are_counted_per_test_and_per_case_in_order() {
        let analysis = trellis_ide::analyze_text(&harbour());
        let tests = selected(&analysis, Selection::All);
        for parallel in [false, true] {
            let options = RunOptions {
                parallel,
                ..RunOptions::default()
            };
            let run = run(&analysis, tests.clone(), options, &|| false)
                .unwrap()
                .unwrap();
            assert_eq!(
                run.counts,
                Counts {
                    tests_passed: 1,
                    tests_failed: 1,
                    cases_passed: 4,
                    cases_failed: 1
                }
            );
            let held: Vec<Vec<bool>> = run
                .tests
                .iter()
                .map(|t| t.cases.iter().map(CaseOutcome::passed).collect())
                .collect();
            assert_eq!(held, vec![vec![true, true], vec![true, true, false]]);
        }
    }

    #[test]
    fn a_selection_picks_by_name_part_or_by_exact_name_in_a_file() {
        let analysis = trellis_ide::analyze_text(&harbour());
        let names = |s: Selection| -> Vec<String> {
            selected(&analysis, s)
                .iter()
                .map(|t| t.name.clone())
                .collect()
        };
        assert_eq!(names(Selection::All), ["sailing", "sinking"]);
        assert_eq!(names(Selection::NameContains(&["ink".into()])), ["sinking"]);
        assert_eq!(names(Selection::NameContains(&[])), ["sailing", "sinking"]);
        let named = |file| Selection::Named {
            name: "sailing",
            file,
        };
        assert_eq!(names(named(FileId(0))), ["sailing"]);
        assert!(names(named(FileId(1))).is_empty());
    }

    #[test]
    fn a_grammar_with_an_error_the_tests_use_is_not_run_and_names_it() {
        let analysis =
            trellis_ide::analyze_text("start S\nS { 0.5 \"a\" }\ntest \"t\" { accept \"a\" }\n");
        let tests = selected(&analysis, Selection::All);
        let blocked = run(&analysis, tests, RunOptions::default(), &|| false).unwrap_err();
        let NotRunnable::Errors(errors) = &blocked else {
            panic!("expected errors, got {blocked:?}");
        };
        let named: Vec<String> = errors
            .iter()
            .map(|e| {
                format!(
                    "{}:{}:{} {}",
                    e.path.display(),
                    e.line,
                    e.column,
                    e.diagnostic.code
                )
            })
            .collect();
        assert_eq!(named, ["grammar.trellis:2:1 sum-not-one"]);
    }

    #[test]
    fn an_error_in_a_block_the_tests_cannot_reach_does_not_stop_them() {
        let analysis = trellis_ide::analyze_text(
            "start S\nS { \"a\" }\nSpare { Missing }\ntest \"t\" { accept \"a\" }\n",
        );
        let tests = selected(&analysis, Selection::All);
        let done = run(&analysis, tests, RunOptions::default(), &|| false)
            .unwrap()
            .unwrap();
        assert_eq!(done.counts.cases_passed, 1);
        let ignored: Vec<_> = done.ran.ignored_errors.iter().map(|d| d.code).collect();
        use grammar_lang::Code;
        assert_eq!(ignored, [Code::Unproductive, Code::Undefined]);
    }

    #[test]
    fn a_cancelled_run_stops_between_cases() {
        let analysis = trellis_ide::analyze_text(&harbour());
        let tests = selected(&analysis, Selection::All);
        let outcome = run(&analysis, tests, RunOptions::default(), &|| true).unwrap();
        assert!(outcome.is_none());
    }
}
