//! Output for tools: every JSON document the command line prints, one
//! typed struct per command (README.md, "JSON output", lists their fields;
//! `cli/tests/readme_json.rs` holds the two together), and the one function
//! that writes them.
//!
//! Field names are snake_case. Positions are 1-based lines and 1-based
//! columns counted in characters; an end position is the one just after
//! the span.

use super::{clamp, file, place, position, Position};
use crate::commands::sample::Drawn;
use crate::output::{emit, Stream};
use grammar_lang::model::TestCase;
use grammar_lang::{Diagnostic, FileId, SourceMap, Span};
use serde::Serialize;
use trellis_engine::consistency::{ConsistencyReport, Verdict};
use trellis_engine::count::Count;
use trellis_engine::explain::Explanation;
use trellis_engine::parser::{ParseOutcome, ParsedTree};
use trellis_engine::testing::CaseOutcome;
use trellis_project::test_run::{GrammarRun, Tally};

/// `doc` as one line of JSON. Serialising these documents cannot fail in
/// practice; if it ever does, the line is still JSON and says why.
pub fn to_line<T: Serialize>(doc: &T) -> String {
    let mut out = serde_json::to_string(doc).unwrap_or_else(|e| {
        serde_json::json!({ "error": format!("cannot write the JSON output: {e}") }).to_string()
    });
    out.push('\n');
    out
}

/// Writes `doc` on stdout as one line of JSON.
pub fn write<T: Serialize>(doc: &T) {
    emit(Stream::Stdout, &to_line(doc));
}

// --- diagnostics (`check`, and inside `test` and `stats`) ---

/// A span in JSON: file, 1-based start and (exclusive) end positions.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct JsonRelated {
    pub file: String,
    pub line: u32,
    pub column: u32,
    pub end_line: u32,
    pub end_column: u32,
    pub message: String,
}

/// One diagnostic in JSON. `end_line`/`end_column` is the position just after
/// the span, so a one-character span has `end_column == column + 1`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct JsonDiagnostic {
    pub code: &'static str,
    pub severity: &'static str,
    pub file: String,
    pub line: u32,
    pub column: u32,
    pub end_line: u32,
    pub end_column: u32,
    pub message: String,
    pub label: Option<String>,
    pub related: Vec<JsonRelated>,
    pub help: Option<String>,
}

fn json_span(sources: &SourceMap, id: FileId, span: Span) -> (String, Position, Position) {
    match file(sources, id) {
        Some(f) => {
            let range = clamp(&f.text, span);
            (
                f.path.display().to_string(),
                position(f, range.start),
                position(f, range.end),
            )
        }
        None => {
            let start = Position { line: 1, column: 1 };
            (String::new(), start, start)
        }
    }
}

/// The JSON form of `d`, whose file ids index `sources`.
pub fn json_diagnostic(d: &Diagnostic, sources: &SourceMap) -> JsonDiagnostic {
    let (file, start, end) = json_span(sources, d.location.file, d.location.span);
    let related = d
        .related
        .iter()
        .map(|r| {
            let (file, start, end) = json_span(sources, r.location.file, r.location.span);
            JsonRelated {
                file,
                line: start.line,
                column: start.column,
                end_line: end.line,
                end_column: end.column,
                message: r.message.clone(),
            }
        })
        .collect();
    JsonDiagnostic {
        code: d.code.as_str(),
        severity: d.severity.as_str(),
        file,
        line: start.line,
        column: start.column,
        end_line: end.line,
        end_column: end.column,
        message: d.message.clone(),
        label: d.label.clone(),
        related,
        help: d.help.clone(),
    }
}

/// What a run did to the grammar, as `parse`, `sample`, `stats` and each
/// grammar of `test` report it.
pub struct Ran {
    /// Blocks whose weights were divided by their sum.
    pub rescaled: Vec<String>,
    /// Errors outside what the run uses, which did not stop it.
    pub ignored_errors: Vec<JsonDiagnostic>,
}

impl Ran {
    pub fn of(analysis: &trellis_ide::Analysis, run: &trellis_ide::Run) -> Ran {
        Ran {
            rescaled: run
                .rescaled_names()
                .into_iter()
                .map(str::to_string)
                .collect(),
            ignored_errors: run
                .ignored_errors()
                .iter()
                .map(|d| json_diagnostic(d, &analysis.sources))
                .collect(),
        }
    }
}

// --- `trellis check` ---

/// `trellis check --format json` (also printed when trellis.toml is invalid).
#[derive(Serialize)]
pub struct CheckDocument {
    pub diagnostics: Vec<JsonDiagnostic>,
}

// --- `trellis fmt` ---

/// `trellis fmt --format json`: every file, whether formatting changes it
/// (with `--check` or `--diff`) or changed it, its unified diff (with
/// `--diff`) and its syntax errors (a file with any is not formatted).
#[derive(Serialize)]
pub struct FmtDocument {
    pub files: Vec<FmtFile>,
}

#[derive(Serialize)]
pub struct FmtFile {
    pub file: String,
    pub changed: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    pub diff: Option<String>,
    pub diagnostics: Vec<JsonDiagnostic>,
}

// --- `trellis parse` ---

/// One line of `trellis parse --format json`: one sentence.
#[derive(Serialize)]
pub struct ParseDocument<'a> {
    sentence: &'a str,
    parsed: bool,
    #[serde(skip_serializing_if = "Option::is_none")]
    best: Option<JsonTree>,
    #[serde(skip_serializing_if = "Vec::is_empty")]
    kbest: Vec<JsonTree>,
    /// `null` when the sentence was not analysed (refused or stopped):
    /// its probability is unknown, not 0.
    sentence_probability: Option<f64>,
    /// `null` when the sentence does not parse (the log of 0) or was not
    /// analysed.
    sentence_log_probability: Option<f64>,
    #[serde(skip_serializing_if = "Option::is_none")]
    parse_count: Option<String>,
    #[serde(skip_serializing_if = "Option::is_none")]
    explanation: Option<JsonExplanation<'a>>,
    #[serde(skip_serializing_if = "Option::is_none")]
    error: Option<String>,
    /// `false` when a beam pruned the chart, `true` when a beam was given
    /// up (`beam_abandoned`); absent when no beam changed anything.
    #[serde(skip_serializing_if = "Option::is_none")]
    exact: Option<bool>,
    /// The beam that pruned the chart (absent when exact).
    #[serde(skip_serializing_if = "Option::is_none")]
    beam: Option<JsonBeam>,
    /// `true` when the beam dropped every tree of the sentence and was
    /// given up: the sentence was parsed again exactly (absent otherwise).
    #[serde(skip_serializing_if = "Option::is_none")]
    beam_abandoned: Option<bool>,
    /// Blocks whose weights were divided by their sum for the run.
    rescaled: &'a [String],
    /// Errors outside what the run uses, which did not stop it.
    ignored_errors: &'a [JsonDiagnostic],
}

/// A beam: `log_width` is `null` when only `max_symbols` limits it, and
/// `max_symbols` is `null` without a limit.
#[derive(Serialize)]
struct JsonBeam {
    log_width: Option<f64>,
    max_symbols: Option<usize>,
}

#[derive(Serialize)]
struct JsonTree {
    tree: String,
    probability: f64,
    log_probability: f64,
}

impl From<&ParsedTree> for JsonTree {
    fn from(t: &ParsedTree) -> Self {
        JsonTree {
            tree: t.tree.to_brackets(),
            probability: t.probability,
            log_probability: t.log_probability,
        }
    }
}

/// Why a sentence has no parse: the engine's [`Explanation`], field by field.
#[derive(Serialize)]
struct JsonExplanation<'a> {
    unknown_words: Vec<JsonUnknownWord<'a>>,
    fragments: Vec<JsonFragment<'a>>,
    breakdown: JsonBreakdown<'a>,
}

#[derive(Serialize)]
struct JsonUnknownWord<'a> {
    position: usize,
    word: &'a str,
    suggestions: &'a [String],
}

#[derive(Serialize)]
struct JsonFragment<'a> {
    start: usize,
    end: usize,
    text: &'a str,
    categories: Vec<JsonCategory<'a>>,
}

#[derive(Serialize)]
struct JsonCategory<'a> {
    symbol: &'a str,
    log_probability: f64,
}

#[derive(Serialize)]
struct JsonBreakdown<'a> {
    start_symbol: &'a str,
    prefix_words: usize,
    stuck_at: Option<JsonWordAt<'a>>,
    expected: &'a [String],
    more_expected: usize,
}

#[derive(Serialize)]
struct JsonWordAt<'a> {
    position: usize,
    word: &'a str,
}

impl<'a> From<&'a Explanation> for JsonExplanation<'a> {
    fn from(e: &'a Explanation) -> Self {
        let b = &e.breakdown;
        JsonExplanation {
            unknown_words: e
                .unknown_words
                .iter()
                .map(|u| JsonUnknownWord {
                    position: u.position,
                    word: &u.word,
                    suggestions: &u.suggestions,
                })
                .collect(),
            fragments: e
                .fragments
                .iter()
                .map(|f| JsonFragment {
                    start: f.start,
                    end: f.end,
                    text: &f.text,
                    categories: f
                        .categories
                        .iter()
                        .map(|c| JsonCategory {
                            symbol: &c.symbol,
                            log_probability: c.log_probability,
                        })
                        .collect(),
                })
                .collect(),
            breakdown: JsonBreakdown {
                start_symbol: &b.start_symbol,
                prefix_words: b.prefix_words,
                stuck_at: b.stuck_at.as_ref().map(|at| JsonWordAt {
                    position: at.position,
                    word: &at.word,
                }),
                expected: &b.expected,
                more_expected: b.more_expected,
            },
        }
    }
}

fn count_text(c: &Count) -> String {
    match c {
        Count::Finite(n) => n.to_string(),
        Count::Infinite => "infinite".to_string(),
    }
}

/// The document for one parsed sentence; `kbest` lists the ranked trees
/// (asked for with `--kbest` above 1).
pub fn parse_document<'a>(
    sentence: &'a str,
    result: &'a Result<ParseOutcome, String>,
    kbest: bool,
    ran: &'a Ran,
) -> ParseDocument<'a> {
    let (rescaled, ignored_errors) = (&ran.rescaled[..], &ran.ignored_errors[..]);
    match result {
        Ok(o) => ParseDocument {
            sentence,
            parsed: o.parsed(),
            best: o.best.as_ref().map(JsonTree::from),
            kbest: if kbest {
                o.kbest.iter().map(JsonTree::from).collect()
            } else {
                Vec::new()
            },
            sentence_probability: Some(o.sentence_probability),
            sentence_log_probability: o
                .sentence_log_probability
                .is_finite()
                .then_some(o.sentence_log_probability),
            parse_count: o.parse_count.as_ref().map(count_text),
            explanation: o.explanation.as_ref().map(JsonExplanation::from),
            error: None,
            exact: match (o.beam, o.beam_abandoned) {
                (Some(_), _) => Some(false),
                (None, Some(_)) => Some(true),
                (None, None) => None,
            },
            beam: o.beam.map(|b| JsonBeam {
                log_width: b.log_width.is_finite().then_some(b.log_width),
                max_symbols: b.max_symbols,
            }),
            beam_abandoned: o.beam_abandoned.map(|_| true),
            rescaled,
            ignored_errors,
        },
        Err(e) => ParseDocument {
            sentence,
            parsed: false,
            best: None,
            kbest: Vec::new(),
            sentence_probability: None,
            sentence_log_probability: None,
            parse_count: None,
            explanation: None,
            error: Some(e.clone()),
            exact: None,
            beam: None,
            beam_abandoned: None,
            rescaled,
            ignored_errors,
        },
    }
}

// --- `trellis sample` ---

/// `trellis sample --format json`.
#[derive(Serialize)]
pub struct SampleDocument<'a> {
    seed: u64,
    from: &'a str,
    samples: Vec<JsonSample<'a>>,
    abandoned: usize,
    rescaled: &'a [String],
    ignored_errors: &'a [JsonDiagnostic],
}

#[derive(Serialize)]
struct JsonSample<'a> {
    sentence: &'a str,
    #[serde(skip_serializing_if = "Option::is_none")]
    tree: Option<&'a str>,
}

pub fn sample_document<'a>(
    seed: u64,
    from: &'a str,
    samples: &'a [Drawn],
    abandoned: usize,
    ran: &'a Ran,
) -> SampleDocument<'a> {
    SampleDocument {
        seed,
        from,
        samples: samples
            .iter()
            .map(|s| JsonSample {
                sentence: &s.sentence,
                tree: s.tree.as_deref(),
            })
            .collect(),
        abandoned,
        rescaled: &ran.rescaled,
        ignored_errors: &ran.ignored_errors,
    }
}

// --- `trellis stats` ---

/// `trellis stats --format json`.
#[derive(Serialize)]
pub struct StatsDocument<'a> {
    from: &'a str,
    tight: bool,
    /// How `tight` and `regime` were decided: `exact` or `numerical`.
    verdict: &'static str,
    /// The numerical verdict's tolerance on the termination probability;
    /// `null` for an exact verdict.
    tolerance: Option<f64>,
    spectral_radius: f64,
    regime: &'static str,
    leak: f64,
    /// `null` when infinite.
    expected_length: Option<f64>,
    /// `null` when infinite.
    expected_derivation_size: Option<f64>,
    symbols: Vec<JsonSymbol<'a>>,
    /// The `leaky` finding, at the level trellis.toml sets.
    diagnostics: Vec<JsonDiagnostic>,
    rescaled: &'a [String],
    ignored_errors: &'a [JsonDiagnostic],
}

#[derive(Serialize)]
struct JsonSymbol<'a> {
    name: &'a str,
    reachable: bool,
    termination_probability: f64,
    /// `null` when infinite.
    expected_uses: Option<f64>,
}

pub fn stats_document<'a>(
    from: &'a str,
    report: &'a ConsistencyReport,
    leaky: Option<&Diagnostic>,
    sources: &SourceMap,
    ran: &'a Ran,
) -> StatsDocument<'a> {
    StatsDocument {
        from,
        tight: report.tight,
        verdict: report.verdict.as_str(),
        tolerance: match report.verdict {
            Verdict::Exact => None,
            Verdict::Numerical { tolerance } => Some(tolerance),
        },
        spectral_radius: report.spectral_radius,
        regime: report.regime.as_str(),
        leak: report.leak,
        expected_length: report.expected_length,
        expected_derivation_size: report.expected_derivation_size,
        symbols: report
            .symbols
            .iter()
            .map(|s| JsonSymbol {
                name: &s.name,
                reachable: s.reachable,
                termination_probability: s.termination_probability,
                expected_uses: s.expected_uses,
            })
            .collect(),
        diagnostics: leaky.iter().map(|d| json_diagnostic(d, sources)).collect(),
        rescaled: &ran.rescaled,
        ignored_errors: &ran.ignored_errors,
    }
}

// --- `trellis test` ---

/// `trellis test --format json`.
#[derive(Serialize)]
pub struct TestDocument {
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
    /// Blocks whose weights were divided by their sum for the run.
    rescaled: Vec<String>,
    /// Errors outside what the tests use, which did not stop them.
    ignored_errors: Vec<JsonDiagnostic>,
    tests: Vec<JsonTest>,
    /// With `--coverage`, when the tests ran.
    #[serde(skip_serializing_if = "Option::is_none")]
    coverage: Option<JsonCoverage>,
}

#[derive(Serialize)]
struct JsonCoverage {
    covered: usize,
    rules: usize,
    percent: f64,
    blocks: Vec<JsonBlockCoverage>,
    uncovered: Vec<JsonRule>,
}

#[derive(Serialize)]
struct JsonBlockCoverage {
    name: String,
    covered: usize,
    rules: usize,
}

#[derive(Serialize)]
struct JsonRule {
    block: String,
    rule: String,
    file: String,
    line: u32,
    column: u32,
}

fn json_coverage(run: &GrammarRun) -> Option<JsonCoverage> {
    let coverage = run.coverage.as_ref()?;
    let grammar = &run.analysis.grammar;
    Some(JsonCoverage {
        covered: coverage.covered,
        rules: coverage.rules,
        percent: coverage.percent(),
        blocks: coverage
            .blocks
            .iter()
            .map(|b| JsonBlockCoverage {
                name: grammar.nt_name(b.block).to_string(),
                covered: b.covered,
                rules: b.rules,
            })
            .collect(),
        uncovered: coverage
            .uncovered
            .iter()
            .map(|&id| {
                let rule = grammar.rule(id);
                let (file, at) = place(&run.analysis.sources, rule.location);
                JsonRule {
                    block: grammar.nt_name(rule.lhs).to_string(),
                    rule: grammar.rule_text(id),
                    file,
                    line: at.line,
                    column: at.column,
                }
            })
            .collect(),
    })
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

/// The document for a test run; `coverage` adds each grammar's rule
/// coverage.
pub fn test_document(runs: &[GrammarRun], tally: &Tally, coverage: bool) -> TestDocument {
    TestDocument {
        grammars: runs.iter().map(|run| json_grammar(run, coverage)).collect(),
        tests: JsonCount {
            passed: tally.counts.tests_passed,
            failed: tally.counts.tests_failed,
        },
        cases: JsonCount {
            passed: tally.counts.cases_passed,
            failed: tally.counts.cases_failed,
        },
    }
}

fn json_grammar(run: &GrammarRun, coverage: bool) -> JsonGrammar {
    let sources = &run.analysis.sources;
    let (reason, diagnostics) = match &run.blocked {
        Some(blocked) => (
            Some(blocked.headline()),
            blocked
                .errors()
                .iter()
                .map(|e| json_diagnostic(&e.diagnostic, sources))
                .collect(),
        ),
        None => (None, Vec::new()),
    };
    let tests = run
        .tests
        .iter()
        .map(|result| {
            let (test, outcomes) = (result.test, &result.cases);
            let (file, at) = place(sources, test.location);
            let ran = run.blocked.is_none();
            JsonTest {
                name: test.name.clone(),
                file,
                line: at.line,
                column: at.column,
                passed: ran.then(|| result.passed()),
                cases: test
                    .cases
                    .iter()
                    .zip(outcomes)
                    .map(|(case, outcome)| json_case(sources, case, outcome))
                    .collect(),
            }
        })
        .collect();
    JsonGrammar {
        file: run.path.display().to_string(),
        ran: run.blocked.is_none(),
        reason,
        diagnostics,
        rescaled: run.ran.rescaled.clone(),
        ignored_errors: run
            .ran
            .ignored_errors
            .iter()
            .map(|d| json_diagnostic(d, sources))
            .collect(),
        tests,
        coverage: if coverage { json_coverage(run) } else { None },
    }
}

fn json_case(sources: &SourceMap, case: &TestCase, outcome: &CaseOutcome) -> JsonCase {
    let (file, at) = place(sources, case.location);
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

/// The JSON document of `trellis eval`: every sentence, the totals and
/// the figures per label (README.md, "JSON output").
pub fn evaluation(e: &trellis_project::evaluate::Evaluation) -> serde_json::Value {
    use trellis_treebank::eval::Totals;
    let figures = |m: usize, g: usize, t: usize| {
        let (p, r, f) = Totals::prf(m, g, t);
        serde_json::json!({"matched": m, "gold": g, "predicted": t, "precision": p, "recall": r, "f1": f})
    };
    let t = &e.totals;
    let mut total = figures(t.matched, t.gold, t.test);
    let share = |a: usize, b: usize| if b == 0 { 0.0 } else { a as f64 / b as f64 };
    total["sentences"] = t.sentences.into();
    total["skipped"] = t.skipped.into();
    total["exact_match"] = share(t.exact, t.sentences).into();
    total["crossing_per_sentence"] = share(t.crossing, t.sentences).into();
    total["no_crossing"] = share(t.no_crossing, t.sentences).into();
    let labels: serde_json::Map<String, serde_json::Value> = t
        .labels
        .iter()
        .map(|(label, &(m, g, p))| (label.clone(), figures(m, g, p)))
        .collect();
    let sentences: Vec<serde_json::Value> = e
        .sentences
        .iter()
        .map(|s| {
            let mut v = figures(s.score.matched, s.score.gold, s.score.test);
            v["index"] = s.index.into();
            v["gold_line"] = s.gold_line.into();
            v["predicted_line"] = s.test_line.into();
            v["length"] = s.score.length.into();
            v["crossing"] = s.score.crossing.into();
            v["exact"] = s.score.exact().into();
            v["skipped"] = s.score.skipped.into();
            v
        })
        .collect();
    serde_json::json!({"sentences": sentences, "total": total, "labels": labels})
}

/// The JSON document of `trellis fit` (README.md, "JSON output"):
/// every block with its rules' counts and old and new probabilities
/// (exact, as `p/q`, and as numbers), and the warnings.
pub fn fitted(
    analysis: &trellis_ide::Analysis,
    fitted: &trellis_project::fit::Fitted,
    written: bool,
) -> serde_json::Value {
    use grammar_lang::model::to_f64;
    let grammar = &analysis.grammar;
    let e = &fitted.estimate;
    let blocks: Vec<serde_json::Value> = e
        .blocks
        .iter()
        .map(|b| {
            let rules: Vec<serde_json::Value> = b
                .rules
                .iter()
                .map(|r| {
                    let location = grammar.rule(r.rule).location;
                    let source = analysis.sources.get(location.file);
                    let at = source.lines.chars(
                        &source.text,
                        (location.span.start as usize).min(source.text.len()),
                    );
                    let mut v = serde_json::json!({
                        "rule": trellis_project::fit::rule_as_written(analysis, r.rule),
                        "file": source.path.display().to_string(),
                        "line": at.line + 1,
                        "column": at.col + 1,
                        "count": r.count,
                        "old": r.old.to_string(),
                        "new": r.new.to_string(),
                        "old_probability": to_f64(&r.old),
                        "new_probability": to_f64(&r.new),
                    });
                    if let Some(w) = &r.weight {
                        v["weight"] = w.to_string().into();
                    }
                    v
                })
                .collect();
            serde_json::json!({
                "name": grammar.nt_name(b.nt),
                "seen": b.seen(),
                "total": b.total,
                "relative": b.relative,
                "rules": rules,
            })
        })
        .collect();
    let broken: Vec<serde_json::Value> = fitted
        .broken_cases
        .iter()
        .map(|(test, case)| serde_json::json!({"test": test, "case": case}))
        .collect();
    let fallbacks: Vec<serde_json::Value> = fitted
        .fallbacks
        .iter()
        .map(|(block, why)| serde_json::json!({"block": block, "reason": why.to_string()}))
        .collect();
    serde_json::json!({
        "smoothing": e.smoothing.to_string(),
        "trees": e.trees,
        "skipped": fitted.skipped.iter().map(|p| p.to_string()).collect::<Vec<_>>(),
        "emptied": fitted.emptied,
        "written": written,
        "changed_files": fitted.changed.iter().map(|r| r.path.display().to_string()).collect::<Vec<_>>(),
        "blocks": blocks,
        "fallbacks": fallbacks,
        "new_findings": fitted.new_findings.iter().map(|f| f.to_string()).collect::<Vec<_>>(),
        "broken_cases": broken,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::{Code, Location};

    use crate::render::tests::{one_file, span_of};

    const FERRY: &str = "start Trip\nTrip {\n  1/2 \"Fähre\" Kind\n  1/2 Kind\n}\n";

    #[test]
    fn json_positions_are_one_based_and_count_characters() {
        let sources = one_file("kiosk.trellis", FERRY);
        let d = Diagnostic::new(
            Code::Undefined,
            Location::new(FileId(0), span_of(FERRY, "Kind")),
            "`Kind` is used but has no block",
        )
        .with_related(
            Location::new(FileId(0), span_of(FERRY, "\"Fähre\"")),
            "next to this",
        );
        let j = json_diagnostic(&d, &sources);
        assert_eq!((j.line, j.column, j.end_line, j.end_column), (3, 15, 3, 19));
        let r = &j.related[0];
        // `"Fähre"` is 7 characters (8 bytes), starting at column 7.
        assert_eq!((r.line, r.column, r.end_line, r.end_column), (3, 7, 3, 14));
        assert_eq!(r.file, "kiosk.trellis");
    }

    #[test]
    fn the_check_document_has_exactly_the_promised_fields() {
        let sources = one_file("a.trellis", FERRY);
        let d = Diagnostic::new(
            Code::SumNotOne,
            Location::new(FileId(0), span_of(FERRY, "Trip {")),
            "weights add up to 3/4",
        )
        .with_help("add 1/4");
        let text = to_line(&CheckDocument {
            diagnostics: vec![json_diagnostic(&d, &sources)],
        });
        let v: serde_json::Value = serde_json::from_str(&text).unwrap();
        let obj = v.as_object().unwrap();
        assert_eq!(obj.len(), 1);
        let d = &v["diagnostics"][0];
        assert_eq!(d["code"], "sum-not-one");
        assert_eq!(d["severity"], "error");
        assert_eq!(d["file"], "a.trellis");
        assert_eq!(
            (d["line"].as_u64(), d["column"].as_u64()),
            (Some(2), Some(1))
        );
        assert_eq!(
            (d["end_line"].as_u64(), d["end_column"].as_u64()),
            (Some(2), Some(7))
        );
        assert_eq!(d["message"], "weights add up to 3/4");
        assert_eq!(d["help"], "add 1/4");
        assert_eq!(d["related"], serde_json::json!([]));
    }

    #[test]
    fn one_json_line_per_document() {
        let line = to_line(&CheckDocument {
            diagnostics: Vec::new(),
        });
        assert_eq!(line, "{\"diagnostics\":[]}\n");
    }
}
