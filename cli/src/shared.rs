//! Steps several commands share: loading a grammar the engine can run and
//! choosing the symbol to start from, with their failures reported.

use crate::commands::{emit, use_color, Outcome, Stream};
use crate::render;
use grammar_lang::model::NtId;
use std::path::Path;
use trellis_ide::Analysis;
use trellis_project::LoadError;

/// Reads and analyses the grammar at `path` with its trellis.toml and
/// insists that the engine can run it. Failures are reported on stderr and
/// end the command: an unreadable file or configuration with status 2, a
/// grammar with errors (rendered) with status 1.
pub fn load_runnable(path: &Path, command: &str) -> Result<Analysis, Outcome> {
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
            return Err(Outcome::Failure);
        }
        Err(e @ LoadError::Unreadable { .. }) => {
            emit(Stream::Stderr, &format!("error: {e}\n"));
            return Err(Outcome::Failure);
        }
    };
    if let Err(why) = analysis.runnable() {
        let mut out = render::errors(&analysis, use_color(Stream::Stderr));
        out.push_str(&format!(
            "error: {}: {why} (`trellis check` lists every finding); trellis {command} did not run\n",
            path.display()
        ));
        emit(Stream::Stderr, &out);
        return Err(Outcome::Findings);
    }
    Ok(analysis)
}

/// The symbol named by `--from`, or the grammar's start.
pub fn start_symbol(analysis: &Analysis, from: Option<&str>) -> Result<NtId, Outcome> {
    analysis.start_symbol(from).map_err(|why| {
        let hint = match from {
            Some(name) => format!("--from {name}: {why}"),
            None => format!("{why} with --from"),
        };
        emit(Stream::Stderr, &format!("error: {hint}\n"));
        Outcome::Failure
    })
}
