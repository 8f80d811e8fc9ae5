//! Rewriting block weights: only weight tokens change (or a weight is
//! inserted before a bare alternative), in the block's own notation.

use grammar_lang::model::Ratio;
use trellis_ide::{analyze_text, Analysis};

fn r(n: i64, d: i64) -> Ratio {
    Ratio::new_i64(n, d)
}

/// The text after giving block `name` the weights `values`.
fn rewritten(text: &str, name: &str, values: &[Ratio]) -> String {
    let analysis: Analysis = analyze_text(text);
    let nt = analysis.grammar.nt(name).unwrap();
    let done = analysis.reweight(&[(nt, values.to_vec())]);
    assert_eq!(done.len(), 1, "the block took its values");
    let edits: Vec<_> = done[0].edits.iter().collect();
    let texts = analysis.edited_texts(&edits);
    match texts.as_slice() {
        [] => text.to_string(),
        [(_, new)] => new.clone(),
        _ => panic!("one file"),
    }
}

#[test]
fn weights_change_in_their_notation_and_comments_stay() {
    let text = "start S\n## Doc.\nS {\n  0.5  A   # first\n  50%  B   # second\n  1/4 A B\n}\nA { \"a\" }\nB { \"b\" }\n";
    // Decimal, percent and fraction tie at one each: fractions win the tie.
    assert_eq!(
        rewritten(text, "S", &[r(1, 8), r(3, 8), r(1, 2)]),
        "start S\n## Doc.\nS {\n  1/8  A   # first\n  3/8  B   # second\n  1/2 A B\n}\nA { \"a\" }\nB { \"b\" }\n"
    );
    // An unchanged value keeps its spelling.
    let text = "start S\nS {\n  0.50 A\n  0.25 B\n  0.25 A B\n}\nA { \"a\" }\nB { \"b\" }\n";
    assert_eq!(
        rewritten(text, "S", &[r(1, 2), r(1, 8), r(3, 8)]),
        "start S\nS {\n  0.50 A\n  0.125 B\n  0.375 A B\n}\nA { \"a\" }\nB { \"b\" }\n"
    );
}

#[test]
fn a_value_with_no_exact_decimal_sends_the_block_to_fractions() {
    let text = "start S\nS {\n  0.5 A\n  0.5 B\n}\nA { \"a\" }\nB { \"b\" }\n";
    assert_eq!(
        rewritten(text, "S", &[r(1, 3), r(2, 3)]),
        "start S\nS {\n  1/3 A\n  2/3 B\n}\nA { \"a\" }\nB { \"b\" }\n"
    );
}

#[test]
fn bare_alternatives_stay_bare_when_their_shares_are_equal() {
    let text = "start K\nK {\n  0.5 \"day\"\n  \"single\" | \"return\"\n}\n";
    assert_eq!(
        rewritten(text, "K", &[r(1, 5), r(2, 5), r(2, 5)]),
        "start K\nK {\n  0.2 \"day\"\n  \"single\" | \"return\"\n}\n"
    );
    // Unequal shares: each gets its weight.
    assert_eq!(
        rewritten(text, "K", &[r(1, 5), r(1, 5), r(3, 5)]),
        "start K\nK {\n  0.2 \"day\"\n  0.2 \"single\" | 0.6 \"return\"\n}\n"
    );
    // A zero share cannot be left bare (it would be `no-mass-left`).
    assert_eq!(
        rewritten(text, "K", &[r(1, 1), r(0, 1), r(0, 1)]),
        "start K\nK {\n  1 \"day\"\n  0 \"single\" | 0 \"return\"\n}\n"
    );
}

#[test]
fn relative_blocks_take_counts_and_bare_means_one() {
    let text = "start K\nK relative {\n  6 \"one\"\n  \"two\"\n}\n";
    assert_eq!(
        rewritten(text, "K", &[r(7, 2), r(1, 1)]),
        "start K\nK relative {\n  3.5 \"one\"\n  \"two\"\n}\n"
    );
    assert_eq!(
        rewritten(text, "K", &[r(3, 1), r(2, 1)]),
        "start K\nK relative {\n  3 \"one\"\n  2 \"two\"\n}\n"
    );
}

#[test]
fn values_a_block_cannot_take_are_refused() {
    let analysis = analyze_text("start S\nS {\n  0.5 \"a\"\n  0.5 \"b\"\n}\n");
    let nt = analysis.grammar.nt("S").unwrap();
    // Not summing to 1, the wrong count, a negative value.
    for values in [
        vec![r(1, 2), r(1, 4)],
        vec![r(1, 1)],
        vec![r(3, 2), r(-1, 2)],
    ] {
        assert!(analysis.reweight(&[(nt, values)]).is_empty());
    }
}
