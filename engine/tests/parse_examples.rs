//! The example grammars' own `test` blocks, run by the test runner: every
//! `accept` sentence parses, every `reject` sentence does not, and
//! `accept … as TREE` gets exactly that most probable tree. The
//! expectations were written by hand by the examples' authors; the kiosk's
//! "most probable readings" block also records the hand computation of the
//! two readings it decides between, checked exactly below.

use grammar_lang::model::{Grammar, Ratio};
use grammar_lang::MemoryLoader;
use std::path::Path;
use trellis_engine::parser::{Parser, DEFAULT_MAX_CHART_BYTES};
use trellis_engine::testing::{run_case, tree_probability, CaseOutcome};

fn example(root: &str, used: &[&str]) -> Grammar {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    let read = |name: &str| std::fs::read_to_string(dir.join(name)).expect("example exists");
    let mut loader = MemoryLoader::new();
    for name in used {
        loader = loader.with(dir.join(name), read(name));
    }
    let analysis = grammar_lang::analyze(
        &dir.join(root),
        &read(root),
        &loader,
        &grammar_lang::Config::default(),
    );
    assert!(!analysis.has_errors(), "{root}: {:?}", analysis.diagnostics);
    analysis.grammar
}

fn check_example(root: &str, used: &[&str]) -> usize {
    let grammar = example(root, used);
    let parser = Parser::new(&grammar).unwrap();
    let mut cases = 0;
    for test in &grammar.tests {
        for case in &test.cases {
            cases += 1;
            let outcome = run_case(&parser, &grammar, case, DEFAULT_MAX_CHART_BYTES);
            if let CaseOutcome::Failed(failure) = outcome {
                panic!(
                    "{root}, test {:?}: {:?}\n{}",
                    test.name,
                    case.sentence,
                    failure.render().join("\n")
                );
            }
        }
    }
    cases
}

#[test]
fn ferry_kiosk_example_passes_its_own_tests() {
    let cases = check_example("ferry_kiosk.trellis", &["ferry_lexicon.trellis"]);
    assert!(cases >= 10, "only {cases} test cases");
}

#[test]
fn greenhouse_example_passes_its_own_tests() {
    let cases = check_example("greenhouse_voice.trellis", &[]);
    assert!(cases >= 5, "only {cases} test cases");
}

#[test]
fn the_kiosk_hand_computation_of_its_two_readings_holds_exactly() {
    // The comment above the kiosk's "most probable readings" test computes
    // the When subtrees of "on the first" by hand: the date reading
    // 1/10 · 1/5 · 1/31 = 1/1550, the sailing reading 1/5 · 3/20 · 1/20 = 3/2000.
    let g = example("ferry_kiosk.trellis", &["ferry_lexicon.trellis"]);
    let tree = |text: &str| {
        let source =
            format!("start S\nS {{ \"x\" }}\ntest \"t\" {{ accept \"on the first\" as {text} }}\n");
        grammar_lang::analyze_text(&source).grammar.tests[0].cases[0]
            .tree
            .clone()
            .unwrap()
    };
    let date = tree(r#"(When "on" (Date "the" (Ordinal "first")))"#);
    let sailing = tree(r#"(When (Time "on" "the" (Sailing "first")))"#);
    assert_eq!(
        tree_probability(&g, &date),
        Ok(Ratio::new(1.into(), 1550.into()))
    );
    assert_eq!(
        tree_probability(&g, &sailing),
        Ok(Ratio::new(3.into(), 2000.into()))
    );
}
