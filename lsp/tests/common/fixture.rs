//! Driving the server from a fixture (`trellis_test_support`): its files are
//! written under a temporary directory and opened in the server, the `$0`
//! cursor and the `[[…]]` marked ranges become LSP positions and ranges
//! (UTF-16 columns), and the diagnostics the server publishes for a file
//! are compared with the file's annotations.
//!
//! Marked ranges are named by destructuring them in the order they are
//! written ([`FixtureWorkspace::ranges`]); an empty one (`[[]]`) marks
//! another place a request is made at ([`FixtureWorkspace::places`]).

use super::{file_uri, TestClient};
use grammar_lang::{LineCol, LineIndex, Severity};
use serde_json::{json, Value};
use std::fmt::Write as _;
use std::ops::Range;
use std::path::Path;
use trellis_test_support::{Annotation, Fixture, FixtureFile};

/// A fixture's files on disk, each with its `file:` URI.
pub struct FixtureWorkspace {
    pub fixture: Fixture,
    /// By file, in the fixture's order.
    uris: Vec<String>,
    _dir: tempfile::TempDir,
}

/// An LSP `Position` (UTF-16 column).
pub fn position(at: LineCol) -> Value {
    json!({"line": at.line, "character": at.col})
}

/// An LSP `Range`.
pub fn range(r: Range<LineCol>) -> Value {
    json!({"start": position(r.start), "end": position(r.end)})
}

impl FixtureWorkspace {
    /// Parses `fixture` and writes each of its files, at its path, under a
    /// new temporary directory.
    #[track_caller]
    pub fn new(fixture: &str) -> FixtureWorkspace {
        let fixture = Fixture::parse(fixture);
        let dir = tempfile::tempdir().expect("a temporary directory");
        let uris = fixture
            .files
            .iter()
            .map(|f| {
                let path = dir.path().join(&f.path);
                if let Some(parent) = path.parent() {
                    std::fs::create_dir_all(parent).expect("the file's directory");
                }
                std::fs::write(&path, &f.text).expect("the fixture file is written");
                file_uri(&path)
            })
            .collect();
        FixtureWorkspace {
            fixture,
            uris,
            _dir: dir,
        }
    }

    #[track_caller]
    fn index(&self, path: &str) -> usize {
        self.fixture
            .index_of(Path::new(path))
            .unwrap_or_else(|| panic!("the fixture has no file {path}"))
    }

    /// The fixture file `path`.
    #[track_caller]
    pub fn file(&self, path: &str) -> &FixtureFile {
        self.fixture.file(path)
    }

    /// The URI of fixture file `path`.
    #[track_caller]
    pub fn uri(&self, path: &str) -> String {
        self.uris[self.index(path)].clone()
    }

    /// The text of fixture file `path` (without markers and annotations).
    #[track_caller]
    pub fn text(&self, path: &str) -> &str {
        &self.file(path).text
    }

    /// The URI of the file the cursor is in.
    #[track_caller]
    pub fn cursor_uri(&self) -> String {
        let cursor = self.fixture.cursor.as_ref().expect("a `$0` cursor");
        self.uris[cursor.file].clone()
    }

    /// The LSP position of the cursor.
    #[track_caller]
    pub fn cursor(&self) -> Value {
        position(
            self.fixture
                .cursor_file()
                .utf16(self.fixture.cursor_offset()),
        )
    }

    /// `TextDocumentPositionParams` at the cursor.
    #[track_caller]
    pub fn at_cursor(&self) -> Value {
        json!({"textDocument": {"uri": self.cursor_uri()}, "position": self.cursor()})
    }

    /// `TextDocumentPositionParams` at `position` of file `path`.
    #[track_caller]
    pub fn at(&self, path: &str, position: &Value) -> Value {
        json!({"textDocument": {"uri": self.uri(path)}, "position": position})
    }

    /// The `N` ranges marked in file `path`, as LSP ranges, in order.
    #[track_caller]
    pub fn ranges<const N: usize>(&self, path: &str) -> [Value; N] {
        let file = self.file(path);
        let ranges: Vec<Value> = file
            .ranges
            .iter()
            .map(|r| range(file.utf16_range(r)))
            .collect();
        ranges
            .try_into()
            .unwrap_or_else(|r: Vec<Value>| panic!("{path} marks {} ranges, not {N}", r.len()))
    }

    /// The starts of the `N` ranges marked in file `path` (`[[]]` marks a
    /// place), as LSP positions.
    #[track_caller]
    pub fn places<const N: usize>(&self, path: &str) -> [Value; N] {
        self.ranges::<N>(path).map(|r| r["start"].clone())
    }

    /// Every range marked in every file as an LSP `Location`, sorted (as
    /// [`sorted_locations`] sorts).
    pub fn locations(&self) -> Vec<Value> {
        let all = self
            .fixture
            .files
            .iter()
            .zip(&self.uris)
            .flat_map(|(f, uri)| {
                f.ranges
                    .iter()
                    .map(move |r| json!({"uri": uri, "range": range(f.utf16_range(r))}))
            });
        sorted_locations(all)
    }
}

/// LSP `Location`s (or anything with a `uri` and a `range`) sorted by URI
/// and position, reduced to those two fields.
pub fn sorted_locations(locations: impl IntoIterator<Item = impl Into<Value>>) -> Vec<Value> {
    let mut out: Vec<Value> = locations
        .into_iter()
        .map(Into::into)
        .map(|l| json!({"uri": l["uri"], "range": l["range"]}))
        .collect();
    let key = |l: &Value| {
        let n = |p: &Value| (p["line"].as_u64(), p["character"].as_u64());
        (
            l["uri"].as_str().map(str::to_string),
            n(&l["range"]["start"]),
            n(&l["range"]["end"]),
        )
    };
    out.sort_by_key(key);
    out
}

impl TestClient {
    /// Writes the fixture's files to disk ([`FixtureWorkspace::new`]) and
    /// opens every one of them, at version 1.
    pub async fn open_fixture(&mut self, fixture: &str) -> FixtureWorkspace {
        let ws = FixtureWorkspace::new(fixture);
        for f in &ws.fixture.files {
            let path = f.path.to_str().expect("a UTF-8 path");
            self.open(&ws.uri(path), 1, &f.text).await;
        }
        ws
    }

    /// Waits for the next diagnostics published for fixture file `path`,
    /// asserts that they are exactly its annotations
    /// ([`assert_published`]) and returns the `publishDiagnostics` params.
    pub async fn check_diagnostics(&mut self, ws: &FixtureWorkspace, path: &str) -> Value {
        let params = self.diagnostics(&ws.uri(path)).await;
        assert_published(ws.file(path), &params);
        params
    }
}

/// The LSP `DiagnosticSeverity` the server gives a severity: Error = 1,
/// Warning = 2, and a note is a Hint = 4 (LSP 3.17 specification).
pub fn lsp_severity(severity: Severity) -> u64 {
    match severity {
        Severity::Error => 1,
        Severity::Warning => 2,
        Severity::Note => 4,
    }
}

fn severity_name(severity: &Value) -> String {
    match severity.as_u64() {
        Some(1) => "error".into(),
        Some(2) => "warning".into(),
        Some(3) => "information".into(),
        Some(4) => "note".into(),
        _ => format!("severity {severity}"),
    }
}

/// A published diagnostic as an annotation would state it: its start
/// line, and UTF-16 columns on that line (a range that runs past the line
/// is clipped to its end).
struct Published<'a> {
    line: usize,
    columns: Range<usize>,
    diagnostic: &'a Value,
}

impl Published<'_> {
    fn new<'a>(file: &FixtureFile, diagnostic: &'a Value) -> Published<'a> {
        let n = |p: &Value| p.as_u64().expect("a number") as usize;
        let range = &diagnostic["range"];
        let line = n(&range["start"]["line"]);
        let line_len = file.utf16_line_len(line);
        let start = n(&range["start"]["character"]);
        let end = if n(&range["end"]["line"]) == line {
            n(&range["end"]["character"]).min(line_len)
        } else {
            line_len
        };
        Published {
            line,
            columns: start..end.max(start),
            diagnostic,
        }
    }

    fn matches(&self, file: &FixtureFile, a: &Annotation) -> bool {
        let d = self.diagnostic;
        self.line == a.line
            && self.columns == file.utf16_columns(a)
            && d["severity"] == lsp_severity(a.severity)
            && d["code"] == a.code.as_str()
            && a.message
                .as_ref()
                .is_none_or(|m| m.accepts(d["message"].as_str().unwrap_or_default()))
    }

    fn describe(&self, path: &Path) -> String {
        let (severity, code, message) = self.parts();
        format!(
            "{}:{}:{}-{} {severity} {code}: {message}",
            path.display(),
            self.line + 1,
            self.columns.start + 1,
            self.columns.end + 1,
        )
    }

    /// The severity's name, the code and the message (on one line).
    fn parts(&self) -> (String, &str, String) {
        let d = self.diagnostic;
        (
            severity_name(&d["severity"]),
            d["code"].as_str().unwrap_or("(no code)"),
            d["message"]
                .as_str()
                .unwrap_or_default()
                .replace('\n', "\\n"),
        )
    }
}

/// Asserts that the diagnostics of `params` (a `publishDiagnostics` params
/// object) are exactly the annotations of `file`: same line, same start and
/// end column in UTF-16 code units (the annotation's character columns
/// converted on its line), the severity LSP gives it ([`lsp_severity`]),
/// the code, and a message the annotation accepts; nothing missing,
/// nothing extra.
///
/// On a mismatch it panics with the missing and the unexpected diagnostics
/// (columns 1-based, in UTF-16 units) and the file annotated with what was
/// published (columns in characters, as annotations count).
#[track_caller]
pub fn assert_published(file: &FixtureFile, params: &Value) {
    let published: Vec<Published> = params["diagnostics"]
        .as_array()
        .unwrap_or_else(|| panic!("no diagnostics array in {params}"))
        .iter()
        .map(|d| Published::new(file, d))
        .collect();
    let mut taken = vec![false; published.len()];
    let mut missing = Vec::new();
    for a in &file.annotations {
        match (0..published.len()).find(|&i| !taken[i] && published[i].matches(file, a)) {
            Some(i) => taken[i] = true,
            None => missing.push(a),
        }
    }
    if missing.is_empty() && taken.iter().all(|&t| t) {
        return;
    }
    let path = file.path.as_path();
    let mut report = format!(
        "the diagnostics published for {} (version {}) differ from the fixture's annotations\n",
        path.display(),
        params["version"]
    );
    if !missing.is_empty() {
        report.push_str("\nmissing (annotated, not published; columns in UTF-16 units):\n");
        for a in &missing {
            let columns = file.utf16_columns(a);
            let _ = writeln!(
                report,
                "  fixture line {}: {}:{}:{}-{} {} {}{}",
                a.fixture_line,
                path.display(),
                a.line + 1,
                columns.start + 1,
                columns.end + 1,
                a.severity,
                a.code,
                a.message.as_ref().map_or(String::new(), |m| m.to_string())
            );
        }
    }
    let unexpected: Vec<&Published> = published
        .iter()
        .zip(&taken)
        .filter(|(_, &t)| !t)
        .map(|(p, _)| p)
        .collect();
    if !unexpected.is_empty() {
        report.push_str("\nunexpected (published, not annotated; columns in UTF-16 units):\n");
        for p in unexpected {
            let _ = writeln!(report, "  {}", p.describe(path));
        }
    }
    let _ = write!(
        report,
        "\n{} annotated with what was published (without its `$0` and `[[…]]` markers):\n\n{}",
        path.display(),
        render(file, &published)
    );
    panic!("{report}");
}

/// The file's text with the published diagnostics as annotation lines.
fn render(file: &FixtureFile, published: &[Published]) -> String {
    let index = LineIndex::new(&file.text);
    // A UTF-16 column of `line` as a character column.
    let chars = |line: usize, column: usize| {
        let offset = index.offset_utf16(
            &file.text,
            LineCol {
                line: line as u32,
                col: column as u32,
            },
        );
        index.chars(&file.text, offset).col as usize
    };
    let mut out = String::new();
    let lines: Vec<&str> = file.text.split('\n').collect();
    for (n, line) in lines.iter().enumerate() {
        let here: Vec<&Published> = published.iter().filter(|p| p.line == n).collect();
        if n + 1 == lines.len() && line.is_empty() && here.is_empty() {
            break;
        }
        let _ = writeln!(out, "{line}");
        for p in here {
            let start = chars(n, p.columns.start);
            let end = chars(n, p.columns.end);
            let carets = if end == start {
                "^0".to_string()
            } else {
                "^".repeat(end - start)
            };
            let (severity, code, message) = p.parts();
            let _ = writeln!(
                out,
                "{}{carets} {severity} {code} == {message}",
                " ".repeat(start)
            );
        }
    }
    out
}
