//! Output for people: ariadne diagnostics, summaries, parse reports, test
//! reports and the stats table. All colour is decided by the caller
//! (`Term::color`) and applied here, through ariadne for diagnostics and
//! [`Paint`] for everything else.

use super::{clamp, file, place, plural, Counts};
use ariadne::{Color, IndexType, Label, Report, ReportKind, Source};
use grammar_lang::diagnostic::Related;
use grammar_lang::source::SourceFile;
use grammar_lang::syntax::lexer::quote;
use grammar_lang::weight::{Inexact, NotExact, MAX_DECIMALS};
use grammar_lang::{Diagnostic, FileId, Severity, SourceMap};
use std::collections::HashMap;
use std::fmt;
use std::ops::Range;
use trellis_engine::consistency::{ConsistencyReport, Verdict};
/// The one way a probability is written for people, in every command
/// (six significant digits, scientific notation only below 1e-4; README,
/// "Numbers"). Defined in the engine so that its own messages (test
/// failures, explanations of failed parses) use it too.
pub use trellis_engine::numbers::{log_probability, number, probability};
use trellis_engine::parser::ParseOutcome;
use trellis_engine::testing::CaseOutcome;
use trellis_project::test_run::{GrammarRun, Tally};
use trellis_project::Checked;

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

/// The widest stretch of a source line a report shows, in characters. A
/// report on a longer line (a generated grammar, a file pasted onto one
/// line) shows a window of this many characters around its spans, cut with
/// `…`, so that each report stays small whatever the line (common practice
/// for terminal output; ariadne would draw the whole line once per label).
pub const EXCERPT_WIDTH: usize = 160;

/// Reports shown per file; the findings past them are counted on one line
/// (`--format json` keeps every one).
pub const REPORTS_PER_FILE: usize = 50;

/// Spans drawn in one report that merges repeated findings on a line.
const MERGED_SPANS: usize = 8;

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
        self.render_merged(d, &[])
    }

    /// One report for `d` and the findings in `repeats`, the same finding
    /// again further along `d`'s line: the message says how many there
    /// are, and the first few spans are drawn.
    fn render_merged(&mut self, d: &Diagnostic, repeats: &[&Diagnostic]) -> String {
        let sources = self.cache.sources;
        let kind_name = format!("{}[{}]", d.severity, d.code);
        let kind = ReportKind::Custom(&kind_name, severity_color(d.severity));
        let message = if repeats.is_empty() {
            d.message.clone()
        } else {
            format!(
                "{} ({} times on this line)",
                d.message,
                thousands(repeats.len() + 1)
            )
        };
        let Some(primary_file) = file(sources, d.location.file) else {
            // No source to show: header and help only.
            let mut out = format!("{kind_name}: {message}\n");
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
        for again in repeats.iter().take(MERGED_SPANS - 1) {
            labels.push(Pending {
                color: severity_color(d.severity),
                ..Pending::new(
                    primary_file,
                    d.location.file,
                    clamp(&primary_file.text, again.location.span),
                    again.label.as_deref().unwrap_or("here"),
                )
            });
        }
        for Related { location, message } in &d.related {
            if let Some(f) = file(sources, location.file) {
                let range = clamp(&f.text, location.span);
                labels.push(Pending::new(f, location.file, range, message));
            }
        }
        if labels.iter().any(|l| on_long_line(sources, l)) {
            let out = windowed(
                sources,
                &kind_name,
                &message,
                &labels,
                d.help.as_deref(),
                self.color.then(|| severity_color(d.severity)),
            );
            return self.finish_text(out);
        }
        let labels = snippets(labels);
        let Some(primary) = labels
            .iter()
            .find(|(_, l)| l.primary)
            .map(|(s, l)| (*s, l.range.clone()))
        else {
            return self.finish_text(format!("{kind_name}: {message}\n"));
        };
        let mut report = Report::build(kind, primary)
            .with_config(config)
            .with_message(&message);
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
            return self.finish_text(format!("{kind_name}: {message}\n"));
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

/// Whether `label` lies on a line longer than [`EXCERPT_WIDTH`] characters.
fn on_long_line(sources: &SourceMap, label: &Pending<'_>) -> bool {
    let Some(f) = file(sources, label.file) else {
        return false;
    };
    (label.first_line..=label.last_line).any(|line| {
        let text = line_text(f, line);
        text.len() > EXCERPT_WIDTH && text.chars().count() > EXCERPT_WIDTH
    })
}

/// The text of 0-based `line` of `f`, without its line break.
fn line_text(f: &SourceFile, line: u32) -> &str {
    let start = f.lines.line_start(line);
    let end = f.lines.line_start(line + 1).max(start);
    f.text
        .get(start..end)
        .unwrap_or("")
        .trim_end_matches(['\n', '\r'])
}

/// A report on a line too long to show whole: each line with a span is
/// shown as a window of [`EXCERPT_WIDTH`] characters around its first span,
/// with the spans inside the window underlined. Drawn like ariadne's
/// reports, so the two kinds read alike.
fn windowed(
    sources: &SourceMap,
    kind_name: &str,
    message: &str,
    labels: &[Pending<'_>],
    help: Option<&str>,
    color: Option<Color>,
) -> String {
    use ariadne::Fmt;
    let mut labels: Vec<&Pending> = labels.iter().collect();
    // The primary span first, then by place.
    labels.sort_by_key(|l| (!l.primary, l.file, l.range.start));
    let width = labels
        .iter()
        .map(|l| (l.first_line + 1).to_string().len())
        .max()
        .unwrap_or(1);
    let margin = " ".repeat(width + 2);
    let header = match color {
        Some(c) => kind_name.fg(c).to_string(),
        None => kind_name.to_string(),
    };
    let mut out = format!("{header}: {message}\n");
    let mut shown: Vec<(FileId, u32)> = Vec::new();
    for (n, label) in labels.iter().enumerate() {
        let key = (label.file, label.first_line);
        if shown.contains(&key) {
            continue;
        }
        shown.push(key);
        let Some(f) = file(sources, label.file) else {
            continue;
        };
        let line_start = f.lines.line_start(label.first_line);
        let text = line_text(f, label.first_line);
        let position = super::position(f, label.range.start);
        let corner = if n == 0 { "╭" } else { "├" };
        out.push_str(&format!(
            "{margin}{corner}─[ {}:{}:{} ]\n{margin}│\n",
            f.path.display(),
            position.line,
            position.column
        ));
        // The window: EXCERPT_WIDTH characters starting a little before
        // this span, in character columns of the line.
        let column = position.column as usize - 1;
        let total = text.chars().count();
        let from = column
            .saturating_sub(EXCERPT_WIDTH / 4)
            .min(total.saturating_sub(EXCERPT_WIDTH));
        let to = (from + EXCERPT_WIDTH).min(total);
        let excerpt: String = text
            .chars()
            .skip(from)
            .take(to - from)
            .map(|c| if c == '\t' { ' ' } else { c })
            .collect();
        let cut_left = if from > 0 { "…" } else { "" };
        let cut_right = if to < total { "…" } else { "" };
        out.push_str(&format!(
            " {:>width$} │ {cut_left}{excerpt}{cut_right}\n",
            label.first_line + 1
        ));
        // Every span on this line that starts inside the window.
        let offset = usize::from(from > 0);
        let mut marks: Vec<char> = Vec::new();
        let mut notes: Vec<(usize, &str)> = Vec::new();
        let mut outside = 0;
        for other in labels
            .iter()
            .filter(|o| o.file == label.file && o.first_line == label.first_line)
        {
            let start = f.text[line_start..other.range.start].chars().count();
            if start < from || start >= to {
                outside += 1;
                continue;
            }
            let end = if other.last_line == other.first_line {
                start + f.text[other.range.clone()].chars().count()
            } else {
                to
            };
            let (a, b) = (
                start - from + offset,
                (end.min(to) - from + offset).max(start - from + offset + 1),
            );
            if marks.len() < b {
                marks.resize(b, ' ');
            }
            for (i, m) in marks[a..b].iter_mut().enumerate() {
                *m = if i == 0 { '┬' } else { '─' };
            }
            if !notes.iter().any(|(_, m)| *m == other.message) {
                notes.push((a, other.message));
            }
        }
        let marks: String = marks.into_iter().collect();
        out.push_str(&format!("{margin}│ {}\n", marks.trim_end()));
        for (at, note) in notes {
            out.push_str(&format!("{margin}│ {}╰── {note}\n", " ".repeat(at)));
        }
        if outside > 0 {
            out.push_str(&format!(
                "{margin}│ (and {} more outside this excerpt)\n",
                thousands(outside)
            ));
        }
    }
    if let Some(help) = help {
        out.push_str(&format!("{margin}│ \n{margin}│ Help: {help}\n"));
    }
    out.push_str(&format!("{}╯\n", "─".repeat(width + 3)));
    out
}

/// `n` with its digits grouped by thousands: `7,993`.
pub fn thousands(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::with_capacity(digits.len() + digits.len() / 3);
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// Findings as people read them, each report followed by an empty line.
/// `findings` pairs each diagnostic with the index of its analysis, whose
/// sources `sources_of` gives. The same finding repeated along one line
/// (same code, severity and message, no related spans) is one report that
/// counts them; a file gets at most [`REPORTS_PER_FILE`] reports, and one
/// line at the end counts the findings past them.
pub fn findings<'a>(
    sources_of: &dyn Fn(usize) -> &'a SourceMap,
    findings: &[(usize, &Diagnostic)],
    color: bool,
) -> String {
    let mut renderers: HashMap<usize, HumanRenderer> = HashMap::new();
    // Per file (by its path): reports shown, and the findings left out.
    let mut per_file: Vec<(String, usize, usize)> = Vec::new();
    let mut out = String::new();
    let mut k = 0;
    while let Some(&(i, d)) = findings.get(k) {
        let sources = sources_of(i);
        let line =
            file(sources, d.location.file).map(|f| f.lines.line_of(d.location.span.start as usize));
        let mut end = k + 1;
        while let Some(&(j, e)) = findings.get(end) {
            let same = j == i
                && d.related.is_empty()
                && e.related.is_empty()
                && e.location.file == d.location.file
                && e.code == d.code
                && e.severity == d.severity
                && e.message == d.message
                && line.is_some()
                && file(sources, e.location.file)
                    .map(|f| f.lines.line_of(e.location.span.start as usize))
                    == line;
            if !same {
                break;
            }
            end += 1;
        }
        let path = file(sources, d.location.file)
            .map(|f| f.path.display().to_string())
            .unwrap_or_default();
        let at = match per_file.iter().position(|(p, ..)| *p == path) {
            Some(at) => at,
            None => {
                per_file.push((path, 0, 0));
                per_file.len() - 1
            }
        };
        let entry = &mut per_file[at];
        if entry.1 < REPORTS_PER_FILE {
            entry.1 += 1;
            let repeats: Vec<&Diagnostic> = findings[k + 1..end].iter().map(|&(_, e)| e).collect();
            let renderer = renderers
                .entry(i)
                .or_insert_with(|| HumanRenderer::new(sources, color));
            out.push_str(&renderer.render_merged(d, &repeats));
            out.push('\n');
        } else {
            entry.2 += end - k;
        }
        k = end;
    }
    for (path, _, left_out) in per_file {
        if left_out > 0 {
            let in_file = if path.is_empty() {
                String::new()
            } else {
                format!(" in {path}")
            };
            out.push_str(&format!(
                "… and {} more {}{in_file} (`--format json` lists every finding)\n\n",
                thousands(left_out),
                if left_out == 1 { "finding" } else { "findings" }
            ));
        }
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

/// What a coloured word means; [`Paint`] gives each its colour.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tone {
    /// A test that passed.
    Passed,
    /// A test that failed (the headline).
    Failed,
    /// A failing case.
    Fail,
    /// Tests that were not run.
    NotRun,
}

/// Colours words outside diagnostics (which ariadne colours): on when
/// the caller's `Term::color` said so for the stream written to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Paint(pub bool);

impl Paint {
    pub fn paint(self, text: &str, tone: Tone) -> String {
        if !self.0 {
            return text.to_string();
        }
        // SGR parameters (ECMA-48, 8.3.117): 31 red, 32 green, 33 yellow, 1 bold.
        let sgr = match tone {
            Tone::Passed => "32",
            Tone::Failed => "31;1",
            Tone::Fail => "31",
            Tone::NotRun => "33",
        };
        format!("\x1b[{sgr}m{text}\x1b[0m")
    }
}

// --- `trellis check` ---

/// The human report of a check: every finding (`findings` index into
/// `checked`), then the summary line.
pub fn check_report(
    checked: &[Checked],
    findings: &[(usize, &Diagnostic)],
    files: usize,
    counts: Counts,
    deny_warnings: bool,
    color: bool,
) -> String {
    let mut out = self::findings(&|i| &checked[i].analysis.sources, findings, color);
    out.push_str(&summary(files, counts));
    if deny_warnings && counts.warnings > 0 {
        out.push_str(" (warnings are denied)");
    }
    out.push('\n');
    out
}

/// Every diagnostic in `diagnostics` rendered, each followed by an empty line.
pub fn diagnostics(sources: &SourceMap, diagnostics: &[Diagnostic], color: bool) -> String {
    let all: Vec<(usize, &Diagnostic)> = diagnostics.iter().map(|d| (0, d)).collect();
    findings(&|_| sources, &all, color)
}

// --- `trellis parse` ---

/// The report on one sentence: its best trees and probabilities, or why it
/// has no parse.
/// The words of a sentence read as unseen-word terminals, one line each
/// (positions 1-based), for the end of a sentence's report.
pub fn unseen_words(unseen: &[(usize, &str, &str)]) -> String {
    let mut out = String::new();
    for (position, word, terminal) in unseen {
        out.push_str(&format!(
            "  unseen word {} (word {}) read as {}\n",
            quote(word),
            position + 1,
            quote(terminal)
        ));
    }
    out
}

pub fn parse_report(sentence: &str, result: &Result<ParseOutcome, String>) -> String {
    let mut out = format!("sentence: {sentence}\n");
    match result {
        Err(e) => out.push_str(&format!("  not analysed: {e}\n")),
        Ok(o) => match &o.best {
            Some(best) => {
                out.push_str(&format!(
                    "  best tree (p = {}, ln p = {}):\n{}\n",
                    probability(best.probability),
                    log_probability(best.log_probability),
                    best.tree.to_indented("    ")
                ));
                for (rank, t) in o.kbest.iter().enumerate().skip(1) {
                    out.push_str(&format!(
                        "  tree {} (p = {}, ln p = {}):\n{}\n",
                        rank + 1,
                        probability(t.probability),
                        log_probability(t.log_probability),
                        t.tree.to_indented("    ")
                    ));
                }
                out.push_str(&format!(
                    "  P(sentence) = {} (ln P = {})\n",
                    probability(o.sentence_probability),
                    log_probability(o.sentence_log_probability)
                ));
                if let Some(c) = &o.parse_count {
                    out.push_str(&format!("  trees: {c}\n"));
                }
                if let Some(beam) = &o.beam {
                    out.push_str(&format!(
                        "  note: pruned with {}: not exact; probabilities are lower bounds, \
                         the best tree may be missed, the tree count counts surviving trees only\n",
                        beam.describe()
                    ));
                }
                if let Some(beam) = &o.beam_abandoned {
                    out.push_str(&format!(
                        "  note: {} left no tree, so it was given up for this sentence: \
                         the results are exact\n",
                        beam.describe()
                    ));
                }
            }
            None => {
                out.push_str("  no parse\n");
                if let Some(e) = &o.explanation {
                    for line in e.render() {
                        out.push_str(&format!("  {line}\n"));
                    }
                }
            }
        },
    }
    out
}

// --- `trellis stats` ---

/// The stats table of derivations from `r.root`, whose name is `name`.
pub fn stats_table(name: &str, r: &ConsistencyReport) -> String {
    let mut out = String::new();
    let infinite = "infinite";
    out.push_str(&format!("derivations from {name}\n"));
    out.push_str(&format!("  tight                     {}\n", {
        let how = match r.verdict {
            Verdict::Exact => "decided exactly".to_string(),
            Verdict::Numerical { tolerance } => {
                format!("decided numerically, within {tolerance:e}")
            }
        };
        if r.tight {
            format!("yes ({how})")
        } else {
            format!(
                "no: {} of the probability is lost ({how})",
                probability(r.leak)
            )
        }
    }));
    out.push_str(&format!(
        "  spectral radius           {} ({})\n",
        number(r.spectral_radius),
        r.regime.as_str()
    ));
    out.push_str(&format!(
        "  expected length           {}\n",
        r.expected_length.map_or(infinite.to_string(), |v| {
            format!("{} word{}", number(v), if v == 1.0 { "" } else { "s" })
        })
    ));
    out.push_str(&format!(
        "  expected derivation size  {}\n",
        r.expected_derivation_size
            .map_or(infinite.to_string(), |v| {
                format!("{} rule{}", number(v), if v == 1.0 { "" } else { "s" })
            })
    ));
    let width = r
        .symbols
        .iter()
        .filter(|s| s.reachable)
        .map(|s| s.name.chars().count())
        .max()
        .unwrap_or(0)
        .max("symbol".len());
    out.push_str(&format!(
        "\n  {:width$}  {:>12}  {:>14}\n",
        "symbol", "P(ends)", "uses/sentence"
    ));
    for s in r.symbols.iter().filter(|s| s.reachable) {
        out.push_str(&format!(
            "  {:width$}  {:>12}  {:>14}\n",
            s.name,
            probability(s.termination_probability),
            s.expected_uses.map_or(infinite.to_string(), number)
        ));
    }
    let unreachable = r.symbols.iter().filter(|s| !s.reachable).count();
    if unreachable > 0 {
        out.push_str(&format!(
            "  ({unreachable} symbol{} not reachable from {name} left out)\n",
            if unreachable == 1 { "" } else { "s" }
        ));
    }
    out
}

// --- `trellis test` ---

/// What `trellis test` lists besides the failing cases.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct TestDetail {
    /// Every case, not only the failing ones.
    pub every_case: bool,
    /// The most probable tree of every accepted sentence.
    pub trees: bool,
}

/// The rule coverage of one grammar's tests: the share of rules covered,
/// each block's count, and every uncovered rule at its place. `minimum` is
/// the `--min-coverage` asked for, if any.
pub fn coverage(run: &GrammarRun, minimum: Option<f64>, color: bool) -> String {
    let Some(coverage) = &run.coverage else {
        return String::new();
    };
    let paint = Paint(color);
    let grammar = &run.analysis.grammar;
    let mut out = format!(
        "coverage of {}: {} of {} covered ({:.1}%)",
        run.path.display(),
        coverage.covered,
        plural(coverage.rules, "rule", "rules"),
        coverage.percent()
    );
    if let Some(minimum) = minimum.filter(|&m| !coverage.reaches(m)) {
        out.push_str(&format!(
            ", {} --min-coverage {minimum}",
            paint.paint("below", Tone::Failed)
        ));
    }
    out.push('\n');
    let width = coverage
        .blocks
        .iter()
        .map(|b| grammar.nt_name(b.block).chars().count())
        .max()
        .unwrap_or(0);
    for block in &coverage.blocks {
        out.push_str(&format!(
            "  {:width$}  {}/{}\n",
            grammar.nt_name(block.block),
            block.covered,
            block.rules
        ));
    }
    if !coverage.uncovered.is_empty() {
        out.push_str("  rules no passing case uses:\n");
        for &id in &coverage.uncovered {
            let (file, at) = place(&run.analysis.sources, grammar.rule(id).location);
            out.push_str(&format!(
                "    {file}:{}:{}  {}\n",
                at.line,
                at.column,
                grammar.rule_text(id)
            ));
        }
    }
    out.push('\n');
    out
}

/// The closing line of a test run.
pub fn test_summary(tally: &Tally) -> String {
    let total = tally.tests();
    let counts = &tally.counts;
    if total == 0 {
        return "no tests found".to_string();
    }
    let mut out = format!(
        "{} in {}: {} passed, {} failed",
        plural(total, "test", "tests"),
        plural(tally.grammars, "grammar", "grammars"),
        counts.tests_passed,
        counts.tests_failed
    );
    if tally.tests_not_run > 0 {
        out.push_str(&format!(", {} not run", tally.tests_not_run));
    }
    let cases = counts.cases_passed + counts.cases_failed;
    if cases > 0 {
        out.push_str(&format!(
            " ({} of {} held)",
            counts.cases_passed,
            plural(cases, "case", "cases")
        ));
    }
    out
}

/// The report on one grammar's tests.
pub fn test_grammar(run: &GrammarRun, detail: TestDetail, color: bool) -> String {
    let paint = Paint(color);
    let mut out = format!("{}\n", run.path.display());
    if let Some(blocked) = &run.blocked {
        let stopping: Vec<Diagnostic> = blocked
            .errors()
            .iter()
            .map(|e| e.diagnostic.clone())
            .collect();
        out.push_str(&diagnostics(&run.analysis.sources, &stopping, color));
        out.push_str(&format!(
            "  {} {} not run: {}\n\n",
            paint.paint("not run", Tone::NotRun),
            plural(run.tests.len(), "test", "tests"),
            blocked.to_string().replace('\n', "\n  "),
        ));
        return out;
    }
    if let Some(note) = &run.ran.rescaled_note {
        out.push_str(&format!("  note: {note}\n"));
    }
    if !run.ran.ignored_errors.is_empty() {
        let n = run.ran.ignored_errors.len();
        out.push_str(&format!(
            "  note: ran despite {n} error{} outside what the tests use:\n",
            if n == 1 { "" } else { "s" }
        ));
        for d in &run.ran.ignored_errors {
            let (file, at) = place(&run.analysis.sources, d.location);
            out.push_str(&format!(
                "    {file}:{}:{}: {} {}\n",
                at.line, at.column, d.code, d.message
            ));
        }
    }
    let sources = &run.analysis.sources;
    let list_all = detail.every_case || detail.trees;
    for result in &run.tests {
        let (test, outcomes) = (result.test, &result.cases);
        let failed = result.failed();
        let (file, at) = place(sources, test.location);
        let status = if failed == 0 {
            paint.paint("passed", Tone::Passed)
        } else {
            paint.paint("FAILED", Tone::Failed)
        };
        let count = if failed == 0 {
            plural(outcomes.len(), "case", "cases")
        } else {
            format!(
                "{failed} of {} failed",
                plural(outcomes.len(), "case", "cases")
            )
        };
        out.push_str(&format!(
            "  {status}  test {} ({count})  {file}:{}\n",
            quote(&test.name),
            at.line
        ));
        for (case, outcome) in test.cases.iter().zip(outcomes) {
            match outcome {
                CaseOutcome::Passed { best, tied } => {
                    if !list_all {
                        continue;
                    }
                    if detail.trees {
                        // One line that pastes back into a test block as
                        // it is: the case with the most probable tree (or
                        // the expected one, which holds), the rest a comment.
                        let mut line = format!("      {case}");
                        if let (None, Some(best)) = (&case.tree, best) {
                            line.push_str(&format!(" as {}", best.tree.to_brackets()));
                        }
                        line.push_str("  # ok");
                        if let Some(best) = best {
                            line.push_str(&format!(", p ≈ {}", probability(best.probability)));
                        }
                        if *tied {
                            line.push_str(", holds by a tie: another tree is exactly as probable");
                        }
                        out.push_str(&line);
                        out.push('\n');
                        continue;
                    }
                    out.push_str(&format!("      ok  {}\n", case));
                    if *tied {
                        out.push_str(
                            "          (holds by a tie: another tree is exactly as probable)\n",
                        );
                    }
                }
                CaseOutcome::Failed(failure) => {
                    let (file, at) = place(sources, case.location);
                    out.push_str(&format!(
                        "    {}  {file}:{}:{}  {}\n",
                        paint.paint("fail", Tone::Fail),
                        at.line,
                        at.column,
                        case
                    ));
                    for line in failure.render() {
                        out.push_str(&format!("          {line}\n"));
                    }
                }
            }
        }
    }
    out.push('\n');
    out
}

/// A PARSEVAL report: the totals, then precision, recall and F1 per label.
pub fn evaluation(e: &trellis_project::evaluate::Evaluation) -> String {
    use trellis_treebank::eval::Totals;
    let t = &e.totals;
    let pct = |a: usize, b: usize| {
        if b == 0 {
            "–".to_string()
        } else {
            format!("{:.2}%", 100.0 * a as f64 / b as f64)
        }
    };
    let (p, r, f) = Totals::prf(t.matched, t.gold, t.test);
    let mut out = String::new();
    out.push_str(&format!("sentences    {}", t.sentences));
    if t.skipped > 0 {
        out.push_str(&format!(
            " ({} over the length cut-off left out)",
            t.skipped
        ));
    }
    out.push('\n');
    out.push_str(&format!(
        "brackets     {} gold, {} predicted, {} matched\n",
        t.gold, t.test, t.matched
    ));
    out.push_str(&format!("precision    {:.2}%\n", 100.0 * p));
    out.push_str(&format!("recall       {:.2}%\n", 100.0 * r));
    out.push_str(&format!("F1           {:.2}%\n", 100.0 * f));
    out.push_str(&format!(
        "exact match  {} ({} of {})\n",
        pct(t.exact, t.sentences),
        t.exact,
        t.sentences
    ));
    let per_sentence = if t.sentences == 0 {
        0.0
    } else {
        t.crossing as f64 / t.sentences as f64
    };
    out.push_str(&format!(
        "crossing     {per_sentence:.2} brackets per sentence; {} of sentences with none\n",
        pct(t.no_crossing, t.sentences)
    ));
    if !t.labels.is_empty() {
        let width = t
            .labels
            .keys()
            .map(|l| l.chars().count())
            .max()
            .unwrap_or(5)
            .max(5);
        out.push_str(&format!(
            "\n{:<width$}  {:>6}  {:>9}  {:>7}  {:>9}  {:>7}  {:>7}\n",
            "label", "gold", "predicted", "matched", "precision", "recall", "F1"
        ));
        for (label, &(m, g, pr)) in &t.labels {
            let (p, r, f) = Totals::prf(m, g, pr);
            out.push_str(&format!(
                "{label:<width$}  {g:>6}  {pr:>9}  {m:>7}  {:>8.2}%  {:>6.2}%  {:>6.2}%\n",
                100.0 * p,
                100.0 * r,
                100.0 * f
            ));
        }
    }
    out
}

/// `trellis fit --dry-run`: per block the trees use, every rule with its
/// count and its old and new probability; then the blocks no tree uses.
pub fn fit_table(
    analysis: &trellis_ide::Analysis,
    fitted: &trellis_project::fit::Fitted,
) -> String {
    use grammar_lang::model::Decimal;
    let grammar = &analysis.grammar;
    let rows: Vec<(String, String, String, String)> = fitted
        .estimate
        .seen()
        .flat_map(|b| b.rules.iter())
        .map(|r| {
            (
                trellis_project::fit::rule_as_written(analysis, r.rule),
                r.count.to_string(),
                Decimal(&r.old).to_string(),
                Decimal(&r.new).to_string(),
            )
        })
        .collect();
    let width = |f: fn(&(String, String, String, String)) -> &String, title: &str| {
        rows.iter()
            .map(|r| f(r).chars().count())
            .chain([title.chars().count()])
            .max()
            .unwrap_or(0)
    };
    let (w_rule, w_count, w_old) = (
        width(|r| &r.0, "rule"),
        width(|r| &r.1, "count"),
        width(|r| &r.2, "old"),
    );
    let pad = |s: &str, w: usize| format!("{s}{}", " ".repeat(w.saturating_sub(s.chars().count())));
    let mut out = format!(
        "{}  {}  {}  new\n",
        pad("rule", w_rule),
        format_args!("{:>w_count$}", "count"),
        pad("old", w_old)
    );
    let mut row = rows.iter();
    for block in fitted.estimate.seen() {
        out.push('\n');
        for _ in &block.rules {
            let Some((rule, count, old, new)) = row.next() else {
                break;
            };
            out.push_str(&format!(
                "{}  {count:>w_count$}  {}  {new}\n",
                pad(rule, w_rule),
                pad(old, w_old)
            ));
        }
    }
    let unseen: Vec<&str> = fitted
        .estimate
        .unseen()
        .map(|b| grammar.nt_name(b.nt))
        .collect();
    if !unseen.is_empty() {
        out.push_str(&format!(
            "\nno tree uses {} (weights kept): {}\n",
            if unseen.len() == 1 {
                "this block"
            } else {
                "these blocks"
            },
            unseen.join(", ")
        ));
    }
    out
}

/// What `trellis fit` did, for stderr: the counts, the blocks kept, and a
/// warning for every way the new weights change the grammar beyond
/// themselves.
pub fn fit_summary(
    analysis: &trellis_ide::Analysis,
    fitted: &trellis_project::fit::Fitted,
) -> String {
    let e = &fitted.estimate;
    let grammar = &analysis.grammar;
    let seen = e.seen().count();
    let mut out = format!(
        "fitted {seen} block{} to {} tree{} (smoothing {})",
        if seen == 1 { "" } else { "s" },
        e.trees,
        if e.trees == 1 { "" } else { "s" },
        e.smoothing
    );
    if !fitted.skipped.is_empty() {
        out.push_str(&format!("; {} trees skipped", fitted.skipped.len()));
    }
    if fitted.emptied > 0 {
        out.push_str(&format!(
            "; {} trees left empty by cleaning",
            fitted.emptied
        ));
    }
    out.push('\n');
    let unseen: Vec<&str> = e.unseen().map(|b| grammar.nt_name(b.nt)).collect();
    if !unseen.is_empty() {
        out.push_str(&format!(
            "kept the weights of {} block{} no tree uses: {}\n",
            unseen.len(),
            if unseen.len() == 1 { "" } else { "s" },
            unseen.join(", ")
        ));
    }
    if let Some(note) = fallback_note(&fitted.fallbacks) {
        out.push_str(&note);
    }
    for finding in &fitted.new_findings {
        out.push_str(&format!(
            "warning: the fitted grammar has a new finding: {finding}\n"
        ));
    }
    for (test, case) in &fitted.broken_cases {
        out.push_str(&format!(
            "warning: test \"{test}\": `{case}` held with the old weights and fails with the new\n"
        ));
    }
    out
}

/// The note on the blocks a fit writes in exact fractions because their
/// new weights cannot be written exactly in their own notation: one line
/// however many there are. One block gets its reason in full; several get
/// the kinds of reason and their names, the first twelve of
/// them (`--format json` keeps each block's reason).
fn fallback_note(fallbacks: &[(String, NotExact)]) -> Option<String> {
    /// The most block names the note lists (a learned grammar may have
    /// hundreds of blocks).
    const FALLBACK_NAMES: usize = 12;
    match fallbacks {
        [] => None,
        [(block, why)] => Some(format!("note: `{block}` takes exact fractions: {why}\n")),
        many => {
            let repeats = many.iter().any(|(_, n)| n.why == Inexact::Repeats);
            let too_long = many
                .iter()
                .any(|(_, n)| matches!(n.why, Inexact::TooLong { .. }));
            let long = format!("need more than {MAX_DECIMALS} decimal places");
            let why = match (repeats, too_long) {
                (true, true) => format!("have no finite decimal expansion or {long}"),
                (true, false) => "have no finite decimal expansion".to_string(),
                (false, _) => long,
            };
            let mut names: Vec<String> = many
                .iter()
                .take(FALLBACK_NAMES)
                .map(|(b, _)| format!("`{b}`"))
                .collect();
            if many.len() > FALLBACK_NAMES {
                names.push(format!("and {} more", many.len() - FALLBACK_NAMES));
            }
            Some(format!(
                "note: {} blocks take exact fractions, since some of their new weights {why}: {} \
                 (`--format json` gives each block's reason)\n",
                many.len(),
                names.join(", ")
            ))
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::render::json::json_diagnostic;
    use grammar_lang::{Code, Location, Span};

    use crate::render::tests::{one_file, span_of};

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

    #[test]
    fn paint_colours_only_when_asked_for() {
        assert_eq!(Paint(false).paint("FAILED", Tone::Failed), "FAILED");
        assert_eq!(
            Paint(true).paint("FAILED", Tone::Failed),
            "\u{1b}[31;1mFAILED\u{1b}[0m"
        );
    }

    #[test]
    fn the_test_summary_counts_tests_grammars_and_cases() {
        let tally = Tally {
            grammars: 2,
            grammars_blocked: 1,
            tests_not_run: 2,
            counts: trellis_project::test_run::Counts {
                tests_passed: 3,
                tests_failed: 1,
                cases_passed: 20,
                cases_failed: 1,
            },
        };
        assert_eq!(
            test_summary(&tally),
            "6 tests in 2 grammars: 3 passed, 1 failed, 2 not run (20 of 21 cases held)"
        );
        assert_eq!(test_summary(&Tally::default()), "no tests found");
    }

    /// Why `weight` (as written) cannot be written exactly as a decimal.
    fn not_a_decimal(weight: &str) -> NotExact {
        let (value, _) = grammar_lang::weight::parse_weight(weight).unwrap();
        grammar_lang::weight::write_exact(&value, grammar_lang::model::Notation::Decimal)
            .unwrap_err()
    }

    #[test]
    fn blocks_that_take_fractions_after_a_fit_are_one_note_however_many() {
        assert_eq!(fallback_note(&[]), None);
        // One block: its reason in full.
        let third = ("Lamp".to_string(), not_a_decimal("1/3"));
        assert_eq!(
            fallback_note(std::slice::from_ref(&third)).unwrap(),
            "note: `Lamp` takes exact fractions: decimals cannot be exact here: 1/3 has no \
             finite decimal expansion\n"
        );
        // Several: one line with every name, the reasons in brief. 1/128 =
        // 0.0078125 has seven decimal places.
        let repeating = [third.clone(), ("Weather".to_string(), not_a_decimal("2/3"))];
        assert_eq!(
            fallback_note(&repeating).unwrap(),
            "note: 2 blocks take exact fractions, since some of their new weights have no \
             finite decimal expansion: `Lamp`, `Weather` (`--format json` gives each block's \
             reason)\n"
        );
        let long = ("Status".to_string(), not_a_decimal("1/128"));
        assert_eq!(
            fallback_note(&[long.clone(), long.clone()]).unwrap(),
            "note: 2 blocks take exact fractions, since some of their new weights need more \
             than 6 decimal places: `Status`, `Status` (`--format json` gives each block's \
             reason)\n"
        );
        let mixed = fallback_note(&[third, long]).unwrap();
        assert!(
            mixed.starts_with(
                "note: 2 blocks take exact fractions, since some of their new weights have no \
                 finite decimal expansion or need more than 6 decimal places: `Lamp`, `Status` "
            ),
            "{mixed}"
        );
        assert_eq!(mixed.lines().count(), 1);
        // Many: the first twelve names and how many more.
        let many: Vec<(String, NotExact)> = (0..15)
            .map(|n| (format!("B{n}"), not_a_decimal("1/3")))
            .collect();
        let note = fallback_note(&many).unwrap();
        assert!(
            note.starts_with("note: 15 blocks take exact fractions"),
            "{note}"
        );
        assert!(
            note.contains("`B10`, `B11`, and 3 more (`--format json`"),
            "{note}"
        );
        assert!(!note.contains("`B12`"), "{note}");
    }
}
