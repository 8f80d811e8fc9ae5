//! `trellis test --format junit`: JUnit XML, which CI systems read to show
//! test results.
//!
//! The layout:
//!
//! * `<testsuites name="trellis">` with the counts of the whole run;
//! * one `<testsuite>` per `test` block (its name is the test's name, its
//!   `file` the file it is written in), with its counts;
//! * one `<testcase>` per `accept`/`reject` case: `name` is the case as
//!   written (`accept "…" as (…)`), `classname` is the grammar's file and
//!   the test's name joined by `/`, `file` and `line` locate the case;
//! * a failing case holds `<failure message="…">` whose message is the
//!   first line of the reason and whose text is every line of it;
//! * the cases of a grammar that could not run (it has errors) hold
//!   `<error message="…">`, the reason, with the grammar's errors as text —
//!   an error rather than a skip, so that the report is not green when the
//!   tests did not run.
//!
//! Files are named relative to the working directory when they lie below
//! it. Nothing is timed, so no `time` attributes are written.

use super::{clamp, file, place, position, relative_to};
use grammar_lang::model::TestCase;
use grammar_lang::SourceMap;
use std::fmt::Write as _;
use std::path::Path;
use trellis_engine::testing::CaseOutcome;
use trellis_ide::NotRunnable;
use trellis_project::test_run::GrammarRun;

/// `text` escaped for XML character data and attribute values (quoted
/// with `"`): the five predefined entities, line breaks and tabs as
/// character references (so attribute values keep them), and the
/// characters XML 1.0 cannot hold at all (other control characters) as
/// U+FFFD.
pub fn escape(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            '\n' => out.push_str("&#10;"),
            '\r' => out.push_str("&#13;"),
            '\t' => out.push_str("&#9;"),
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => out.push('\u{FFFD}'),
            c => out.push(c),
        }
    }
    out
}

/// `text` escaped for character data that is read back with its line
/// breaks as they are: like [`escape`], but `\n` stays a line break.
fn escape_text(text: &str) -> String {
    escape(text).replace("&#10;", "\n")
}

/// A path as the report names it.
fn shown(path: &Path, cwd: Option<&Path>) -> String {
    match relative_to(path, cwd) {
        Ok(p) | Err(p) => p.display().to_string(),
    }
}

/// The file and 1-based line of `location` in `sources`, the file named
/// relative to `cwd`.
fn located(
    sources: &SourceMap,
    location: grammar_lang::Location,
    cwd: Option<&Path>,
) -> (String, u32) {
    match file(sources, location.file) {
        Some(f) => (shown(&f.path, cwd), place(sources, location).1.line),
        None => (String::new(), 1),
    }
}

/// The errors that kept the grammar's tests from running, one per line,
/// `file:line:column: code: message`.
fn error_lines(run: &GrammarRun, blocked: &NotRunnable, cwd: Option<&Path>) -> String {
    let sources = &run.analysis.sources;
    let mut out = String::new();
    for d in blocked.errors().iter().map(|e| &e.diagnostic) {
        let (path, line, column) = match file(sources, d.location.file) {
            Some(f) => {
                let at = position(f, clamp(&f.text, d.location.span).start);
                (shown(&f.path, cwd), at.line, at.column)
            }
            None => (String::new(), 1, 1),
        };
        let _ = writeln!(out, "{path}:{line}:{column}: {}: {}", d.code, d.message);
    }
    out
}

/// The whole report for `runs`, an XML document.
pub fn test_report(runs: &[GrammarRun], cwd: Option<&Path>) -> String {
    let mut suites = String::new();
    let (mut all_cases, mut all_failures, mut all_errors, mut all_skipped) = (0, 0, 0, 0);
    for run in runs {
        let grammar = shown(&run.path, cwd);
        let sources = &run.analysis.sources;
        let not_run = run
            .blocked
            .as_ref()
            .map(|blocked| (blocked.headline(), error_lines(run, blocked, cwd)));
        for result in &run.tests {
            let test = result.test;
            let (test_file, _) = located(sources, test.location, cwd);
            let cases = test.cases.len();
            let (failures, errors, skipped) = match not_run {
                Some(_) => (0, cases, 0),
                None => (result.failed(), 0, cases.saturating_sub(result.cases.len())),
            };
            all_cases += cases;
            all_failures += failures;
            all_errors += errors;
            all_skipped += skipped;
            let _ = writeln!(
                suites,
                "  <testsuite name=\"{}\" tests=\"{cases}\" failures=\"{failures}\" \
                 errors=\"{errors}\" skipped=\"{skipped}\" file=\"{}\">",
                escape(&test.name),
                escape(&test_file)
            );
            let classname = format!("{grammar}/{}", test.name);
            for (i, case) in test.cases.iter().enumerate() {
                let outcome = result.cases.get(i);
                suites.push_str(&test_case(
                    sources,
                    case,
                    &classname,
                    outcome,
                    not_run.as_ref(),
                    cwd,
                ));
            }
            suites.push_str("  </testsuite>\n");
        }
    }
    format!(
        "<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n\
         <testsuites name=\"trellis\" tests=\"{all_cases}\" failures=\"{all_failures}\" \
         errors=\"{all_errors}\" skipped=\"{all_skipped}\">\n{suites}</testsuites>\n"
    )
}

/// One `<testcase>` element.
fn test_case(
    sources: &SourceMap,
    case: &TestCase,
    classname: &str,
    outcome: Option<&CaseOutcome>,
    not_run: Option<&(String, String)>,
    cwd: Option<&Path>,
) -> String {
    let (path, line) = located(sources, case.location, cwd);
    let open = format!(
        "    <testcase name=\"{}\" classname=\"{}\" file=\"{}\" line=\"{line}\"",
        escape(&case.to_string()),
        escape(classname),
        escape(&path)
    );
    if let Some((reason, detail)) = not_run {
        return format!(
            "{open}>\n      <error message=\"{}\" type=\"not-run\">{}</error>\n    </testcase>\n",
            escape(reason),
            escape_text(detail)
        );
    }
    match outcome {
        Some(CaseOutcome::Failed(failure)) => {
            let lines = failure.render();
            let message = lines.first().cloned().unwrap_or_default();
            format!(
                "{open}>\n      <failure message=\"{}\" type=\"{}\">{}</failure>\n    </testcase>\n",
                escape(&message),
                case.expect.keyword(),
                escape_text(&lines.join("\n"))
            )
        }
        Some(CaseOutcome::Passed { .. }) => format!("{open}/>\n"),
        // A run stopped before this case (only an editor cancels runs).
        None => format!("{open}>\n      <skipped message=\"not run\"/>\n    </testcase>\n"),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn markup_quotes_and_line_breaks_are_escaped_and_other_text_kept() {
        assert_eq!(
            escape(r#"accept "a <b> & c's""#),
            "accept &quot;a &lt;b&gt; &amp; c&apos;s&quot;"
        );
        assert_eq!(escape("Fähre → Ø 日本"), "Fähre → Ø 日本");
        assert_eq!(escape("a\nb\tc\r"), "a&#10;b&#9;c&#13;");
        // XML 1.0 cannot hold these at all, not even as references.
        assert_eq!(escape("bell\u{7}nul\u{0}"), "bell\u{FFFD}nul\u{FFFD}");
        assert_eq!(
            escape_text("one\ntwo & <three>"),
            "one\ntwo &amp; &lt;three&gt;"
        );
    }
}
