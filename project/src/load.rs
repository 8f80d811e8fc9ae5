//! Loading one grammar named on the command line, with its configuration.

use crate::config::{ConfigProblem, Resolver};
use crate::files::{read_file, DiskLoader};
use std::path::{Path, PathBuf};
use trellis_ide::Analysis;

/// Why a grammar could not be loaded at all.
#[derive(Debug)]
pub enum LoadError {
    /// Its `trellis.toml` is unreadable or invalid.
    Config(ConfigProblem),
    /// The file itself cannot be read.
    Unreadable { path: PathBuf, reason: String },
}

impl std::fmt::Display for LoadError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            LoadError::Config(problem) => problem.fmt(f),
            LoadError::Unreadable { path, reason } => {
                write!(f, "cannot read {}: {reason}", path.display())
            }
        }
    }
}

/// Reads the grammar at `path` with the `trellis.toml` that applies to it
/// and analyses it through the façade: the same findings, at the same
/// levels, as `trellis check` reports. Whether the grammar can run is the
/// analysis's to say ([`Analysis::runnable`]).
pub fn load_grammar(path: &Path) -> Result<Analysis, LoadError> {
    let mut resolver = Resolver::new();
    let config = resolver.for_grammar(path).map_err(LoadError::Config)?;
    let policy = resolver.policy_for_grammar(path);
    // The grammar named is read by the size limit; only `use` is confined.
    let text = read_file(path, &policy).map_err(|failure| LoadError::Unreadable {
        path: path.to_path_buf(),
        reason: format!("{}; {}", failure.reason, failure.help),
    })?;
    Ok(trellis_ide::analyze(
        path,
        &text,
        &DiskLoader::new(policy),
        &config,
    ))
}
