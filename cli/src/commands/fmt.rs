//! `trellis fmt`: lay grammar files out in the one canonical layout.

use super::{Outcome, Ran, Stop};
use crate::output::{emit, Format, Stream, Term};
use crate::render::{diff, human, json};
use crate::shared::{fail, note_nothing_found, report_failures};
use grammar_lang::SourceMap;
use std::io::Read;
use std::path::PathBuf;
use trellis_project::{format_paths, options_for_dir, paths_or_here, write_atomic, Formatted};

/// The full description shown by `trellis fmt --help`.
pub const LONG_ABOUT: &str = "Lay grammar files out in trellis's one canonical layout.\n\n\
    Every .trellis file named, and every .trellis file found under a named \
    directory (lexicons too), is rewritten in place: blocks separated by one \
    blank line, one alternative per line with the weights in a column, \
    normalized spacing. Only whitespace and line breaks change (and `|` at a \
    line break): names, weights and terminals stay as written, and every \
    comment stays where it was. A file with syntax errors is not touched; its \
    errors are shown. Files are replaced atomically (a temporary file renamed \
    over the old one).\n\n\
    `trellis fmt -` formats standard input to standard output.\n\n\
    The line width comes from the nearest trellis.toml (for standard input: \
    the one above the working directory):\n\n  [format]\n  width = 100\n\n\
    Exit status: 0 when every file is formatted (or, with --check or --diff, \
    already was); 1 when a file has syntax errors or, with --check or --diff, \
    would change; 2 when a path does not exist, a file cannot be read or \
    written, or trellis.toml is invalid.";

/// Arguments of `trellis fmt`.
#[derive(clap::Args, Debug, Clone)]
pub struct FmtArgs {
    /// Grammar files or directories to format, or `-` for standard input
    /// [default: the current directory]
    #[arg(value_name = "PATH")]
    pub paths: Vec<PathBuf>,

    /// Write nothing; list the files that would change and exit with
    /// status 1 if there is one
    #[arg(long)]
    pub check: bool,

    /// Write nothing; print what would change as a unified diff (exit
    /// status 1 if anything would)
    #[arg(long)]
    pub diff: bool,

    /// How to report: `human` lists files and shows errors as snippets,
    /// `json` prints one object {"files": [...]} (not with `-`)
    #[arg(long, value_enum, default_value_t = Format::Human)]
    pub format: Format,
}

/// Runs `trellis fmt`.
pub fn run(args: &FmtArgs, term: Term) -> Ran {
    if args.paths.iter().any(|p| p.as_os_str() == "-") {
        if args.paths.len() > 1 {
            return Err(fail(
                "`-` (standard input) cannot be combined with other paths",
                Outcome::Failure,
            ));
        }
        if args.format == Format::Json {
            return Err(fail(
                "`--format json` reports on files; `-` prints the formatted text itself",
                Outcome::Failure,
            ));
        }
        return stdin(args, term);
    }
    let paths = paths_or_here(&args.paths);
    let run = format_paths(&paths);
    for problem in &run.problems {
        let (sources, diagnostics) = problem.diagnostics();
        let mut text = human::diagnostics(&sources, &diagnostics, term.color(Stream::Stderr));
        text.push_str(&format!(
            "error: {} is not a valid trellis configuration, so the files it governs were not formatted\n",
            problem.path.display()
        ));
        emit(Stream::Stderr, &text);
    }
    let mut outcome = if run.problems.is_empty() && run.failures.is_empty() {
        Outcome::Clean
    } else {
        Outcome::Failure
    };
    let dry = args.check || args.diff;
    let as_json = args.format == Format::Json;
    let mut changed = 0;
    let mut document = json::FmtDocument { files: Vec::new() };
    for file in &run.files {
        let shown = file.path.display().to_string();
        let (sources, diagnostics) = file.diagnostics();
        let unified = match (&file.result, args.diff) {
            (Ok(formatted), true) => Some(diff::unified(&shown, &file.original, formatted)),
            _ => None,
        };
        if as_json {
            document.files.push(json::FmtFile {
                file: shown.clone(),
                changed: file.changed(),
                diff: unified.clone(),
                diagnostics: diagnostics
                    .iter()
                    .map(|d| json::json_diagnostic(d, &sources))
                    .collect(),
            });
        }
        if !diagnostics.is_empty() {
            if !as_json {
                report_syntax_errors(&sources, &diagnostics, &shown, term);
            }
            outcome = outcome.max(Outcome::Findings);
            continue;
        }
        let Ok(formatted) = &file.result else {
            continue;
        };
        if !file.changed() {
            continue;
        }
        changed += 1;
        if args.check && !as_json {
            emit(Stream::Stdout, &format!("{shown}\n"));
        }
        if let (Some(unified), false) = (&unified, as_json) {
            emit(Stream::Stdout, unified);
        }
        if dry {
            outcome = outcome.max(Outcome::Findings);
        } else if let Err(reason) = write_atomic(&file.path, formatted) {
            emit(
                Stream::Stderr,
                &format!("error: cannot write {shown}: {reason}\n"),
            );
            outcome = Outcome::Failure;
        }
    }
    if as_json {
        json::write(&document);
    }
    report_failures(&run.failures);
    if run.files.is_empty() && run.failures.is_empty() && run.problems.is_empty() {
        note_nothing_found(&paths, &[]);
    } else if !dry && !as_json && changed > 0 {
        emit(
            Stream::Stderr,
            &format!(
                "formatted {changed} of {} file{}\n",
                run.files.len(),
                if run.files.len() == 1 { "" } else { "s" }
            ),
        );
    }
    Ok(outcome)
}

/// Shows a file's syntax errors on stderr; the file is not formatted.
fn refuse_on_errors(file: &Formatted, term: Term) -> Result<(), Stop> {
    let (sources, diagnostics) = file.diagnostics();
    if diagnostics.is_empty() {
        return Ok(());
    }
    report_syntax_errors(
        &sources,
        &diagnostics,
        &file.path.display().to_string(),
        term,
    );
    Err(Stop(Outcome::Findings))
}

fn report_syntax_errors(
    sources: &SourceMap,
    diagnostics: &[grammar_lang::Diagnostic],
    shown: &str,
    term: Term,
) {
    let mut text = human::diagnostics(sources, diagnostics, term.color(Stream::Stderr));
    text.push_str(&format!(
        "error: {shown} has {} syntax error{}, so it was not formatted\n",
        diagnostics.len(),
        if diagnostics.len() == 1 { "" } else { "s" }
    ));
    emit(Stream::Stderr, &text);
}

/// `trellis fmt -`: standard input to standard output.
fn stdin(args: &FmtArgs, term: Term) -> Ran {
    let mut bytes = Vec::new();
    if let Err(e) = std::io::stdin().read_to_end(&mut bytes) {
        return Err(fail(
            format!("cannot read standard input: {e}"),
            Outcome::Failure,
        ));
    }
    let original = trellis_project::files::decode(bytes).map_err(|reason| {
        fail(
            format!("cannot read standard input: {reason}"),
            Outcome::Failure,
        )
    })?;
    let here = std::env::current_dir().unwrap_or_else(|_| PathBuf::from("."));
    let options = options_for_dir(&here).map_err(|problem| {
        fail(
            format!("{problem}; `trellis check` shows where"),
            Outcome::Failure,
        )
    })?;
    let file = Formatted {
        path: PathBuf::from("<stdin>"),
        result: grammar_lang::format(&original, &options),
        original,
    };
    refuse_on_errors(&file, term)?;
    let Ok(formatted) = &file.result else {
        return Ok(Outcome::Findings);
    };
    if args.check || args.diff {
        if args.check && file.changed() {
            emit(Stream::Stdout, "<stdin>\n");
        }
        if args.diff {
            emit(
                Stream::Stdout,
                &diff::unified("<stdin>", &file.original, formatted),
            );
        }
        return Ok(if file.changed() {
            Outcome::Findings
        } else {
            Outcome::Clean
        });
    }
    emit(Stream::Stdout, formatted);
    Ok(Outcome::Clean)
}
