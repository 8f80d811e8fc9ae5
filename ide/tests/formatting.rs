//! Formatting through the façade: minimal edits in the configured width,
//! nothing for a file with syntax errors.

use grammar_lang::{Config, FileId, MemoryLoader, Span};
use std::path::Path;
use trellis_ide::{analyze, analyze_text, TextEdit};

fn apply(text: &str, edits: &[TextEdit]) -> String {
    let mut out = text.to_string();
    for e in edits.iter().rev() {
        out.replace_range(e.span.range(), &e.new_text);
    }
    out
}

#[test]
fn formatting_answers_small_edits_that_give_the_formatted_text() {
    let text = "start S\nS {\n  0.5 A\n  0.5   \"b\"\n}\nA {\"a\"}\n";
    let analysis = analyze_text(text);
    let edits = analysis.formatting(FileId(0), None).unwrap();
    assert_eq!(
        apply(text, &edits),
        "start S\n\nS {\n  0.5  A\n  0.5  \"b\"\n}\n\nA { \"a\" }\n"
    );
    assert!(
        edits
            .iter()
            .all(|e| e.file == FileId(0) && e.span.len() < 8),
        "{edits:?}"
    );
}

#[test]
fn range_formatting_keeps_to_the_lines_asked_for() {
    let text = "start S\nS {\n  0.5 A\n  0.5   \"b\"\n}\nA {\"a\"}\n";
    let analysis = analyze_text(text);
    let from = text.find("A {").unwrap();
    let edits = analysis
        .formatting(FileId(0), Some(Span::new(from, text.len())))
        .unwrap();
    assert_eq!(
        apply(text, &edits),
        "start S\nS {\n  0.5 A\n  0.5   \"b\"\n}\n\nA { \"a\" }\n"
    );
}

#[test]
fn the_configured_width_decides_one_line_blocks() {
    let text = "start K\n\nK { \"return\" | \"single\" }\n";
    let config = Config {
        format: grammar_lang::FormatOptions { width: 20 },
        ..Config::default()
    };
    let analysis = analyze(Path::new("g.trellis"), text, &MemoryLoader::new(), &config);
    let edits = analysis.formatting(FileId(0), None).unwrap();
    assert_eq!(
        apply(text, &edits),
        "start K\n\nK {\n  \"return\"\n  \"single\"\n}\n"
    );
    assert!(analyze_text(text)
        .formatting(FileId(0), None)
        .unwrap()
        .is_empty());
}

#[test]
fn a_file_with_syntax_errors_is_not_formatted() {
    let analysis = analyze_text("start S\nS { 0.5 }\nT = \"x\"\n");
    let err = analysis.formatting(FileId(0), None).unwrap_err();
    assert_eq!(err.errors.len(), 2);
}
