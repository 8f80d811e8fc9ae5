//! Turning what the commands found into output, one module per format:
//! [`human`] for people, [`json`] for tools, [`brackets`] for treebank
//! tools, [`diff`] for `fmt --diff`. Commands build data and hand it to one of them.
//!
//! Spans in the core are byte ranges; people and editors count columns in
//! characters. Human reports hand ariadne byte offsets, JSON positions are
//! 1-based lines and 1-based character columns; both start from
//! [`position`] here.

pub mod brackets;
pub mod diff;
pub mod github;
pub mod human;
pub mod json;
pub mod junit;
pub mod sarif;

use grammar_lang::source::SourceFile;
use grammar_lang::{FileId, Location, Severity, SourceMap, Span};
use std::ops::Range;
use std::path::{Path, PathBuf};

/// The file `id` of `sources`, if there is one.
pub fn file(sources: &SourceMap, id: FileId) -> Option<&SourceFile> {
    ((id.0 as usize) < sources.len()).then(|| sources.get(id))
}

/// `span` as a byte range that is inside `text` and on character boundaries,
/// so that no span the core produces can make rendering fail.
pub fn clamp(text: &str, span: Span) -> Range<usize> {
    let mut start = (span.start as usize).min(text.len());
    while !text.is_char_boundary(start) {
        start -= 1;
    }
    let mut end = (span.end as usize).clamp(start, text.len());
    while !text.is_char_boundary(end) {
        end += 1;
    }
    start..end
}

/// A 1-based line and a 1-based column counted in characters.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Position {
    pub line: u32,
    pub column: u32,
}

/// The 1-based position of byte `offset` in `file`.
pub fn position(file: &SourceFile, offset: usize) -> Position {
    let lc = file.lines.chars(&file.text, offset);
    Position {
        line: lc.line + 1,
        column: lc.col + 1,
    }
}
/// The file path and start position of `location` in `sources`.
pub fn place(sources: &SourceMap, location: Location) -> (String, Position) {
    match file(sources, location.file) {
        Some(f) => (
            f.path.display().to_string(),
            position(f, clamp(&f.text, location.span).start),
        ),
        None => (String::new(), Position { line: 1, column: 1 }),
    }
}

/// `path` relative to the working directory `cwd` when it lies below it
/// (`Ok`), or made absolute (`Err`); `.` and `..` are resolved. Reports that
/// CI systems read name files relative to the checkout they run in.
pub fn relative_to(path: &Path, cwd: Option<&Path>) -> Result<PathBuf, PathBuf> {
    let absolute = match cwd {
        Some(cwd) if path.is_relative() => cwd.join(path),
        _ => path.to_path_buf(),
    };
    let absolute = grammar_lang::source::normalize(&absolute);
    match cwd.and_then(|cwd| absolute.strip_prefix(cwd).ok()) {
        Some(relative) => Ok(relative.to_path_buf()),
        None => Err(absolute),
    }
}

/// How many findings of each severity a run produced.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Counts {
    pub errors: usize,
    pub warnings: usize,
    pub notes: usize,
}

impl Counts {
    pub fn add(&mut self, severity: Severity) {
        match severity {
            Severity::Error => self.errors += 1,
            Severity::Warning => self.warnings += 1,
            Severity::Note => self.notes += 1,
        }
    }
}

/// `n` with the singular or plural noun: `1 error`, `2 errors`.
pub fn plural(n: usize, one: &str, many: &str) -> String {
    format!("{n} {}", if n == 1 { one } else { many })
}

/// What the renderers' tests share.
#[cfg(test)]
pub(crate) mod tests {
    use grammar_lang::{SourceMap, Span};

    /// A source map holding one file.
    pub fn one_file(path: &str, text: &str) -> SourceMap {
        let mut sources = SourceMap::new();
        sources.add(path.into(), text.into());
        sources
    }

    /// The span of the first `needle` in `text`.
    pub fn span_of(text: &str, needle: &str) -> Span {
        let start = text.find(needle).unwrap();
        Span::new(start, start + needle.len())
    }
}
