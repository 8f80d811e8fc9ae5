//! The formatter: its layout on a table of before/after examples
//! (`tests/data/format_cases.txt`), and on every example grammar that it is
//! idempotent and keeps the model, the findings and every comment in place.

mod common;

use common::format_checks::{check_formatting, facts};
use grammar_lang::format::{format, minimal_edits, minimal_edits_in_range, FormatOptions};
use grammar_lang::syntax;
use grammar_lang::Span;

const EXAMPLES: &[(&str, &str)] = &[
    (
        "ferry_kiosk.trellis",
        include_str!("../../examples/ferry_kiosk.trellis"),
    ),
    (
        "ferry_lexicon.trellis",
        include_str!("../../examples/ferry_lexicon.trellis"),
    ),
    (
        "greenhouse_voice.trellis",
        include_str!("../../examples/greenhouse_voice.trellis"),
    ),
    (
        "broken_cycle.trellis",
        include_str!("../../examples/broken_cycle.trellis"),
    ),
    (
        "broken_leaky.trellis",
        include_str!("../../examples/broken_leaky.trellis"),
    ),
    (
        "broken_no_start.trellis",
        include_str!("../../examples/broken_no_start.trellis"),
    ),
    (
        "broken_unknown_start.trellis",
        include_str!("../../examples/broken_unknown_start.trellis"),
    ),
];
const BROKEN: &str = include_str!("../../examples/broken.trellis");

#[test]
fn every_example_formats_idempotently_keeping_model_and_comments() {
    for (name, text) in EXAMPLES {
        if let Err(problem) = check_formatting(text, &FormatOptions::default()) {
            panic!("{name}: {problem}");
        }
    }
}

/// `broken.trellis` has syntax errors on purpose, so it is refused whole;
/// its intact parts are the file with every line that holds a syntax error
/// removed (what remains parses cleanly and still shows every other finding).
#[test]
fn the_broken_example_is_refused_and_its_intact_parts_format() {
    let err = format(BROKEN, &FormatOptions::default()).unwrap_err();
    assert!(!err.errors.is_empty());
    let syntax = syntax::parse(BROKEN);
    let mut bad_lines = std::collections::BTreeSet::new();
    let index = grammar_lang::LineIndex::new(BROKEN);
    for e in &syntax.errors {
        for offset in [e.span.start as usize, e.span.end.saturating_sub(1) as usize] {
            bad_lines.insert(index.line_of(offset));
        }
    }
    let intact: String = BROKEN
        .split_inclusive('\n')
        .enumerate()
        .filter(|(i, _)| !bad_lines.contains(&(*i as u32)))
        .map(|(_, l)| l)
        .collect();
    assert!(syntax::parse(&intact).errors.is_empty(), "{intact}");
    assert!(
        intact.len() > BROKEN.len() * 9 / 10,
        "most of the file is intact"
    );
    if let Err(problem) = check_formatting(&intact, &FormatOptions::default()) {
        panic!("broken.trellis without its syntax errors: {problem}");
    }
}

/// The cases of `tests/data/format_cases.txt`: `=== name [width=N]`, the
/// input, a line `---`, the expected output.
fn cases() -> Vec<(String, usize, String, String)> {
    let data = include_str!("data/format_cases.txt");
    let mut out = Vec::new();
    for chunk in data.split("\n=== ").skip(1) {
        let (title, body) = chunk.split_once('\n').unwrap();
        let (before, after) = body
            .split_once("\n---\n")
            .unwrap_or_else(|| panic!("case {title}: no `---` line"));
        let mut width = 100;
        let mut name = title.to_string();
        if let Some((n, w)) = title.split_once(" width=") {
            name = n.to_string();
            width = w.trim().parse().unwrap();
        }
        out.push((name, width, format!("{before}\n"), after.to_string()));
    }
    out
}

#[test]
fn the_table_of_layouts_holds() {
    let cases = cases();
    assert!(cases.len() >= 10);
    let mut failures = Vec::new();
    for (name, width, before, after) in &cases {
        let options = FormatOptions { width: *width };
        match check_formatting(before, &options) {
            Ok(formatted) if &formatted == after => {}
            Ok(formatted) => failures.push(format!(
                "=== {name}\n--- expected ---\n{after}--- formatted ---\n{formatted}"
            )),
            Err(problem) => failures.push(format!("=== {name}: {problem}")),
        }
    }
    assert!(failures.is_empty(), "{}", failures.join("\n"));
}

#[test]
fn text_with_syntax_errors_is_refused_with_its_errors() {
    let err = format("A { 0.5 }\nB = \"x\"\n", &FormatOptions::default()).unwrap_err();
    assert_eq!(err.errors.len(), 2);
    let diagnostics = err.diagnostics(grammar_lang::FileId(0));
    assert_eq!(diagnostics[0].code, grammar_lang::Code::EmptyRule);
    assert_eq!(diagnostics[1].code, grammar_lang::Code::Syntax);
}

#[test]
fn windows_line_endings_and_a_byte_order_mark_are_kept() {
    let text = "\u{FEFF}start A\r\nA {  \"x\" |\"y\" }   # c\r\n";
    let out = format(text, &FormatOptions::default()).unwrap();
    assert_eq!(out, "\u{FEFF}start A\r\n\r\nA { \"x\" | \"y\" }  # c\r\n");
    assert_eq!(facts(text), facts(&out));
}

#[test]
fn applying_the_minimal_edits_gives_the_formatted_text() {
    for (name, text) in EXAMPLES {
        let formatted = format(text, &FormatOptions::default()).unwrap();
        let edits = minimal_edits(text, &formatted);
        let mut out = text.to_string();
        for (span, new) in edits.iter().rev() {
            out.replace_range(span.range(), new);
        }
        assert_eq!(out, formatted, "{name}");
        // Edits only touch what changed: far less than the whole file.
        let touched: usize = edits.iter().map(|(s, _)| s.len()).sum();
        assert!(touched < text.len() / 2, "{name}: {touched} bytes touched");
    }
}

#[test]
fn range_edits_stay_on_the_lines_of_the_range() {
    let text = "start A\nA {  0.5 \"x\"\n  0.5   \"y\" }\nB {\n1  \"z\"\n}\n";
    let formatted = format(text, &FormatOptions::default()).unwrap();
    // The range covers `B`'s block only (lines 3..=5).
    let from = text.find("B {").unwrap();
    let edits = minimal_edits_in_range(text, &formatted, Span::new(from, text.len()));
    assert!(!edits.is_empty());
    assert!(
        edits.iter().all(|(s, _)| s.start as usize >= from - 1),
        "{edits:?}"
    );
    // Everything formatted: the edits of the ranges cover all the edits.
    let all = minimal_edits_in_range(text, &formatted, Span::new(0, text.len()));
    assert_eq!(all, minimal_edits(text, &formatted));
}
