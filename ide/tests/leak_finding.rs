//! `leaky` joins the static findings of a grammar whose mass leaks: the
//! façade's analysis carries it, at the level the configuration sets.

use grammar_lang::config::Level;
use grammar_lang::{Code, Config, MemoryLoader, Severity};
use std::path::Path;
use trellis_ide::{analyze, analyze_text};

/// S → S S (0.7) | "a" (0.3) ends with probability 3/7: the extinction
/// probability min(1, q/p) of a Galton–Watson process with two children
/// with probability p and none with probability q (a classic
/// branching-process result).
const LEAKY: &str = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\n";

fn with_leaky(level: Level) -> Config {
    let mut config = Config::default();
    config.levels.insert(Code::Leaky, level);
    config
}

fn leaky_findings(analysis: &trellis_ide::Analysis) -> Vec<&grammar_lang::Diagnostic> {
    analysis
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::Leaky)
        .collect()
}

#[test]
fn a_leaking_grammar_gets_a_leaky_warning_at_its_start_declaration() {
    let analysis = analyze_text(LEAKY);
    let leaky = leaky_findings(&analysis);
    assert_eq!(leaky.len(), 1);
    assert_eq!(leaky[0].severity, Severity::Warning);
    assert_eq!(leaky[0].location.span.text(LEAKY), "S", "{:?}", leaky[0]);
    // 1 − 3/7 = 4/7 ≈ 0.571 leaks.
    assert!(leaky[0].message.contains("0.571"), "{}", leaky[0].message);
}

#[test]
fn a_tight_grammar_gets_no_leaky_finding() {
    // S → S S (0.3) | "a" (0.7) ends with probability 1 (same result).
    let analysis = analyze_text("start S\nS {\n  0.3 S S\n  0.7 \"a\"\n}\n");
    assert!(
        analysis.diagnostics.is_empty(),
        "{:?}",
        analysis.diagnostics
    );
}

#[test]
fn the_configured_level_applies_and_off_silences_it() {
    let run =
        |config: &Config| analyze(Path::new("g.trellis"), LEAKY, &MemoryLoader::new(), config);
    let as_error = run(&with_leaky(Level::At(Severity::Error)));
    assert_eq!(leaky_findings(&as_error).len(), 1);
    assert!(as_error.has_errors());

    let off = run(&with_leaky(Level::Off));
    assert!(leaky_findings(&off).is_empty());
    assert!(off.diagnostics.is_empty());
}

#[test]
fn grammars_with_errors_are_not_measured() {
    let analysis = analyze_text("start S\nS {\n  0.7 S S\n  0.3 \"a\"\n  0.1 T\n}\n");
    assert!(analysis.has_errors());
    assert!(leaky_findings(&analysis).is_empty());
}

#[test]
fn the_leaky_finding_sits_in_file_order_among_the_others() {
    // An unreachable block after the start declaration: `leaky` (at
    // `start`) comes before `unreachable` (further down).
    let text = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\nX { \"x\" }\n";
    let analysis = analyze_text(text);
    let codes: Vec<Code> = analysis.diagnostics.iter().map(|d| d.code).collect();
    assert_eq!(codes, vec![Code::Leaky, Code::Unreachable]);
}

#[test]
fn a_leak_made_an_error_does_not_stop_the_engine_from_running_the_grammar() {
    // `leaky = "error"` makes `check` fail, but the model is well formed:
    // parse, sample and stats (where the leak is studied) still run it.
    let config = with_leaky(Level::At(Severity::Error));
    let analysis = analyze(Path::new("g.trellis"), LEAKY, &MemoryLoader::new(), &config);
    assert!(analysis.has_errors());
    assert!(analysis.run(None).is_ok());
    // A static error still stops it.
    let broken = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n  0.1 T\n}\n";
    let analysis = analyze(
        Path::new("g.trellis"),
        broken,
        &MemoryLoader::new(),
        &config,
    );
    assert!(analysis.run(None).is_err());
}

#[test]
fn findings_added_later_take_their_place_in_file_order() {
    // An unreachable block (warning, line 6) and a finding added after the
    // analysis at the start of the file: the list stays ordered by place.
    let text = "start S\nS {\n  0.7 S S\n  0.3 \"a\"\n}\nX { \"x\" }\n";
    let mut analysis = analyze_text(text);
    let at_start = grammar_lang::Diagnostic::new(
        Code::Uncovered,
        grammar_lang::Location::new(grammar_lang::FileId(0), grammar_lang::Span::new(8, 9)),
        "added",
    );
    analysis.add_findings(vec![at_start]);
    let codes: Vec<Code> = analysis.diagnostics.iter().map(|d| d.code).collect();
    assert_eq!(codes, vec![Code::Leaky, Code::Uncovered, Code::Unreachable]);
}
