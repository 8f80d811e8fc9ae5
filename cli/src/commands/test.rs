//! `trellis test`: run the `test` blocks written in grammars.

use super::check::{analyse, note_nothing_found, report_failures};
use super::{emit, use_color, Outcome, OutputFormat, Stream};
use crate::render::{self, plural, position, JsonDiagnostic, Position};
use grammar_lang::model::{GrammarTest, TestCase};
use grammar_lang::syntax::lexer::quote;
use grammar_lang::{Analysis, Location, Severity};
use serde::Serialize;
use std::path::PathBuf;
use trellis_engine::testing::CaseOutcome;
use trellis_ide::NotRunnable;
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
    #[arg(long, value_enum, default_value_t = OutputFormat::Human)]
    pub format: OutputFormat,
}

/// One grammar's run.
struct GrammarRun<'a> {
    analysis: &'a Analysis,
    path: PathBuf,
    /// Why the tests were not run, if they were not.
    blocked: Option<Blocked>,
    /// The selected tests with the outcome of each case.
    tests: Vec<(&'a GrammarTest, Vec<CaseOutcome>)>,
}

impl GrammarRun<'_> {
    fn selected_tests(&self) -> usize {
        self.tests.len()
    }
}

/// Runs `trellis test`.
pub fn run(args: &TestArgs) -> Outcome {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = match analyse(&paths, args.format) {
        Ok(analysed) => analysed,
        Err(outcome) => return outcome,
    };
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
        return Outcome::Failure;
    }

    let tally = Tally::of(&runs);
    match args.format {
        OutputFormat::Human => {
            let color = use_color(Stream::Stdout);
            let mut out = String::new();
            for run in &runs {
                out.push_str(&human_grammar(run, args, color));
            }
            out.push_str(&tally.summary());
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths);
            }
        }
        OutputFormat::Json => {
            let grammars: Vec<JsonGrammar> = runs.iter().map(json_grammar).collect();
            let doc = JsonRun {
                grammars,
                tests: JsonCount {
                    passed: tally.tests_passed,
                    failed: tally.tests_failed,
                },
                cases: JsonCount {
                    passed: tally.cases_passed,
                    failed: tally.cases_failed,
                },
            };
            let mut text =
                serde_json::to_string(&doc).unwrap_or_else(|e| format!("{{\"error\":\"{e}\"}}"));
            text.push('\n');
            emit(Stream::Stdout, &text);
        }
    }
    report_failures(&failures);
    if !failures.is_empty() {
        Outcome::Failure
    } else if tally.tests_failed > 0 || tally.grammars_blocked > 0 {
        Outcome::Findings
    } else {
        Outcome::Clean
    }
}

/// Counts over a whole run.
#[derive(Default)]
struct Tally {
    grammars: usize,
    grammars_blocked: usize,
    tests_passed: usize,
    tests_failed: usize,
    tests_not_run: usize,
    cases_passed: usize,
    cases_failed: usize,
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

    fn summary(&self) -> String {
        let total = self.tests_passed + self.tests_failed + self.tests_not_run;
        if total == 0 {
            return "no tests found".to_string();
        }
        let mut out = format!(
            "{} in {}: {} passed, {} failed",
            plural(total, "test", "tests"),
            plural(self.grammars, "grammar", "grammars"),
            self.tests_passed,
            self.tests_failed
        );
        if self.tests_not_run > 0 {
            out.push_str(&format!(", {} not run", self.tests_not_run));
        }
        let cases = self.cases_passed + self.cases_failed;
        if cases > 0 {
            out.push_str(&format!(
                " ({} of {} held)",
                self.cases_passed,
                plural(cases, "case", "cases")
            ));
        }
        out
    }
}

fn paint(text: &str, code: &str, color: bool) -> String {
    if color {
        format!("\x1b[{code}m{text}\x1b[0m")
    } else {
        text.to_string()
    }
}

/// `file:line:column` of a location in the grammar's sources.
fn place(analysis: &Analysis, location: Location) -> (String, Position) {
    match render::file(&analysis.sources, location.file) {
        Some(f) => (
            f.path.display().to_string(),
            position(f, render::clamp(&f.text, location.span).start),
        ),
        None => (String::new(), Position { line: 1, column: 1 }),
    }
}

fn human_grammar(run: &GrammarRun, args: &TestArgs, color: bool) -> String {
    let mut out = format!("{}\n", run.path.display());
    match &run.blocked {
        Some(Blocked::NotRunnable(why)) => {
            out.push_str(&render::errors(run.analysis, color));
            out.push_str(&format!(
                "  {} {} not run: {why}\n\n",
                paint("not run", "33", color),
                plural(run.selected_tests(), "test", "tests"),
            ));
            return out;
        }
        Some(blocked @ Blocked::Engine(_)) => {
            let reason = blocked.to_string();
            out.push_str(&format!(
                "  {} {} not run: {reason}\n\n",
                paint("not run", "33", color),
                plural(run.selected_tests(), "test", "tests"),
            ));
            return out;
        }
        None => {}
    }
    let list_all = args.verbose || args.trees;
    for (test, outcomes) in &run.tests {
        let failed = outcomes.iter().filter(|o| !o.passed()).count();
        let (file, at) = place(run.analysis, test.location);
        let status = if failed == 0 {
            paint("passed", "32", color)
        } else {
            paint("FAILED", "31;1", color)
        };
        let count = if failed == 0 {
            plural(outcomes.len(), "case", "cases")
        } else {
            format!(
                "{failed} of {} failed",
                plural(outcomes.len(), "case", "cases")
            )
        };
        out.push_str(&format!(
            "  {status}  test {} ({count})  {file}:{}\n",
            quote(&test.name),
            at.line
        ));
        for (case, outcome) in test.cases.iter().zip(outcomes) {
            match outcome {
                CaseOutcome::Passed { best, tied } => {
                    if !list_all {
                        continue;
                    }
                    out.push_str(&format!("      ok  {}\n", case));
                    if *tied {
                        out.push_str(
                            "          (holds by a tie: another tree is exactly as probable)\n",
                        );
                    }
                    if let (true, Some(best)) = (args.trees, best) {
                        out.push_str(&format!(
                            "          as {}  (p ≈ {:.6e})\n",
                            best.tree.to_brackets(),
                            best.probability
                        ));
                    }
                }
                CaseOutcome::Failed(failure) => {
                    let (file, at) = place(run.analysis, case.location);
                    out.push_str(&format!(
                        "    {}  {file}:{}:{}  {}\n",
                        paint("fail", "31", color),
                        at.line,
                        at.column,
                        case
                    ));
                    for line in failure.render() {
                        out.push_str(&format!("          {line}\n"));
                    }
                }
            }
        }
    }
    out.push('\n');
    out
}

#[derive(Serialize)]
struct JsonRun {
    grammars: Vec<JsonGrammar>,
    tests: JsonCount,
    cases: JsonCount,
}

#[derive(Serialize)]
struct JsonCount {
    passed: usize,
    failed: usize,
}

#[derive(Serialize)]
struct JsonGrammar {
    file: String,
    /// Whether the tests ran.
    ran: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    reason: Option<String>,
    /// The errors that kept the tests from running.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    diagnostics: Vec<JsonDiagnostic>,
    tests: Vec<JsonTest>,
}

#[derive(Serialize)]
struct JsonTest {
    name: String,
    file: String,
    line: u32,
    column: u32,
    /// `null` when not run.
    passed: Option<bool>,
    cases: Vec<JsonCase>,
}

#[derive(Serialize)]
struct JsonCase {
    expect: &'static str,
    sentence: String,
    #[serde(skip_serializing_if = "Option::is_none")]
    expected_tree: Option<String>,
    file: String,
    line: u32,
    column: u32,
    passed: bool,
    #[serde(skip_serializing_if = "std::ops::Not::not")]
    tied: bool,
    /// The most probable tree, when the sentence parses.
    #[serde(skip_serializing_if = "Option::is_none")]
    tree: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    probability: Option<f64>,
    /// Why the case failed, as readable lines.
    #[serde(skip_serializing_if = "Vec::is_empty")]
    failure: Vec<String>,
}

fn json_grammar(run: &GrammarRun) -> JsonGrammar {
    let (reason, diagnostics) = match &run.blocked {
        Some(blocked @ Blocked::NotRunnable(NotRunnable::Errors(_))) => (
            Some(blocked.to_string()),
            run.analysis
                .diagnostics
                .iter()
                .filter(|d| d.severity == Severity::Error)
                .map(|d| render::json_diagnostic(d, &run.analysis.sources))
                .collect(),
        ),
        Some(blocked) => (Some(blocked.to_string()), Vec::new()),
        None => (None, Vec::new()),
    };
    let tests = run
        .tests
        .iter()
        .map(|(test, outcomes)| {
            let (file, at) = place(run.analysis, test.location);
            let ran = run.blocked.is_none();
            JsonTest {
                name: test.name.clone(),
                file,
                line: at.line,
                column: at.column,
                passed: ran.then(|| outcomes.iter().all(CaseOutcome::passed)),
                cases: test
                    .cases
                    .iter()
                    .zip(outcomes)
                    .map(|(case, outcome)| json_case(run.analysis, case, outcome))
                    .collect(),
            }
        })
        .collect();
    JsonGrammar {
        file: run.path.display().to_string(),
        ran: run.blocked.is_none(),
        reason,
        diagnostics,
        tests,
    }
}

fn json_case(analysis: &Analysis, case: &TestCase, outcome: &CaseOutcome) -> JsonCase {
    let (file, at) = place(analysis, case.location);
    let best = outcome.best();
    JsonCase {
        expect: case.expect.keyword(),
        sentence: case.sentence.clone(),
        expected_tree: case.tree.as_ref().map(|t| t.to_brackets()),
        file,
        line: at.line,
        column: at.column,
        passed: outcome.passed(),
        tied: outcome.tied(),
        tree: best.map(|b| b.tree.to_brackets()),
        probability: best.map(|b| b.probability),
        failure: outcome.reasons(),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_summary_counts_tests_grammars_and_cases() {
        let tally = Tally {
            grammars: 2,
            tests_passed: 3,
            tests_failed: 1,
            tests_not_run: 2,
            cases_passed: 20,
            cases_failed: 1,
            ..Tally::default()
        };
        assert_eq!(
            tally.summary(),
            "6 tests in 2 grammars: 3 passed, 1 failed, 2 not run (20 of 21 cases held)"
        );
        assert_eq!(Tally::default().summary(), "no tests found");
    }
}
