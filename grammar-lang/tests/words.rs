//! Words: a terminal with spaces inside is the sequence of its words, and
//! the words of test sentences must be words of the grammar. Specified by
//! fixtures (`trellis_test_support::check`): each grammar with its findings
//! written as annotations under the text they point at.

use grammar_lang::model::Sym;
use grammar_lang::{analyze_text, Code};
use trellis_test_support::check;

/// The right-hand sides of `name`'s rules, terminals written bare and
/// non-terminals in angle brackets.
fn sides(text: &str, name: &str) -> Vec<Vec<String>> {
    let a = analyze_text(text);
    let g = &a.grammar;
    let nt = g.nt(name).expect("the block exists");
    g.rules_of(nt)
        .map(|(_, rule)| {
            rule.rhs
                .iter()
                .map(|&sym| match sym {
                    Sym::T(t) => g.term_text(t).to_string(),
                    Sym::N(n) => format!("<{}>", g.nt_name(n)),
                })
                .collect()
        })
        .collect()
}

// ---------------------------------------------------------------------------
// A terminal of several words
// ---------------------------------------------------------------------------

#[test]
fn a_terminal_with_a_space_is_the_sequence_of_its_words() {
    let text =
        "start Order\nOrder {\n  \"fresh water\" Amount\n}\nAmount { \"one litre\" | \"two\" }\n";
    check(text);
    assert_eq!(sides(text, "Order"), [["fresh", "water", "<Amount>"]]);
    assert_eq!(sides(text, "Amount"), [vec!["one", "litre"], vec!["two"]]);
    // Words, not phrases, are the grammar's terminals.
    let a = analyze_text(text);
    assert_eq!(
        a.grammar.terminals,
        ["fresh", "water", "one", "litre", "two"]
    );
}

#[test]
fn a_terminal_of_several_words_and_the_same_words_quoted_one_by_one_are_one_rule() {
    check(
        r#"
        start Order
        Order {
          0.5  "fresh water"
          0.5  "fresh" "water"
          ^^^^^^^^^^^^^^^^^^^^ warning duplicate-rule: `Order → "fresh" "water"` is written twice
        }
        "#,
    );
}

#[test]
fn arity_counts_the_words_of_a_terminal() {
    // Three items as written, nine words: over the default limit of eight.
    check(
        r#"
        start Order
        Order {
          "one return ticket to" Island "and back on the"
          ^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^ warning arity: has 9 items
        }
        Island { "tolsey" }
        "#,
    );
}

#[test]
fn a_leaf_of_several_words_in_an_expected_tree_is_those_words_under_its_node() {
    let a = check(
        r#"
        start Order
        Order { "fresh water" Amount }
        Amount { "two" }
        test "orders" {
          accept "fresh water two" as (Order "fresh water" (Amount "two"))
        }
        "#,
    );
    let tree = a.grammar.tests[0].cases[0].tree.as_ref().unwrap();
    assert_eq!(
        tree.to_brackets(),
        r#"(Order "fresh" "water" (Amount "two"))"#
    );
}

// ---------------------------------------------------------------------------
// terminal-spacing and terminals without a word
// ---------------------------------------------------------------------------

#[test]
fn spacing_other_than_single_spaces_between_words_is_a_terminal_spacing_warning() {
    check(
        r#"
        start Order
        Order {
          0.25  " water"
                ^^^^^^^^ warning terminal-spacing: whitespace at its start; it means "water"
          0.25  "fresh  water"
                ^^^^^^^^^^^^^^ warning terminal-spacing: doubled between its words; it means "fresh water", the sequence of 2 words
          0.25  "still water "
                ^^^^^^^^^^^^^^ warning terminal-spacing: at its end
          0.25  " sea water "
                ^^^^^^^^^^^^^ warning terminal-spacing: at both ends
        }
        "#,
    );
    let a = check(
        "start Order\nOrder { \"fresh\twater\" }\n        ^^^^^^^^^^^^^ warning terminal-spacing: a tab or a line break\n",
    );
    let d = &a.diagnostics[0];
    assert_eq!(d.suggestion.as_deref(), Some("\"fresh water\""));
    assert!(d
        .help
        .as_deref()
        .unwrap()
        .contains("write it as \"fresh water\""));
}

#[test]
fn a_badly_spaced_leaf_is_reported_like_a_terminal() {
    check(
        r#"
        start Order
        Order { "fresh water" }
        test "orders" {
          accept "fresh water" as (Order "fresh  water")
                                         ^^^^^^^^^^^^^^ warning terminal-spacing: leaf "fresh  water"
        }
        "#,
    );
}

#[test]
fn the_spacing_of_a_terminal_does_not_change_its_meaning() {
    let spaced = "start Order\nOrder { \"  fresh   water \" }\n";
    let single = "start Order\nOrder { \"fresh water\" }\n";
    assert_eq!(sides(spaced, "Order"), sides(single, "Order"));
}

#[test]
fn terminals_and_leaves_without_a_word_are_errors() {
    check(
        r#"
        start Order
        Order {
          0.5  "water" "  "
                       ^^^^ error empty-rule: terminal of whitespace only
          0.5  "water" ""
                       ^^ error empty-rule: empty terminal
        }
        test "orders" {
          accept "water" as (Order "water" " ")
                                           ^^^ error empty-rule: a leaf without a word
        }
        "#,
    );
}

// ---------------------------------------------------------------------------
// unknown-word
// ---------------------------------------------------------------------------

#[test]
fn a_word_no_terminal_contains_is_an_unknown_word_at_that_word() {
    let a = check(
        r#"
        start Order
        Order { "fresh water" Amount }
        Amount { "two" | "three" }
        test "orders" {
          accept "fresh watr two"
                        ^^^^ warning unknown-word: `watr` is not a word of the grammar … did you mean `water`?
          accept "fresh water three"
          accept "fresh water two" as (Order "fresh" "water" (Amount "tow"))
                                                                      ^^^ warning unknown-word: no parse can have this tree; did you mean `two`?
        }
        "#,
    );
    let d = a
        .diagnostics
        .iter()
        .find(|d| d.code == Code::UnknownWord)
        .unwrap();
    assert_eq!(d.suggestion.as_deref(), Some("water"));
}

#[test]
fn a_word_of_a_terminal_of_several_words_is_known_on_its_own() {
    // `water` is only written inside "fresh water"; a sentence may use it
    // anywhere (it then fails to parse, but not for want of the word).
    check(
        r#"
        start Order
        Order { "fresh water" }
        test "orders" {
          reject "water fresh"
          accept "fresh water"
        }
        "#,
    );
}

#[test]
fn an_unknown_word_far_from_every_known_one_in_a_reject_case_is_on_purpose() {
    // A `reject` with a word the grammar does not know is a legitimate
    // case; a close typo of a known word makes it a note, since the case
    // then holds whatever the rules say.
    check(
        r#"
        start Order
        Order { "fresh water" }
        test "orders" {
          reject "fresh lemonade"
          reject "fresh watter"
                        ^^^^^^ note unknown-word: the `reject` holds whatever the rules say; did you mean `water`?
        }
        "#,
    );
}

#[test]
fn an_unknown_word_without_a_close_one_has_no_suggestion() {
    let a = check(
        r#"
        start Order
        Order { "water" }
        test "orders" {
          accept "lemonade"
                  ^^^^^^^^ warning unknown-word == `lemonade` is not a word of the grammar (no terminal contains it), so this sentence can never parse
        }
        "#,
    );
    assert_eq!(a.diagnostics[0].suggestion, None);
}

#[test]
fn words_with_escapes_are_located_in_the_text_as_written() {
    // The sentence's value is `say "ahoi" twice`; `"ahoi"` is written
    // `\"ahoi\"` and is one edit from the known word `"ahoy"`.
    let a = check(
        r#"
        start Call
        Call { "say" "\"ahoy\"" "twice" }
        test "calls" {
          accept "say \"ahoi\" twice"
                      ^^^^^^^^ warning unknown-word: `"ahoi"` is not a word
        }
        "#,
    );
    // The replacement goes between the quotes, escaped.
    assert_eq!(a.diagnostics[0].suggestion.as_deref(), Some(r#"\"ahoy\""#));
}

#[test]
fn the_level_of_unknown_word_can_be_set_for_reject_and_accept_alike() {
    use grammar_lang::config::Level;
    use grammar_lang::{Config, Severity};
    let mut config = Config::default();
    config
        .levels
        .insert(Code::UnknownWord, Level::At(Severity::Error));
    let text =
        "start S\nS { \"water\" }\ntest \"t\" {\n  accept \"watr\"\n  reject \"watter\"\n}\n";
    let a = grammar_lang::analyze(
        std::path::Path::new("g.trellis"),
        text,
        &grammar_lang::MemoryLoader::new(),
        &config,
    );
    let severities: Vec<_> = a.diagnostics.iter().map(|d| d.severity).collect();
    assert_eq!(severities, [Severity::Error, Severity::Error]);
}
