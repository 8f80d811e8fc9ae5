//! Steps several commands share, with their failures reported: finding
//! and analysing the grammars under some paths, loading one grammar and
//! preparing what a run of it uses, saying what the run did.

use crate::commands::{Outcome, Stop};
use crate::output::{emit, CheckFormat, Stream, Term};
use crate::render::{github, human, json, sarif};
use std::path::{Path, PathBuf};
use trellis_ide::{Analysis, NotRunnable, Run};
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

/// Reads and analyses the grammar at `path` with its trellis.toml.
/// Failures are reported on stderr and end the command with status 2.
pub fn load(path: &Path) -> Result<Analysis, Stop> {
    match trellis_project::load_grammar(path) {
        Ok(analysis) => Ok(analysis),
        Err(LoadError::Config(problem)) => {
            emit(
                Stream::Stderr,
                &format!(
                    "error: {} is not a valid trellis configuration; `trellis check {}` shows why\n",
                    problem.path.display(),
                    path.display()
                ),
            );
            Err(Stop(Outcome::Failure))
        }
        Err(e @ LoadError::Unreadable { .. }) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            Err(Stop(Outcome::Failure))
        }
    }
}

/// What `trellis COMMAND` may run of the grammar at `path` (analysed as
/// `analysis`) from `from` (see [`Analysis::run`]). A refusal is reported
/// on stderr: the errors that stop the run rendered in full and named in
/// one line each, status 1; no start symbol, or a `--from` that names no
/// block, status 2 when the command has `--from` (`offers_from`), else 1.
pub fn prepare<'a>(
    analysis: &'a Analysis,
    from: Option<&str>,
    offers_from: bool,
    path: &Path,
    command: &str,
    term: Term,
) -> Result<Run<'a>, Stop> {
    analysis.run(from).map_err(|why| {
        let outcome = match (&why, from) {
            (NotRunnable::NoSuchSymbol(_), _) | (NotRunnable::NoStart, _) if offers_from => {
                Outcome::Failure
            }
            _ => Outcome::Findings,
        };
        let mut out = String::new();
        let stopping: Vec<_> = why.errors().iter().map(|e| e.diagnostic.clone()).collect();
        out.push_str(&human::diagnostics(
            &analysis.sources,
            &stopping,
            term.color(Stream::Stderr),
        ));
        let message = match (&why, from) {
            (NotRunnable::NoSuchSymbol(_), Some(name)) => format!("--from {name}: {why}"),
            (NotRunnable::NoStart, None) if offers_from => format!("{why} with --from"),
            (NotRunnable::NoStart, None) => {
                "the grammar has no `start` declaration; declare one with `start Name`".to_string()
            }
            _ => why.to_string(),
        };
        out.push_str(&format!(
            "error: {}: {message}\ntrellis {command} did not run\n",
            path.display()
        ));
        emit(Stream::Stderr, &out);
        Stop(outcome)
    })
}

/// Says on stderr what a run did to the grammar: which blocks were
/// rescaled, which errors it ignored (each with its place), in human
/// output; machine-readable documents carry the same as fields.
pub fn note_run(analysis: &Analysis, run: &Run) {
    let mut out = String::new();
    if let Some(note) = run.rescaled_note() {
        out.push_str(&format!("note: {note}\n"));
    }
    if let Some(note) = run.approximate_note() {
        out.push_str(&format!("note: {note}\n"));
    }
    let ignored = run.ignored_errors();
    if !ignored.is_empty() {
        out.push_str(&format!(
            "note: ran despite {} error{} outside what this run uses (`trellis check` shows {}):\n",
            ignored.len(),
            if ignored.len() == 1 { "" } else { "s" },
            if ignored.len() == 1 { "it" } else { "them" },
        ));
        for d in ignored {
            let placed = analysis.placed(d);
            out.push_str(&format!(
                "  {}:{}:{}: {} {}\n",
                placed.path.display(),
                placed.line,
                placed.column,
                d.code,
                d.message
            ));
        }
    }
    emit(Stream::Stderr, &out);
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

/// How `learn` and `fit` clean treebank trees before reading them.
#[derive(clap::Args, Debug, Clone)]
pub struct CleaningArgs {
    /// Strip function tags and indices from labels (`NP-SBJ-1` → `NP`)
    #[arg(long)]
    pub strip_functions: bool,

    /// Drop empty elements (`-NONE-`) and the nodes they leave empty
    #[arg(long)]
    pub drop_empty: bool,

    /// Collapse unary chains of one label (`(NP (NP …))` → `(NP …)`)
    #[arg(long)]
    pub collapse_unary: bool,
}

impl CleaningArgs {
    pub fn cleaning(&self) -> trellis_treebank::Cleaning {
        trellis_treebank::Cleaning {
            strip_functions: self.strip_functions,
            drop_empty: self.drop_empty,
            collapse_unary: self.collapse_unary,
        }
    }
}
