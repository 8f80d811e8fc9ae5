//! `Analysis::run`: which errors stop a run, and the weights a run uses.

use grammar_lang::model::to_f64;
use grammar_lang::Code;
use trellis_ide::{analyze_text, NotRunnable};

#[test]
fn an_error_in_a_test_block_stops_the_tests_but_not_a_parse() {
    let text = "start S\nS { \"a\" }\ntest \"t\" {\n  accept \"a\" as (S \"a\"\n}\n";
    let analysis = analyze_text(text);
    assert!(analysis.has_errors());
    let run = analysis
        .run(None)
        .expect("a parse does not use test blocks");
    let ignored: Vec<Code> = run.ignored_errors().iter().map(|d| d.code).collect();
    assert_eq!(ignored, [Code::Syntax]);
    let tests: Vec<_> = analysis.grammar.tests.iter().collect();
    let Err(NotRunnable::Errors(errors)) = analysis.run_tests(&tests) else {
        panic!("the test block's own error must stop its run");
    };
    assert_eq!(errors.len(), 1);
    assert_eq!(
        (errors[0].line, errors[0].diagnostic.code),
        (4, Code::Syntax)
    );
}

#[test]
fn a_run_from_a_symbol_ignores_errors_at_start_and_in_blocks_it_cannot_reach() {
    // `start` names a symbol without a block; `B` is fine.
    let text = "start Nowhere\nA { B | Gone }\nB { \"b\" }\n";
    let analysis = analyze_text(text);
    assert!(matches!(analysis.run(None), Err(NotRunnable::Errors(_))));
    let run = analysis.run(Some("B")).expect("B reaches no error");
    let ignored: Vec<Code> = run.ignored_errors().iter().map(|d| d.code).collect();
    assert_eq!(ignored, [Code::UnknownStart, Code::Undefined]);
    // The block holding an ignored error takes no part in the run.
    let a = analysis.grammar.nt("A").unwrap();
    assert!(analysis
        .grammar
        .nonterminal(a)
        .rules
        .iter()
        .all(|&r| run.grammar().rule(r).p == 0.0));
}

#[test]
fn a_block_whose_sum_is_off_runs_divided_by_its_sum_exactly() {
    // Relative weights 1 : 2 written as 1/10 and 2/10 (sum 3/10): a run
    // uses 1/3 and 2/3 (the definition of renormalising).
    let text = "start S\nS {\n  1/10 \"a\"\n  2/10 \"b\"\n}\n";
    let analysis = analyze_text(text);
    // `sum-not-one` is an error by default: the run is refused …
    assert!(analysis.run(None).is_err());
    // … and hover already says what a run would use.
    let offset = text.find("1/10").unwrap();
    let hover = analysis.hover(grammar_lang::FileId(0), offset).unwrap();
    assert!(
        hover
            .markdown
            .contains("1/10 = 0.1 as written; runs use 1/3 ≈"),
        "{}",
        hover.markdown
    );
    let s = analysis.grammar.nt("S").unwrap();
    let rules = &analysis.grammar.nonterminal(s).rules;
    let used: Vec<f64> = rules
        .iter()
        .map(|&r| to_f64(&trellis_ide::run_probability(&analysis.grammar, r)))
        .collect();
    assert_eq!(used, [1.0 / 3.0, 2.0 / 3.0]);
}

#[test]
fn a_relative_block_past_the_exact_limit_runs_in_floating_point_and_says_so() {
    // A relative weight of 30,000 digits and an unweighted alternative
    // (weight 1): the exact sum is past `EXACT_SUM_BITS`, so the block is
    // divided in floating point. It is not rescaled a second time (its
    // mass is 1, as the exact division would make it), and the run names
    // it.
    let text = format!(
        "start S\nS relative {{\n  0.{} \"a\"\n  \"b\"\n}}\n",
        "3".repeat(30_000)
    );
    let analysis = analyze_text(&text);
    let run = analysis.run(None).expect("a note does not stop a run");
    assert!(run.rescaled().is_empty());
    let s = analysis.grammar.nt("S").unwrap();
    assert_eq!(run.approximate(), [s]);
    let note = run.approximate_note().expect("a note");
    assert!(
        note.starts_with("the probabilities of block `S` were computed in floating point"),
        "{note}"
    );
    // 1/3 : 1, that is 1/4 and 3/4, to the float's precision.
    let p: Vec<f64> = analysis
        .grammar
        .nonterminal(s)
        .rules
        .iter()
        .map(|&r| run.grammar().rule(r).p)
        .collect();
    assert!(
        (p[0] - 0.25).abs() < 1e-15 && (p[1] - 0.75).abs() < 1e-15,
        "{p:?}"
    );
    // A block below the limit gives no note.
    let small = analyze_text("start S\nS relative {\n  1/3 \"a\"\n  \"b\"\n}\n");
    assert_eq!(small.run(None).unwrap().approximate_note(), None);
}
