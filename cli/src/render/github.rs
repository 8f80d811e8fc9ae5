//! `trellis check --format github`: GitHub Actions workflow commands, one
//! line per finding, which the code host shows as annotations on the pull
//! request's diff:
//!
//! ```text
//! ::error file=g/kiosk.trellis,line=3,col=15,endLine=3,endColumn=19,title=trellis undefined::`Kind` is used but has no block%0Ahelp: …
//! ```
//!
//! Errors are `error`, warnings `warning`, notes `notice`. Files are named
//! relative to the working directory (the checkout the workflow runs in)
//! when they lie below it. Lines and columns are 1-based, columns counted in
//! characters; the end is the position just after the span. The message
//! carries the related places and the help line on lines of their own.
//!
//! Escaping follows the runner's rules for workflow commands: in the
//! message `%`, `\r` and `\n` become `%25`, `%0D` and `%0A`; in property
//! values `:` and `,` become `%3A` and `%2C` as well.

use super::{clamp, file, position, relative_to};
use grammar_lang::{Diagnostic, FileId, Severity, SourceMap, Span};
use std::path::Path;

/// The command for a severity.
fn command(severity: Severity) -> &'static str {
    match severity {
        Severity::Error => "error",
        Severity::Warning => "warning",
        Severity::Note => "notice",
    }
}

/// `text` escaped for the message part of a workflow command.
pub fn escape_message(text: &str) -> String {
    escape(text, false)
}

/// `text` escaped for a property value of a workflow command: as a
/// message, and `:` and `,` too (they separate properties).
pub fn escape_property(text: &str) -> String {
    escape(text, true)
}

fn escape(text: &str, property: bool) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '%' => out.push_str("%25"),
            '\r' => out.push_str("%0D"),
            '\n' => out.push_str("%0A"),
            ':' if property => out.push_str("%3A"),
            ',' if property => out.push_str("%2C"),
            c => out.push(c),
        }
    }
    out
}

/// The file of `id` as the annotation names it, and the 1-based start and
/// end (line, column) of `span` in it.
fn place(
    sources: &SourceMap,
    id: FileId,
    span: Span,
    cwd: Option<&Path>,
) -> (String, (u32, u32), (u32, u32)) {
    match file(sources, id) {
        Some(f) => {
            let range = clamp(&f.text, span);
            let (start, end) = (position(f, range.start), position(f, range.end));
            let shown = match relative_to(&f.path, cwd) {
                Ok(path) | Err(path) => path.display().to_string(),
            };
            (shown, (start.line, start.column), (end.line, end.column))
        }
        None => (String::new(), (1, 1), (1, 1)),
    }
}

/// One annotation line (ending in a newline) for `d`.
pub fn annotation(d: &Diagnostic, sources: &SourceMap, cwd: Option<&Path>) -> String {
    let (path, (line, col), (end_line, end_col)) =
        place(sources, d.location.file, d.location.span, cwd);
    let mut message = d.message.clone();
    for r in &d.related {
        let (path, (line, col), _) = place(sources, r.location.file, r.location.span, cwd);
        message.push_str(&format!("\n{path}:{line}:{col}: {}", r.message));
    }
    if let Some(help) = &d.help {
        message.push_str(&format!("\nhelp: {help}"));
    }
    format!(
        "::{} file={},line={line},col={col},endLine={end_line},endColumn={end_col},title={}::{}\n",
        command(d.severity),
        escape_property(&path),
        escape_property(&format!("trellis {}", d.code)),
        escape_message(&message)
    )
}

/// Every annotation for `findings`, one line each.
pub fn check_annotations<'a>(
    findings: impl IntoIterator<Item = (&'a Diagnostic, &'a SourceMap)>,
    cwd: Option<&Path>,
) -> String {
    findings
        .into_iter()
        .map(|(d, sources)| annotation(d, sources, cwd))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::render::tests::{one_file, span_of};
    use grammar_lang::{Code, Location};

    #[test]
    fn messages_escape_percent_and_line_breaks_only() {
        assert_eq!(
            escape_message("50% off\r\nnext: a, b"),
            "50%25 off%0D%0Anext: a, b"
        );
        assert_eq!(escape_message("%0A"), "%250A");
        assert_eq!(escape_message("Fähre ✓"), "Fähre ✓");
    }

    #[test]
    fn properties_also_escape_colons_and_commas() {
        assert_eq!(
            escape_property("C:\\g,1%\n.trellis"),
            "C%3A\\g%2C1%25%0A.trellis"
        );
        assert_eq!(
            escape_property("trellis sum-not-one"),
            "trellis sum-not-one"
        );
    }

    #[test]
    fn a_finding_is_one_line_with_its_place_title_related_places_and_help() {
        let text = "start S\nS {\n  1/2 \"a\"\n}\n";
        let sources = one_file("g/a,b.trellis", text);
        let d = Diagnostic::new(
            Code::SumNotOne,
            Location::new(FileId(0), span_of(text, "S {")),
            "the weights add up to 1/2, not 1 (50% short)",
        )
        .with_related(
            Location::new(FileId(0), span_of(text, "1/2")),
            "the only weight",
        )
        .with_help("add 1/2");
        let line = annotation(&d, &sources, Some(Path::new("/work")));
        assert_eq!(
            line,
            "::error file=g/a%2Cb.trellis,line=2,col=1,endLine=2,endColumn=4,\
             title=trellis sum-not-one::the weights add up to 1/2, not 1 (50%25 short)\
             %0Ag/a,b.trellis:3:3: the only weight%0Ahelp: add 1/2\n"
        );
        assert_eq!(line.lines().count(), 1);
    }

    #[test]
    fn warnings_and_notes_use_their_own_commands() {
        let text = "start S\n";
        let sources = one_file("a.trellis", text);
        let mut d = Diagnostic::new(
            Code::Unreachable,
            Location::new(FileId(0), span_of(text, "S")),
            "unused",
        );
        assert!(annotation(&d, &sources, None).starts_with("::warning file=a.trellis,"));
        d.severity = Severity::Note;
        assert!(annotation(&d, &sources, None).starts_with("::notice file=a.trellis,"));
    }
}
