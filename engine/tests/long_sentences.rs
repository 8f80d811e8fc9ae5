//! A derivation is as deep as its sentence is long: every walk over one
//! (building the best and the k best, scoring, converting to the user's
//! tree, dropping) must work without recursion. Run on a thread with a
//! small stack, so that a walk recursing once per word would overflow.

use grammar_lang::analyze_text;
use trellis_engine::parser::{ParseOptions, Parser};

/// A right-branching list: n words make a tree n levels deep.
const LIST: &str = "start List\nList { 0.5 \"buoy\" List | 0.5 \"buoy\" }\n";

/// 128 KiB: a walk costing even 450 bytes of stack per level overflows at
/// 300 levels (the recursive version took about 1.3 KB per word in a debug
/// build).
const SMALL_STACK: usize = 128 * 1024;

#[test]
fn a_three_hundred_word_sentence_parses_on_a_small_stack() {
    let words = 300;
    let outcome = std::thread::Builder::new()
        .stack_size(SMALL_STACK)
        .spawn(move || {
            let analysis = analyze_text(LIST);
            let parser = Parser::new(&analysis.grammar).expect("compiles");
            let sentence = vec!["buoy"; words].join(" ");
            let options = ParseOptions {
                kbest: 2,
                ..ParseOptions::default()
            };
            let outcome = parser.parse_line(&sentence, &options).expect("parses");
            let best = outcome.best.as_ref().expect("a tree");
            // The one tree uses `List → "buoy" List` 299 times and
            // `List → "buoy"` once: p = 0.5^300, ln p = 300 ln 0.5 (a PCFG
            // tree's probability is the product of its rules').
            let expected = words as f64 * 0.5f64.ln();
            assert!((best.log_probability - expected).abs() < 1e-9 * expected.abs());
            assert_eq!(best.tree.words().len(), words);
            // Only one tree: k-best returns it alone.
            assert_eq!(outcome.kbest.len(), 1);
            assert_eq!(outcome.kbest[0].tree, best.tree);
            outcome.parse_count.map(|c| c.to_string())
        })
        .expect("the thread starts")
        .join()
        .expect("no stack overflow");
    assert_eq!(outcome.as_deref(), Some("1"));
}
