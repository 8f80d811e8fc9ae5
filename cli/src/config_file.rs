//! Finding and reading `trellis.toml`.
//!
//! The configuration that applies to a grammar file is the nearest
//! `trellis.toml` in the file's directory or any directory above it. Its text
//! is interpreted by [`grammar_lang::Config::from_toml`]; this module only
//! locates it, reads it, and turns its problems into located diagnostics.

use crate::fs_loader;
use grammar_lang::config::ConfigError;
use grammar_lang::source::normalize;
use grammar_lang::{Code, Config, Diagnostic, FileId, Location, SourceMap, Span};
use std::collections::HashMap;
use std::path::{Path, PathBuf};

pub const FILE_NAME: &str = "trellis.toml";

/// A `trellis.toml` that could not be used.
#[derive(Clone, Debug)]
pub struct ConfigProblem {
    /// The file, as it should be shown to the user.
    pub path: PathBuf,
    pub kind: ProblemKind,
}

#[derive(Clone, Debug)]
pub enum ProblemKind {
    /// The file exists but cannot be read as text.
    Unreadable(String),
    /// The text is read; these entries are wrong.
    Invalid {
        text: String,
        errors: Vec<ConfigError>,
    },
}

impl ConfigProblem {
    /// The problems as diagnostics with code `config`, located in the file
    /// (`sources` holds the file when its text is known).
    pub fn diagnostics(&self) -> (SourceMap, Vec<Diagnostic>) {
        let mut sources = SourceMap::new();
        match &self.kind {
            ProblemKind::Unreadable(reason) => {
                let file = sources.add(self.path.clone(), String::new());
                let d = Diagnostic::new(
                    Code::Config,
                    Location::new(file, Span::point(0)),
                    format!("cannot read {}: {reason}", self.path.display()),
                );
                (sources, vec![d])
            }
            ProblemKind::Invalid { text, errors } => {
                let file: FileId = sources.add(self.path.clone(), text.clone());
                let diagnostics = errors
                    .iter()
                    .map(|e| {
                        let span = e
                            .span
                            .clone()
                            .map_or(Span::point(0), |r| Span::new(r.start, r.end.max(r.start)));
                        Diagnostic::new(Code::Config, Location::new(file, span), e.message.clone())
                            .with_label("this entry")
                    })
                    .collect();
                (sources, diagnostics)
            }
        }
    }
}

/// `path` made absolute (against the working directory) and free of `.`/`..`.
fn absolute(path: &Path) -> PathBuf {
    normalize(&std::path::absolute(path).unwrap_or_else(|_| path.to_path_buf()))
}

/// `path` relative to the working directory when it lies below it.
fn for_display(path: &Path) -> PathBuf {
    std::env::current_dir()
        .ok()
        .and_then(|cwd| {
            path.strip_prefix(absolute(&cwd))
                .ok()
                .map(Path::to_path_buf)
        })
        .unwrap_or_else(|| path.to_path_buf())
}

/// The nearest `trellis.toml` in `dir` or above it.
pub fn find_from(dir: &Path) -> Option<PathBuf> {
    absolute(dir)
        .ancestors()
        .map(|d| d.join(FILE_NAME))
        .find(|candidate| candidate.is_file())
}

/// Reads and interprets the configuration file at `path`.
pub fn load(path: &Path) -> Result<Config, ConfigProblem> {
    let shown = for_display(path);
    let text = fs_loader::read_text(path).map_err(|reason| ConfigProblem {
        path: shown.clone(),
        kind: ProblemKind::Unreadable(reason),
    })?;
    Config::from_toml(&text).map_err(|errors| ConfigProblem {
        path: shown,
        kind: ProblemKind::Invalid { text, errors },
    })
}

/// Finds the configuration of each grammar file, reading every
/// `trellis.toml` once however many files it governs.
#[derive(Default)]
pub struct Resolver {
    by_dir: HashMap<PathBuf, Option<PathBuf>>,
    loaded: HashMap<PathBuf, Result<Config, ConfigProblem>>,
}

impl Resolver {
    pub fn new() -> Self {
        Resolver::default()
    }

    /// The configuration for the grammar file `grammar` (the default one
    /// when no `trellis.toml` is found above it).
    pub fn for_grammar(&mut self, grammar: &Path) -> Result<Config, ConfigProblem> {
        let dir = absolute(grammar)
            .parent()
            .map_or_else(|| PathBuf::from("/"), Path::to_path_buf);
        let found = self
            .by_dir
            .entry(dir.clone())
            .or_insert_with(|| find_from(&dir))
            .clone();
        let Some(path) = found else {
            return Ok(Config::default());
        };
        self.loaded
            .entry(path.clone())
            .or_insert_with(|| load(&path))
            .clone()
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::config::Level;
    use grammar_lang::Severity;
    use std::fs;

    #[test]
    fn the_nearest_file_above_the_grammar_applies() {
        let dir = tempfile::tempdir().unwrap();
        let deep = dir.path().join("grammars/ferry");
        fs::create_dir_all(&deep).unwrap();
        fs::write(
            dir.path().join(FILE_NAME),
            "[checks]\nunreachable = \"off\"\n",
        )
        .unwrap();
        fs::write(deep.join("kiosk.trellis"), "").unwrap();
        let mut resolver = Resolver::new();
        let config = resolver.for_grammar(&deep.join("kiosk.trellis")).unwrap();
        assert_eq!(config.levels.get(&Code::Unreachable), Some(&Level::Off));

        // A closer file wins over the one further up.
        fs::write(
            dir.path().join("grammars").join(FILE_NAME),
            "[checks]\nunreachable = \"error\"\n",
        )
        .unwrap();
        let config = Resolver::new()
            .for_grammar(&deep.join("kiosk.trellis"))
            .unwrap();
        assert_eq!(config.level(Code::Unreachable), Some(Severity::Error));
    }

    #[test]
    fn relative_paths_with_dot_dot_walk_up_from_the_real_directory() {
        let dir = tempfile::tempdir().unwrap();
        fs::create_dir_all(dir.path().join("a/b")).unwrap();
        fs::write(dir.path().join("a").join(FILE_NAME), "max-arity = 3\n").unwrap();
        let found = find_from(&dir.path().join("a/b/../b")).unwrap();
        assert_eq!(found, absolute(&dir.path().join("a").join(FILE_NAME)));
    }

    #[test]
    fn a_bad_entry_becomes_a_located_config_diagnostic() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(FILE_NAME);
        fs::write(&path, "[checks]\nunreachble = \"error\"\n").unwrap();
        let problem = load(&path).unwrap_err();
        let (sources, diagnostics) = problem.diagnostics();
        assert_eq!(diagnostics.len(), 1);
        let d = &diagnostics[0];
        assert_eq!(d.code, Code::Config);
        let file = sources.get(d.location.file);
        assert_eq!(d.location.span.text(&file.text), "unreachble");
        assert!(
            d.message.contains("unknown check `unreachble`"),
            "{}",
            d.message
        );
    }

    #[test]
    fn an_unreadable_config_is_a_problem_not_a_default() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join(FILE_NAME);
        fs::write(&path, b"max-arity = 4 # \xFF\n").unwrap();
        let problem = load(&path).unwrap_err();
        let (_, diagnostics) = problem.diagnostics();
        assert!(
            diagnostics[0].message.contains("not UTF-8"),
            "{:?}",
            diagnostics
        );
    }
}
