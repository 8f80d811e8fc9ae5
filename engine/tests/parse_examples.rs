//! The example grammars' own `test` blocks, run through the parser: every
//! `accept` sentence parses, every `reject` sentence does not (and is
//! explained), and `accept … as TREE` gets exactly that most probable tree.
//! The expectations were written by hand by the examples' authors.

use grammar_lang::model::Expectation;
use grammar_lang::MemoryLoader;
use std::path::Path;
use trellis_engine::parser::{ParseOptions, Parser};

fn check_example(root: &str, used: &[&str]) -> usize {
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
    let parser = Parser::new(&analysis.grammar).unwrap();
    let mut cases = 0;
    for test in &analysis.grammar.tests {
        for case in &test.cases {
            cases += 1;
            let out = parser
                .parse(&case.words(), &ParseOptions::default())
                .unwrap();
            let context = format!("{root}, test {:?}: {:?}", test.name, case.sentence);
            match case.expect {
                Expectation::Accept => {
                    let best = out.best.as_ref().unwrap_or_else(|| {
                        panic!(
                            "{context} does not parse:\n{}",
                            out.explanation.as_ref().unwrap()
                        )
                    });
                    if let Some(tree) = &case.tree {
                        assert_eq!(best.tree.to_brackets(), tree.to_brackets(), "{context}");
                    }
                }
                Expectation::Reject => {
                    assert!(
                        out.best.is_none(),
                        "{context} parses as {}",
                        out.best.as_ref().unwrap().tree
                    );
                    assert!(out.explanation.is_some(), "{context}");
                }
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
