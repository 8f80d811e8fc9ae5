//! The runner of `test` blocks, judged against outside references: a
//! textbook's two parses of an ambiguous sentence, exact equal-probability
//! ties, and brute-force enumeration of every derivation of random grammars.

mod parse_support;

use grammar_lang::model::{fraction, Expectation, Grammar, Ratio, TestCase};
use grammar_lang::tree::Tree;
use grammar_lang::{FileId, Location, Span};
use parse_support::*;
use trellis_engine::parser::{ParseError, Parser, DEFAULT_MAX_CHART_BYTES};
use trellis_engine::testing::{
    first_difference, run_case, standing, tree_probability, tree_rules, CaseOutcome, Failure,
    Standing,
};

fn case(expect: Expectation, sentence: &str, tree: Option<&str>) -> TestCase {
    TestCase {
        expect,
        sentence: sentence.to_string(),
        tree: tree.map(brackets),
        location: Location::new(FileId(0), Span::new(0, 0)),
    }
}

/// A tree written as in a `.trellis` test, read by the front end itself.
fn brackets(text: &str) -> Tree {
    let words: Vec<&str> = text.split('"').skip(1).step_by(2).collect();
    let source = format!(
        "start S\nS {{ \"x\" }}\ntest \"t\" {{ accept \"{}\" as {text} }}\n",
        words.join(" ")
    );
    let analysis = grammar_lang::analyze_text(&source);
    analysis.grammar.tests[0].cases[0]
        .tree
        .clone()
        .unwrap_or_else(|| panic!("not a tree: {text}"))
}

fn run(g: &Grammar, c: &TestCase) -> CaseOutcome {
    let parser = Parser::new(g).unwrap();
    run_case(&parser, g, c, DEFAULT_MAX_CHART_BYTES)
}

fn ratio(n: i64, d: i64) -> Ratio {
    Ratio::new(n.into(), d.into())
}

const SENTENCE: &str = "astronomers saw stars with ears";
const NP_ATTACHED: &str =
    r#"(S (NP "astronomers") (VP (V "saw") (NP (NP "stars") (PP (P "with") (NP "ears")))))"#;
const VP_ATTACHED: &str =
    r#"(S (NP "astronomers") (VP (VP (V "saw") (NP "stars")) (PP (P "with") (NP "ears"))))"#;

#[test]
fn the_textbook_most_probable_tree_passes_as_expected_tree() {
    let g = astronomers();
    let outcome = run(&g, &case(Expectation::Accept, SENTENCE, Some(NP_ATTACHED)));
    let CaseOutcome::Passed {
        best: Some(best),
        tied: false,
    } = outcome
    else {
        panic!("{outcome:?}");
    };
    assert_eq!(best.tree, brackets(NP_ATTACHED));
}

#[test]
fn the_textbook_less_probable_tree_fails_with_both_exact_probabilities() {
    // Manning & Schütze ch. 11 (recalled from memory): 0.0009072 vs 0.0006804.
    let g = astronomers();
    let outcome = run(&g, &case(Expectation::Accept, SENTENCE, Some(VP_ATTACHED)));
    let Some(Failure::OtherTree {
        found,
        found_probability,
        standing,
        difference,
        ..
    }) = outcome.failure()
    else {
        panic!("{outcome:?}");
    };
    assert_eq!(found.tree, brackets(NP_ATTACHED));
    assert_eq!(*found_probability, ratio(9072, 10_000_000));
    assert_eq!(
        *standing,
        Standing::Derivable {
            probability: ratio(6804, 10_000_000)
        }
    );
    // The trees agree down to the VP, whose children differ.
    let (want, got) = difference.as_ref().unwrap();
    assert_eq!(want.label(), Some("VP"));
    assert_eq!(got.label(), Some("VP"));
    assert_ne!(want, got);
    let failure = outcome.failure().unwrap();
    let text = failure.render().join("\n");
    assert!(text.contains("567/625000"), "{text}"); // 0.0009072 in lowest terms
    assert!(text.contains("1701/2500000"), "{text}"); // 0.0006804 in lowest terms
    assert_eq!(fraction(&ratio(9072, 10_000_000)), "567/625000");
}

#[test]
fn exact_scoring_of_a_written_tree_is_the_product_of_its_rules() {
    // 0.1 · 0.7 · 0.4 · 0.18 · 0.18 = 0.0009072 (the textbook's figure).
    let g = astronomers();
    assert_eq!(
        tree_probability(&g, &brackets(NP_ATTACHED)),
        Ok(ratio(9072, 10_000_000))
    );
}

#[test]
fn a_tree_names_the_rule_at_each_node_the_most_probable_of_duplicates() {
    let g = grammar(
        "S",
        &[
            ("S", "A A", "1/4"),
            ("S", "A A", "3/4"),
            ("A", "\"x\"", "1"),
        ],
    );
    let rules = tree_rules(&g, &brackets(r#"(S (A "x") (A "x"))"#)).unwrap();
    let texts: Vec<String> = rules.iter().map(|&r| g.rule_text(r)).collect();
    assert_eq!(texts, ["S → A A", "A → \"x\"", "A → \"x\""]);
    // The second `S → A A`, with 3/4, is the one a most probable parse uses.
    assert_eq!(g.rule(rules[0]).probability, ratio(3, 4));
    assert_eq!(
        tree_rules(&g, &brackets(r#"(S (A "y"))"#)),
        Err("no rule S → A".to_string())
    );
}

#[test]
fn a_tie_between_two_most_probable_trees_passes_whichever_the_parser_picked() {
    // Both trees have probability 1/2 · 1 exactly.
    let g = grammar(
        "S",
        &[
            ("S", "A", "1/2"),
            ("S", "B", "1/2"),
            ("A", "\"x\"", "1"),
            ("B", "\"x\"", "1"),
        ],
    );
    let a = run(&g, &case(Expectation::Accept, "x", Some(r#"(S (A "x"))"#)));
    let b = run(&g, &case(Expectation::Accept, "x", Some(r#"(S (B "x"))"#)));
    assert!(a.passed() && b.passed(), "{a:?}\n{b:?}");
    let tied = [a, b]
        .iter()
        .filter(|o| matches!(o, CaseOutcome::Passed { tied: true, .. }))
        .count();
    assert_eq!(
        tied, 1,
        "exactly one of the two differs from the parser's pick"
    );
}

#[test]
fn accept_and_reject_follow_whether_the_sentence_parses() {
    let g = astronomers();
    assert!(run(&g, &case(Expectation::Accept, SENTENCE, None)).passed());
    assert!(run(&g, &case(Expectation::Reject, "stars with", None)).passed());

    let outcome = run(
        &g,
        &case(Expectation::Reject, "astronomers saw stars", None),
    );
    let Some(Failure::UnexpectedParse { best }) = outcome.failure() else {
        panic!("{outcome:?}");
    };
    // 0.1 · 0.7 · 0.18 (recomputed from the textbook grammar's rules).
    assert!(rel(best.probability, 0.1 * 0.7 * 0.18) < 1e-12);

    let outcome = run(
        &g,
        &case(Expectation::Accept, "astronomers saw starz", None),
    );
    let Some(Failure::NoParse {
        explanation: Some(explanation),
    }) = outcome.failure()
    else {
        panic!("{outcome:?}");
    };
    assert_eq!(explanation.unknown_words[0].word, "starz");
    assert_eq!(explanation.unknown_words[0].suggestions[0], "stars");
}

#[test]
fn an_expected_tree_that_is_not_a_tree_of_the_grammar_says_why() {
    let g = astronomers();
    let reason = |tree: &str, sentence: &str| {
        let words: Vec<&str> = sentence.split_whitespace().collect();
        match standing(&g, &words, &brackets(tree)) {
            Standing::NotDerivable { reason } => reason,
            other => panic!("{other:?}"),
        }
    };
    assert_eq!(
        reason(
            r#"(S (NP "stars") (VP (V "saw") (NP "ears")))"#,
            "astronomers saw ears"
        ),
        r#"its words are "stars saw ears" but the sentence is "astronomers saw ears""#
    );
    assert_eq!(
        reason(r#"(VP (V "saw") (NP "ears"))"#, "saw ears"),
        "its root is VP, not the start symbol S"
    );
    assert_eq!(
        reason(r#"(S (NP "ears") (VP (V "saw")))"#, "ears saw"),
        "no rule VP → V"
    );
    assert_eq!(
        reason(r#"(S (NP "ears") (Verb "saw"))"#, "ears saw"),
        "no rule S → NP Verb"
    );
    // Reported as a failing case, with the reason.
    let outcome = run(
        &g,
        &case(
            Expectation::Accept,
            "astronomers saw ears",
            Some(r#"(S (NP "astronomers") (VP (V "saw") (PP "ears")))"#),
        ),
    );
    let Some(failure) = outcome.failure() else {
        panic!("{outcome:?}");
    };
    let text = failure.render().join("\n");
    assert!(
        text.contains("not a tree of the grammar: no rule VP → V PP"),
        "{text}"
    );
    assert!(
        text.contains(
            r#"they part at: expected (VP (V "saw") (PP "ears")) where the parse has (VP (V "saw") (NP "ears"))"#
        ),
        "{text}"
    );
}

#[test]
fn a_sentence_too_long_for_the_chart_limit_fails_without_parsing() {
    let g = astronomers();
    let parser = Parser::new(&g).unwrap();
    let c = case(Expectation::Reject, SENTENCE, None);
    let outcome = run_case(&parser, &g, &c, 16);
    assert!(
        matches!(
            outcome.failure(),
            Some(Failure::NotAnalysed(ParseError::ChartTooLarge { .. }))
        ),
        "{outcome:?}"
    );
}

#[test]
fn first_difference_is_the_outermost_differing_position() {
    let a = brackets(r#"(S (A "x") (B (C "y") "z"))"#);
    let b = brackets(r#"(S (A "x") (B (D "y") "z"))"#);
    let (x, y) = first_difference(&a, &b).unwrap();
    assert_eq!(x.to_brackets(), r#"(B (C "y") "z")"#);
    assert_eq!(y.to_brackets(), r#"(B (D "y") "z")"#);
    assert_eq!(first_difference(&a, &a), None);
}

#[test]
fn random_grammars_judge_every_derivation_as_brute_force_enumeration_does() {
    // Reference: every derivation of every sentence up to 3 words, enumerated
    // straight from the rules. A case `accept S as T` must hold exactly when
    // T's probability is the largest of S's derivations; the exact score of
    // each enumerated tree must equal the product of its rules in floats
    // (of its best derivation, when a duplicated rule gives it several);
    // `accept S` / `reject S` must follow whether any derivation exists.
    let mut rng = Rng(0x7e57_5017);
    let (mut judged, mut failed) = (0, 0);
    for round in 0..25 {
        let g = random_grammar(&mut rng, 2 + round % 3, false);
        let parser = Parser::new(&g).unwrap();
        for words in all_sentences(3) {
            let sentence = words.join(" ");
            // A block may list the same alternative twice, giving one tree
            // two derivations: a tree's score is its best derivation's.
            let mut derivations: Vec<(Tree, f64)> = Vec::new();
            for (tree, p) in all_derivations(&g, &words, g.nonterminals.len()) {
                match derivations.iter_mut().find(|(t, _)| *t == tree) {
                    Some((_, q)) => *q = q.max(p),
                    None => derivations.push((tree, p)),
                }
            }
            let accept = run_case(
                &parser,
                &g,
                &case(Expectation::Accept, &sentence, None),
                DEFAULT_MAX_CHART_BYTES,
            );
            let reject = run_case(
                &parser,
                &g,
                &case(Expectation::Reject, &sentence, None),
                DEFAULT_MAX_CHART_BYTES,
            );
            assert_eq!(accept.passed(), !derivations.is_empty(), "{sentence}");
            assert_eq!(reject.passed(), derivations.is_empty(), "{sentence}");
            let exact: Vec<Ratio> = derivations
                .iter()
                .map(|(tree, p)| {
                    let q = tree_probability(&g, tree).unwrap();
                    let float = grammar_lang::model::to_f64(&q);
                    assert!(
                        rel(float, *p) < 1e-12,
                        "{tree}: exact {q} = {float}, enumerated {p}"
                    );
                    q
                })
                .collect();
            let Some(max) = exact.iter().max() else {
                continue;
            };
            for ((tree, _), q) in derivations.iter().zip(&exact) {
                let c = TestCase {
                    tree: Some(tree.clone()),
                    ..case(Expectation::Accept, &sentence, None)
                };
                let outcome = run_case(&parser, &g, &c, DEFAULT_MAX_CHART_BYTES);
                assert_eq!(outcome.passed(), q == max, "{sentence}: {tree}");
                judged += 1;
                failed += usize::from(!outcome.passed());
            }
        }
    }
    assert!(
        judged > 500 && failed > 100,
        "too little coverage: {judged} judged, {failed} failed"
    );
}
