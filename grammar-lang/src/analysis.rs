//! The entry point: analyse a grammar file and everything it uses.

use crate::check;
use crate::config::Config;
use crate::diagnostic::{Diagnostic, Severity};
use crate::lower;
use crate::model::Grammar;
use crate::source::{FileLoader, MemoryLoader, SourceMap};
use crate::syntax::ast::SyntaxFile;
use std::path::Path;

/// Everything known about one grammar after analysis.
#[derive(Clone, Debug)]
pub struct Analysis {
    /// The root file first, then every `use`d file in load order.
    pub sources: SourceMap,
    /// The syntax of each file, indexed like `sources`.
    pub syntax: Vec<SyntaxFile>,
    pub grammar: Grammar,
    /// Every finding, severities as configured, sorted by file and position.
    pub diagnostics: Vec<Diagnostic>,
}

impl Analysis {
    pub fn has_errors(&self) -> bool {
        self.diagnostics
            .iter()
            .any(|d| d.severity == Severity::Error)
    }

    pub fn count(&self, severity: Severity) -> usize {
        self.diagnostics
            .iter()
            .filter(|d| d.severity == severity)
            .count()
    }
}

/// Analyses the grammar whose root file is `root` with text `text`; `use`d
/// files are read through `loader`.
pub fn analyze(root: &Path, text: &str, loader: &dyn FileLoader, config: &Config) -> Analysis {
    let lowered = lower::lower(root, text, loader);
    let mut diagnostics = lowered.diagnostics;
    check::run_checks(
        &lowered.grammar,
        &lowered.sources,
        &lowered.syntax,
        config,
        &mut diagnostics,
    );
    let mut diagnostics: Vec<Diagnostic> = diagnostics
        .into_iter()
        .filter_map(|mut d| {
            d.severity = config.severity(d.code, d.severity)?;
            Some(d)
        })
        .collect();
    diagnostics.sort_by(|a, b| {
        (
            a.location.file,
            a.location.span.start,
            a.location.span.end,
            a.code,
        )
            .cmp(&(
                b.location.file,
                b.location.span.start,
                b.location.span.end,
                b.code,
            ))
    });
    Analysis {
        sources: lowered.sources,
        syntax: lowered.syntax,
        grammar: lowered.grammar,
        diagnostics,
    }
}

/// Analyses a single self-contained text (any `use` fails as missing) with
/// the default configuration. Convenient for tests and tools.
pub fn analyze_text(text: &str) -> Analysis {
    analyze(
        Path::new("grammar.trellis"),
        text,
        &MemoryLoader::new(),
        &Config::default(),
    )
}
