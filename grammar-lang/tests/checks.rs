//! The static checks, specified by example: every check has a grammar that
//! triggers it and one that does not, and the tests pin down codes,
//! messages and where (1-based line and column) each finding points.

use grammar_lang::{
    analyze, analyze_text, Analysis, Code, Config, Diagnostic, MemoryLoader, Severity,
};
use std::path::Path;

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

fn assert_clean(a: &Analysis) {
    assert!(
        a.diagnostics.is_empty(),
        "expected no findings: {:#?}",
        a.diagnostics
    );
}

fn span_text<'a>(a: &'a Analysis, d: &Diagnostic) -> &'a str {
    d.location.span.text(&a.sources.get(d.location.file).text)
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
    assert_clean(&analyze_text(KIOSK));
}

#[test]
fn unweighted_alternatives_share_the_rest_and_relative_blocks_are_normalised() {
    // Design doc: Kind's three alternatives get 1/3 each; Count relative
    // 6/3/1 becomes 6/10, 3/10, 1/10.
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
    let a = analyze_text(&text);
    assert_clean(&a);
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
    assert_clean(&analyze_text(&kind_block(&["0.1", "0.2", "0.7"])));
}

#[test]
fn thirds_sum_to_one_exactly() {
    assert_clean(&analyze_text(&kind_block(&["1/3", "1/3", "1/3"])));
    assert_clean(&analyze_text(&kind_block(&["50%", "25%", "1/8", "0.125"])));
}

#[test]
fn a_block_that_sums_short_reports_the_exact_shortfall() {
    let a = analyze_text(&kind_block(&["0.33", "0.33", "0.33"]));
    let d = the_one(&a, Code::SumNotOne);
    assert_eq!(
        d.message,
        "block `Kind` sums to 99/100 (0.99): 1/100 (0.01) short"
    );
    assert_eq!(d.severity, Severity::Error);
    assert_eq!(pos(&a, d), (2, 1));
    assert_eq!(span_text(&a, d), "Kind");
    assert!(d.help.as_ref().unwrap().contains("relative"));
    assert_eq!(codes(&a), [Code::SumNotOne]);
}

#[test]
fn a_block_that_sums_over_one_reports_the_exact_surplus() {
    let a = analyze_text(&kind_block(&["0.5", "0.5", "1/3"]));
    let d = the_one(&a, Code::SumNotOne);
    assert_eq!(
        d.message,
        "block `Kind` sums to 4/3 (≈1.3333333333): 1/3 (≈0.3333333333) too much"
    );
}

#[test]
fn relative_blocks_are_not_held_to_a_sum_of_one() {
    let a = analyze_text("start Kind\nKind relative {\n  2 \"return\"\n  5 \"single\"\n}\n");
    assert_clean(&a);
}

#[test]
fn unweighted_alternatives_without_mass_left_are_reported_where_they_stand() {
    let text =
        "start Bye\nBye {\n  0.7  \"goodbye\"\n  0.3  \"thanks\"\n  \"bye\"\n  \"cheers\"\n}\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::NoMassLeft);
    assert_eq!(pos(&a, d), (5, 3));
    assert_eq!(related_pos(&a, d, 0), (6, 3));
    assert!(
        d.message.contains("already sum to 1")
            && d.message
                .contains("the 2 unweighted alternatives get probability 0"),
        "{}",
        d.message
    );
    // The sum is not reported on top.
    assert_eq!(codes(&a), [Code::NoMassLeft]);
}

#[test]
fn no_mass_left_says_how_far_the_weighted_alternatives_overshoot() {
    let a = analyze_text("start Bye\nBye {\n  0.8 \"goodbye\"\n  0.3 \"thanks\"\n  \"bye\"\n}\n");
    let d = the_one(&a, Code::NoMassLeft);
    assert!(d.message.contains("sum to 11/10 (1.1)"), "{}", d.message);
    assert!(d.message.contains("the unweighted alternative gets"));
}

#[test]
fn unweighted_alternatives_with_mass_left_are_fine() {
    assert_clean(&analyze_text(
        "start Bye\nBye {\n  0.7  \"goodbye\"\n  \"bye\"\n  \"cheers\"\n}\n",
    ));
}

#[test]
fn a_zero_weight_is_a_warning_at_the_weight() {
    let a = analyze_text(&kind_block(&["0.6", "0.4", "0"]));
    let d = the_one(&a, Code::ZeroWeight);
    assert_eq!(d.severity, Severity::Warning);
    assert_eq!(pos(&a, d), (5, 3));
    assert_eq!(
        d.message,
        "rule `Kind → \"day\"` has weight 0 and can never be used"
    );
    assert_eq!(codes(&a), [Code::ZeroWeight]);
}

#[test]
fn a_negative_weight_is_an_error_and_hides_the_sum_check() {
    // As written the weights add up to 1; as probabilities they do not.
    let a = analyze_text(&kind_block(&["1.25", "-1/4"]));
    let d = the_one(&a, Code::NegativeWeight);
    assert_eq!(d.severity, Severity::Error);
    assert_eq!(pos(&a, d), (4, 3));
    assert_eq!(span_text(&a, d), "-1/4");
    assert!(d.message.contains("-1/4 (-0.25)"), "{}", d.message);
    assert_eq!(codes(&a), [Code::NegativeWeight]);
}

#[test]
fn a_weight_dividing_by_zero_is_reported_at_the_weight() {
    let a = analyze_text(&kind_block(&["1/0", "1"]));
    let d = the_one(&a, Code::BadWeight);
    assert_eq!(pos(&a, d), (3, 3));
    assert!(d.message.contains("divides by zero"), "{}", d.message);
    // No sum message about a block whose weight could not be read.
    assert_eq!(codes(&a), [Code::BadWeight]);
}

#[test]
fn an_empty_alternative_is_an_empty_rule_error_without_a_sum_message() {
    let a = analyze_text("start Fare\nFare {\n  0.5 \"single\"\n  0.5\n}\n");
    let d = the_one(&a, Code::EmptyRule);
    assert_eq!(d.location.file.0, 0);
    assert!(d.help.is_some());
    assert!(
        with_code(&a, Code::SumNotOne).is_empty(),
        "{:#?}",
        a.diagnostics
    );
}

// ---------------------------------------------------------------------------
// Names
// ---------------------------------------------------------------------------

#[test]
fn every_use_of_an_undefined_name_is_reported_with_a_suggestion() {
    let text = "start S\nS {\n  0.5 Tiket \"a\"\n  0.5 \"b\" Tiket\n}\nTicket { \"t\" }\n";
    let a = analyze_text(text);
    let found = with_code(&a, Code::Undefined);
    assert_eq!(found.len(), 2);
    assert_eq!(pos(&a, found[0]), (3, 7));
    assert_eq!(pos(&a, found[1]), (4, 11));
    assert_eq!(
        found[0].message,
        "`Tiket` is used but has no block; did you mean `Ticket`?"
    );
    assert!(found[0].help.as_ref().unwrap().contains("Tiket {"));
    // `S` is unproductive because it only goes through `Tiket`, and
    // `Ticket` is unreachable; `Tiket` itself is not reported again.
    assert_eq!(with_code(&a, Code::Unproductive).len(), 1);
    let unproductive = the_one(&a, Code::Unproductive);
    assert!(unproductive.message.starts_with("`S` derives no string"));
    assert!(unproductive.message.contains("needs `Tiket` (undefined)"));
    assert_eq!(unproductive.related.len(), 2);
}

#[test]
fn far_away_names_get_no_suggestion() {
    let a = analyze_text("start S\nS { Payment \"x\" | \"y\" }\nTicket { \"t\" }\nS2 { S }\n");
    let d = &with_code(&a, Code::Undefined)[0];
    assert_eq!(d.message, "`Payment` is used but has no block");
}

#[test]
fn a_second_block_for_a_name_points_at_both_and_adds_nothing() {
    let text = "start Kind\nKind {\n  \"day\"\n}\nKind {\n  \"day\"\n}\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::DuplicateBlock);
    assert_eq!(pos(&a, d), (5, 1));
    assert_eq!(related_pos(&a, d, 0), (2, 1));
    assert_eq!(d.message, "`Kind` has a second block");
    // The second block's rule is not added, so it is no duplicate rule.
    assert_eq!(codes(&a), [Code::DuplicateBlock]);
    assert_eq!(a.grammar.rules.len(), 1);
}

#[test]
fn the_same_right_hand_side_twice_in_a_block_is_a_duplicate_rule() {
    let text = "start S\nS {\n  0.5 A \"x\"\n  0.25 \"y\"\n  0.25 A \"x\"\n}\nA { \"a\" }\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::DuplicateRule);
    assert_eq!(d.severity, Severity::Warning);
    assert_eq!(pos(&a, d), (5, 3));
    assert_eq!(related_pos(&a, d, 0), (3, 3));
    assert_eq!(d.message, "rule `S → A \"x\"` is written twice");
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
    assert_clean(&analyze_text(
        "start S\nS { A | B }\nA { \"x\" }\nB { \"x\" }\n",
    ));
}

#[test]
fn a_grammar_without_start_says_how_to_declare_it() {
    let a = analyze_text("# kiosk\nRequest { \"hello\" }\nOther { \"x\" }\n");
    let d = the_one(&a, Code::NoStart);
    assert_eq!(pos(&a, d), (1, 1));
    assert!(
        d.help.as_ref().unwrap().contains("`start Request`"),
        "{:?}",
        d.help
    );
    // Without a start symbol nothing is called unreachable.
    assert_eq!(codes(&a), [Code::NoStart]);
}

#[test]
fn a_start_symbol_without_block_is_unknown_with_a_suggestion() {
    let a = analyze_text("start Requst\nRequest { \"hello\" }\n");
    let d = the_one(&a, Code::UnknownStart);
    assert_eq!(pos(&a, d), (1, 7));
    assert_eq!(
        d.message,
        "the start symbol `Requst` has no block; did you mean `Request`?"
    );
    // Not also `undefined`, and no reachability without a valid start.
    assert_eq!(codes(&a), [Code::UnknownStart]);
}

#[test]
fn a_second_grammar_name_points_at_both() {
    let a = analyze_text("grammar one\ngrammar two\nstart S\nS { \"x\" }\n");
    let d = the_one(&a, Code::DuplicateDeclaration);
    assert_eq!(pos(&a, d), (2, 9));
    assert_eq!(related_pos(&a, d, 0), (1, 9));
    assert_eq!(a.grammar.name.as_deref(), Some("one"));
}

#[test]
fn a_second_start_points_at_the_first() {
    let a = analyze_text("start S\nstart T\nS { T }\nT { \"x\" }\n");
    let d = the_one(&a, Code::DuplicateDeclaration);
    assert_eq!(pos(&a, d), (2, 7));
    assert_eq!(related_pos(&a, d, 0), (1, 7));
    assert_eq!(a.grammar.start, a.grammar.nt("S"));
}

// ---------------------------------------------------------------------------
// Reachability, productivity, unary cycles
// ---------------------------------------------------------------------------

#[test]
fn blocks_the_start_never_reaches_are_unreachable() {
    let text = "start S\nS { A \"x\" }\nA { \"a\" }\nLonely { Island }\nIsland { \"i\" }\n";
    let a = analyze_text(text);
    let found = with_code(&a, Code::Unreachable);
    assert_eq!(found.len(), 2);
    assert_eq!(pos(&a, found[0]), (4, 1));
    assert_eq!(pos(&a, found[1]), (5, 1));
    assert_eq!(
        found[0].message,
        "`Lonely` cannot be reached from the start symbol `S`"
    );
    assert_eq!(found[0].severity, Severity::Warning);
}

#[test]
fn symbols_that_never_finish_are_unproductive() {
    let text = "start S\nS {\n  0.5 \"x\"\n  0.5 Loop\n}\nLoop {\n  1 \"and\" Loop\n}\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::Unproductive);
    assert_eq!(pos(&a, d), (6, 1));
    assert_eq!(
        d.message,
        "`Loop` derives no string of words: every rule needs a symbol that never finishes \
         (`Loop → \"and\" Loop` needs `Loop`)"
    );
    assert_eq!(related_pos(&a, d, 0), (7, 3));
    assert_eq!(d.severity, Severity::Error);
}

#[test]
fn mutual_recursion_without_a_way_out_is_unproductive_for_every_member() {
    let text = "start S\nS { \"s\" | A }\nA { \"a\" B }\nB { \"b\" A }\n";
    let a = analyze_text(text);
    let found = with_code(&a, Code::Unproductive);
    assert_eq!(found.len(), 2);
    assert!(found[0].message.starts_with("`A` derives no string"));
    assert!(found[1].message.starts_with("`B` derives no string"));
}

#[test]
fn recursion_with_a_base_case_is_productive() {
    let text = "start List\nList {\n  0.5 Item List\n  0.5 Item\n}\nItem { \"x\" }\n";
    assert_clean(&analyze_text(text));
}

#[test]
fn a_cycle_of_unary_rules_is_a_warning_with_its_probability() {
    let text = "start Price\nPrice {\n  0.5 Cost\n  0.5 \"cheap\"\n}\nCost {\n  0.5 Price\n  0.5 \"dear\"\n}\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::UnaryCycle);
    assert_eq!(d.severity, Severity::Warning);
    assert_eq!(pos(&a, d), (3, 3));
    assert_eq!(related_pos(&a, d, 0), (7, 3));
    assert_eq!(
        d.message,
        "unary rules form a cycle: Price → Cost → Price; going round it once has probability 1/4 (0.25)"
    );
}

#[test]
fn a_unary_rule_to_itself_is_a_cycle() {
    let a = analyze_text("start A\nA {\n  0.5 A\n  0.5 \"a\"\n}\n");
    let d = the_one(&a, Code::UnaryCycle);
    assert!(d.message.contains("A → A;"), "{}", d.message);
}

#[test]
fn a_certain_unary_cycle_is_an_error() {
    let text = "start S\nS {\n  0.5 A\n  0.5 \"s\"\n}\nA { B }\nB { A }\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::UnaryCycle);
    assert_eq!(d.severity, Severity::Error);
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
        grammar_lang::config::Level::At(Severity::Warning),
    );
    let a = analyze(Path::new("g.trellis"), text, &MemoryLoader::new(), &config);
    assert_eq!(the_one(&a, Code::UnaryCycle).severity, Severity::Warning);
}

#[test]
fn unary_chains_without_a_cycle_are_fine() {
    assert_clean(&analyze_text("start A\nA { B }\nB { C }\nC { \"c\" }\n"));
}

// ---------------------------------------------------------------------------
// Arity
// ---------------------------------------------------------------------------

#[test]
fn a_rule_longer_than_the_maximum_arity_explains_the_cost() {
    let long = "start S\nS {\n  \"a\" \"b\" \"c\" \"d\" \"e\" \"f\" \"g\" \"h\" \"i\"\n}\n";
    let a = analyze_text(long);
    let d = the_one(&a, Code::Arity);
    assert_eq!(pos(&a, d), (3, 3));
    assert!(
        d.message.contains("9 items, more than the limit of 8"),
        "{}",
        d.message
    );
    assert!(
        d.message.contains("7 intermediate symbols"),
        "{}",
        d.message
    );
    assert!(d.help.as_ref().unwrap().contains("named block"));
    // A raised limit accepts it.
    let config = Config {
        max_arity: 9,
        ..Config::default()
    };
    assert_clean(&analyze(
        Path::new("g.trellis"),
        long,
        &MemoryLoader::new(),
        &config,
    ));
}

#[test]
fn a_rule_at_the_maximum_arity_is_fine() {
    assert_clean(&analyze_text(
        "start S\nS {\n  \"a\" \"b\" \"c\" \"d\" \"e\" \"f\" \"g\" \"h\"\n}\n",
    ));
}

// ---------------------------------------------------------------------------
// `use`
// ---------------------------------------------------------------------------

#[test]
fn used_files_contribute_their_blocks() {
    let loader =
        MemoryLoader::new().with("kiosk/lexicon.trellis", "Kind { \"day\" | \"single\" }\n");
    let main = "start Ticket\nuse \"lexicon.trellis\"\nTicket { Kind \"ticket\" }\n";
    let a = analyze(
        Path::new("kiosk/main.trellis"),
        main,
        &loader,
        &Config::default(),
    );
    assert_clean(&a);
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
    let main = "start S\nS { \"x\" }\nuse \"lex/words.trellis\"\n";
    let a = analyze(
        Path::new("kiosk/main.trellis"),
        main,
        &MemoryLoader::new(),
        &Config::default(),
    );
    let d = the_one(&a, Code::UseMissing);
    assert_eq!(pos(&a, d), (3, 1));
    assert!(
        d.message.contains("kiosk/lex/words.trellis"),
        "{}",
        d.message
    );
    assert!(d.message.contains("no such file"), "{}", d.message);
    assert!(d
        .help
        .as_ref()
        .unwrap()
        .contains("relative to the directory of `kiosk/main.trellis`"));
}

#[test]
fn paths_are_relative_to_the_using_file() {
    let loader = MemoryLoader::new()
        .with(
            "g/lex/words.trellis",
            "use \"../common.trellis\"\nWord { Common }\n",
        )
        .with("g/common.trellis", "Common { \"c\" }\n");
    let main = "use \"lex/words.trellis\"\nstart Word\n";
    let a = analyze(
        Path::new("g/main.trellis"),
        main,
        &loader,
        &Config::default(),
    );
    assert_clean(&a);
    assert_eq!(a.sources.len(), 3);
}

#[test]
fn a_use_cycle_is_reported_at_the_use_that_closes_it() {
    let loader = MemoryLoader::new()
        .with("a.trellis", "A { \"a\" }\nuse \"b.trellis\"\n")
        .with("b.trellis", "B { \"b\" }\n\nuse \"main.trellis\"\n");
    let main = "start S\nuse \"a.trellis\"\nS { A B }\n";
    let a = analyze(Path::new("main.trellis"), main, &loader, &Config::default());
    let d = the_one(&a, Code::UseCycle);
    assert_eq!(a.sources.get(d.location.file).path, Path::new("b.trellis"));
    assert_eq!(pos(&a, d), (3, 1));
    assert_eq!(
        d.message,
        "`use` cycle: main.trellis → a.trellis → b.trellis → main.trellis"
    );
    // Everything is still loaded once and the grammar is complete.
    assert_eq!(a.sources.len(), 3);
    assert_eq!(codes(&a), [Code::UseCycle]);
}

#[test]
fn a_file_using_itself_is_a_cycle() {
    let main = "start S\nuse \"main.trellis\"\nS { \"x\" }\n";
    let a = analyze(
        Path::new("main.trellis"),
        main,
        &MemoryLoader::new(),
        &Config::default(),
    );
    let d = the_one(&a, Code::UseCycle);
    assert_eq!(d.message, "`use` cycle: main.trellis → main.trellis");
}

#[test]
fn a_file_used_twice_without_a_cycle_is_loaded_once() {
    let loader = MemoryLoader::new()
        .with("left.trellis", "use \"shared.trellis\"\nLeft { Shared }\n")
        .with(
            "right.trellis",
            "use \"shared.trellis\"\nRight { Shared }\n",
        )
        .with("shared.trellis", "Shared { \"s\" }\n");
    let main = "start S\nuse \"left.trellis\"\nuse \"right.trellis\"\nS { Left Right }\n";
    let a = analyze(Path::new("main.trellis"), main, &loader, &Config::default());
    assert_clean(&a);
    assert_eq!(a.sources.len(), 4);
}

#[test]
fn start_declared_in_two_files_is_a_duplicate() {
    let loader = MemoryLoader::new().with("lex.trellis", "start Word\nWord { \"w\" }\n");
    let main = "start S\nuse \"lex.trellis\"\nS { Word }\n";
    let a = analyze(Path::new("main.trellis"), main, &loader, &Config::default());
    let d = the_one(&a, Code::DuplicateDeclaration);
    assert_eq!(
        a.sources.get(d.location.file).path,
        Path::new("lex.trellis")
    );
    assert_eq!(pos(&a, d), (1, 7));
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
    grammar_lang::check::run_checks(&g, &sources, &Config::default(), &mut out);
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
    let a = analyze_text(text);
    assert_clean(&a);
    let docs: Vec<Option<&str>> = a.grammar.rules.iter().map(|r| r.doc.as_deref()).collect();
    assert_eq!(docs, [Some("The cheapest fare."), None]);
}

#[test]
fn columns_count_characters_in_names_beyond_ascii() {
    // `Fähre` is five characters but six bytes; the column of the
    // undefined `Bötchen` after it counts characters.
    let text = "start Fähre\nFähre { \"ü\" Bötchen }\n";
    let a = analyze_text(text);
    let d = the_one(&a, Code::Undefined);
    assert_eq!(pos(&a, d), (2, 13));
    assert_eq!(span_text(&a, d), "Bötchen");
}

#[test]
fn findings_in_a_used_file_point_into_that_file() {
    let loader = MemoryLoader::new().with(
        "lex.trellis",
        "Word {\n  0.5 \"ferry\"\n  0.4 \"boat\"\n}\nWord2 { Wrd }\n",
    );
    let main = "start S\nuse \"lex.trellis\"\nS { Word | Word2 }\n";
    let a = analyze(Path::new("main.trellis"), main, &loader, &Config::default());
    let sum = the_one(&a, Code::SumNotOne);
    assert_eq!(
        a.sources.get(sum.location.file).path,
        Path::new("lex.trellis")
    );
    assert_eq!(pos(&a, sum), (1, 1));
    let undefined = the_one(&a, Code::Undefined);
    assert_eq!(
        a.sources.get(undefined.location.file).path,
        Path::new("lex.trellis")
    );
    assert_eq!(pos(&a, undefined), (5, 9));
    assert!(
        undefined.message.ends_with("did you mean `Word`?"),
        "{}",
        undefined.message
    );
}

#[test]
fn syntax_errors_of_used_files_are_reported_in_those_files() {
    let loader = MemoryLoader::new().with("lex.trellis", "Word = \"ferry\"\n");
    let main = "start S\nuse \"lex.trellis\"\nS { \"x\" }\n";
    let a = analyze(Path::new("main.trellis"), main, &loader, &Config::default());
    let d = &with_code(&a, Code::Syntax)[0];
    assert_eq!(d.location.file.0, 1);
    assert_eq!(pos(&a, d), (1, 6));
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
    let a = analyze(
        Path::new("g.trellis"),
        "start S\nS { \"a\" \"b\" }\n",
        &MemoryLoader::new(),
        &config,
    );
    let d = the_one(&a, Code::Arity);
    assert!(
        d.message.contains("2 items, more than the limit of 1"),
        "{}",
        d.message
    );
}
