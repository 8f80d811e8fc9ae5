//! Unseen words (`grammar_lang::unseen`): a word no terminal matches is
//! read as the most specific unseen-word terminal of its shape class the
//! grammar has, in every pass — best tree, sentence probability, counts,
//! k-best, the test runner's exact judging — and trees keep the word as
//! written.

use grammar_lang::model::{Expectation, Ratio};
use trellis_engine::parser::{ParseOptions, Parser, DEFAULT_MAX_CHART_BYTES};
use trellis_engine::testing::{run_case, tree_probability};

const HARBOUR: &str = r#"
start Report
Report { Vessel "docked" }
Vessel {
  1/2  "ferry"
  1/4  "<unseen:capitalised>"
  1/8  "<unseen:lower>"
  1/8  "<unseen>"
}
test "t" {
  accept "Aurora docked" as (Report (Vessel "Aurora") "docked")
  accept "sailing docked" as (Report (Vessel "sailing") "docked")
  accept "42 docked"
  reject "ferry ferry"
}
"#;

#[test]
fn an_unknown_word_takes_its_class_probability_and_keeps_its_spelling() {
    let analysis = grammar_lang::analyze_text(HARBOUR);
    assert!(
        analysis.diagnostics.is_empty(),
        "{:?}",
        analysis.diagnostics
    );
    let parser = Parser::new(&analysis.grammar).unwrap();
    // (word, class probability): Aurora is capitalised; "sailing" has no
    // `suffix-ing` terminal here, so its chain falls back to `lower`; 42's
    // chain (number, has-digit) has nothing but the generic class.
    for (word, p) in [("Aurora", 0.25), ("sailing", 0.125), ("42", 0.125)] {
        let outcome = parser
            .parse(&[word, "docked"], &ParseOptions::default())
            .unwrap();
        let best = outcome.best.expect("parses");
        assert_eq!(
            best.tree.to_brackets(),
            format!(r#"(Report (Vessel "{word}") "docked")"#)
        );
        // One tree, so the sentence probability is the tree's.
        assert!((best.probability - p).abs() < 1e-12, "{word}");
        assert!((outcome.sentence_probability - p).abs() < 1e-12, "{word}");
        assert_eq!(outcome.parse_count.unwrap().to_string(), "1");
    }
    // A known word is never read as a class.
    let ferry = parser
        .parse(&["ferry", "docked"], &ParseOptions::default())
        .unwrap();
    assert!((ferry.sentence_probability - 0.5).abs() < 1e-12);
    assert!(parser.unseen_words(&["ferry", "docked"]).is_empty());
}

#[test]
fn the_test_runner_judges_trees_with_unseen_words_exactly() {
    let analysis = grammar_lang::analyze_text(HARBOUR);
    let g = &analysis.grammar;
    let parser = Parser::new(g).unwrap();
    for case in &analysis.grammar.tests[0].cases {
        let outcome = run_case(&parser, g, case, DEFAULT_MAX_CHART_BYTES);
        assert!(
            outcome.passed(),
            "{}: {:?}",
            case.sentence,
            outcome.reasons()
        );
        if case.expect == Expectation::Accept {
            if let Some(tree) = &case.tree {
                // The expected tree's word is scored by its class's rule.
                let p = tree_probability(g, tree).unwrap();
                let want = if case.sentence.starts_with("Aurora") {
                    Ratio::new(1.into(), 4.into())
                } else {
                    Ratio::new(1.into(), 8.into())
                };
                assert_eq!(p, want, "{}", case.sentence);
            }
        }
    }
}

#[test]
fn a_grammar_without_unseen_terminals_reads_words_exactly() {
    let analysis = grammar_lang::analyze_text("start S\nS { \"ferry\" }\n");
    let parser = Parser::new(&analysis.grammar).unwrap();
    let outcome = parser.parse(&["Aurora"], &ParseOptions::default()).unwrap();
    assert!(!outcome.parsed());
    let e = outcome.explanation.unwrap();
    assert_eq!(e.unknown_words[0].word, "Aurora");
}
