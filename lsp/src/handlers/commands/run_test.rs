//! `trellis.runTest`: the test blocks of the grammar of an open document,
//! picked and run by the project layer (`trellis_project::test_run`, as
//! `trellis test` runs them), reported per test and per case with their
//! locations.

use super::{finish, grammar_of, ignored_error, ran_summary};
use crate::ext::{CaseReport, Ran, RunTestParams, RunTestResult, TestReport};
use crate::guard::CancelFlag;
use crate::server::Backend;
use crate::state::Target;
use grammar_lang::syntax::lexer::quote;
use tower_lsp::jsonrpc;
use trellis_project::test_run::{self, RunOptions, Selection, TestResult};

pub async fn run_test(backend: &Backend, params: RunTestParams) -> jsonrpc::Result<RunTestResult> {
    let target = grammar_of(backend, &params.uri, params.show).await?;
    let name = params.test;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome = backend
        .run("running tests", move || {
            let analysis = target.analysis();
            let selection = match &name {
                Some(name) => Selection::Named {
                    name,
                    file: target.file,
                },
                None => Selection::All,
            };
            let tests = test_run::selected(analysis, selection);
            if tests.is_empty() {
                return Err(match &name {
                    Some(name) => format!("this document has no test named {}", quote(name)),
                    None => "the grammar has no test blocks".to_string(),
                });
            }
            let cancelled = || cancel.is_cancelled();
            let run = test_run::run(analysis, tests, RunOptions::default(), &cancelled)
                .map_err(|blocked| blocked.to_string())?;
            Ok(run.map(|run| RunTestResult {
                passed: run.counts.cases_passed,
                failed: run.counts.cases_failed,
                tests: run.tests.iter().map(|t| test_report(&target, t)).collect(),
                ran: Ran {
                    rescaled: run.ran.rescaled.clone(),
                    ignored_errors: run
                        .ran
                        .ignored_errors
                        .iter()
                        .map(|d| ignored_error(&target, d))
                        .collect(),
                },
            }))
        })
        .await?;
    guard.disarm();
    finish(backend, params.show, outcome, summary).await
}

fn test_report(target: &Target, result: &TestResult) -> TestReport {
    let test = result.test;
    TestReport {
        name: test.name.clone(),
        location: target.location(test.location.file, test.location.span),
        passed: result.passed(),
        cases: test
            .cases
            .iter()
            .zip(&result.cases)
            .map(|(case, outcome)| {
                let best = outcome.best();
                CaseReport {
                    expect: case.expect.keyword().to_string(),
                    sentence: case.sentence.clone(),
                    location: target.location(case.location.file, case.location.span),
                    passed: outcome.passed(),
                    tied: outcome.tied(),
                    tree: best.map(|b| b.tree.to_brackets()),
                    probability: best.map(|b| b.probability),
                    failure: outcome.reasons(),
                }
            })
            .collect(),
    }
}

/// A short text for the user: a line per test, and the reasons of each
/// failing case.
fn summary(result: &RunTestResult) -> String {
    let mut lines = Vec::new();
    for test in &result.tests {
        let cases = test.cases.len();
        let failing: Vec<&CaseReport> = test.cases.iter().filter(|c| !c.passed).collect();
        let name = quote(&test.name);
        if failing.is_empty() {
            lines.push(format!(
                "test {name}: all {cases} case{} held",
                if cases == 1 { "" } else { "s" }
            ));
            continue;
        }
        lines.push(format!("test {name}: {} of {cases} failed", failing.len()));
        for case in failing {
            let line = case.location.as_ref().map_or(String::new(), |l| {
                format!("line {}: ", l.range.start.line + 1)
            });
            lines.push(format!("  {line}{} {}", case.expect, quote(&case.sentence)));
            for reason in &case.failure {
                lines.push(format!("    {reason}"));
            }
        }
    }
    lines.join("\n") + &ran_summary(&result.ran)
}
