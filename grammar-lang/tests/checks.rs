//! The static checks, specified by example: every check has a grammar that
//! triggers it and one that does not. Most tests are fixtures
//! (`trellis_test_support::check`): the grammar with every finding written
//! as a caret annotation under the text it points at, with its severity,
//! code and what its message says; the fixture must report exactly those.
//! The rest pin down numbers in the model and related locations.

use grammar_lang::{analyze_text, Analysis, Code, Config, Diagnostic};
use std::path::Path;
use trellis_test_support::{check, check_with};

/// 1-based line and column (in characters) where `d` points.
fn pos(a: &Analysis, d: &Diagnostic) -> (u32, u32) {
    let file = a.sources.get(d.location.file);
    let lc = file.lines.chars(&file.text, d.location.span.start as usize);
    (lc.line + 1, lc.col + 1)
}

/// 1-based line and column of a related location.
fn related_pos(a: &Analysis, d: &Diagnostic, i: usize) -> (u32, u32) {
    let loc = d.related[i].location;
    let file = a.sources.get(loc.file);
    let lc = file.lines.chars(&file.text, loc.span.start as usize);
    (lc.line + 1, lc.col + 1)
}

fn with_code(a: &Analysis, code: Code) -> Vec<&Diagnostic> {
    a.diagnostics.iter().filter(|d| d.code == code).collect()
}

fn codes(a: &Analysis) -> Vec<Code> {
    a.diagnostics.iter().map(|d| d.code).collect()
}

fn the_one(a: &Analysis, code: Code) -> &Diagnostic {
    let found = with_code(a, code);
    assert_eq!(
        found.len(),
        1,
        "expected one `{code}`, got {:#?}",
        a.diagnostics
    );
    found[0]
}

// ---------------------------------------------------------------------------
// A sound grammar
// ---------------------------------------------------------------------------

const KIOSK: &str = r#"grammar ferry_kiosk
start Request

## What a passenger says at the kiosk.
Request {
  0.55  Want Ticket
  0.30  Ticket Please
  15%   Ticket
}

Want { "i" "want" | "give" "me" }
Please { "please" }

Ticket {
  1/2   Count Kind "ticket"
  1/2   Kind "ticket"
}

Kind {
  "return" | "single" | "day"
}

Count relative {
  6   "one"
  3   "two"
  1   "three"
}
"#;

#[test]
fn the_design_example_has_no_findings() {
    check(KIOSK);
}

#[test]
fn unweighted_alternatives_share_the_rest_and_relative_blocks_are_normalised() {
    // README, "The grammar language": Kind's three alternatives get 1/3
    // each; Count relative 6/3/1 becomes 6/10, 3/10, 1/10.
    let a = analyze_text(KIOSK);
    let g = &a.grammar;
    let probs = |name: &str| -> Vec<String> {
        g.rules_of(g.nt(name).unwrap())
            .map(|(_, r)| grammar_lang::model::fraction(&r.probability))
            .collect()
    };
    assert_eq!(probs("Kind"), ["1/3", "1/3", "1/3"]);
    assert_eq!(probs("Count"), ["3/5", "3/10", "1/10"]);
    assert_eq!(probs("Request"), ["11/20", "3/10", "3/20"]);
    assert_eq!(probs("Want"), ["1/2", "1/2"]);
    let count = g.nonterminal(g.nt("Count").unwrap());
    let block = count.block.as_ref().unwrap();
    assert!(block.relative);
    assert_eq!(grammar_lang::model::fraction(&block.mass), "1");
    let first = g.rule(count.rules[0]);
    assert_eq!(first.p, 0.6);
    assert_eq!(first.weight.as_ref().unwrap().text, "6");
}

#[test]
fn names_docs_and_references_are_recorded() {
    let a = analyze_text(KIOSK);
    let g = &a.grammar;
    assert_eq!(g.name.as_deref(), Some("ferry_kiosk"));
    let request = g.nt("Request").unwrap();
    assert_eq!(g.start, Some(request));
    let block = g.nonterminal(request).block.as_ref().unwrap();
    assert_eq!(
        block.doc.as_deref(),
        Some("What a passenger says at the kiosk.")
    );
    // `Ticket` is used in three rules of Request.
    let ticket = g.nonterminal(g.nt("Ticket").unwrap());
    assert_eq!(ticket.references.len(), 3);
    // `start Request` counts as a reference of Request.
    assert_eq!(g.nonterminal(request).references.len(), 1);
    assert_eq!(g.rules.len(), 3 + 2 + 1 + 2 + 3 + 3);
}

#[test]
fn test_blocks_become_grammar_tests_with_trees() {
    let text = format!(
        "{KIOSK}\ntest \"ticket requests\" {{\n  accept \"one return ticket please\"\n  reject \"ticket ticket\"\n  accept \"day ticket\" as (Ticket (Kind \"day\") \"ticket\")\n}}\n"
    );
    let a = check(&text);
    let tests = &a.grammar.tests;
    assert_eq!(tests.len(), 1);
    assert_eq!(tests[0].name, "ticket requests");
    let cases = &tests[0].cases;
    assert_eq!(cases.len(), 3);
    assert_eq!(cases[0].expect, grammar_lang::model::Expectation::Accept);
    assert_eq!(cases[0].words(), ["one", "return", "ticket", "please"]);
    assert_eq!(cases[1].expect, grammar_lang::model::Expectation::Reject);
    assert!(cases[1].tree.is_none());
    assert_eq!(
        cases[2].tree.as_ref().unwrap().to_brackets(),
        r#"(Ticket (Kind "day") "ticket")"#
    );
}

// ---------------------------------------------------------------------------
// Sums and weights
// ---------------------------------------------------------------------------

fn kind_block(weights: &[&str]) -> String {
    let words = ["return", "single", "day", "week"];
    let mut text = String::from("start Kind\nKind {\n");
    for (w, word) in weights.iter().zip(words) {
        text.push_str(&format!("  {w} \"{word}\"\n"));
    }
    text.push_str("}\n");
    text
}

#[test]
fn decimal_weights_that_sum_to_one_exactly_are_accepted() {
    // 0.1 + 0.2 + 0.7 is exactly 1 as rationals (not in binary floating point).
    check(&kind_block(&["0.1", "0.2", "0.7"]));
}

#[test]
fn thirds_sum_to_one_exactly() {
    check(&kind_block(&["1/3", "1/3", "1/3"]));
    check(&kind_block(&["50%", "25%", "1/8", "0.125"]));
}

#[test]
fn a_block_that_sums_short_reports_the_exact_shortfall() {
    let a = check(
        r#"
        start Kind
        Kind {
        ^^^^ error sum-not-one == block `Kind` sums to 99/100 (0.99): 1/100 (0.01) short
          0.33 "return"
          0.33 "single"
          0.33 "day"
        }
        "#,
    );
    assert!(a.diagnostics[0].help.as_ref().unwrap().contains("relative"));
}

#[test]
fn a_block_that_sums_over_one_reports_the_exact_surplus() {
    check(
        r#"
        start Kind
        Kind {
        ^^^^ error sum-not-one == block `Kind` sums to 4/3 (≈1.3333333333): 1/3 (≈0.3333333333) too much
          0.5 "return"
          0.5 "single"
          1/3 "day"
        }
        "#,
    );
}

#[test]
fn relative_blocks_are_not_held_to_a_sum_of_one() {
    check("start Kind\nKind relative {\n  2 \"return\"\n  5 \"single\"\n}\n");
}

#[test]
fn unweighted_alternatives_without_mass_left_are_reported_where_they_stand() {
    // The sum is not reported on top.
    let a = check(
        r#"
        start Bye
        Bye {
          0.7  "goodbye"
          0.3  "thanks"
          "bye"
          ^^^^^ error no-mass-left: already sum to 1…the 2 unweighted alternatives get probability 0
          "cheers"
        }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (6, 3));
}

#[test]
fn no_mass_left_says_how_far_the_weighted_alternatives_overshoot() {
    check(
        r#"
        start Bye
        Bye {
          0.8 "goodbye"
          0.3 "thanks"
          "bye"
          ^^^^^ error no-mass-left: sum to 11/10 (1.1)…the unweighted alternative gets
        }
        "#,
    );
}

#[test]
fn unweighted_alternatives_with_mass_left_are_fine() {
    check("start Bye\nBye {\n  0.7  \"goodbye\"\n  \"bye\"\n  \"cheers\"\n}\n");
}

#[test]
fn a_zero_weight_is_a_warning_at_the_weight() {
    check(
        r#"
        start Kind
        Kind {
          0.6 "return"
          0.4 "single"
          0 "day"
          ^ warning zero-weight == rule `Kind → "day"` has weight 0 and can never be used
        }
        "#,
    );
}

#[test]
fn a_negative_weight_is_an_error_and_hides_the_sum_check() {
    // As written the weights add up to 1; as probabilities they do not.
    check(
        r#"
        start Kind
        Kind {
          1.25 "return"
          -1/4 "single"
          ^^^^ error negative-weight: -1/4 (-0.25)
        }
        "#,
    );
}

#[test]
fn a_weight_dividing_by_zero_is_reported_at_the_weight() {
    // No sum message about a block whose weight could not be read.
    check(
        r#"
        start Kind
        Kind {
          1/0 "return"
          ^^^ error bad-weight: divides by zero
          1 "single"
        }
        "#,
    );
}

#[test]
fn an_empty_alternative_is_an_empty_rule_error_without_a_sum_message() {
    let a = check(
        r#"
        start Fare
        Fare {
          0.5 "single"
          0.5
          ^^^ error empty-rule
        }
        "#,
    );
    assert!(a.diagnostics[0].help.is_some());
}

// ---------------------------------------------------------------------------
// Names
// ---------------------------------------------------------------------------

#[test]
fn every_use_of_an_undefined_name_is_reported_with_a_suggestion() {
    // `S` is unproductive because it only goes through `Tiket`, and
    // `Ticket` is unreachable; `Tiket` itself is not reported again.
    let a = check(
        r#"
        start S
        S {
        ^ error unproductive: `S` derives no string…needs `Tiket` (undefined)
          0.5 Tiket "a"
              ^^^^^ error undefined == `Tiket` is used but has no block; did you mean `Ticket`?
          0.5 "b" Tiket
                  ^^^^^ error undefined: did you mean `Ticket`?
        }
        Ticket { "t" }
        ^^^^^^ warning unreachable
        "#,
    );
    let undefined = with_code(&a, Code::Undefined)[0];
    assert!(undefined.help.as_ref().unwrap().contains("Tiket {"));
    let unproductive = the_one(&a, Code::Unproductive);
    assert!(unproductive.message.starts_with("`S` derives no string"));
    assert_eq!(unproductive.related.len(), 2);
}

#[test]
fn far_away_names_get_no_suggestion() {
    check(
        r#"
        start S
        S { Payment "x" | "y" }
            ^^^^^^^ error undefined == `Payment` is used but has no block
        Ticket { "t" }
        ^^^^^^ warning unreachable
        S2 { S }
        ^^ warning unreachable
        "#,
    );
}

#[test]
fn a_second_block_for_a_name_points_at_both_and_adds_nothing() {
    // The second block's rule is not added, so it is no duplicate rule.
    let a = check(
        r#"
        start Kind
        Kind {
          "day"
        }
        Kind {
        ^^^^ error duplicate-block == `Kind` has a second block
          "day"
        }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (2, 1));
    assert_eq!(a.grammar.rules.len(), 1);
}

#[test]
fn the_same_right_hand_side_twice_in_a_block_is_a_duplicate_rule() {
    let a = check(
        r#"
        start S
        S {
          0.5 A "x"
          0.25 "y"
          0.25 A "x"
          ^^^^^^^^^^ warning duplicate-rule == rule `S → A "x"` is written twice
        }
        A { "a" }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (3, 3));
}

#[test]
fn duplicates_in_long_blocks_point_at_the_first_writing() {
    // Thirty alternatives, where the 11th and 26th repeat the 4th and the
    // 30th repeats the 26th (so also the 4th): each repeat points at the
    // first writing, in small and in large blocks alike.
    let mut body = String::new();
    for i in 1..=30 {
        let word = match i {
            11 | 26 | 30 => 4,
            other => other,
        };
        body.push_str(&format!("  \"w{word}\"\n"));
    }
    let a = analyze_text(&format!("start S\nS relative {{\n{body}}}\n"));
    let found = with_code(&a, Code::DuplicateRule);
    let lines: Vec<(u32, u32)> = found
        .iter()
        .map(|d| (pos(&a, d).0, related_pos(&a, d, 0).0))
        .collect();
    // Alternative i is on line i + 2.
    assert_eq!(lines, [(13, 6), (28, 6), (32, 6)]);
}

#[test]
fn the_same_right_hand_side_in_two_blocks_is_fine() {
    check("start S\nS { A | B }\nA { \"x\" }\nB { \"x\" }\n");
}

#[test]
fn a_file_without_start_or_tests_is_a_library_with_nothing_to_report() {
    // A lexicon checked on its own: nothing in it needs a start symbol, and
    // without one nothing is called unreachable.
    check(
        r#"
        ## Kinds of ticket.
        Kind { "return" | "single" | "day" }
        Count { "one" | "two" }
        "#,
    );
}

#[test]
fn test_blocks_without_start_say_how_to_declare_it() {
    // Test sentences are parsed from the start symbol, so a grammar with
    // tests needs one; the finding sits at the first test.
    let a = check(
        r#"
        # kiosk
        Request { "hello" }
        Other { "x" }
        test "greetings" {
        ^^^^^^^^^^^^^^^^^^ error no-start: has 2 test blocks but no `start` declaration
          accept "hello"
        }
        test "partings" { reject "hello" }
        "#,
    );
    let help = a.diagnostics[0].help.as_ref();
    assert!(help.unwrap().contains("`start Request`"), "{help:?}");
}

#[test]
fn a_start_symbol_without_block_is_unknown_with_a_suggestion() {
    // Not also `undefined`, and no reachability without a valid start.
    check(
        r#"
        start Requst
              ^^^^^^ error unknown-start == the start symbol `Requst` has no block; did you mean `Request`?
        Request { "hello" }
        "#,
    );
}

#[test]
fn a_second_grammar_name_points_at_both() {
    let a = check(
        r#"
        grammar one
        grammar two
                ^^^ error duplicate-declaration
        start S
        S { "x" }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (1, 9));
    assert_eq!(a.grammar.name.as_deref(), Some("one"));
}

#[test]
fn a_second_start_points_at_the_first() {
    let a = check(
        r#"
        start S
        start T
              ^ error duplicate-declaration
        S { T }
        T { "x" }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (1, 7));
    assert_eq!(a.grammar.start, a.grammar.nt("S"));
}

// ---------------------------------------------------------------------------
// Reachability, productivity, unary cycles
// ---------------------------------------------------------------------------

#[test]
fn blocks_the_start_never_reaches_are_unreachable() {
    check(
        r#"
        start S
        S { A "x" }
        A { "a" }
        Lonely { Island }
        ^^^^^^ warning unreachable == `Lonely` cannot be reached from the start symbol `S`
        Island { "i" }
        ^^^^^^ warning unreachable
        "#,
    );
}

#[test]
fn symbols_that_never_finish_are_unproductive() {
    let a = check(
        r#"
        start S
        S {
          0.5 "x"
          0.5 Loop
        }
        Loop {
        ^^^^ error unproductive == `Loop` derives no string of words: every rule needs a symbol that never finishes (`Loop → "and" Loop` needs `Loop`)
          1 "and" Loop
        }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (7, 3));
}

#[test]
fn mutual_recursion_without_a_way_out_is_unproductive_for_every_member() {
    let a = check(
        r#"
        start S
        S { "s" | A }
        A { "a" B }
        ^ error unproductive: `A` derives no string
        B { "b" A }
        ^ error unproductive: `B` derives no string
        "#,
    );
    let found = with_code(&a, Code::Unproductive);
    assert!(found[0].message.starts_with("`A` derives no string"));
    assert!(found[1].message.starts_with("`B` derives no string"));
}

#[test]
fn recursion_with_a_base_case_is_productive() {
    check("start List\nList {\n  0.5 Item List\n  0.5 Item\n}\nItem { \"x\" }\n");
}

#[test]
fn a_cycle_of_unary_rules_is_a_warning_with_its_probability() {
    let a = check(
        r#"
        start Price
        Price {
          0.5 Cost
          ^^^^^^^^ warning unary-cycle == unary rules form a cycle: Price → Cost → Price; going round it once has probability 1/4 (0.25)
          0.5 "cheap"
        }
        Cost {
          0.5 Price
          0.5 "dear"
        }
        "#,
    );
    assert_eq!(related_pos(&a, &a.diagnostics[0], 0), (7, 3));
}

#[test]
fn a_unary_rule_to_itself_is_a_cycle() {
    check(
        r#"
        start A
        A {
          0.5 A
          ^^^^^ warning unary-cycle: A → A;
          0.5 "a"
        }
        "#,
    );
}

#[test]
fn a_certain_unary_cycle_is_an_error() {
    let a = check(
        r#"
        start S
        S {
          0.5 A
          0.5 "s"
        }
        A { B }
        ^ error unproductive: `A → B` needs `B`
            ^ error unary-cycle: unary rules form a cycle: A → B → A; every rule on it has probability 1
        B { A }
        ^ error unproductive: `B → A` needs `A`
        "#,
    );
    let d = the_one(&a, Code::UnaryCycle);
    assert!(
        d.message
            .starts_with("unary rules form a cycle: A → B → A; every rule on it has probability 1"),
        "{}",
        d.message
    );
    // With an explicit level in trellis.toml the configured level wins.
    let mut config = Config::default();
    config.levels.insert(
        Code::UnaryCycle,
        grammar_lang::config::Level::At(grammar_lang::Severity::Warning),
    );
    check_with(
        &config,
        r#"
        start S
        S {
          0.5 A
          0.5 "s"
        }
        A { B }
        ^ error unproductive
            ^ warning unary-cycle
        B { A }
        ^ error unproductive
        "#,
    );
}

#[test]
fn unary_chains_without_a_cycle_are_fine() {
    check("start A\nA { B }\nB { C }\nC { \"c\" }\n");
}

// ---------------------------------------------------------------------------
// Arity
// ---------------------------------------------------------------------------

#[test]
fn a_rule_longer_than_the_maximum_arity_explains_the_cost() {
    let long = r#"
        start S
        S {
          "a" "b" "c" "d" "e" "f" "g" "h" "i"
          ^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^^ warning arity: 9 items, more than the limit of 8…7 intermediate symbols
        }
        "#;
    let a = check(long);
    assert!(a.diagnostics[0]
        .help
        .as_ref()
        .unwrap()
        .contains("named block"));
    // A raised limit accepts it.
    let config = Config {
        max_arity: 9,
        ..Config::default()
    };
    check_with(
        &config,
        "start S\nS {\n  \"a\" \"b\" \"c\" \"d\" \"e\" \"f\" \"g\" \"h\" \"i\"\n}\n",
    );
}

#[test]
fn a_rule_at_the_maximum_arity_is_fine() {
    check("start S\nS {\n  \"a\" \"b\" \"c\" \"d\" \"e\" \"f\" \"g\" \"h\"\n}\n");
}

// ---------------------------------------------------------------------------
// `use`
// ---------------------------------------------------------------------------

#[test]
fn used_files_contribute_their_blocks() {
    let a = check(
        r#"
        === kiosk/main.trellis ===
        start Ticket
        use "lexicon.trellis"
        Ticket { Kind "ticket" }
        === kiosk/lexicon.trellis ===
        Kind { "day" | "single" }
        "#,
    );
    assert_eq!(a.sources.len(), 2);
    assert_eq!(
        a.sources.get(grammar_lang::FileId(1)).path,
        Path::new("kiosk/lexicon.trellis")
    );
    let kind = a.grammar.nonterminal(a.grammar.nt("Kind").unwrap());
    assert_eq!(kind.block.as_ref().unwrap().name.file.0, 1);
}

#[test]
fn a_missing_file_is_reported_at_its_use() {
    let a = check(
        r#"
        === kiosk/main.trellis ===
        start S
        S { "x" }
        use "lex/words.trellis"
            ^^^^^^^^^^^^^^^^^^^ error use-missing: kiosk/lex/words.trellis…no such file
        "#,
    );
    assert!(a.diagnostics[0]
        .help
        .as_ref()
        .unwrap()
        .contains("relative to the directory of `kiosk/main.trellis`"));
}

#[test]
fn paths_are_relative_to_the_using_file() {
    let a = check(
        r#"
        === g/main.trellis ===
        use "lex/words.trellis"
        start Word
        === g/lex/words.trellis ===
        use "../common.trellis"
        Word { Common }
        === g/common.trellis ===
        Common { "c" }
        "#,
    );
    assert_eq!(a.sources.len(), 3);
}

#[test]
fn a_use_cycle_is_reported_at_the_use_that_closes_it() {
    // Everything is still loaded once and the grammar is complete.
    let a = check(
        r#"
        === main.trellis ===
        start S
        use "a.trellis"
        S { A B }
        === a.trellis ===
        A { "a" }
        use "b.trellis"
        === b.trellis ===
        B { "b" }

        use "main.trellis"
            ^^^^^^^^^^^^^^ error use-cycle == `use` cycle: main.trellis → a.trellis → b.trellis → main.trellis
        "#,
    );
    assert_eq!(a.sources.len(), 3);
}

#[test]
fn a_file_using_itself_is_a_cycle() {
    check(
        r#"
        === main.trellis ===
        start S
        use "main.trellis"
            ^^^^^^^^^^^^^^ error use-cycle == `use` cycle: main.trellis → main.trellis
        S { "x" }
        "#,
    );
}

#[test]
fn a_file_used_twice_without_a_cycle_is_loaded_once() {
    let a = check(
        r#"
        === main.trellis ===
        start S
        use "left.trellis"
        use "right.trellis"
        S { Left Right }
        === left.trellis ===
        use "shared.trellis"
        Left { Shared }
        === right.trellis ===
        use "shared.trellis"
        Right { Shared }
        === shared.trellis ===
        Shared { "s" }
        "#,
    );
    assert_eq!(a.sources.len(), 4);
}

#[test]
fn start_declared_in_two_files_is_a_duplicate() {
    let a = check(
        r#"
        === main.trellis ===
        start S
        use "lex.trellis"
        S { Word }
        === lex.trellis ===
        start Word
              ^^^^ error duplicate-declaration
        Word { "w" }
        "#,
    );
    let d = &a.diagnostics[0];
    assert_eq!(d.related[0].location.file.0, 0);
    assert_eq!(related_pos(&a, d, 0), (1, 7));
}

// ---------------------------------------------------------------------------
// Size
// ---------------------------------------------------------------------------

/// A ring of 50,000 symbols, each with a unary rule to the next and a word
/// of its own, built directly in the model: the cycle search must not
/// recurse once per symbol.
#[test]
fn a_unary_cycle_through_fifty_thousand_symbols_is_found_without_deep_recursion() {
    use grammar_lang::model::{BlockInfo, Grammar, Ratio, Rule, Sym};
    use grammar_lang::{FileId, Location, Span};
    let n = 50_000;
    let here = Location::new(FileId(0), Span::point(0));
    let half = Ratio::new(1.into(), 2.into());
    let mut g = Grammar::new();
    let ids: Vec<_> = (0..n).map(|i| g.intern_nt(&format!("N{i}"))).collect();
    let word = g.intern_term("w");
    for i in 0..n {
        g.nonterminals[ids[i].index()].block = Some(BlockInfo {
            name: here,
            location: here,
            relative: false,
            doc: None,
            mass: Ratio::from_integer(1.into()),
            approximate: None,
        });
        for rhs in [Sym::N(ids[(i + 1) % n]), Sym::T(word)] {
            g.push_rule(Rule {
                lhs: ids[i],
                rhs: vec![rhs],
                weight: None,
                probability: half.clone(),
                p: 0.5,
                location: here,
                doc: None,
            });
        }
    }
    g.start = Some(ids[0]);
    g.start_location = Some(here);
    let mut sources = grammar_lang::SourceMap::new();
    sources.add("ring.trellis".into(), String::new());
    let mut out = Vec::new();
    grammar_lang::check::run_checks(&g, &sources, &[], &Config::default(), &mut out);
    assert_eq!(
        out.len(),
        1,
        "{:?}",
        out.iter().map(|d| d.code).collect::<Vec<_>>()
    );
    assert_eq!(out[0].code, Code::UnaryCycle);
    assert_eq!(out[0].related.len(), n - 1);
    assert!(out[0]
        .message
        .starts_with("unary rules form a cycle: N0 → N1 → N2"));
}

// ---------------------------------------------------------------------------
// Details of the model and of locations
// ---------------------------------------------------------------------------

#[test]
fn alternatives_keep_their_doc_comments() {
    let text =
        "start Kind\nKind {\n  ## The cheapest fare.\n  0.5 \"single\"\n  0.5 \"return\"\n}\n";
    let a = check(text);
    let docs: Vec<Option<&str>> = a.grammar.rules.iter().map(|r| r.doc.as_deref()).collect();
    assert_eq!(docs, [Some("The cheapest fare."), None]);
}

#[test]
fn columns_count_characters_in_names_beyond_ascii() {
    // `Fähre` is five characters but six bytes; the column of the
    // undefined `Bötchen` after it counts characters.
    check(
        r#"
        start Fähre
        Fähre { "ü" Bötchen }
        ^^^^^ error unproductive: `Fähre` derives no string
                    ^^^^^^^ error undefined
        "#,
    );
}

#[test]
fn findings_in_a_used_file_point_into_that_file() {
    check(
        r#"
        === main.trellis ===
        start S
        use "lex.trellis"
        S { Word | Word2 }
        === lex.trellis ===
        Word {
        ^^^^ error sum-not-one
          0.5 "ferry"
          0.4 "boat"
        }
        Word2 { Wrd }
        ^^^^^ error unproductive
                ^^^ error undefined == `Wrd` is used but has no block; did you mean `Word`?
        "#,
    );
}

#[test]
fn syntax_errors_of_used_files_are_reported_in_those_files() {
    check(
        r#"
        === main.trellis ===
        start S
        use "lex.trellis"
        S { "x" }
        === lex.trellis ===
        Word = "ferry"
             ^ error syntax
        "#,
    );
}

#[test]
fn diagnostics_come_sorted_by_file_and_position() {
    let a = analyze_text("start S\nS { B | A }\nA { \"a\" | \"a\" }\nB { C }\n");
    let places: Vec<(u32, u32)> = a.diagnostics.iter().map(|d| pos(&a, d)).collect();
    let mut sorted = places.clone();
    sorted.sort();
    assert_eq!(places, sorted);
    // Line 3 the repeated "a"; line 4 `B` (unproductive) then `C` (undefined).
    assert_eq!(
        codes(&a),
        [Code::DuplicateRule, Code::Unproductive, Code::Undefined]
    );
}

#[test]
fn a_limit_set_below_two_in_code_does_not_break_the_arity_message() {
    // `trellis.toml` refuses limits below 2, but a program may build any Config.
    let config = Config {
        max_arity: 1,
        ..Config::default()
    };
    check_with(
        &config,
        r#"
        start S
        S { "a" "b" }
            ^^^^^^^ warning arity: 2 items, more than the limit of 1
        "#,
    );
}

#[test]
fn an_expected_tree_may_span_several_lines_and_an_open_bracket_is_one_finding() {
    check(
        r#"
        start S
        S { NP VP }
        NP { "ferries" }
        VP { "sail" }
        test "layout" {
          accept "ferries sail" as (S
            (NP "ferries")
            (VP "sail"))
          accept "ferries sail" as (S
                                   ^ error syntax: this bracket of the expected tree is not closed
            (NP "ferries")
            (VP "sail")
          reject "sail"
        }
        "#,
    );
}
