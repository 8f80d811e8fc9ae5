//! Formatting grammar files on disk: every `.trellis` file under the paths
//! (lexicons too, each on its own), each with the width of the
//! `trellis.toml` that governs it. Writing the result back is
//! [`files::write_atomic`](crate::files::write_atomic).

use crate::config::{ConfigProblem, Resolver};
use crate::discover::discover;
use crate::files::read_file;
use grammar_lang::format::{format, FormatError, FormatOptions};
use grammar_lang::{Diagnostic, SourceMap};
use std::path::{Path, PathBuf};

/// One file and its formatted text.
#[derive(Clone, Debug)]
pub struct Formatted {
    /// The path as shown to the user (and used to write the file).
    pub path: PathBuf,
    pub original: String,
    /// The formatted text, or the syntax errors that stopped formatting.
    pub result: Result<String, FormatError>,
}

impl Formatted {
    /// Whether formatting changes the file.
    pub fn changed(&self) -> bool {
        matches!(&self.result, Ok(text) if *text != self.original)
    }

    /// The syntax errors as diagnostics, with the file to show them in.
    pub fn diagnostics(&self) -> (SourceMap, Vec<Diagnostic>) {
        let mut sources = SourceMap::new();
        let file = sources.add(self.path.clone(), self.original.clone());
        let diagnostics = match &self.result {
            Ok(_) => Vec::new(),
            Err(e) => e.diagnostics(file),
        };
        (sources, diagnostics)
    }
}

/// Every file of a run, and what went wrong outside the grammars.
#[derive(Debug, Default)]
pub struct FormatRun {
    pub files: Vec<Formatted>,
    /// Paths that could not be read, as messages.
    pub failures: Vec<String>,
    /// Invalid configuration files (the files they govern are not formatted).
    pub problems: Vec<ConfigProblem>,
}

/// Formats every `.trellis` file named in `paths` or found under them.
/// Nothing is written.
pub fn format_paths(paths: &[PathBuf]) -> FormatRun {
    let (roots, mut failures) = discover(paths);
    let mut resolver = Resolver::new();
    let mut run = FormatRun::default();
    for root in roots {
        // A file under an unusable trellis.toml is left alone; the
        // problem is reported once below.
        let Ok(config) = resolver.for_grammar(&root.path) else {
            continue;
        };
        let options = config.format;
        match read_file(&root.path, &resolver.policy_for_grammar(&root.path))
            .map_err(|failure| format!("{}; {}", failure.reason, failure.help))
        {
            Ok(original) => {
                let result = format(&original, &options);
                run.files.push(Formatted {
                    path: root.path,
                    original,
                    result,
                });
            }
            Err(reason) => failures.push(format!("cannot read {}: {reason}", root.path.display())),
        }
    }
    run.failures = failures;
    run.problems = resolver.problems();
    run
}

/// The formatting options for text that belongs to no file (standard
/// input): those of the `trellis.toml` found from `dir` upwards.
pub fn options_for_dir(dir: &Path) -> Result<FormatOptions, ConfigProblem> {
    Ok(Resolver::new().for_dir(dir)?.format)
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::fs;

    #[test]
    fn every_file_is_formatted_with_the_width_of_its_configuration() {
        let dir = tempfile::tempdir().unwrap();
        let narrow = dir.path().join("narrow");
        fs::create_dir_all(&narrow).unwrap();
        fs::write(
            narrow.join(crate::config::FILE_NAME),
            "[format]\nwidth = 20\n",
        )
        .unwrap();
        let text = "K { \"return\" | \"single\" }\n";
        fs::write(dir.path().join("wide.trellis"), text).unwrap();
        fs::write(narrow.join("lexicon.trellis"), text).unwrap();
        fs::write(dir.path().join("notes.txt"), "not a grammar").unwrap();
        let run = format_paths(&[dir.path().to_path_buf()]);
        assert!(run.failures.is_empty() && run.problems.is_empty());
        assert_eq!(run.files.len(), 2);
        let narrow_file = run
            .files
            .iter()
            .find(|f| f.path.ends_with("lexicon.trellis"))
            .unwrap();
        assert!(narrow_file.changed());
        let wide = run
            .files
            .iter()
            .find(|f| f.path.ends_with("wide.trellis"))
            .unwrap();
        assert!(!wide.changed());
    }

    #[test]
    fn syntax_errors_and_bad_configurations_are_reported_not_formatted() {
        let dir = tempfile::tempdir().unwrap();
        fs::write(dir.path().join("bad.trellis"), "A = \"x\"\n").unwrap();
        let run = format_paths(&[dir.path().to_path_buf()]);
        let (sources, diagnostics) = run.files[0].diagnostics();
        assert_eq!(diagnostics.len(), 1);
        assert_eq!(
            sources.get(diagnostics[0].location.file).text,
            "A = \"x\"\n"
        );
        assert!(!run.files[0].changed());

        fs::write(
            dir.path().join(crate::config::FILE_NAME),
            "[format]\nwidth = -1\n",
        )
        .unwrap();
        let run = format_paths(&[dir.path().to_path_buf()]);
        assert!(run.files.is_empty());
        assert_eq!(run.problems.len(), 1);
        assert!(options_for_dir(dir.path()).is_err());
    }
}
