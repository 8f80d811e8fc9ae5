//! Fixtures: grammar files written with their expected diagnostics.
//!
//! A fixture is one string that holds one or more `.trellis` files, the
//! diagnostics the analysis must report as caret annotations under the
//! lines they point at, and optionally a cursor. [`check`] analyses a
//! fixture and insists that exactly the annotated diagnostics are reported:
//!
//! ```
//! trellis_test_support::check(
//!     r#"
//!     start Request
//!     Request { Ticket | Tikcet }
//!                        ^^^^^^ error undefined: did you mean `Ticket`
//!     Ticket { "ticket" }
//!     "#,
//! );
//! ```
//!
//! # The format, exactly
//!
//! 1. **Layout.** If the fixture starts with a newline, that newline is
//!    dropped. The smallest number of leading spaces of its non-blank lines
//!    is then removed from every line (blank lines lose what they have, up
//!    to that number), so a fixture may be indented like the code around
//!    it. Only spaces count as indentation, not tabs.
//! 2. **Files.** A line that reads `=== some/path.trellis ===` (spaces
//!    around it allowed) starts a new file with that path. The lines before
//!    the first header, or all lines when there is no header, are the file
//!    `grammar.trellis`; that file is left out when there is a header and
//!    it is blank. The first file is the root the analysis starts from.
//! 3. **Annotations.** A line whose first non-blank character is `^` is an
//!    annotation about the nearest preceding line of the same file that is
//!    not itself an annotation (a header ends that search: an annotation
//!    straight after a header is an error). Annotation lines are removed
//!    from the file; every other line is kept byte for byte. An annotation
//!    reads `CARETS SEVERITY CODE`, `CARETS SEVERITY CODE: FRAGMENTS` or
//!    `CARETS SEVERITY CODE == MESSAGE`:
//!    * a run of n ≥ 1 carets marks the n characters above it, columns
//!      counted in characters (not bytes), so `Fähre` is five columns wide;
//!      the markers of 4. and 5. (`$0`, `[[`, `]]`) on the annotated line
//!      are not counted;
//!    * a single caret directly followed by `0` (`^0`) marks the empty span
//!      at its column;
//!    * a span that runs past the end of its line (a span over several
//!      lines) is matched by its start and by its end clipped to the end of
//!      that line, so its carets run to the last character of the line;
//!      carets past the end of the line are clipped the same way;
//!    * `SEVERITY` is `error`, `warning` or `note`; `CODE` is a stable code
//!      of [`grammar_lang::Code`] (`undefined`, `sum-not-one`, …);
//!    * `FRAGMENTS` (everything after the first `:`, trimmed) is text the
//!      diagnostic's message must contain; several fragments separated by
//!      `…` must all appear, in that order;
//!    * `MESSAGE` (everything after `==`, trimmed) is the whole message.
//!
//!    Several annotation lines may follow one line.
//! 4. **Cursor.** `$0` in a (non-annotation) line marks a place and is
//!    removed from the text; [`Fixture::cursor`] records its file and byte
//!    offset ([`Fixture::cursor_offset`], [`Fixture::cursor_file`]). A
//!    fixture has at most one `$0`, or two in the same file, which mark a
//!    range (first to second, [`Fixture::cursor_range`]).
//! 5. **Marked ranges.** `[[` and `]]` in a (non-annotation) line mark a
//!    range of that file, from the end of `[[` to the start of `]]`; both
//!    are removed from the text, and [`FixtureFile::ranges`] holds the byte
//!    ranges in the order written ([`FixtureFile::marked`] their texts).
//!    Any number of ranges may be marked, in every file, for answers that
//!    are several spans (references, highlights, folds); a range may span
//!    lines and may be empty (`[[]]`), but ranges do not nest. A `$0` may
//!    stand inside a marked range (`[[Art$0]]`).
//!
//! A grammar that needs the text `$0`, `[[` or `]]` cannot be written as a
//! fixture.
//!
//! A malformed fixture (an unknown severity or code, an annotation without
//! a line above it, a third `$0`, an unclosed or nested `[[`) panics with a
//! message that names the fixture line (1-based, counting the text as
//! written).
//!
//! Edits an editor feature answers with are checked by applying them to
//! the text and comparing the result with the text expected:
//! [`apply_edits`].
//!
//! # Positions for the Language Server Protocol
//!
//! Offsets and annotation columns are in bytes and characters; LSP counts
//! columns in UTF-16 code units. [`FixtureFile::utf16`] gives the position
//! of a byte offset (of the cursor, of a marked range's ends) and
//! [`FixtureFile::utf16_columns`] the columns of an annotation, so that a
//! test of the language server can compare what it is told with a fixture.

use grammar_lang::source::normalize;
use grammar_lang::{
    analyze, Analysis, Code, Config, Diagnostic, LineCol, LineIndex, MemoryLoader, Severity,
};
use std::fmt::Write as _;
use std::ops::Range;
use std::path::{Path, PathBuf};

/// The path of a fixture's text before any `=== path ===` header.
pub const DEFAULT_PATH: &str = "grammar.trellis";

/// One or more files with their expected diagnostics and an optional cursor.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Fixture {
    /// In the order written; the first is the root of the analysis.
    pub files: Vec<FixtureFile>,
    pub cursor: Option<Cursor>,
}

/// One file of a fixture.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FixtureFile {
    pub path: PathBuf,
    /// The file's lines as written, without annotation lines and `$0` markers.
    pub text: String,
    /// The diagnostics expected in this file, in the order written.
    pub annotations: Vec<Annotation>,
    /// The byte ranges marked `[[…]]` in this file's text, in order.
    pub ranges: Vec<Range<usize>>,
}

/// One expected diagnostic, written as a caret line.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Annotation {
    /// The 0-based line of the file's text the diagnostic starts on.
    pub line: usize,
    /// 0-based columns in characters, half-open; empty for `^0`.
    pub columns: Range<usize>,
    pub severity: Severity,
    pub code: Code,
    /// What the message must say, if the annotation says anything about it.
    pub message: Option<Message>,
    /// The 1-based line of the fixture text the annotation is written on.
    pub fixture_line: usize,
}

/// What an annotation expects of a diagnostic's message.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Message {
    /// `: a…b`: the message contains these fragments, in this order.
    Contains(Vec<String>),
    /// `== text`: the message is exactly this.
    Is(String),
}

impl Message {
    /// Whether `message` says what is expected.
    pub fn accepts(&self, message: &str) -> bool {
        match self {
            Message::Is(expected) => message == expected,
            Message::Contains(fragments) => {
                let mut rest = message;
                fragments.iter().all(|f| match rest.find(f.as_str()) {
                    Some(at) => {
                        rest = &rest[at + f.len()..];
                        true
                    }
                    None => false,
                })
            }
        }
    }
}

impl std::fmt::Display for Message {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Message::Contains(fragments) => write!(f, ": {}", fragments.join("…")),
            Message::Is(message) => write!(f, " == {message}"),
        }
    }
}

/// Where `$0` stood.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Cursor {
    /// Index into [`Fixture::files`].
    pub file: usize,
    /// Byte offset into that file's text (the first marker's).
    pub offset: usize,
    /// From the first to the second marker, when there are two.
    pub range: Option<Range<usize>>,
}

/// A file while its lines are being collected.
struct Draft {
    path: PathBuf,
    /// Lines as written (with their markers), each with its line ending.
    lines: Vec<String>,
    /// The fixture line each of `lines` is written on.
    fixture_lines: Vec<usize>,
    /// (index into `lines`, the annotation line, its fixture line).
    annotations: Vec<(usize, String, usize)>,
}

impl Draft {
    fn new(path: impl Into<PathBuf>) -> Self {
        Draft {
            path: path.into(),
            lines: Vec::new(),
            fixture_lines: Vec::new(),
            annotations: Vec::new(),
        }
    }
}

#[track_caller]
fn malformed(fixture_line: usize, line: &str, problem: &str) -> ! {
    panic!("fixture line {fixture_line}: {problem}\n  | {line}")
}

impl Fixture {
    /// Reads a fixture written in the format described in the [module
    /// documentation](self); panics, naming the fixture line, if it is
    /// malformed.
    #[track_caller]
    pub fn parse(text: &str) -> Fixture {
        let (body, first_line) = match text.strip_prefix('\n') {
            Some(rest) => (rest, 2),
            None => (text, 1),
        };
        let raw: Vec<&str> = body.split_inclusive('\n').collect();
        let indent = raw
            .iter()
            .filter(|l| !l.trim().is_empty())
            .map(|l| leading_spaces(l))
            .min()
            .unwrap_or(0);

        let mut drafts = vec![Draft::new(DEFAULT_PATH)];
        for (i, raw_line) in raw.iter().enumerate() {
            let fixture_line = first_line + i;
            let line = &raw_line[leading_spaces(raw_line).min(indent)..];
            let content = line.trim_end_matches(['\n', '\r']);
            if let Some(path) = header(content) {
                drafts.push(Draft::new(path));
                continue;
            }
            let draft = drafts.last_mut().expect("there is always a draft");
            if content.trim_start().starts_with('^') {
                let Some(target) = draft.lines.len().checked_sub(1) else {
                    malformed(
                        fixture_line,
                        content,
                        "an annotation needs a line of its file above it",
                    );
                };
                draft
                    .annotations
                    .push((target, content.to_string(), fixture_line));
                continue;
            }
            draft.lines.push(line.to_string());
            draft.fixture_lines.push(fixture_line);
        }
        if drafts.len() > 1
            && drafts[0].annotations.is_empty()
            && drafts[0].lines.iter().all(|l| l.trim().is_empty())
        {
            drafts.remove(0);
        }

        let mut markers: Vec<(usize, usize)> = Vec::new();
        let mut files = Vec::new();
        for (index, draft) in drafts.into_iter().enumerate() {
            let mut text = String::new();
            let mut ranges = Vec::new();
            // The start of the range opened by `[[` and not yet closed, and
            // the fixture line it was opened on.
            let mut open: Option<(usize, usize)> = None;
            // Per line: the character columns (in the clean line) where
            // markers were removed.
            let mut removed: Vec<Vec<usize>> = Vec::new();
            for (line, &fixture_line) in draft.lines.iter().zip(&draft.fixture_lines) {
                let mut columns = Vec::new();
                let mut rest = line.as_str();
                while let Some((at, marker)) = next_marker(rest) {
                    text.push_str(&rest[..at]);
                    let line_start = text.rfind('\n').map_or(0, |n| n + 1);
                    columns.push(text[line_start..].chars().count());
                    let offset = text.len();
                    match (marker, open) {
                        ("$0", _) => markers.push((index, offset)),
                        ("[[", None) => open = Some((offset, fixture_line)),
                        ("]]", Some((start, _))) => {
                            ranges.push(start..offset);
                            open = None;
                        }
                        ("[[", Some(_)) => malformed(
                            fixture_line,
                            line.trim_end(),
                            "`[[` inside a marked range: marked ranges do not nest",
                        ),
                        _ => malformed(
                            fixture_line,
                            line.trim_end(),
                            "`]]` without a `[[` before it",
                        ),
                    }
                    rest = &rest[at + 2..];
                }
                text.push_str(rest);
                removed.push(columns);
            }
            if let Some((_, fixture_line)) = open {
                malformed(
                    fixture_line,
                    "[[",
                    "a `[[` without a `]]` after it in the same file",
                );
            }
            let clean_lines: Vec<&str> = text.split('\n').collect();
            let annotations = draft
                .annotations
                .iter()
                .map(|(target, written, fixture_line)| {
                    annotation(
                        *target,
                        written,
                        *fixture_line,
                        &removed[*target],
                        line_chars(clean_lines[*target]),
                    )
                })
                .collect();
            files.push(FixtureFile {
                path: draft.path,
                text,
                annotations,
                ranges,
            });
        }

        let cursor = match markers.as_slice() {
            [] => None,
            &[(file, offset)] => Some(Cursor {
                file,
                offset,
                range: None,
            }),
            &[(file, start), (other, end)] if file == other => Some(Cursor {
                file,
                offset: start,
                range: Some(start..end),
            }),
            _ => panic!(
                "a fixture has at most one `$0`, or two in the same file for a range; found {} in files {:?}",
                markers.len(),
                markers.iter().map(|(f, _)| f).collect::<Vec<_>>()
            ),
        };
        Fixture { files, cursor }
    }

    /// The byte offset of the cursor (the first `$0`) in its file; panics
    /// if the fixture has no `$0`.
    #[track_caller]
    pub fn cursor_offset(&self) -> usize {
        self.expect_cursor().offset
    }

    /// The range between the two `$0` markers; panics unless there are two.
    #[track_caller]
    pub fn cursor_range(&self) -> Range<usize> {
        self.expect_cursor()
            .range
            .clone()
            .expect("the fixture marks a range with two `$0`")
    }

    /// The file the cursor is in; panics if the fixture has no `$0`.
    #[track_caller]
    pub fn cursor_file(&self) -> &FixtureFile {
        &self.files[self.expect_cursor().file]
    }

    #[track_caller]
    fn expect_cursor(&self) -> &Cursor {
        self.cursor.as_ref().expect("the fixture has a `$0` cursor")
    }

    /// The first file, where the analysis starts.
    pub fn root(&self) -> &FixtureFile {
        &self.files[0]
    }

    /// The file with path `path`; panics if the fixture has none.
    #[track_caller]
    pub fn file(&self, path: impl AsRef<Path>) -> &FixtureFile {
        let path = path.as_ref();
        self.index_of(path)
            .map(|i| &self.files[i])
            .unwrap_or_else(|| panic!("the fixture has no file {}", path.display()))
    }

    /// The index of the file whose path is `path` (compared normalised).
    pub fn index_of(&self, path: &Path) -> Option<usize> {
        let path = normalize(path);
        self.files.iter().position(|f| normalize(&f.path) == path)
    }

    /// A loader that serves every file of the fixture.
    pub fn loader(&self) -> MemoryLoader {
        self.files.iter().fold(MemoryLoader::new(), |loader, f| {
            loader.with(f.path.clone(), f.text.clone())
        })
    }

    /// Analyses the root file, reading the other files through [`Self::loader`].
    pub fn analyze(&self, config: &Config) -> Analysis {
        let root = self.root();
        analyze(&root.path, &root.text, &self.loader(), config)
    }
}

impl FixtureFile {
    /// The texts of the ranges marked `[[…]]`, in order.
    pub fn marked(&self) -> Vec<&str> {
        self.ranges.iter().map(|r| &self.text[r.clone()]).collect()
    }

    /// The 0-based line and UTF-16 column (as the Language Server Protocol
    /// counts) of byte `offset` of the text.
    pub fn utf16(&self, offset: usize) -> LineCol {
        LineIndex::new(&self.text).utf16(&self.text, offset)
    }

    /// The UTF-16 positions of the start and end of byte range `range`.
    pub fn utf16_range(&self, range: &Range<usize>) -> Range<LineCol> {
        self.utf16(range.start)..self.utf16(range.end)
    }

    /// The columns of `annotation` (an annotation of this file) in UTF-16
    /// code units instead of characters, on the same line.
    pub fn utf16_columns(&self, annotation: &Annotation) -> Range<usize> {
        let line = self.line(annotation.line);
        let units = |column: usize| line.chars().take(column).map(char::len_utf16).sum();
        units(annotation.columns.start)..units(annotation.columns.end)
    }

    /// The length of 0-based line `line` in UTF-16 code units (without its
    /// line ending): where an annotation of a span that runs past the line
    /// ends.
    pub fn utf16_line_len(&self, line: usize) -> usize {
        self.line(line).chars().map(char::len_utf16).sum()
    }

    /// 0-based line `line` of the text without its line ending (empty past
    /// the last line).
    pub fn line(&self, line: usize) -> &str {
        self.text
            .split('\n')
            .nth(line)
            .unwrap_or("")
            .trim_end_matches('\r')
    }
}

/// `text` with `edits` applied: each replaces a byte range of the original
/// `text` with new text. The edits may come in any order; they must not
/// overlap (two insertions at the same offset are applied in the order
/// given). Panics on overlapping edits or a range that is not in `text`.
#[track_caller]
pub fn apply_edits<R, S>(text: &str, edits: impl IntoIterator<Item = (R, S)>) -> String
where
    R: Into<Range<usize>>,
    S: AsRef<str>,
{
    let mut edits: Vec<(Range<usize>, S)> = edits.into_iter().map(|(r, s)| (r.into(), s)).collect();
    // Stable: insertions at one offset keep their order.
    edits.sort_by_key(|(r, _)| (r.start, r.end));
    let mut out = String::with_capacity(text.len());
    let mut done = 0;
    for (range, new_text) in &edits {
        assert!(
            range.start >= done,
            "the edit of {range:?} overlaps the edit before it (which ends at {done})"
        );
        out.push_str(&text[done..range.start]);
        out.push_str(new_text.as_ref());
        done = range.end;
    }
    out.push_str(&text[done..]);
    out
}

/// The first marker (`$0`, `[[` or `]]`) in `text`: its byte offset and
/// the marker.
fn next_marker(text: &str) -> Option<(usize, &'static str)> {
    ["$0", "[[", "]]"]
        .into_iter()
        .filter_map(|m| text.find(m).map(|at| (at, m)))
        .min_by_key(|&(at, _)| at)
}

/// The number of leading spaces of `line`.
fn leading_spaces(line: &str) -> usize {
    line.len() - line.trim_start_matches(' ').len()
}

/// The path of a `=== path ===` header line.
fn header(content: &str) -> Option<&str> {
    let path = content
        .trim()
        .strip_prefix("=== ")?
        .strip_suffix(" ===")?
        .trim();
    (!path.is_empty()).then_some(path)
}

fn line_chars(line: &str) -> usize {
    line.trim_end_matches('\r').chars().count()
}

/// Reads one annotation line about line `target`, whose `$0` markers stood
/// at the clean columns `removed`.
#[track_caller]
fn annotation(
    target: usize,
    written: &str,
    fixture_line: usize,
    removed: &[usize],
    line_len: usize,
) -> Annotation {
    let trimmed = written.trim_start();
    let start = written[..written.len() - trimmed.len()].chars().count();
    let carets = trimmed.len() - trimmed.trim_start_matches('^').len();
    let mut after = &trimmed[carets..];
    let width = if carets == 1 && after.starts_with('0') {
        after = &after[1..];
        0
    } else {
        carets
    };
    if !after.starts_with([' ', '\t']) {
        malformed(
            fixture_line,
            written,
            "the carets (or `^0`) must be followed by a space and `SEVERITY CODE`",
        );
    }
    let (head, message) = match after.find([':', '=']) {
        Some(at) if after[at..].starts_with(':') => (
            &after[..at],
            Some(Message::Contains(
                after[at + 1..]
                    .split('…')
                    .map(|f| f.trim().to_string())
                    .collect(),
            )),
        ),
        Some(at) if after[at..].starts_with("==") => (
            &after[..at],
            Some(Message::Is(after[at + 2..].trim().to_string())),
        ),
        Some(_) => malformed(
            fixture_line,
            written,
            "a message is given as `: fragment` or `== whole message`",
        ),
        None => (after, None),
    };
    let words: Vec<&str> = head.split_whitespace().collect();
    let [severity, code] = words.as_slice() else {
        malformed(
            fixture_line,
            written,
            "expected `SEVERITY CODE`, `SEVERITY CODE: fragment` or `SEVERITY CODE == message` after the carets",
        );
    };
    let Some(severity) = Severity::parse(severity) else {
        malformed(
            fixture_line,
            written,
            &format!("unknown severity `{severity}` (error, warning or note)"),
        );
    };
    let Some(code) = Code::parse(code) else {
        let known: Vec<&str> = Code::ALL.iter().map(|c| c.as_str()).collect();
        malformed(
            fixture_line,
            written,
            &format!("unknown code `{code}`; the codes are {}", known.join(", ")),
        );
    };
    if let Some(Message::Contains(fragments)) = &message {
        if fragments.iter().any(String::is_empty) {
            malformed(fixture_line, written, "an empty message fragment");
        }
    }
    let clean = |column: usize| {
        // A marker that stood before `column` (in the written line) took
        // two columns that the clean line does not have.
        let mut clean = column;
        for (k, &at) in removed.iter().enumerate() {
            let written_at = at + 2 * k;
            if written_at + 2 <= column {
                clean -= 2;
            } else if written_at < column {
                clean = at;
            }
        }
        clean
    };
    let end = clean(start + width);
    let start = clean(start);
    Annotation {
        line: target,
        columns: start..end.min(line_len).max(start),
        severity,
        code,
        message,
        fixture_line,
    }
}

/// A diagnostic as an annotation would state it.
struct Reported<'a> {
    path: PathBuf,
    /// Index into the fixture's files, if the file is one of them.
    file: Option<usize>,
    line: usize,
    columns: Range<usize>,
    diagnostic: &'a Diagnostic,
}

impl Reported<'_> {
    fn matches(&self, file: usize, a: &Annotation) -> bool {
        let d = self.diagnostic;
        self.file == Some(file)
            && self.line == a.line
            && self.columns == a.columns
            && d.severity == a.severity
            && d.code == a.code
            && a.message.as_ref().is_none_or(|m| m.accepts(&d.message))
    }

    fn describe(&self) -> String {
        let d = self.diagnostic;
        format!(
            "{}:{}:{}-{} {} {}: {}",
            self.path.display(),
            self.line + 1,
            self.columns.start + 1,
            self.columns.end + 1,
            d.severity,
            d.code,
            d.message
        )
    }
}

fn reported<'a>(fixture: &Fixture, analysis: &'a Analysis) -> Vec<Reported<'a>> {
    analysis
        .diagnostics
        .iter()
        .map(|d| {
            let source = analysis.sources.get(d.location.file);
            let span = d.location.span;
            let start = source.lines.chars(&source.text, span.start as usize);
            let line = start.line as usize;
            let line_len = line_chars(source.text.split('\n').nth(line).unwrap_or(""));
            let end = if source.lines.line_of(span.end as usize) == start.line {
                (source.lines.chars(&source.text, span.end as usize).col as usize).min(line_len)
            } else {
                line_len
            };
            let start = start.col as usize;
            Reported {
                path: source.path.clone(),
                file: fixture.index_of(&source.path),
                line,
                columns: start..end.max(start),
                diagnostic: d,
            }
        })
        .collect()
}

/// Asserts that `analysis` reported exactly the diagnostics annotated in
/// `fixture`: same file, line, columns, severity and code, with a message
/// that contains the annotation's fragment; nothing missing, nothing extra.
///
/// On a mismatch it panics with the missing and the unexpected diagnostics
/// and the fixture annotated with what was actually reported, ready to be
/// pasted into the test once it is judged right.
#[track_caller]
pub fn assert_diagnostics(fixture: &Fixture, analysis: &Analysis) {
    let reported = reported(fixture, analysis);
    let mut taken = vec![false; reported.len()];
    let mut missing = Vec::new();
    for (index, file) in fixture.files.iter().enumerate() {
        for a in &file.annotations {
            let found = reported
                .iter()
                .enumerate()
                .find(|(i, r)| !taken[*i] && r.matches(index, a));
            match found {
                Some((i, _)) => taken[i] = true,
                None => missing.push((file, a)),
            }
        }
    }
    let unexpected: Vec<&Reported> = reported
        .iter()
        .zip(&taken)
        .filter(|(_, taken)| !**taken)
        .map(|(r, _)| r)
        .collect();
    if missing.is_empty() && unexpected.is_empty() {
        return;
    }
    let mut report = String::from("the diagnostics differ from the fixture's annotations\n");
    if !missing.is_empty() {
        report.push_str("\nmissing (annotated, not reported):\n");
        for (file, a) in &missing {
            let _ = writeln!(
                report,
                "  fixture line {}: {}:{}:{}-{} {} {}{}",
                a.fixture_line,
                file.path.display(),
                a.line + 1,
                a.columns.start + 1,
                a.columns.end + 1,
                a.severity,
                a.code,
                a.message.as_ref().map_or(String::new(), |m| m.to_string())
            );
        }
    }
    if !unexpected.is_empty() {
        report.push_str("\nunexpected (reported, not annotated):\n");
        for r in &unexpected {
            let _ = writeln!(report, "  {}", r.describe());
        }
    }
    report.push_str("\nthe fixture annotated with what was reported:\n\n");
    report.push_str(&render(fixture, &reported));
    panic!("{report}");
}

/// The fixture written back with the reported diagnostics as annotations
/// (full messages) and its `$0` and `[[…]]` markers in place.
fn render(fixture: &Fixture, reported: &[Reported]) -> String {
    let mut out = String::new();
    let headers = fixture.files.len() > 1 || fixture.root().path != Path::new(DEFAULT_PATH);
    for (index, file) in fixture.files.iter().enumerate() {
        if headers {
            let _ = writeln!(out, "=== {} ===", file.path.display());
        }
        // (offset, rank, marker): at one offset, ranges close, then empty
        // ranges open and close, then ranges open, then the cursor.
        let mut markers: Vec<(usize, u8, &str)> = match &fixture.cursor {
            Some(c) if c.file == index => match &c.range {
                Some(r) => vec![(r.start, 4, "$0"), (r.end, 4, "$0")],
                None => vec![(c.offset, 4, "$0")],
            },
            _ => Vec::new(),
        };
        for r in &file.ranges {
            let (start_rank, end_rank) = if r.is_empty() { (1, 2) } else { (3, 0) };
            markers.extend([(r.start, start_rank, "[["), (r.end, end_rank, "]]")]);
        }
        markers.sort_by_key(|&(offset, rank, _)| (offset, rank));
        let lines: Vec<&str> = file.text.split('\n').collect();
        let mut line_start = 0;
        for (n, line) in lines.iter().enumerate() {
            let last = n + 1 == lines.len();
            let here: Vec<&Reported> = reported
                .iter()
                .filter(|r| r.file == Some(index) && r.line == n)
                .collect();
            if last && line.is_empty() && here.is_empty() {
                break;
            }
            // The line with its markers, and the clean columns they stand at.
            let mut written = String::new();
            let mut marker_columns = Vec::new();
            for (i, c) in line.char_indices() {
                for (_, _, marker) in markers.iter().filter(|m| m.0 == line_start + i) {
                    marker_columns.push(written.chars().count() - 2 * marker_columns.len());
                    written.push_str(marker);
                }
                written.push(c);
            }
            for (_, _, marker) in markers.iter().filter(|&&(m, _, _)| {
                m == line_start + line.len() && (!last || m == file.text.len())
            }) {
                marker_columns.push(written.chars().count() - 2 * marker_columns.len());
                written.push_str(marker);
            }
            out.push_str(&written);
            out.push('\n');
            // A span starts after the markers at its start column and ends
            // before the markers at its end column.
            let shift = |column: usize, at_end: bool| {
                let before = marker_columns
                    .iter()
                    .filter(|&&m| m < column || (m == column && !at_end))
                    .count();
                column + 2 * before
            };
            for r in here {
                let d = r.diagnostic;
                let start = shift(r.columns.start, false);
                let carets = if r.columns.is_empty() {
                    "^0".to_string()
                } else {
                    "^".repeat(shift(r.columns.end, true) - start)
                };
                let _ = writeln!(
                    out,
                    "{}{carets} {} {} == {}",
                    " ".repeat(start),
                    d.severity,
                    d.code,
                    d.message.replace('\n', "\\n")
                );
            }
            line_start += line.len() + 1;
        }
    }
    let elsewhere: Vec<&Reported> = reported.iter().filter(|r| r.file.is_none()).collect();
    if !elsewhere.is_empty() {
        out.push_str("\n(in files that are not part of the fixture)\n");
        for r in elsewhere {
            let _ = writeln!(out, "  {}", r.describe());
        }
    }
    out
}

/// Analyses the fixture's first file with the default configuration
/// (its other files served by a [`MemoryLoader`]), asserts that exactly
/// the annotated diagnostics are reported ([`assert_diagnostics`]), and
/// returns the analysis for further assertions.
#[track_caller]
pub fn check(fixture: &str) -> Analysis {
    check_with(&Config::default(), fixture)
}

/// [`check`] with the configuration `config`.
#[track_caller]
pub fn check_with(config: &Config, fixture: &str) -> Analysis {
    let fixture = Fixture::parse(fixture);
    let analysis = fixture.analyze(config);
    assert_diagnostics(&fixture, &analysis);
    analysis
}

#[cfg(test)]
mod tests {
    use super::*;

    fn panic_message(f: impl FnOnce() + std::panic::UnwindSafe) -> String {
        let err = std::panic::catch_unwind(f).expect_err("the call panics");
        err.downcast_ref::<String>()
            .cloned()
            .or_else(|| err.downcast_ref::<&str>().map(|s| s.to_string()))
            .unwrap_or_default()
    }

    #[test]
    fn a_text_without_header_is_the_one_file_grammar_trellis() {
        let f = Fixture::parse("start S\nS { \"x\" }\n");
        assert_eq!(f.files.len(), 1);
        assert_eq!(f.root().path, Path::new("grammar.trellis"));
        assert_eq!(f.root().text, "start S\nS { \"x\" }\n");
        assert_eq!(f.cursor, None);
    }

    #[test]
    fn headers_start_files_and_text_before_the_first_is_grammar_trellis() {
        let f = Fixture::parse(
            "start S\nuse \"lex/words.trellis\"\n=== lex/words.trellis ===\nS { \"x\" }\n  ===  other.trellis  ===\nT { \"t\" }",
        );
        let paths: Vec<&Path> = f.files.iter().map(|f| f.path.as_path()).collect();
        assert_eq!(
            paths,
            [
                Path::new("grammar.trellis"),
                Path::new("lex/words.trellis"),
                Path::new("other.trellis")
            ]
        );
        assert_eq!(f.files[0].text, "start S\nuse \"lex/words.trellis\"\n");
        assert_eq!(f.file("lex/words.trellis").text, "S { \"x\" }\n");
        assert_eq!(f.file("./other.trellis").text, "T { \"t\" }");
        assert_eq!(
            f.loader().files.len(),
            3,
            "the loader serves every file, the root too"
        );
    }

    #[test]
    fn a_blank_preamble_before_the_first_header_is_no_file() {
        let f = Fixture::parse("\n=== main.trellis ===\nstart S\n");
        assert_eq!(f.files.len(), 1);
        assert_eq!(f.root().path, Path::new("main.trellis"));
        assert_eq!(f.root().text, "start S\n");
    }

    #[test]
    fn common_indentation_and_the_first_newline_are_removed() {
        let f = Fixture::parse("\n    start S\n\n    S {\n      \"x\"\n    }\n    ");
        assert_eq!(f.root().text, "start S\n\nS {\n  \"x\"\n}\n");
    }

    #[test]
    fn the_cursor_is_a_byte_offset_into_its_file_and_is_removed() {
        let f =
            Fixture::parse("=== a.trellis ===\nA { \"ä\" }\n=== b.trellis ===\nB { \"ü\" $0C }\n");
        let cursor = f.cursor.clone().expect("a cursor");
        assert_eq!(cursor.file, 1);
        assert_eq!(f.files[1].text, "B { \"ü\" C }\n");
        assert_eq!(&f.files[1].text[cursor.offset..], "C }\n");
        assert_eq!(cursor.range, None);
    }

    #[test]
    fn two_cursor_markers_in_one_file_are_a_range() {
        let f = Fixture::parse("start S\nS { $0Ticket$0 }\n");
        let cursor = f.cursor.clone().expect("a cursor");
        let range = cursor.range.expect("a range");
        assert_eq!(&f.root().text[range], "Ticket");
        assert_eq!(f.root().text, "start S\nS { Ticket }\n");
    }

    #[test]
    fn cursor_offset_range_and_file_read_the_cursor_markers() {
        let f =
            Fixture::parse("=== a.trellis ===\nA\n=== b.trellis ===\nFähre { $0Rückfahrt$0 }\n");
        assert_eq!(f.cursor_file().path, Path::new("b.trellis"));
        assert_eq!(f.cursor_offset(), "Fähre { ".len());
        assert_eq!(&f.cursor_file().text[f.cursor_range()], "Rückfahrt");
    }

    #[test]
    #[should_panic(expected = "the fixture has a `$0` cursor")]
    fn cursor_offset_without_a_cursor_panics() {
        Fixture::parse("start S\n").cursor_offset();
    }

    #[test]
    fn marked_ranges_are_byte_ranges_in_order_in_every_file_and_are_removed() {
        let f = Fixture::parse(
            "=== a.trellis ===\nstart [[Fähre]]\n[[Fähre]] { [[]]\"ü\" $0[[Bötchen]] }\n=== b.trellis ===\n[[Bötchen {\n  \"b\"\n}]]\n",
        );
        let a = f.file("a.trellis");
        assert_eq!(a.text, "start Fähre\nFähre { \"ü\" Bötchen }\n");
        assert_eq!(a.marked(), ["Fähre", "Fähre", "", "Bötchen"]);
        assert_eq!(a.ranges[0], 6..12, "byte offsets: `ä` is two bytes");
        assert_eq!(a.ranges[2], 22..22, "`[[]]` is an empty range");
        assert_eq!(
            &a.text[f.cursor_offset()..],
            "Bötchen }\n",
            "a cursor may stand at a range"
        );
        let b = f.file("b.trellis");
        assert_eq!(
            b.marked(),
            ["Bötchen {\n  \"b\"\n}"],
            "a range may span lines"
        );
        assert_eq!(b.text, "Bötchen {\n  \"b\"\n}\n");
    }

    #[test]
    fn annotation_columns_do_not_count_range_markers() {
        let f = Fixture::parse("S { [[Tiket]] $0T }\n                ^ error undefined\n");
        assert_eq!(f.root().text, "S { Tiket T }\n");
        assert_eq!(
            f.root().annotations[0].columns,
            10..11,
            "`T` once the markers are removed"
        );
    }

    #[test]
    #[should_panic(expected = "fixture line 2: a `[[` without a `]]` after it")]
    fn an_unclosed_range_names_its_fixture_line() {
        Fixture::parse("start S\nS { [[T }\n=== b.trellis ===\n]]\n");
    }

    #[test]
    #[should_panic(expected = "fixture line 1: `[[` inside a marked range")]
    fn nested_ranges_are_refused() {
        Fixture::parse("S { [[T [[U]] ]] }\n");
    }

    #[test]
    #[should_panic(expected = "fixture line 1: `]]` without a `[[`")]
    fn a_range_end_without_a_start_is_refused() {
        Fixture::parse("S { T ]] }\n");
    }

    #[test]
    fn utf16_positions_count_surrogate_pairs_as_two_units() {
        // `ä` is one unit and two bytes; `𝄞` (U+1D11E) is a surrogate pair:
        // two units, four bytes, one character.
        let f = Fixture::parse(
            "start S\nS { \"Fähre\" \"𝄞\" [[$0Ziel]] | \"x\" }\n                    ^^^^ error undefined\n",
        );
        let file = f.root();
        assert_eq!(file.ranges[0], 28..32, "bytes");
        assert_eq!(file.utf16(f.cursor_offset()), LineCol { line: 1, col: 17 });
        assert_eq!(
            file.utf16_range(&file.ranges[0]),
            LineCol { line: 1, col: 17 }..LineCol { line: 1, col: 21 }
        );
        let a = &file.annotations[0];
        assert_eq!(a.columns, 16..20, "characters");
        assert_eq!(file.utf16_columns(a), 17..21);
        assert_eq!(
            file.utf16_line_len(1),
            29,
            "28 characters, one of them two units"
        );
        assert_eq!(file.line(1), "S { \"Fähre\" \"𝄞\" Ziel | \"x\" }");
        assert_eq!(file.utf16_line_len(5), 0, "past the last line");
    }

    #[test]
    fn apply_edits_replaces_ranges_of_the_original_text_in_any_order() {
        let text = "Fähre { \"Rückfahrt\" }";
        let edits = [
            (text.len()..text.len(), "\n"),
            (0..6, "Schiff"),
            (10..20, "Hinfahrt"),
            (text.len()..text.len(), "# Ende"),
        ];
        assert_eq!(
            apply_edits(text, edits),
            "Schiff { \"Hinfahrt\" }\n# Ende",
            "insertions at one offset keep their order"
        );
        assert_eq!(apply_edits(text, Vec::<(Range<usize>, &str)>::new()), text);
    }

    #[test]
    #[should_panic(expected = "overlaps the edit before it")]
    fn apply_edits_refuses_overlapping_edits() {
        apply_edits("abcdef", [(0..3, "x"), (2..4, "y")]);
    }

    #[test]
    fn the_reannotated_fixture_keeps_marked_ranges() {
        let message = panic_message(|| {
            check("start S\nS { [[\"s\"]] | [[]]$0[[T]] }\n");
        });
        assert!(
            message.ends_with("start S\nS { [[\"s\"]] | [[]][[$0T]] }\n                      ^ error undefined == `T` is used but has no block; did you mean `S`?\n"),
            "{message}"
        );
    }

    #[test]
    #[should_panic(expected = "at most one `$0`")]
    fn cursor_markers_in_two_files_are_refused() {
        Fixture::parse("A $0\n=== b.trellis ===\nB $0\n");
    }

    #[test]
    fn annotations_are_removed_and_every_other_byte_is_kept() {
        let text = "start S\r\n  S {  \"x\"\t}  \r\n    ^ error syntax\n# end\u{a0}\n";
        let f = Fixture::parse(text);
        assert_eq!(
            f.root().text,
            "start S\r\n  S {  \"x\"\t}  \r\n# end\u{a0}\n"
        );
        assert_eq!(f.root().annotations.len(), 1);
        assert_eq!(f.root().annotations[0].line, 1);
    }

    #[test]
    fn annotation_columns_count_characters_not_bytes() {
        let f = Fixture::parse(
            "start Fähre\nFähre { \"ü\" Bötchen }\n            ^^^^^^^ error undefined: `Bötchen` is used\n            ^0 note leaky\n",
        );
        let a = &f.root().annotations;
        assert_eq!(a.len(), 2, "several annotations may follow one line");
        assert_eq!(
            a[0],
            Annotation {
                line: 1,
                columns: 12..19,
                severity: Severity::Error,
                code: Code::Undefined,
                message: Some(Message::Contains(vec!["`Bötchen` is used".into()])),
                fixture_line: 3,
            }
        );
        assert_eq!(a[1].columns, 12..12, "`^0` is the empty span");
        assert_eq!(a[1].severity, Severity::Note);
        assert_eq!(a[1].message, None);
        assert_eq!(a[1].fixture_line, 4);
    }

    #[test]
    fn an_annotation_skips_the_annotations_above_it_and_ignores_cursor_markers() {
        let f =
            Fixture::parse("S { $0Tiket }\n      ^^^^^ error undefined\n      ^ warning arity\n");
        let a = &f.root().annotations;
        assert_eq!(a[0].line, 0);
        assert_eq!(a[0].columns, 4..9, "`Tiket` once `$0` is removed");
        assert_eq!(a[1].line, 0);
        assert_eq!(a[1].columns, 4..5);
    }

    #[test]
    fn carets_past_the_end_of_the_line_are_clipped_to_it() {
        let f = Fixture::parse("Kind {\n^^^^^^^^^^^^ error sum-not-one\n}\n");
        assert_eq!(f.root().annotations[0].columns, 0..6);
    }

    #[test]
    #[should_panic(expected = "fixture line 4: unknown code `undefind`")]
    fn an_unknown_code_names_its_fixture_line() {
        Fixture::parse("\nstart S\nS { T }\n    ^ error undefind\n");
    }

    #[test]
    fn a_message_is_matched_whole_after_two_equals_signs_or_by_fragments_in_order() {
        let f = Fixture::parse(
            "S { T }\n    ^ error undefined == `T` is used: no block\n    ^ error undefined: `T`…no block … ;\n",
        );
        let a = &f.root().annotations;
        assert_eq!(
            a[0].message,
            Some(Message::Is("`T` is used: no block".into()))
        );
        let fragments = a[1].message.clone().unwrap();
        assert_eq!(
            fragments,
            Message::Contains(vec!["`T`".into(), "no block".into(), ";".into()])
        );
        assert!(fragments.accepts("`T` has no block; sorry"));
        assert!(!fragments.accepts("no block; `T`"), "in order");
        assert!(Message::Is("a".into()).accepts("a"));
        assert!(!Message::Is("a".into()).accepts("ab"));
    }

    #[test]
    #[should_panic(expected = "fixture line 2: unknown severity `fatal`")]
    fn an_unknown_severity_names_its_fixture_line() {
        Fixture::parse("S { T }\n    ^ fatal undefined\n");
    }

    #[test]
    #[should_panic(expected = "fixture line 2: expected `SEVERITY CODE`")]
    fn an_annotation_without_a_code_names_its_fixture_line() {
        Fixture::parse("S { T }\n    ^ error\n");
    }

    #[test]
    #[should_panic(expected = "fixture line 2: the carets (or `^0`) must be followed by a space")]
    fn carets_glued_to_their_words_name_their_fixture_line() {
        Fixture::parse("S { T }\n^error undefined\n");
    }

    #[test]
    #[should_panic(expected = "fixture line 2: an annotation needs a line of its file above it")]
    fn an_annotation_right_after_a_header_is_refused() {
        Fixture::parse("=== a.trellis ===\n^ error syntax\n");
    }

    /// The example DEVELOPERS.md shows ("Where tests live"), as written there.
    #[test]
    fn check_accepts_exactly_the_annotated_diagnostics_and_returns_the_analysis() {
        let analysis = check(
            r#"
            start Request
            Request { Ticket | Tikcet }
                               ^^^^^^ error undefined: did you mean `Ticket`
            Ticket { "ticket" }
            "#,
        );
        assert_eq!(analysis.diagnostics.len(), 1);
    }

    #[test]
    fn a_mismatch_lists_what_is_missing_and_unexpected_and_reannotates_the_fixture() {
        let message = panic_message(|| {
            check(
                "start Request\nRequest { Ticket | Tikcet }\n          ^^^^^^ error undefined\nTicket { \"ticket\" }\n",
            );
        });
        assert!(
            message.contains("missing (annotated, not reported):\n  fixture line 3: grammar.trellis:2:11-17 error undefined\n"),
            "{message}"
        );
        assert!(
            message.contains("unexpected (reported, not annotated):\n  grammar.trellis:2:20-26 error undefined: `Tikcet` is used but has no block; did you mean `Ticket`?\n"),
            "{message}"
        );
        assert!(
            message.ends_with(
                "start Request\nRequest { Ticket | Tikcet }\n                   ^^^^^^ error undefined == `Tikcet` is used but has no block; did you mean `Ticket`?\nTicket { \"ticket\" }\n"
            ),
            "{message}"
        );
    }

    #[test]
    fn a_message_fragment_that_is_not_in_the_message_is_a_mismatch() {
        let message = panic_message(|| {
            check("start S\nS { \"s\" | T }\n          ^ error undefined: did you mean `Ticket`\n");
        });
        assert!(message.contains("fixture line 3"), "{message}");
        assert!(
            message.contains("unexpected (reported, not annotated):\n  grammar.trellis:2:11-12 error undefined: `T` is used but has no block; did you mean `S`?\n"),
            "{message}"
        );
    }

    #[test]
    fn diagnostics_in_used_files_are_matched_in_those_files() {
        check(
            r#"
            === main.trellis ===
            start S
            use "lex.trellis"
            S { Word }
            === lex.trellis ===
            Word { "w" | Wrd }
                         ^^^ error undefined: did you mean `Word`?
            "#,
        );
    }

    #[test]
    fn the_reannotated_fixture_keeps_headers_and_cursor_markers() {
        let message = panic_message(|| {
            check("=== main.trellis ===\nstart S\nS { \"s\" | $0T }\n");
        });
        assert!(
            message.ends_with("=== main.trellis ===\nstart S\nS { \"s\" | $0T }\n            ^ error undefined == `T` is used but has no block; did you mean `S`?\n"),
            "{message}"
        );
    }
}
