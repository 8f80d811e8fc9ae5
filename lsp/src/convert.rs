//! Translation between the core's byte spans and LSP positions, and between
//! the core's diagnostics and LSP diagnostics.
//!
//! The core counts bytes; LSP counts UTF-16 code units (the protocol's
//! default position encoding, which this server keeps). Every conversion goes
//! through [`grammar_lang::LineIndex`], which already knows both.

use grammar_lang::diagnostic::Related;
use grammar_lang::source::SourceFile;
use grammar_lang::{Analysis, Diagnostic, FileId, LineCol, Severity, Span};
use std::path::{Path, PathBuf};
use tower_lsp::lsp_types::{self as lsp, Url};

/// The LSP position of byte `offset` in `file`.
pub fn position(file: &SourceFile, offset: usize) -> lsp::Position {
    let lc = file.lines.utf16(&file.text, offset);
    lsp::Position::new(lc.line, lc.col)
}

/// The LSP range of `span` in `file`.
pub fn range(file: &SourceFile, span: Span) -> lsp::Range {
    lsp::Range::new(
        position(file, span.start as usize),
        position(file, span.end as usize),
    )
}

/// Converts many offsets of one file to LSP positions. Offsets that come in
/// increasing order on one line cost only the distance from the last one
/// (a block of thousands of alternatives on one line stays linear);
/// others cost what [`position`] does.
#[derive(Debug)]
pub struct Positions<'a> {
    file: &'a SourceFile,
    last: Option<(usize, lsp::Position)>,
}

impl<'a> Positions<'a> {
    pub fn new(file: &'a SourceFile) -> Positions<'a> {
        Positions { file, last: None }
    }

    /// The LSP position of byte `offset`.
    pub fn position(&mut self, offset: usize) -> lsp::Position {
        let offset = offset.min(self.file.text.len());
        let onward = self.last.and_then(|(at, pos)| {
            if at > offset || self.file.lines.line_of(offset) != pos.line {
                return None;
            }
            let units: usize = self
                .file
                .text
                .get(at..offset)?
                .chars()
                .map(char::len_utf16)
                .sum();
            Some(lsp::Position::new(pos.line, pos.character + units as u32))
        });
        let pos = onward.unwrap_or_else(|| position(self.file, offset));
        self.last = Some((offset, pos));
        pos
    }
}

/// The byte offset of an LSP position in `file`; positions past the end of
/// a line clamp to it, lines past the end of the text clamp to its end.
pub fn offset(file: &SourceFile, pos: lsp::Position) -> usize {
    file.lines.offset_utf16(
        &file.text,
        LineCol {
            line: pos.line,
            col: pos.character,
        },
    )
}

/// The byte span of an LSP range in `file`.
pub fn span(file: &SourceFile, range: lsp::Range) -> Span {
    let start = offset(file, range.start);
    let end = offset(file, range.end).max(start);
    Span::new(start, end)
}

/// The file-system path an editor URI stands for. `file:` URIs map to their
/// path; any other scheme (an unsaved buffer) to a path made from the URI
/// text, which never names a real file, so `use` beside it finds nothing.
pub fn uri_to_path(uri: &Url) -> PathBuf {
    match uri.to_file_path() {
        Ok(path) => grammar_lang::source::normalize(&path),
        Err(()) => PathBuf::from(format!("/{}:{}", uri.scheme(), uri.path())),
    }
}

/// The URI for a path the core reports, `None` if it cannot be expressed.
pub fn path_to_uri(path: &Path) -> Option<Url> {
    Url::from_file_path(path).ok()
}

/// The LSP severity of a core severity. Notes are the core's "shown as a
/// hint" level.
pub fn severity(severity: Severity) -> lsp::DiagnosticSeverity {
    match severity {
        Severity::Error => lsp::DiagnosticSeverity::ERROR,
        Severity::Warning => lsp::DiagnosticSeverity::WARNING,
        Severity::Note => lsp::DiagnosticSeverity::HINT,
    }
}

/// Turns one core diagnostic into an LSP diagnostic. `uri_of` gives the URI
/// of every file of the analysis (for related locations); related places in
/// files without a URI are left out.
pub fn diagnostic(
    analysis: &Analysis,
    d: &Diagnostic,
    uri_of: &dyn Fn(FileId) -> Option<Url>,
) -> lsp::Diagnostic {
    let file = analysis.sources.get(d.location.file);
    let mut message = d.message.clone();
    if let Some(help) = &d.help {
        message.push_str("\nhelp: ");
        message.push_str(help);
    }
    let related: Vec<lsp::DiagnosticRelatedInformation> = d
        .related
        .iter()
        .filter_map(|r: &Related| {
            let uri = uri_of(r.location.file)?;
            let rfile = analysis.sources.get(r.location.file);
            Some(lsp::DiagnosticRelatedInformation {
                location: lsp::Location::new(uri, range(rfile, r.location.span)),
                message: r.message.clone(),
            })
        })
        .collect();
    lsp::Diagnostic {
        range: range(file, d.location.span),
        severity: Some(severity(d.severity)),
        code: Some(lsp::NumberOrString::String(d.code.as_str().to_string())),
        code_description: None,
        source: Some("trellis".to_string()),
        message,
        related_information: (!related.is_empty()).then_some(related),
        tags: None,
        data: None,
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::SourceMap;

    fn file(text: &str) -> SourceFile {
        let mut map = SourceMap::new();
        let id = map.add(PathBuf::from("/g.trellis"), text.to_string());
        map.get(id).clone()
    }

    #[test]
    fn columns_are_utf16_code_units() {
        // "ä" is one UTF-16 unit (U+00E4, two UTF-8 bytes); "𝄞" (U+1D11E)
        // lies outside the Basic Multilingual Plane and takes a surrogate
        // pair: two units, four bytes (Unicode Standard, section 3.9).
        let f = file("A { \"Fähre\" \"𝄞\" B }\n");
        let b = f.text.find('B').unwrap();
        assert_eq!(b, 20);
        assert_eq!(position(&f, b), lsp::Position::new(0, 17));
        assert_eq!(offset(&f, lsp::Position::new(0, 17)), b);
    }

    #[test]
    fn ranges_round_trip_through_positions() {
        let f = file("start S\nS { \"Fähre\" }\n");
        let s = f.text.find("\"Fähre\"").unwrap();
        let sp = Span::new(s, s + "\"Fähre\"".len());
        let r = range(&f, sp);
        assert_eq!(r.start, lsp::Position::new(1, 4));
        assert_eq!(r.end, lsp::Position::new(1, 11));
        assert_eq!(span(&f, r), sp);
    }

    #[test]
    fn positions_past_the_end_clamp() {
        let f = file("ab\ncd");
        assert_eq!(offset(&f, lsp::Position::new(0, 99)), 2);
        assert_eq!(offset(&f, lsp::Position::new(9, 0)), 5);
    }

    #[test]
    fn file_uris_become_normalized_paths_and_back() {
        let uri = Url::parse("file:///home/k/grammars/./ferry%20kiosk.trellis").unwrap();
        let path = uri_to_path(&uri);
        assert_eq!(path, PathBuf::from("/home/k/grammars/ferry kiosk.trellis"));
        assert_eq!(
            path_to_uri(&path).unwrap().path(),
            "/home/k/grammars/ferry%20kiosk.trellis"
        );
        let untitled = Url::parse("untitled:Untitled-1").unwrap();
        assert_eq!(
            uri_to_path(&untitled),
            PathBuf::from("/untitled:Untitled-1")
        );
    }
}
