//! `trellis check`: run the static checks over grammar files and report.

use super::{emit, use_color, Outcome, OutputFormat, Stream};
use crate::render::{self, Counts, HumanRenderer};
use grammar_lang::Code;
use std::collections::HashMap;
use std::path::PathBuf;
use trellis_project::config::ConfigProblem;
use trellis_project::{identity, paths_or_here, select, Analysed};

/// The full description shown by `trellis check --help`.
pub const LONG_ABOUT: &str = "Find mistakes in grammars without running them.\n\n\
    Every .trellis file named, and every .trellis file found under a named \
    directory (hidden directories and target/ are skipped), is checked together \
    with the files it `use`s. A file found in a directory that another checked \
    file `use`s is checked as part of that grammar rather than on its own.\n\n\
    Which findings are errors, warnings, notes or silenced is read from the \
    nearest trellis.toml in the grammar's directory or above it, e.g.\n\n  \
    [checks]\n  unreachable = \"error\"\n  duplicate-rule = \"off\"\n\n\
    Exit status: 0 when no errors were found; 1 when errors were found (or \
    warnings, with --deny-warnings); 2 when a path does not exist, a file \
    cannot be read as UTF-8 text, or trellis.toml is invalid.";

/// Arguments of `trellis check`.
#[derive(clap::Args, Debug, Clone)]
#[command(after_long_help = checks_help())]
pub struct CheckArgs {
    /// Grammar files or directories to check [default: the current directory]
    #[arg(value_name = "PATH")]
    pub paths: Vec<PathBuf>,

    /// How to print findings: `human` shows source snippets, `json` prints
    /// one object {"diagnostics": [...]} with 1-based lines and columns
    /// counted in characters
    #[arg(long, value_enum, default_value_t = OutputFormat::Human)]
    pub format: OutputFormat,

    /// Fail (exit status 1) on warnings too, not only on errors
    #[arg(long)]
    pub deny_warnings: bool,
}

/// The list of checks and their default levels, for `check --help`.
fn checks_help() -> String {
    let width = Code::ALL
        .iter()
        .map(|c| c.as_str().len())
        .max()
        .unwrap_or(0);
    let mut out = String::from(
        "Checks (name and default level; set a level per check in trellis.toml \
         to \"error\", \"warning\", \"note\" or \"off\"):\n",
    );
    for &code in Code::ALL {
        let note = match code {
            // Problems in trellis.toml itself stop the run; not a grammar check.
            Code::Config => continue,
            Code::Syntax => " (always)",
            _ => "",
        };
        out.push_str(&format!(
            "  {:width$}  {}{note}\n",
            code.as_str(),
            code.default_severity()
        ));
    }
    out.push_str(&format!(
        "\n`max-arity = N` in trellis.toml sets the longest right-hand side accepted \
         without an `arity` finding (default {}).\n",
        grammar_lang::config::DEFAULT_MAX_ARITY
    ));
    out
}

/// The exit status for a run with these counts.
pub fn outcome(counts: Counts, deny_warnings: bool, failed: bool) -> Outcome {
    if failed {
        Outcome::Failure
    } else if counts.errors > 0 || (deny_warnings && counts.warnings > 0) {
        Outcome::Findings
    } else {
        Outcome::Clean
    }
}

/// Says on stderr that `paths` held no grammar file.
pub fn note_nothing_found(paths: &[PathBuf]) {
    let shown: Vec<String> = paths.iter().map(|p| p.display().to_string()).collect();
    emit(
        Stream::Stderr,
        &format!("note: no .trellis files found in {}\n", shown.join(", ")),
    );
}

/// Finds and analyses the grammars for `paths` (see
/// [`trellis_project::analyse_paths`]). An invalid trellis.toml stops
/// everything: it is reported (on stdout as JSON too, for `--format json`)
/// and the run ends with [`Outcome::Failure`].
pub fn analyse(paths: &[PathBuf], format: OutputFormat) -> Result<Analysed, Outcome> {
    trellis_project::analyse_paths(paths).map_err(|stop| {
        report_config_problems(&stop.problems, format);
        report_failures(&stop.failures);
        Outcome::Failure
    })
}

/// Runs `trellis check`.
pub fn run(args: &CheckArgs) -> Outcome {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = match analyse(&paths, args.format) {
        Ok(analysed) => analysed,
        Err(outcome) => return outcome,
    };

    let selection = select(&checked, identity);
    let mut counts = Counts::default();
    for (_, d) in &selection.findings {
        counts.add(d.severity);
    }

    match args.format {
        OutputFormat::Json => {
            let diagnostics: Vec<_> = selection
                .findings
                .iter()
                .map(|&(i, d)| render::json_diagnostic(d, &checked[i].analysis.sources))
                .collect();
            emit(Stream::Stdout, &render::json_document(&diagnostics));
        }
        OutputFormat::Human => {
            let color = use_color(Stream::Stdout);
            let mut renderers: HashMap<usize, HumanRenderer> = HashMap::new();
            let mut out = String::new();
            for &(i, d) in &selection.findings {
                let renderer = renderers
                    .entry(i)
                    .or_insert_with(|| HumanRenderer::new(&checked[i].analysis.sources, color));
                out.push_str(&renderer.render(d));
                out.push('\n');
            }
            out.push_str(&render::summary(selection.files, counts));
            if args.deny_warnings && counts.warnings > 0 {
                out.push_str(" (warnings are denied)");
            }
            out.push('\n');
            emit(Stream::Stdout, &out);
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths);
            }
        }
    }
    report_failures(&failures);
    outcome(counts, args.deny_warnings, !failures.is_empty())
}

pub fn report_failures(failures: &[String]) {
    let text: String = failures.iter().map(|f| format!("error: {f}\n")).collect();
    emit(Stream::Stderr, &text);
}

/// Reports invalid configuration files; nothing else is checked.
fn report_config_problems(problems: &[ConfigProblem], format: OutputFormat) {
    let mut json = Vec::new();
    let mut human = String::new();
    let color = use_color(Stream::Stderr);
    for problem in problems {
        let (sources, diagnostics) = problem.diagnostics();
        let mut renderer = HumanRenderer::new(&sources, color);
        for d in &diagnostics {
            match format {
                OutputFormat::Json => json.push(render::json_diagnostic(d, &sources)),
                OutputFormat::Human => {
                    human.push_str(&renderer.render(d));
                    human.push('\n');
                }
            }
        }
        human.push_str(&format!(
            "error: {} is not a valid trellis configuration, so nothing was checked; \
             fix the entries shown above (`trellis check --help` lists every check \
             and level) or remove the file to use the default levels\n",
            problem.path.display()
        ));
    }
    if format == OutputFormat::Json {
        emit(Stream::Stdout, &render::json_document(&json));
    }
    emit(Stream::Stderr, &human);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exit_status_follows_errors_warnings_and_failures() {
        let none = Counts::default();
        let warning = Counts {
            warnings: 1,
            ..Counts::default()
        };
        let error = Counts {
            errors: 1,
            ..Counts::default()
        };
        assert_eq!(outcome(none, false, false), Outcome::Clean);
        assert_eq!(outcome(warning, false, false), Outcome::Clean);
        assert_eq!(outcome(warning, true, false), Outcome::Findings);
        assert_eq!(outcome(error, false, false), Outcome::Findings);
        assert_eq!(outcome(error, true, true), Outcome::Failure);
        assert_eq!(outcome(none, false, true), Outcome::Failure);
    }
}
