//! `trellis check`: run the static checks over grammar files and report.

use super::{Outcome, Ran};
use crate::output::{emit, CheckFormat, Stream, Term};
use crate::render::{github, human, json, sarif, Counts};
use crate::shared::{analyse, note_nothing_found, report_failures, working_directory};
use grammar_lang::Code;
use std::path::PathBuf;
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

    /// Only the grammars that read one of these files, as their root or
    /// through `use` (for commit hooks: the files a commit changes; a
    /// lexicon brings in every grammar that uses it)
    #[arg(long, value_name = "FILE", num_args = 1..)]
    pub changed: Vec<PathBuf>,

    /// How to print findings: `human` shows source snippets, `json` prints
    /// one object {"diagnostics": [...]}, `sarif` a SARIF 2.1.0 log for
    /// code-scanning services, `github` one GitHub Actions annotation per
    /// finding; lines and columns are 1-based, columns counted in characters
    #[arg(long, value_enum, default_value_t = CheckFormat::Human)]
    pub format: CheckFormat,

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
        let (level, note) = match code {
            // Problems in trellis.toml itself stop the run; not a grammar check.
            Code::Config => continue,
            Code::Syntax => (code.default_severity().as_str(), " (always)"),
            _ if !code.is_check() => ("off", " (editor only)"),
            _ => (code.default_severity().as_str(), ""),
        };
        out.push_str(&format!(
            "  {:width$}  {:7}  {}{note}\n",
            code.as_str(),
            level,
            code.description()
        ));
    }
    out.push_str(&format!(
        "\n`max-arity = N` in trellis.toml sets the longest right-hand side accepted \
         without an `arity` finding (default {}). `[editor] uncovered-rules = \"hint\"` \
         makes the language server mark rules that no passing test case uses.\n",
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

/// Runs `trellis check`.
pub fn run(args: &CheckArgs, term: Term) -> Ran {
    let paths = paths_or_here(&args.paths);
    let Analysed { checked, failures } = analyse(&paths, &args.changed, args.format, term)?;

    let selection = select(&checked, identity);
    let mut counts = Counts::default();
    for (_, d) in &selection.findings {
        counts.add(d.severity);
    }

    let findings = || {
        selection
            .findings
            .iter()
            .map(|&(i, d)| (d, &checked[i].analysis.sources))
    };
    match args.format {
        CheckFormat::Json => json::write(&json::CheckDocument {
            diagnostics: findings()
                .map(|(d, sources)| json::json_diagnostic(d, sources))
                .collect(),
        }),
        CheckFormat::Sarif => json::write(&sarif::check_log(
            findings(),
            working_directory().as_deref(),
        )),
        CheckFormat::Github => emit(
            Stream::Stdout,
            &github::check_annotations(findings(), working_directory().as_deref()),
        ),
        CheckFormat::Human => {
            emit(
                Stream::Stdout,
                &human::check_report(
                    &checked,
                    &selection.findings,
                    selection.files,
                    counts,
                    args.deny_warnings,
                    term.color(Stream::Stdout),
                ),
            );
            if checked.is_empty() && failures.is_empty() {
                note_nothing_found(&paths, &args.changed);
            }
        }
    }
    report_failures(&failures);
    Ok(outcome(counts, args.deny_warnings, !failures.is_empty()))
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
