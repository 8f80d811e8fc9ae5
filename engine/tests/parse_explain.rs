//! Explanations of sentences that do not parse, on a small kiosk grammar
//! written in the grammar language.

use trellis_engine::explain::UnknownPosition;
use trellis_engine::parser::{ParseOptions, Parser};

const KIOSK: &str = r#"
start Request

Request {
  0.6  Ticket
  0.4  Ticket "please"
}

Ticket {
  1/2  Count Kind "ticket"
  1/2  Kind "ticket"
}

Kind { "return" | "single" | "day" }

Count relative {
  6  "one"
  3  "two"
  1  "three"
}
"#;

fn parser() -> Parser {
    let analysis = grammar_lang::analyze_text(KIOSK);
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    Parser::new(&analysis.grammar).unwrap()
}

fn explain(line: &str) -> trellis_engine::explain::Explanation {
    let out = parser().parse_line(line, &ParseOptions::default()).unwrap();
    assert!(out.best.is_none(), "{line:?} should not parse");
    assert_eq!(out.sentence_probability, 0.0);
    out.explanation.expect("a failed parse is explained")
}

#[test]
fn misspelt_word_is_reported_with_the_closest_known_word() {
    let e = explain("one retrun ticket");
    assert_eq!(e.unknown_words.len(), 1);
    assert_eq!(e.unknown_words[0].position, 1);
    assert_eq!(e.unknown_words[0].word, "retrun");
    assert_eq!(e.unknown_words[0].suggestions, vec!["return"]);
    let text = e.to_string();
    assert!(
        text.contains(r#"unknown word "retrun" (word 2); did you mean "return"?"#),
        "{text}"
    );
    // The analysis breaks down at the unknown word.
    assert_eq!(e.breakdown.prefix_words, 1);
}

#[test]
fn extra_word_after_a_complete_request_shows_where_analysis_stops_and_what_analyses() {
    let e = explain("one return ticket ticket");
    assert!(e.unknown_words.is_empty());
    assert_eq!(e.breakdown.start_symbol, "Request");
    assert_eq!(e.breakdown.prefix_words, 3);
    assert_eq!(
        e.breakdown.stuck_at,
        Some(UnknownPosition {
            position: 3,
            word: "ticket".to_string()
        })
    );
    assert_eq!(e.breakdown.expected, vec![r#""please""#]);
    // The largest analysable span is the first three words, as a Ticket
    // (1/2 · 6/10 · 1/3 = 1/10) and as a Request (6/10 of that).
    assert_eq!(e.fragments.len(), 1);
    let f = &e.fragments[0];
    assert_eq!(
        (f.start, f.end, f.text.as_str()),
        (0, 3, "one return ticket")
    );
    let cats: Vec<&str> = f.categories.iter().map(|c| c.symbol.as_str()).collect();
    assert_eq!(cats, vec!["Ticket", "Request"]);
    assert!((f.categories[0].log_probability.exp() - 0.1).abs() < 1e-12);
    assert!((f.categories[1].log_probability.exp() - 0.06).abs() < 1e-12);
    let lines = e.render();
    assert_eq!(
        lines[0],
        r#"every analysis from Request breaks down at "ticket" (word 4), after the first 3 words; expected there: "please""#
    );
    assert!(
        lines[1]
            .starts_with(r#"words 1–3 "one return ticket" analyse as Ticket (p ≈ 0.1), Request"#),
        "{}",
        lines[1]
    );
}

#[test]
fn sentence_that_stops_too_early_says_what_could_come_next() {
    let e = explain("two day");
    assert_eq!(e.breakdown.prefix_words, 2);
    assert_eq!(e.breakdown.stuck_at, None);
    assert_eq!(e.breakdown.expected, vec![r#""ticket""#]);
    assert!(e.render()[0].contains("ends too early"), "{:?}", e.render());
    // "two day" is no category's span; "day" alone is a Kind.
    let spans: Vec<(usize, usize)> = e.fragments.iter().map(|f| (f.start, f.end)).collect();
    assert_eq!(spans, vec![(0, 1), (1, 2)]);
    assert_eq!(e.fragments[1].categories[0].symbol, "Kind");
}

#[test]
fn sentence_whose_first_word_cannot_start_a_request_lists_every_possible_first_word() {
    let e = explain("ticket one");
    assert_eq!(e.breakdown.prefix_words, 0);
    assert_eq!(
        e.breakdown.expected,
        vec![
            r#""day""#,
            r#""one""#,
            r#""return""#,
            r#""single""#,
            r#""three""#,
            r#""two""#
        ]
    );
    assert!(e.render()[0].starts_with(r#"no analysis from Request can begin with "ticket""#));
}
