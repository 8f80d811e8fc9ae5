//! Steps several commands share, with their failures reported: finding
//! and analysing the grammars under some paths, loading one grammar the
//! engine can run, choosing the symbol to start from.

use crate::commands::{Outcome, Stop};
use crate::output::{emit, CheckFormat, Stream, Term};
use crate::render::{github, human, json, sarif};
use grammar_lang::model::NtId;
use std::path::{Path, PathBuf};
use trellis_ide::Analysis;
use trellis_project::config::ConfigProblem;
use trellis_project::{Analysed, LoadError};

/// Finds and analyses the grammars for `paths` (see
/// [`trellis_project::analyse_paths`]). An invalid trellis.toml stops
/// everything: it is reported (on stdout too, as the findings of `check`
/// in the machine-readable formats) and the run ends with
/// [`Outcome::Failure`].
pub fn analyse(
    paths: &[PathBuf],
    changed: &[PathBuf],
    format: impl Into<CheckFormat>,
    term: Term,
) -> Result<Analysed, Stop> {
    let format = format.into();
    let mut analysed = trellis_project::analyse_paths(paths).map_err(|stop| {
        report_config_problems(&stop.problems, format, term);
        report_failures(&stop.failures);
        Stop(Outcome::Failure)
    })?;
    if !changed.is_empty() {
        analysed.checked = trellis_project::affected_by(analysed.checked, changed);
    }
    Ok(analysed)
}

/// Reports invalid configuration files; nothing else is checked.
fn report_config_problems(problems: &[ConfigProblem], format: CheckFormat, term: Term) {
    let found: Vec<_> = problems.iter().map(ConfigProblem::diagnostics).collect();
    let all = || {
        found
            .iter()
            .flat_map(|(sources, ds)| ds.iter().map(move |d| (d, sources)))
    };
    let mut human = String::new();
    let color = term.color(Stream::Stderr);
    match format {
        CheckFormat::Json => json::write(&json::CheckDocument {
            diagnostics: all().map(|(d, s)| json::json_diagnostic(d, s)).collect(),
        }),
        CheckFormat::Sarif => json::write(&sarif::check_log(all(), working_directory().as_deref())),
        CheckFormat::Github => emit(
            Stream::Stdout,
            &github::check_annotations(all(), working_directory().as_deref()),
        ),
        CheckFormat::Human => {
            for (sources, diagnostics) in &found {
                human.push_str(&human::diagnostics(sources, diagnostics, color));
            }
        }
    }
    for problem in problems {
        human.push_str(&format!(
            "error: {} is not a valid trellis configuration, so nothing was checked; \
             fix the entries shown above (`trellis check --help` lists every check \
             and level) or remove the file to use the default levels\n",
            problem.path.display()
        ));
    }
    emit(Stream::Stderr, &human);
}

/// The working directory, against which reports for CI systems name files.
pub fn working_directory() -> Option<PathBuf> {
    std::env::current_dir()
        .ok()
        .map(|cwd| grammar_lang::source::normalize(&cwd))
}

/// Reports on stderr the paths that could not be checked.
pub fn report_failures(failures: &[String]) {
    let text: String = failures.iter().map(|f| format!("error: {f}\n")).collect();
    emit(Stream::Stderr, &text);
}

/// Says on stderr that `paths` held no grammar file.
pub fn note_nothing_found(paths: &[PathBuf], changed: &[PathBuf]) {
    let shown = |list: &[PathBuf]| -> String {
        let names: Vec<String> = list.iter().map(|p| p.display().to_string()).collect();
        names.join(", ")
    };
    let note = if changed.is_empty() {
        format!("note: no .trellis files found in {}\n", shown(paths))
    } else {
        format!(
            "note: no grammar in {} reads {}\n",
            shown(paths),
            shown(changed)
        )
    };
    emit(Stream::Stderr, &note);
}

/// Reads and analyses the grammar at `path` with its trellis.toml and
/// insists that the engine can run it. Failures are reported on stderr and
/// end the command: an unreadable file or configuration with status 2, a
/// grammar with errors (rendered) with status 1.
pub fn load_runnable(path: &Path, command: &str, term: Term) -> Result<Analysis, Stop> {
    let analysis = match trellis_project::load_grammar(path) {
        Ok(analysis) => analysis,
        Err(LoadError::Config(problem)) => {
            emit(
                Stream::Stderr,
                &format!(
                    "error: {} is not a valid trellis configuration; `trellis check {}` shows why\n",
                    problem.path.display(),
                    path.display()
                ),
            );
            return Err(Stop(Outcome::Failure));
        }
        Err(e @ LoadError::Unreadable { .. }) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Err(Stop(Outcome::Failure));
        }
    };
    if let Err(why) = analysis.runnable() {
        let mut out = human::errors(&analysis, term.color(Stream::Stderr));
        out.push_str(&format!(
            "error: {}: {why} (`trellis check` lists every finding); trellis {command} did not run\n",
            path.display()
        ));
        emit(Stream::Stderr, &out);
        return Err(Stop(Outcome::Findings));
    }
    Ok(analysis)
}

/// The symbol named by `--from`, or the grammar's start.
pub fn start_symbol(analysis: &Analysis, from: Option<&str>) -> Result<NtId, Stop> {
    analysis.start_symbol(from).map_err(|why| {
        let hint = match from {
            Some(name) => format!("--from {name}: {why}"),
            None => format!("{why} with --from"),
        };
        emit(Stream::Stderr, &format!("error: {hint}\n"));
        Stop(Outcome::Failure)
    })
}

/// Reports an error on stderr and ends the command with `outcome`.
pub fn fail(message: impl std::fmt::Display, outcome: Outcome) -> Stop {
    emit(Stream::Stderr, &format!("error: {message}\n"));
    Stop(outcome)
}

/// The budgets of one parse as the command line sets them, for the
/// messages that name the options.
#[derive(Clone, Copy, Debug)]
pub struct ParseLimits {
    pub max_chart_mib: u64,
    pub max_seconds: Option<f64>,
}

/// When a parse started under [`ParseLimits::max_seconds`] must stop.
#[derive(Clone, Copy, Debug)]
pub struct Deadline(Option<std::time::Instant>);

impl Deadline {
    /// Whether the time is up (never, without a budget).
    pub fn passed(&self) -> bool {
        self.0.is_some_and(|at| std::time::Instant::now() >= at)
    }
}

impl ParseLimits {
    /// The deadline of a parse starting now.
    pub fn deadline(&self) -> Deadline {
        Deadline(self.max_seconds.and_then(|s| {
            std::time::Instant::now().checked_add(std::time::Duration::try_from_secs_f64(s).ok()?)
        }))
    }
}

/// Why a sentence was not analysed, with the option to change.
pub fn parse_error_text(e: &trellis_engine::parser::ParseError, limits: &ParseLimits) -> String {
    use trellis_engine::parser::ParseError;
    let what = e.refusal();
    let mib = limits.max_chart_mib;
    match e {
        ParseError::EmptySentence => what,
        ParseError::ChartTooLarge { .. } => format!(
            "{what}; split the input into shorter sentences or raise --max-chart-mib (now {mib})"
        ),
        ParseError::KbestTooLarge { fits, .. } => {
            format!("{what}; ask for --kbest {fits} or fewer, or raise --max-chart-mib (now {mib})")
        }
        ParseError::Stopped => match limits.max_seconds {
            Some(s) => format!(
                "{what}: it took longer than --max-seconds {s}; raise it or split the input \
                 into shorter sentences"
            ),
            None => what,
        },
    }
}

/// A number of seconds for a time budget: positive and finite.
pub fn seconds(text: &str) -> Result<f64, String> {
    match text.trim().parse::<f64>() {
        Ok(s) if s > 0.0 && s.is_finite() && std::time::Duration::try_from_secs_f64(s).is_ok() => {
            Ok(s)
        }
        _ => Err(format!("`{text}` is not a number of seconds above 0")),
    }
}
