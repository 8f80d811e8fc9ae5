//! Turning diagnostics into text: ariadne reports for people, JSON for tools.
//!
//! Spans in the core are byte ranges; people and editors count columns in
//! characters. Human reports hand ariadne byte offsets with
//! [`IndexType::Byte`] (ariadne 0.6 defaults to character offsets), JSON
//! positions are 1-based lines and 1-based character columns.

use ariadne::{Color, IndexType, Label, Report, ReportKind, Source};
use grammar_lang::diagnostic::Related;
use grammar_lang::source::SourceFile;
use grammar_lang::{Diagnostic, FileId, Severity, SourceMap, Span};
use serde::Serialize;
use std::collections::HashMap;
use std::fmt;
use std::ops::Range;

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
#[derive(Clone, Copy, Debug, PartialEq, Eq, Serialize)]
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

fn severity_color(severity: Severity) -> Color {
    match severity {
        Severity::Error => Color::Red,
        Severity::Warning => Color::Yellow,
        Severity::Note => Color::Cyan,
    }
}

/// Labels further apart than this many lines are shown in separate
/// snippets, each headed by its own location, instead of one long snippet.
const SNIPPET_GAP: u32 = 6;

/// An ariadne source id: a file and which snippet of it. ariadne draws one
/// snippet per id, so two ids for one file give two snippets.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
struct Snippet {
    file: FileId,
    part: u32,
}

/// The ariadne cache over one analysis' files: sources are built once per
/// file and borrow the text already in memory.
struct SourceCache<'a> {
    sources: &'a SourceMap,
    built: HashMap<FileId, Source<&'a str>>,
}

impl<'a> ariadne::Cache<Snippet> for SourceCache<'a> {
    type Storage = &'a str;

    fn fetch(&mut self, id: &Snippet) -> Result<&Source<&'a str>, impl fmt::Debug> {
        let sources = self.sources;
        match file(sources, id.file) {
            Some(f) => Ok(self
                .built
                .entry(id.file)
                .or_insert_with(|| Source::from(f.text.as_str()))),
            None => Err(format!("no file with id {}", id.file.0)),
        }
    }

    fn display<'b>(&self, id: &'b Snippet) -> Option<impl fmt::Display + 'b> {
        file(self.sources, id.file).map(|f| f.path.display().to_string())
    }
}

/// One label before it is handed to ariadne.
struct Pending<'m> {
    file: FileId,
    range: Range<usize>,
    first_line: u32,
    last_line: u32,
    message: &'m str,
    color: Color,
    primary: bool,
}

impl Pending<'_> {
    fn new<'m>(f: &SourceFile, file: FileId, range: Range<usize>, message: &'m str) -> Pending<'m> {
        Pending {
            file,
            first_line: f.lines.line_of(range.start),
            last_line: f.lines.line_of(range.end),
            range,
            message,
            color: Color::Blue,
            primary: false,
        }
    }
}

/// Assigns labels to snippets: labels of one file that are close together
/// share a snippet. Returns the labels with their snippet, ordered for
/// ariadne: the primary label's snippet first, then by file and line.
fn snippets(mut labels: Vec<Pending<'_>>) -> Vec<(Snippet, Pending<'_>)> {
    labels.sort_by_key(|l| (l.file, l.range.start, !l.primary));
    let mut out: Vec<(Snippet, Pending)> = Vec::with_capacity(labels.len());
    let mut part = 0;
    for label in labels {
        if let Some((prev, _)) = out.last() {
            let reach = out
                .iter()
                .filter(|(s, _)| *s == *prev)
                .map(|(_, l)| l.last_line)
                .max()
                .unwrap_or(0);
            if prev.file != label.file || label.first_line > reach + SNIPPET_GAP {
                part += 1;
            }
        }
        let snippet = Snippet {
            file: label.file,
            part,
        };
        out.push((snippet, label));
    }
    let primary = out.iter().find(|(_, l)| l.primary).map(|(s, _)| *s);
    // Stable: within a snippet, labels stay in line order.
    out.sort_by_key(|(s, _)| (Some(*s) != primary, *s));
    out
}

/// Renders diagnostics of one analysis as ariadne reports.
pub struct HumanRenderer<'a> {
    cache: SourceCache<'a>,
    color: bool,
}

impl<'a> HumanRenderer<'a> {
    pub fn new(sources: &'a SourceMap, color: bool) -> Self {
        HumanRenderer {
            cache: SourceCache {
                sources,
                built: HashMap::new(),
            },
            color,
        }
    }

    /// One report: `error[code]: message`, the snippet with the primary span
    /// (and its label) and every related span with its message, then help.
    pub fn render(&mut self, d: &Diagnostic) -> String {
        let sources = self.cache.sources;
        let kind_name = format!("{}[{}]", d.severity, d.code);
        let kind = ReportKind::Custom(&kind_name, severity_color(d.severity));
        let Some(primary_file) = file(sources, d.location.file) else {
            // No source to show: header and help only.
            let mut out = format!("{kind_name}: {}\n", d.message);
            if let Some(help) = &d.help {
                out.push_str(&format!("  help: {help}\n"));
            }
            return self.finish_text(out);
        };
        let config = ariadne::Config::default()
            .with_index_type(IndexType::Byte)
            .with_color(self.color);
        let mut labels = vec![Pending {
            color: severity_color(d.severity),
            primary: true,
            ..Pending::new(
                primary_file,
                d.location.file,
                clamp(&primary_file.text, d.location.span),
                // ariadne draws no underline for a label without a message.
                d.label.as_deref().unwrap_or("here"),
            )
        }];
        for Related { location, message } in &d.related {
            if let Some(f) = file(sources, location.file) {
                let range = clamp(&f.text, location.span);
                labels.push(Pending::new(f, location.file, range, message));
            }
        }
        let labels = snippets(labels);
        let Some(primary) = labels
            .iter()
            .find(|(_, l)| l.primary)
            .map(|(s, l)| (*s, l.range.clone()))
        else {
            return self.finish_text(format!("{kind_name}: {}\n", d.message));
        };
        let mut report = Report::build(kind, primary)
            .with_config(config)
            .with_message(&d.message);
        for (order, (snippet, l)) in labels.into_iter().enumerate() {
            let mut label = Label::new((snippet, l.range))
                .with_message(l.message)
                .with_order(order as i32)
                .with_priority(i32::from(l.primary));
            if self.color {
                label = label.with_color(l.color);
            }
            report = report.with_label(label);
        }
        if let Some(help) = &d.help {
            report = report.with_help(help);
        }
        let mut buf = Vec::new();
        if report
            .finish()
            .write_for_stdout(&mut self.cache, &mut buf)
            .is_err()
        {
            return self.finish_text(format!("{kind_name}: {}\n", d.message));
        }
        self.finish_text(String::from_utf8_lossy(&buf).into_owned())
    }

    /// ariadne colours a custom report kind even when colour is off; this
    /// removes such escapes from uncoloured output.
    fn finish_text(&self, text: String) -> String {
        if self.color {
            text
        } else {
            strip_ansi(&text)
        }
    }
}

/// Every error of `analysis` rendered as by [`HumanRenderer::render`], each
/// followed by an empty line.
pub fn errors(analysis: &grammar_lang::Analysis, color: bool) -> String {
    let mut renderer = HumanRenderer::new(&analysis.sources, color);
    let mut out = String::new();
    for d in analysis
        .diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
    {
        out.push_str(&renderer.render(d));
        out.push('\n');
    }
    out
}

/// `text` without ANSI escape sequences (`ESC [ ... final-byte`).
pub fn strip_ansi(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    let mut chars = text.chars().peekable();
    while let Some(c) = chars.next() {
        if c == '\u{1b}' && chars.peek() == Some(&'[') {
            chars.next();
            // Parameters and intermediates, then one final byte in @..=~
            // (ECMA-48, section 5.4).
            for c in chars.by_ref() {
                if ('@'..='~').contains(&c) {
                    break;
                }
            }
        } else {
            out.push(c);
        }
    }
    out
}

/// A span in JSON: file, 1-based start and (exclusive) end positions.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct JsonRelated {
    pub file: String,
    pub line: u32,
    pub column: u32,
    pub end_line: u32,
    pub end_column: u32,
    pub message: String,
}

/// One diagnostic in JSON. `end_line`/`end_column` is the position just after
/// the span, so a one-character span has `end_column == column + 1`.
#[derive(Clone, Debug, PartialEq, Eq, Serialize)]
pub struct JsonDiagnostic {
    pub code: &'static str,
    pub severity: &'static str,
    pub file: String,
    pub line: u32,
    pub column: u32,
    pub end_line: u32,
    pub end_column: u32,
    pub message: String,
    pub label: Option<String>,
    pub related: Vec<JsonRelated>,
    pub help: Option<String>,
}

#[derive(Serialize)]
struct JsonOutput<'a> {
    diagnostics: &'a [JsonDiagnostic],
}

fn json_span(sources: &SourceMap, id: FileId, span: Span) -> (String, Position, Position) {
    match file(sources, id) {
        Some(f) => {
            let range = clamp(&f.text, span);
            (
                f.path.display().to_string(),
                position(f, range.start),
                position(f, range.end),
            )
        }
        None => {
            let start = Position { line: 1, column: 1 };
            (String::new(), start, start)
        }
    }
}

/// The JSON form of `d`, whose file ids index `sources`.
pub fn json_diagnostic(d: &Diagnostic, sources: &SourceMap) -> JsonDiagnostic {
    let (file, start, end) = json_span(sources, d.location.file, d.location.span);
    let related = d
        .related
        .iter()
        .map(|r| {
            let (file, start, end) = json_span(sources, r.location.file, r.location.span);
            JsonRelated {
                file,
                line: start.line,
                column: start.column,
                end_line: end.line,
                end_column: end.column,
                message: r.message.clone(),
            }
        })
        .collect();
    JsonDiagnostic {
        code: d.code.as_str(),
        severity: d.severity.as_str(),
        file,
        line: start.line,
        column: start.column,
        end_line: end.line,
        end_column: end.column,
        message: d.message.clone(),
        label: d.label.clone(),
        related,
        help: d.help.clone(),
    }
}

/// The whole JSON output: `{"diagnostics":[...]}` and a newline.
pub fn json_document(diagnostics: &[JsonDiagnostic]) -> String {
    let mut out = serde_json::to_string(&JsonOutput { diagnostics })
        .unwrap_or_else(|e| format!("{{\"diagnostics\":[],\"error\":\"{e}\"}}"));
    out.push('\n');
    out
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

/// The closing line of a human run, e.g. `checked 3 files: 2 errors, 1 warning`.
pub fn summary(files: usize, counts: Counts) -> String {
    let mut parts = vec![
        plural(counts.errors, "error", "errors"),
        plural(counts.warnings, "warning", "warnings"),
    ];
    if counts.notes > 0 {
        parts.push(plural(counts.notes, "note", "notes"));
    }
    format!(
        "checked {}: {}",
        plural(files, "file", "files"),
        parts.join(", ")
    )
}

#[cfg(test)]
mod tests {
    use super::*;
    use grammar_lang::{Code, Location};

    fn one_file(path: &str, text: &str) -> SourceMap {
        let mut sources = SourceMap::new();
        sources.add(path.into(), text.into());
        sources
    }

    fn span_of(text: &str, needle: &str) -> Span {
        let start = text.find(needle).unwrap();
        Span::new(start, start + needle.len())
    }

    /// The character column (0-based) at which `needle` starts in the
    /// rendered line that contains `line_marker`.
    fn char_col(line: &str, needle: &str) -> usize {
        line[..line.find(needle).unwrap()].chars().count()
    }

    const FERRY: &str = "start Trip\nTrip {\n  1/2 \"Fähre\" Kind\n  1/2 Kind\n}\n";

    #[test]
    fn human_report_shows_code_message_location_label_and_help() {
        let sources = one_file("kiosk.trellis", FERRY);
        let d = Diagnostic::new(
            Code::Undefined,
            Location::new(FileId(0), span_of(FERRY, "Kind")),
            "`Kind` is used but has no block",
        )
        .with_label("no block defines this")
        .with_help("add a block `Kind { ... }`");
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert!(
            out.starts_with("error[undefined]: `Kind` is used but has no block\n"),
            "{out}"
        );
        // Line 3, column 15 in characters: `  1/2 "Fähre" ` is 14 characters
        // (15 bytes, as ä takes two).
        assert!(out.contains("kiosk.trellis:3:15"), "{out}");
        assert!(out.contains("no block defines this"), "{out}");
        assert!(out.contains("Help: add a block `Kind { ... }`"), "{out}");
        assert!(!out.contains('\u{1b}'), "no colour was asked for: {out:?}");
    }

    #[test]
    fn underline_sits_under_the_span_after_a_non_ascii_word() {
        let sources = one_file("kiosk.trellis", FERRY);
        let d = Diagnostic::new(
            Code::Undefined,
            Location::new(FileId(0), span_of(FERRY, "Kind")),
            "`Kind` is used but has no block",
        )
        .with_label("here");
        let out = HumanRenderer::new(&sources, false).render(&d);
        let lines: Vec<&str> = out.lines().collect();
        let src = lines
            .iter()
            .position(|l| l.contains("\"Fähre\" Kind"))
            .unwrap_or_else(|| panic!("source line missing: {out}"));
        let underline = lines[src + 1];
        // The underline runs under exactly the four characters of `Kind`.
        let kind_col = char_col(lines[src], "Kind");
        let marks: Vec<usize> = underline
            .chars()
            .enumerate()
            .filter(|(_, c)| matches!(c, '─' | '┬'))
            .map(|(i, _)| i)
            .collect();
        assert_eq!(marks, (kind_col..kind_col + 4).collect::<Vec<_>>(), "{out}");
    }

    #[test]
    fn related_spans_are_labelled_with_their_messages() {
        let text = "start S\nS { \"a\" }\nS { \"b\" }\n";
        let sources = one_file("dup.trellis", text);
        let first = text.find("S {").unwrap();
        let second = text.rfind("S {").unwrap();
        let d = Diagnostic::new(
            Code::DuplicateBlock,
            Location::new(FileId(0), Span::new(second, second + 1)),
            "`S` has two blocks",
        )
        .with_related(
            Location::new(FileId(0), Span::new(first, first + 1)),
            "first block of `S`",
        );
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert!(out.starts_with("error[duplicate-block]"), "{out}");
        assert!(out.contains("dup.trellis:3:1"), "{out}");
        assert!(out.contains("first block of `S`"), "{out}");
        // One snippet for the file, headed by the primary location, showing
        // the earlier line 2 above line 3.
        assert_eq!(out.matches("─[ ").count(), 1, "{out}");
        let line2 = out
            .find(" 2 │ S { \"a\" }")
            .unwrap_or_else(|| panic!("{out}"));
        let line3 = out
            .find(" 3 │ S { \"b\" }")
            .unwrap_or_else(|| panic!("{out}"));
        assert!(line2 < line3, "{out}");
    }

    #[test]
    fn far_apart_spans_get_their_own_snippets_headed_by_their_own_place() {
        // `start` on line 1, the unreachable block on line 12: the related
        // label gets a snippet of its own instead of a 12-line one.
        let mut text = String::from("start Request\nRequest { \"ticket\" }\n");
        text.push_str(&"# filler\n".repeat(9));
        text.push_str("Timetable { \"when\" }\n");
        let sources = one_file("kiosk.trellis", &text);
        let d = Diagnostic::new(
            Code::Unreachable,
            Location::new(FileId(0), span_of(&text, "Timetable")),
            "`Timetable` cannot be reached",
        )
        .with_related(
            Location::new(FileId(0), span_of(&text, "Request\n")),
            "start symbol declared here",
        );
        let out = HumanRenderer::new(&sources, false).render(&d);
        let primary = out
            .find("╭─[ kiosk.trellis:12:1 ]")
            .unwrap_or_else(|| panic!("{out}"));
        let related = out
            .find("├─[ kiosk.trellis:1:7 ]")
            .unwrap_or_else(|| panic!("{out}"));
        assert!(primary < related, "the primary place comes first: {out}");
        assert!(!out.contains("# filler"), "{out}");
    }

    #[test]
    fn related_spans_in_another_file_show_that_file() {
        let mut sources = SourceMap::new();
        sources.add(
            "main.trellis".into(),
            "use \"words.trellis\"\nX { \"a\" }\n".into(),
        );
        sources.add("words.trellis".into(), "X { \"b\" }\n".into());
        let d = Diagnostic::new(
            Code::DuplicateBlock,
            Location::new(FileId(0), Span::new(20, 21)),
            "`X` has two blocks",
        )
        .with_related(Location::new(FileId(1), Span::new(0, 1)), "other block");
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert!(out.contains("╭─[ main.trellis:2:1 ]"), "{out}");
        assert!(out.contains("├─[ words.trellis:1:1 ]"), "{out}");
        assert!(out.contains("other block"), "{out}");
    }

    #[test]
    fn warnings_and_notes_name_their_severity() {
        let sources = one_file("a.trellis", FERRY);
        let mut d = Diagnostic::new(
            Code::Unreachable,
            Location::new(FileId(0), span_of(FERRY, "Trip {")),
            "`Trip` cannot be reached",
        );
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert!(out.starts_with("warning[unreachable]: "), "{out}");
        d.severity = Severity::Note;
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert!(out.starts_with("note[unreachable]: "), "{out}");
    }

    #[test]
    fn colour_is_emitted_only_when_asked_for() {
        let sources = one_file("a.trellis", FERRY);
        let d = Diagnostic::new(
            Code::SumNotOne,
            Location::new(FileId(0), span_of(FERRY, "Trip {")),
            "weights add up to 3/4",
        );
        assert!(HumanRenderer::new(&sources, true)
            .render(&d)
            .contains('\u{1b}'));
        assert!(!HumanRenderer::new(&sources, false)
            .render(&d)
            .contains('\u{1b}'));
    }

    #[test]
    fn empty_and_out_of_range_spans_render_without_failing() {
        let sources = one_file("a.trellis", FERRY);
        for span in [
            Span::point(0),
            Span::point(FERRY.len()),
            Span::new(FERRY.len() + 5, FERRY.len() + 9),
            // Inside the two bytes of `ä`.
            Span::new(FERRY.find('ä').unwrap() + 1, FERRY.find('ä').unwrap() + 1),
        ] {
            let d = Diagnostic::new(Code::Syntax, Location::new(FileId(0), span), "odd span");
            let out = HumanRenderer::new(&sources, false).render(&d);
            assert!(out.starts_with("error[syntax]: odd span"), "{out}");
            let json = json_diagnostic(&d, &sources);
            assert!(json.line >= 1 && json.column >= 1);
        }
    }

    #[test]
    fn a_diagnostic_in_an_unknown_file_still_shows_its_message() {
        let sources = one_file("a.trellis", FERRY);
        let d = Diagnostic::new(
            Code::NoStart,
            Location::new(FileId(7), Span::point(0)),
            "no start",
        )
        .with_help("add `start Name`");
        let out = HumanRenderer::new(&sources, false).render(&d);
        assert_eq!(out, "error[no-start]: no start\n  help: add `start Name`\n");
    }

    #[test]
    fn json_positions_are_one_based_and_count_characters() {
        let sources = one_file("kiosk.trellis", FERRY);
        let d = Diagnostic::new(
            Code::Undefined,
            Location::new(FileId(0), span_of(FERRY, "Kind")),
            "`Kind` is used but has no block",
        )
        .with_related(
            Location::new(FileId(0), span_of(FERRY, "\"Fähre\"")),
            "next to this",
        );
        let j = json_diagnostic(&d, &sources);
        assert_eq!((j.line, j.column, j.end_line, j.end_column), (3, 15, 3, 19));
        let r = &j.related[0];
        // `"Fähre"` is 7 characters (8 bytes), starting at column 7.
        assert_eq!((r.line, r.column, r.end_line, r.end_column), (3, 7, 3, 14));
        assert_eq!(r.file, "kiosk.trellis");
    }

    #[test]
    fn json_document_has_exactly_the_promised_fields() {
        let sources = one_file("a.trellis", FERRY);
        let d = Diagnostic::new(
            Code::SumNotOne,
            Location::new(FileId(0), span_of(FERRY, "Trip {")),
            "weights add up to 3/4",
        )
        .with_help("add 1/4");
        let text = json_document(&[json_diagnostic(&d, &sources)]);
        let v: serde_json::Value = serde_json::from_str(&text).unwrap();
        let obj = v.as_object().unwrap();
        assert_eq!(obj.len(), 1);
        let d = &v["diagnostics"][0];
        assert_eq!(d["code"], "sum-not-one");
        assert_eq!(d["severity"], "error");
        assert_eq!(d["file"], "a.trellis");
        assert_eq!(
            (d["line"].as_u64(), d["column"].as_u64()),
            (Some(2), Some(1))
        );
        assert_eq!(
            (d["end_line"].as_u64(), d["end_column"].as_u64()),
            (Some(2), Some(7))
        );
        assert_eq!(d["message"], "weights add up to 3/4");
        assert_eq!(d["help"], "add 1/4");
        assert_eq!(d["related"], serde_json::json!([]));
    }

    #[test]
    fn ansi_sequences_are_stripped_and_other_text_kept() {
        assert_eq!(
            strip_ansi("\u{1b}[31merror\u{1b}[0m: Fähre"),
            "error: Fähre"
        );
        assert_eq!(strip_ansi("\u{1b}[38;5;246m│\u{1b}[0m"), "│");
        assert_eq!(strip_ansi("plain"), "plain");
    }

    #[test]
    fn summary_counts_files_errors_and_warnings_with_plurals() {
        let counts = Counts {
            errors: 2,
            warnings: 1,
            notes: 0,
        };
        assert_eq!(summary(3, counts), "checked 3 files: 2 errors, 1 warning");
        assert_eq!(
            summary(1, Counts::default()),
            "checked 1 file: 0 errors, 0 warnings"
        );
        let counts = Counts {
            errors: 0,
            warnings: 0,
            notes: 2,
        };
        assert_eq!(
            summary(2, counts),
            "checked 2 files: 0 errors, 0 warnings, 2 notes"
        );
    }
}
