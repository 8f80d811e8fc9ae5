//! Editor services, specified by example: what is found where, what hover
//! says, where navigation leads and what rename changes.
//!
//! Every test states its grammar as a fixture (`trellis_test_support`):
//! `$0` is the cursor, `[[…]]` marks an expected span (or, empty, another
//! place a request is made at). Marked ranges are named by destructuring
//! them in the order they are written. Each fixture is the smallest
//! grammar that shows its rule: names such as `Fähre` and `Rückfahrt`
//! stand before the places where byte offsets matter (they are wider in
//! bytes than in characters), and a second file is there when the feature
//! crosses files.

use grammar_lang::source::FileId;
use grammar_lang::syntax::lexer::TokenKind;
use grammar_lang::{Config, Location, Span};
use std::path::Path;
use trellis_ide::{
    self as ide, Analysis, EngineFacts, FoldKind, FoldingRange, Lookup, NtRole, RenameError,
    TextEdit,
};
use trellis_test_support::{apply_edits, assert_diagnostics, Fixture};

/// Analyses a fixture through the façade, its first file as the root.
fn analyse(fixture: &str) -> (Fixture, Analysis) {
    let f = Fixture::parse(fixture);
    let root = f.root();
    let a = ide::analyze(&root.path, &root.text, &f.loader(), &Config::default());
    (f, a)
}

/// [`analyse`] for a fixture that must analyse without any finding.
fn analyse_clean(fixture: &str) -> (Fixture, Analysis) {
    let (f, a) = analyse(fixture);
    assert_diagnostics(&f, &a);
    (f, a)
}

/// The id the analysis gave the fixture file `path`.
fn id(a: &Analysis, path: &str) -> FileId {
    a.sources
        .find(Path::new(path))
        .unwrap_or_else(|| panic!("{path} was not loaded"))
}

/// The file and offset of the fixture's `$0`.
fn cursor(f: &Fixture, a: &Analysis) -> (FileId, usize) {
    (
        id(a, f.cursor_file().path.to_str().unwrap()),
        f.cursor_offset(),
    )
}

/// The `N` ranges marked `[[…]]` in file `path`, as spans.
#[track_caller]
fn spans<const N: usize>(f: &Fixture, path: &str) -> [Span; N] {
    let ranges = &f.file(path).ranges;
    let spans: Vec<Span> = ranges.iter().map(|r| Span::new(r.start, r.end)).collect();
    spans
        .try_into()
        .unwrap_or_else(|s: Vec<Span>| panic!("{path} marks {} ranges, not {N}", s.len()))
}

/// The starts of the `N` ranges marked in file `path` (`[[]]` marks a place).
#[track_caller]
fn places<const N: usize>(f: &Fixture, path: &str) -> [usize; N] {
    spans::<N>(f, path).map(|s| s.start as usize)
}

/// Every range marked `[[…]]` in the fixture as a location, file by file
/// in the order the files are written.
fn marked_locations(f: &Fixture, a: &Analysis) -> Vec<Location> {
    f.files
        .iter()
        .flat_map(|file| {
            let id = id(a, file.path.to_str().unwrap());
            file.ranges
                .iter()
                .map(move |r| Location::new(id, Span::new(r.start, r.end)))
        })
        .collect()
}

/// Every offset from the start of `span` to its end (both included) that
/// is a character boundary of `text`.
fn offsets(text: &str, span: Span) -> impl Iterator<Item = usize> + '_ {
    (span.start as usize..=span.end as usize).filter(|&o| text.is_char_boundary(o))
}

/// The texts of the analysis with `edits` applied, by file.
fn apply(a: &Analysis, edits: &[TextEdit]) -> Vec<String> {
    a.sources
        .iter()
        .map(|(file, source)| {
            let mine = edits.iter().filter(|e| e.file == file);
            apply_edits(
                &source.text,
                mine.map(|e| (e.span.range(), e.new_text.as_str())),
            )
        })
        .collect()
}

// ── lookup ──────────────────────────────────────────────────────────────

#[test]
fn lookup_names_the_role_of_every_non_terminal_occurrence_wherever_the_cursor_touches_it() {
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start [[Fähre]]
        use "lexikon.trellis"
        [[Fähre]] {
          0.5  "hin" [[Rückfahrt]]
          0.5  "zurück"
        }
        test "t" { accept "hin ab" as (Fähre "hin" ([[Rückfahrt]] "ab")) }
        === lexikon.trellis ===
        [[Rückfahrt]] { "ab" }
        "#,
    );
    let (m, l) = (id(&a, "main.trellis"), id(&a, "lexikon.trellis"));
    let g = &a.grammar;
    let (faehre, rueckfahrt) = (g.nt("Fähre").unwrap(), g.nt("Rückfahrt").unwrap());
    let [start, definition, use_in_first_rule, test_label] = spans(&f, "main.trellis");
    let [definition_in_lexikon] = spans(&f, "lexikon.trellis");
    let expected = [
        (m, start, faehre, NtRole::Start),
        (m, definition, faehre, NtRole::Definition),
        // `0.5  "hin" Rückfahrt` is the first rule of `Fähre`.
        (
            m,
            use_in_first_rule,
            rueckfahrt,
            NtRole::Use {
                rule: Some(g.nonterminal(faehre).rules[0]),
            },
        ),
        (m, test_label, rueckfahrt, NtRole::TestLabel),
        (l, definition_in_lexikon, rueckfahrt, NtRole::Definition),
    ];
    for (file, span, nt, role) in expected {
        // From the name's first character to right after its last.
        for offset in offsets(&a.sources.get(file).text, span) {
            assert_eq!(
                a.lookup(file, offset),
                Some(Lookup::NonTerminal { nt, role, span }),
                "at {offset} in {span:?}"
            );
        }
    }
}

#[test]
fn lookup_finds_terminals_weights_keywords_and_use_paths() {
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start Fahrt
        use [["lexikon.trellis"]]
        Fahrt [[relative]] { [[3]] [["Rückfahrt"]] | 1 Art }
        === lexikon.trellis ===
        Art { "Einzel" }
        "#,
    );
    let (m, l) = (id(&a, "main.trellis"), id(&a, "lexikon.trellis"));
    let g = &a.grammar;
    let [use_path, relative, weight, rueckfahrt] = spans(&f, "main.trellis");
    let expected = [
        (
            rueckfahrt,
            Lookup::Terminal {
                term: Some(g.term("Rückfahrt").unwrap()),
                value: "Rückfahrt".into(),
                span: rueckfahrt,
            },
        ),
        (
            weight,
            Lookup::Weight {
                rule: g.nonterminal(g.nt("Fahrt").unwrap()).rules[0],
                span: weight,
            },
        ),
        (
            relative,
            Lookup::Keyword {
                keyword: TokenKind::KwRelative,
                span: relative,
            },
        ),
        (
            use_path,
            Lookup::UsePath {
                target: Some(l),
                span: use_path,
            },
        ),
    ];
    for (span, found) in expected {
        for offset in offsets(&f.file("main.trellis").text, span) {
            assert_eq!(a.lookup(m, offset), Some(found.clone()), "at {offset}");
        }
    }
}

#[test]
fn lookup_between_a_weight_and_the_first_item_finds_the_whole_alternative() {
    // The alternative ends with its last item: the comment is not part of it.
    let (f, a) = analyse_clean(
        r#"
        start Fähre
        Fähre {
          0.7  "hin"
          [[0.3 $0 "Rückfahrt" "bitte"]]  # höflich
        }
        "#,
    );
    let (file, offset) = cursor(&f, &a);
    let [alternative] = spans(&f, "grammar.trellis");
    let faehre = a.grammar.nt("Fähre").unwrap();
    assert_eq!(
        a.lookup(file, offset),
        Some(Lookup::Alternative {
            rule: a.grammar.nonterminal(faehre).rules[1],
            span: alternative
        })
    );
}

#[test]
fn lookup_finds_nothing_on_comments_blank_lines_past_the_end_or_in_unknown_files() {
    let (f, a) = analyse_clean(
        r#"
        start Fähre
        [[]]
        Fähre { "hin" }  [[# höflich]]
        "#,
    );
    let m = id(&a, "grammar.trellis");
    let text = &f.root().text;
    let [blank_line, comment] = spans(&f, "grammar.trellis");
    for span in [blank_line, comment] {
        for offset in offsets(text, span) {
            assert_eq!(a.lookup(m, offset), None, "at {offset}");
        }
    }
    assert_eq!(a.lookup(m, text.len() + 100), None);
    assert_eq!(a.lookup(FileId(7), 0), None);
}

/// What hover says at the fixture's `$0`, with the engine's facts if given.
#[track_caller]
fn hover_at_cursor(f: &Fixture, a: &Analysis, facts: Option<&EngineFacts>) -> ide::Hover {
    let (file, offset) = cursor(f, a);
    ide::hover(a, a.index(), file, offset, facts).expect("a hover at the cursor")
}

// ── hover ───────────────────────────────────────────────────────────────

#[test]
fn hover_on_a_weight_gives_the_rule_exact_probability_share_and_total() {
    // 0.55 + 0.45 = 1: the weight is the probability, 11/20.
    let (f, a) = analyse_clean(
        r#"
        start Fähre
        Fähre {
          [[0.$055]]  "hin"
          0.45  "zurück"
        }
        "#,
    );
    let h = hover_at_cursor(&f, &a, None);
    assert_eq!(h.span, spans::<1>(&f, "grammar.trellis")[0]);
    assert_eq!(
        h.markdown,
        "**rule** `Fähre → \"hin\"`\n\
         \n\
         - weight as written: `0.55` (decimal)\n\
         - probability: 11/20 = 0.55\n\
         - share of `Fähre`: 55% of its total\n\
         - total of `Fähre`: 1\n"
    );
}

#[test]
fn hover_on_a_block_past_the_exact_limit_says_it_was_summed_in_floating_point() {
    // A weight of 30,000 digits: its block's exact sum needs about 200,000
    // bits, past `EXACT_SUM_BITS`, so the block is resolved in floating
    // point and both hovers say so. The bound is γ₁ · 1/3 = u/(1 − u) · 1/3
    // with u = 2^-53 (see `lower::resolve_block`).
    let text = format!(
        "start Call\nCa$0ll {{\n  0.{} \"ahoy\"\n  \"hail\"\n}}\n",
        "3".repeat(30_000)
    );
    let (f, a) = analyse(&text);
    let h = hover_at_cursor(&f, &a, None);
    assert!(
        h.markdown.contains(
            "- weights sum to ≈3.333333e-1 (within ±3.7e-17), checked in floating point: the \
             exact sum needs more than 65536 bits\n"
        ),
        "{}",
        h.markdown
    );
    let ahoy = a.grammar.nonterminal(a.grammar.nt("Call").unwrap()).rules[0];
    let weight = a.grammar.rule(ahoy).weight.as_ref().expect("weighted");
    let at = weight.location.span.start as usize;
    let rule = ide::hover(&a, a.index(), FileId(0), at, None).expect("a hover");
    assert!(
        rule.markdown
            .contains("- computed in floating point: the exact sum of `Call`"),
        "{}",
        rule.markdown
    );
}

#[test]
fn hover_on_a_relative_alternative_shows_the_division_and_expected_uses() {
    // The cursor on the space between weight and word: anywhere on the
    // alternative. The expected uses are the engine's to compute; here
    // they are given.
    let (f, a) = analyse_clean(
        r#"
        start Anzahl
        Anzahl relative {
          6   "eine"
          [[3 $0  "zwei"]]
          1   "drei"
        }
        "#,
    );
    let zwei = a.grammar.nonterminal(a.grammar.nt("Anzahl").unwrap()).rules[1];
    let mut uses = vec![0.0; a.grammar.rules.len()];
    uses[zwei.index()] = 0.0825;
    let facts = EngineFacts {
        rule_expected_uses: uses,
        ..EngineFacts::default()
    };
    let h = hover_at_cursor(&f, &a, Some(&facts));
    assert_eq!(h.span, spans::<1>(&f, "grammar.trellis")[0]);
    assert_eq!(
        h.markdown,
        "**rule** `Anzahl → \"zwei\"`\n\
         \n\
         - relative weight as written: `3` (decimal)\n\
         - probability: 3/10 = 0.3\n\
         - share of `Anzahl`: 30% of its total\n\
         - total of `Anzahl`: 1\n\
         - `Anzahl` is `relative`: its weights sum to 10 and each is divided by that sum\n\
         - expected uses per sentence: 0.0825\n"
    );
}

#[test]
fn hover_on_an_unweighted_alternative_explains_the_shared_remainder() {
    // One unweighted alternative gets everything.
    let (f, a) = analyse_clean("start Wunsch\nWunsch { \"ich\" $0 \"möchte\" }\n");
    let h = hover_at_cursor(&f, &a, None);
    assert!(
        h.markdown.contains(
            "- unweighted: shares what the weighted alternatives leave\n- probability: 1\n"
        ),
        "{}",
        h.markdown
    );
}

#[test]
fn hover_on_a_non_terminal_shows_doc_rules_reachability_and_termination() {
    // On a use in the main file; the documentation comes from the lexicon.
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start Fähre
        use "lexikon.trellis"
        Fähre {
          0.5  [[A$0rt]] "Fahrkarte"
          0.5  Art
        }
        === lexikon.trellis ===
        ## Die Art der Fahrkarte.
        Art { "Rückfahrt" | "Einzel" | "Tages" }
        "#,
    );
    let art = a.grammar.nt("Art").unwrap();
    let facts = EngineFacts {
        termination: (0..a.grammar.nonterminals.len())
            .map(|i| if i == art.index() { 1.0 } else { 0.5 })
            .collect(),
        rule_expected_uses: Vec::new(),
    };
    let h = hover_at_cursor(&f, &a, Some(&facts));
    assert_eq!(h.span, spans::<1>(&f, "main.trellis")[0]);
    assert_eq!(
        h.markdown,
        "**non-terminal** `Art`\n\
         \n\
         Die Art der Fahrkarte.\n\
         \n\
         - 3 rules\n\
         - reachable from the start symbol `Fähre`\n\
         - productive: derives at least one string of words\n\
         - used 2 times on right-hand sides\n\
         - termination probability: 1\n"
    );
}

#[test]
fn hover_without_engine_facts_still_answers_without_the_termination_line() {
    let (f, a) = analyse_clean(
        r#"
        start Anfrage
        ## Was ein Fahrgast am Automaten sagt.
        $0Anfrage { "hin" | "zurück" | "bitte" }
        "#,
    );
    let h = hover_at_cursor(&f, &a, None);
    assert_eq!(
        h.markdown,
        "**start symbol** `Anfrage`\n\
         \n\
         Was ein Fahrgast am Automaten sagt.\n\
         \n\
         - 3 rules\n\
         - productive: derives at least one string of words\n\
         - used 0 times on right-hand sides\n"
    );
}

#[test]
fn hover_reports_unreachable_unproductive_and_undefined_symbols() {
    let (f, a) = analyse(
        r#"
        start S
        S { "a" | Loop }
        [[]]Loop { Loop "b" }
        [[]]Island { "c" | [[]]Nirgends }
        "#,
    );
    let m = id(&a, "grammar.trellis");
    let [unproductive, unreachable, undefined] = places(&f, "grammar.trellis");
    let hover = |offset| ide::hover(&a, a.index(), m, offset, None).unwrap().markdown;
    assert!(hover(unreachable).contains("- **not reachable** from the start symbol `S`\n"));
    assert!(hover(unproductive).contains("- **unproductive**: derives no string of words\n"));
    assert_eq!(
        hover(undefined),
        "**non-terminal** `Nirgends`\n\nused once but has **no block**: it derives nothing\n"
    );
}

#[test]
fn hover_on_a_terminal_tables_the_rules_that_produce_it() {
    let (f, a) = analyse_clean(
        r#"
        start Fahrkarte
        Fahrkarte {
          1/2   "Rückfahrt" "Fahrkarte"
          1/2   [["$0Fahrkarte"]]
        }
        "#,
    );
    let h = hover_at_cursor(&f, &a, None);
    assert_eq!(h.span, spans::<1>(&f, "grammar.trellis")[0]);
    assert_eq!(
        h.markdown,
        "**terminal** `\"Fahrkarte\"`\n\
         \n\
         produced directly by 2 rules:\n\
         \n\
         | non-terminal | rule | probability |\n\
         |---|---|---|\n\
         | `Fahrkarte` | `Fahrkarte → \"Rückfahrt\" \"Fahrkarte\"` | 1/2 = 0.5 |\n\
         | `Fahrkarte` | `Fahrkarte → \"Fahrkarte\"` | 1/2 = 0.5 |\n"
    );
}

#[test]
fn hover_on_a_terminal_of_several_words_lists_its_words_and_their_producers() {
    let (f, a) = analyse_clean(
        r#"
        start Fahrkarte
        Fahrkarte {
          1/2   [["$0einfache Fahrt"]]
          1/2   "Fahrt"
        }
        "#,
    );
    let h = hover_at_cursor(&f, &a, None);
    assert_eq!(h.span, spans::<1>(&f, "grammar.trellis")[0]);
    assert_eq!(
        h.markdown,
        "**terminal** `\"einfache Fahrt\"`\n\
         \n\
         the sequence of 2 words `\"einfache\"` `\"Fahrt\"`: a sentence must have them one after the other\n\
         \n\
         | word | rules producing it |\n\
         |---|---|\n\
         | `\"einfache\"` | 1 |\n\
         | `\"Fahrt\"` | 2 |\n"
    );
}

#[test]
fn hover_on_a_test_tree_word_that_no_rule_has_says_so() {
    let (f, a) = analyse(
        r#"
        start S
        S { "a" }
        test "t" { accept "a" as (S "$0zz") }
        "#,
    );
    let h = hover_at_cursor(&f, &a, None);
    assert_eq!(
        h.markdown,
        "**terminal** `\"zz\"`\n\nno rule produces this word\n"
    );
}

#[test]
fn hover_explains_keywords_and_nothing_on_comments() {
    let (f, a) = analyse_clean("start S\nS [[]]relative { 1 \"ja\" }  # [[]]höflich\n");
    let m = id(&a, "grammar.trellis");
    let [relative, comment] = places(&f, "grammar.trellis");
    let h = ide::hover(&a, a.index(), m, relative, None).unwrap();
    assert!(h.markdown.starts_with("`relative`:"), "{}", h.markdown);
    assert_eq!(ide::hover(&a, a.index(), m, comment, None), None);
}

// ── definition and references ───────────────────────────────────────────

#[test]
fn definition_jumps_across_used_files() {
    // Empty ranges are the places asked at; `Fähre`'s definition and
    // `Anzahl`'s are the spans expected.
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start [[]]Fähre
        use "le[[]]xikon.trellis"
        [[Fähre]] {
          [[]]0.5  An[[]]zahl "Fahrkarten"
          0.5  "keine"
        }
        === lexikon.trellis ===
        [[]]## Wie viele.
        [[Anzahl]] relative { 6 "eine" | 3 "zwei" }
        "#,
    );
    let (m, l) = (id(&a, "main.trellis"), id(&a, "lexikon.trellis"));
    let [start, use_path, faehre_definition, weight, anzahl] = spans(&f, "main.trellis");
    let [start, use_path, weight, anzahl] =
        [start, use_path, weight, anzahl].map(|s| s.start as usize);
    let [start_of_lexikon, anzahl_definition] = spans(&f, "lexikon.trellis");
    assert_eq!(
        a.definition(m, anzahl),
        Some(Location::new(l, anzahl_definition))
    );
    assert_eq!(
        a.definition(m, start),
        Some(Location::new(m, faehre_definition))
    );
    // The path of a `use` leads to the start of that file, not to its
    // first block.
    assert_eq!(
        a.definition(m, use_path),
        Some(Location::new(l, start_of_lexikon))
    );
    assert_eq!(start_of_lexikon, Span::point(0));
    assert_eq!(a.definition(m, weight), None);
}

/// Asks for the references at the cursor of a fixture that analyses
/// cleanly, with or without the definition, and checks that they are
/// exactly the marked ranges, file by file.
#[track_caller]
fn assert_references_marked(fixture: &str, include_declaration: bool) {
    let (f, a) = analyse_clean(fixture);
    let (file, offset) = cursor(&f, &a);
    assert_eq!(
        a.references(file, offset, include_declaration),
        marked_locations(&f, &a)
    );
}

#[test]
fn references_to_a_non_terminal_cover_rhs_uses_and_test_labels_in_every_file() {
    // Asked at the definition in the lexikon; the references are in main.
    assert_references_marked(
        r#"
        === main.trellis ===
        start Fahrkarte
        use "lexikon.trellis"
        Fahrkarte { 0.5 "eine" [[Ermäßigung]] | 0.5 [[Ermäßigung]] }
        test "t" { accept "halb" as (Fahrkarte ([[Ermäßigung]] "halb")) }
        === lexikon.trellis ===
        $0Ermäßigung { "halb" | "frei" }
        "#,
        false,
    );
}

#[test]
fn references_with_the_definition_include_start_and_block_head() {
    assert_references_marked(
        r#"
        start [[$0Fähre]]
        [[Fähre]] { "hin" | "zurück" }
        test "t" { accept "hin" as ([[Fähre]] "hin") }
        "#,
        true,
    );
}

#[test]
fn references_to_a_word_cover_every_right_hand_side_and_tree_leaf_with_it() {
    // Marked, in order: on a right-hand side and a tree leaf in main, on a
    // right-hand side in the lexikon; not the test case's sentence, which
    // is not a word of the grammar.
    assert_references_marked(
        r#"
        === main.trellis ===
        start Fahrt
        use "lexikon.trellis"
        Fahrt { 0.5 "eine" [["Rückfahrt"]] | 0.5 Art }
        test "t" { accept "eine Rückfahrt" as (Fahrt "eine" [["Rückfahrt"]]) }
        === lexikon.trellis ===
        Art { "Einzel" | [[$0"Rückfahrt"]] }
        "#,
        true,
    );
}

// ── rename ──────────────────────────────────────────────────────────────

#[test]
fn rename_changes_every_occurrence_in_every_file_including_test_trees() {
    // Marked: every occurrence of `Fähre`, the cursor on a use.
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start Überfahrt
        use "lexikon.trellis"
        Überfahrt { [[Fä$0hre]] "über" [[Fähre]] }
        test "hin und zurück" {
          accept "Boot über Boot" as (Überfahrt ([[Fähre]] "Boot") "über" ([[Fähre]] "Boot"))
        }
        === lexikon.trellis ===
        [[Fähre]] { "Boot" }
        "#,
    );
    let (file, offset) = cursor(&f, &a);
    assert_eq!(
        a.prepare_rename(file, offset),
        Ok(spans::<4>(&f, "main.trellis")[0])
    );
    let edits = a.rename(file, offset, "Kahn").unwrap();
    assert_eq!(edits.len(), 5);
    let renamed = |path: &str| {
        let file = f.file(path);
        apply_edits(&file.text, file.ranges.iter().map(|r| (r.clone(), "Kahn")))
    };
    let (main, lexikon) = (renamed("main.trellis"), renamed("lexikon.trellis"));
    assert_eq!(apply(&a, &edits), vec![main.clone(), lexikon.clone()]);
    let (g, b) = analyse_clean(&format!(
        "=== main.trellis ===\n{main}=== lexikon.trellis ===\n{lexikon}"
    ));
    assert_eq!(g.files.len(), 2);
    assert!(b.grammar.nt("Fähre").is_none());
    assert_eq!(
        b.grammar.tests[0].cases[0]
            .tree
            .as_ref()
            .unwrap()
            .to_brackets(),
        "(Überfahrt (Kahn \"Boot\") \"über\" (Kahn \"Boot\"))"
    );
}

#[test]
fn rename_refuses_terminals_keywords_bad_names_and_collisions() {
    let (f, a) = analyse_clean(
        r#"
        start Fahrt
        Fahrt r[[]]elative {
          1[[]]0  "[[]]Einzel" [[]]Art
          5   Bitte
        }
        Art { "hin" }
        Bitte { "bitte" }
        "#,
    );
    let m = id(&a, "grammar.trellis");
    let [keyword, weight, terminal, art] = places(&f, "grammar.trellis");
    assert_eq!(a.prepare_rename(m, terminal), Err(RenameError::Terminal));
    assert_eq!(
        a.prepare_rename(m, keyword),
        Err(RenameError::Keyword("relative"))
    );
    assert_eq!(a.prepare_rename(m, weight), Err(RenameError::NotASymbol));
    for bad in ["use", "2Art", "Art Art", "", "\"x\""] {
        assert_eq!(
            a.rename(m, art, bad),
            Err(RenameError::InvalidName(bad.to_string()))
        );
    }
    assert_eq!(
        a.rename(m, art, "Bitte"),
        Err(RenameError::AlreadyDefined("Bitte".into()))
    );
    assert_eq!(a.rename(m, art, "Art"), Ok(Vec::new()));
}

#[test]
fn renaming_a_misspelt_undefined_use_onto_a_defined_symbol_fixes_it() {
    let (f, a) = analyse(
        r#"
        start S
        S { [[$0Wrt]] | Wort }
        Wort { "w" }
        "#,
    );
    let (file, offset) = cursor(&f, &a);
    let edits = a.rename(file, offset, "Wort").unwrap();
    assert_eq!(
        edits,
        vec![TextEdit {
            file,
            span: spans::<1>(&f, "grammar.trellis")[0],
            new_text: "Wort".into()
        }]
    );
}

// ── semantic tokens ─────────────────────────────────────────────────────

#[test]
fn semantic_tokens_classify_every_token_and_mark_definitions() {
    use trellis_ide::{TokenClass as C, TokenModifiers};
    let (f, a) = analyse(
        r#"
        ## Doc
        start S # c
        S relative {
        [[  2 "wört" Ä]]
        }
        test "t" { accept "wört" as (S "wört") }
        "#,
    );
    let text = &f.root().text;
    let m = id(&a, "grammar.trellis");
    let def = TokenModifiers {
        definition: true,
        undefined: false,
    };
    let undef = TokenModifiers {
        definition: false,
        undefined: true,
    };
    let plain = TokenModifiers::default();
    let got: Vec<(&str, C, TokenModifiers)> = a
        .semantic_tokens(m, None)
        .iter()
        .map(|t| (t.span.text(text), t.class, t.modifiers))
        .collect();
    assert_eq!(
        got,
        vec![
            ("## Doc", C::DocComment, plain),
            ("start", C::Keyword, plain),
            ("S", C::NonTerminal, plain),
            ("# c", C::Comment, plain),
            ("S", C::NonTerminal, def),
            ("relative", C::Keyword, plain),
            ("2", C::Weight, plain),
            ("\"wört\"", C::Terminal, plain),
            ("Ä", C::NonTerminal, undef),
            ("test", C::Keyword, plain),
            ("\"t\"", C::String, plain),
            ("accept", C::Keyword, plain),
            ("\"wört\"", C::String, plain),
            ("as", C::Keyword, plain),
            ("S", C::NonTerminal, plain),
            ("\"wört\"", C::Terminal, plain),
        ]
    );
    // A range gives the tokens overlapping it only.
    let [line] = spans(&f, "grammar.trellis");
    let got: Vec<&str> = a
        .semantic_tokens(m, Some(line))
        .iter()
        .map(|t| t.span.text(text))
        .collect();
    assert_eq!(got, vec!["2", "\"wört\"", "Ä"]);
}

// ── outline and symbol search ───────────────────────────────────────────

#[test]
fn document_symbols_outline_blocks_with_rules_and_tests_with_cases() {
    use trellis_ide::{DocumentSymbol, SymbolKind};
    // Each file has its own outline; between the two `$0`: `Anzahl`'s block.
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        grammar fähre
        start Anfrage
        use "lexikon.trellis"
        Anfrage {
          0.55  Wunsch Art
          0.45  Anzahl Art
        }
        Wunsch { "ich" }
        test "Bestellungen" {
          accept "ich Rückfahrt"
          accept "zwei Einzel" as (Anfrage (Anzahl "zwei") (Art "Einzel"))
        }
        === lexikon.trellis ===
        Art { "Rückfahrt" | "Einzel" }
        $0[[Anzahl]] relative {
          [[6   "eine"]]
          3   "zwei"
          1   "drei"
        }$0
        "#,
    );
    let (m, l) = (id(&a, "main.trellis"), id(&a, "lexikon.trellis"));
    let outline = a.document_symbols(l);
    let summary: Vec<(&str, SymbolKind, Option<&str>, usize)> = outline
        .iter()
        .map(|s| {
            (
                s.name.as_str(),
                s.kind,
                s.detail.as_deref(),
                s.children.len(),
            )
        })
        .collect();
    assert_eq!(
        summary,
        vec![
            ("Art", SymbolKind::Block, Some("2 rules"), 2),
            ("Anzahl", SymbolKind::Block, Some("3 rules · relative"), 3),
        ]
    );
    let lexikon = &f.file("lexikon.trellis").text;
    let block = f.cursor_range();
    let [name, alternative] = spans(&f, "lexikon.trellis");
    let anzahl = &outline[1];
    assert_eq!(anzahl.selection_span, name);
    assert_eq!(anzahl.span, Span::new(block.start, block.end));
    assert_eq!(
        anzahl.span.text(lexikon),
        "Anzahl relative {\n  6   \"eine\"\n  3   \"zwei\"\n  1   \"drei\"\n}"
    );
    assert_eq!(
        anzahl.children[0],
        DocumentSymbol {
            name: "\"eine\"".into(),
            // 6 / (6 + 3 + 1) = 3/5.
            detail: Some("6 · p = 3/5 = 0.6".into()),
            kind: SymbolKind::Rule,
            span: alternative,
            // The word that ends the alternative.
            selection_span: Span::new(
                alternative.end as usize - r#""eine""#.len(),
                alternative.end as usize
            ),
            children: Vec::new(),
        }
    );
    let outline = a.document_symbols(m);
    let kinds: Vec<(SymbolKind, &str)> =
        outline.iter().map(|s| (s.kind, s.name.as_str())).collect();
    assert_eq!(
        kinds,
        vec![
            (SymbolKind::Grammar, "fähre"),
            (SymbolKind::Start, "Anfrage"),
            (SymbolKind::Use, "lexikon.trellis"),
            (SymbolKind::Block, "Anfrage"),
            (SymbolKind::Block, "Wunsch"),
            (SymbolKind::Test, "Bestellungen"),
        ]
    );
    let test = &outline[5];
    assert_eq!(test.detail.as_deref(), Some("test · 2 cases"));
    assert_eq!(test.children[1].name, "zwei Einzel");
    assert_eq!(test.children[1].detail.as_deref(), Some("accept as tree"));
    assert_eq!(
        outline[3].children[0].detail.as_deref(),
        Some("0.55 · p = 11/20 = 0.55")
    );
    assert_eq!(outline[4].children[0].detail.as_deref(), Some("p = 1"));
}

#[test]
fn a_block_lists_at_most_max_children_rules_then_one_entry_for_the_rest() {
    use trellis_ide::{SymbolKind, MAX_CHILDREN};
    let words = MAX_CHILDREN + 1234;
    let rules: String = (0..words).map(|i| format!("  1 \"w{i}\"\n")).collect();
    let (f, a) = analyse_clean(&format!(
        "=== main.trellis ===\nstart S\nS relative {{\n{rules}}}\n"
    ));
    let outline = a.document_symbols(id(&a, "main.trellis"));
    let block = &outline[1];
    assert_eq!(
        block.detail.as_deref(),
        Some(&*format!("{words} rules · relative"))
    );
    assert_eq!(block.children.len(), MAX_CHILDREN + 1);
    let rest = &block.children[MAX_CHILDREN];
    assert_eq!(rest.name, "… 1,234 more rules");
    assert_eq!(rest.kind, SymbolKind::Rule);
    let text = &f.file("main.trellis").text;
    assert_eq!(
        rest.selection_span.text(text),
        format!("1 \"w{MAX_CHILDREN}\"")
    );
    assert!(rest
        .span
        .text(text)
        .ends_with(&format!("1 \"w{}\"", words - 1)));
}

#[test]
fn workspace_symbols_rank_exact_prefix_substring_then_fuzzy_matches() {
    // Four blocks in two files.
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start Anfrage
        use "lexikon.trellis"
        Anfrage { 0.5 Anzahl Fahrkarte | 0.5 Fahrkarte }
        Fahrkarte { Art "Fahrkarte" }
        === lexikon.trellis ===
        Art { "Rückfahrt" | "Einzel" }
        [[Anzahl]] relative { 6 "eine" | 3 "zwei" }
        "#,
    );
    let names = |q: &str| -> Vec<String> {
        a.workspace_symbols(q, 10)
            .into_iter()
            .map(|s| s.name)
            .collect()
    };
    // Exact, then the substring in `Fahrkarte`.
    assert_eq!(names("art"), vec!["Art", "Fahrkarte"]);
    assert_eq!(names("an"), vec!["Anzahl", "Anfrage"]);
    // Fuzzy: the characters in order.
    assert_eq!(names("fkt"), vec!["Fahrkarte"]);
    assert_eq!(names("zz"), Vec::<String>::new());
    assert_eq!(names("").len(), 4);
    assert_eq!(a.workspace_symbols("", 2).len(), 2);
    let anzahl = &a.workspace_symbols("Anzahl", 10)[0];
    let [definition] = spans(&f, "lexikon.trellis");
    assert_eq!(
        anzahl.location,
        Location::new(id(&a, "lexikon.trellis"), definition)
    );
    assert_eq!(anzahl.detail, "2 rules · relative");
    assert_eq!(
        a.workspace_symbols("anfrage", 10)[0].detail,
        "2 rules · start"
    );
}

// ── completion ──────────────────────────────────────────────────────────

/// The labels of the completions offered at the fixture's cursor, and the
/// span they replace.
fn completions(fixture: &str) -> (Vec<String>, Span, ide::CompletionList) {
    let (f, a) = analyse(fixture);
    let (file, offset) = cursor(&f, &a);
    let list = a.completions(file, offset);
    let labels = list.items.iter().map(|i| i.label.clone()).collect();
    (labels, list.replace, list)
}

/// The span marked `[[…]]` in a one-file fixture.
fn marked(fixture: &str) -> Span {
    spans::<1>(&Fixture::parse(fixture), "grammar.trellis")[0]
}

#[test]
fn completion_offers_names_on_right_hand_sides_filtered_by_the_typed_word() {
    let fixture = r#"
        start S
        S {
          0.5 [[Fa$0]]
          0.5 "x" 
        }
        Fahrt { "f" }
        Fähre { "ä" }
        Weg { Fahrt }
        "#;
    let (labels, replace, list) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    // `ä` is not `a`: `Fähre` does not match.
    assert_eq!(labels, vec!["Fahrt"]);
    assert_eq!(list.items[0].kind, ide::CompletionKind::NonTerminal);
    assert_eq!(list.items[0].detail.as_deref(), Some("1 rule"));
    assert!(!list.incomplete);
}

#[test]
fn completion_after_a_terminal_at_a_space_offers_every_defined_name_and_replaces_nothing() {
    let fixture = r#"
        start S
        S {
          0.5 Fa
          0.5 "x" [[$0]]
        }
        Fahrt { "f" }
        Fähre { "ä" }
        Weg { Fahrt }
        "#;
    let (labels, replace, _) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    assert!(replace.is_empty());
    assert_eq!(labels, vec!["S", "Weg", "Fahrt", "Fähre"]);
}

#[test]
fn completion_inside_quotes_on_a_right_hand_side_offers_the_known_words() {
    let fixture = r#"
        start Log
        Log {
          0.5 "wind" Wetter
          0.5 "[[w$0]]"
        }
        Wetter { "windstill" | "böig" | "ruhig" | "wolkig" }
        "#;
    let (labels, replace, list) = completions(fixture);
    // The partial word only, inside the quotes.
    assert_eq!(replace, marked(fixture));
    // Not `w` itself: it is only the word being typed.
    assert_eq!(labels, vec!["wind", "wolkig", "windstill"]);
    assert!(list
        .items
        .iter()
        .all(|i| i.kind == ide::CompletionKind::Word));
    // Right after the opening quote: every word, replacing the word that
    // follows up to the closing quote.
    let fixture = "start S\nS { \"[[$0ruh]]\" | \"ruhig\" }\n";
    let (labels, replace, _) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    assert_eq!(labels, vec!["ruhig"]);
}

#[test]
fn completion_in_a_test_sentence_offers_known_words_for_the_partial_word() {
    let fixture = r#"
        start Log
        Log { Zeit Wetter }
        Zeit { "morgens" | "abends" }
        Wetter { "windstill" | "böig" }
        test "Logbuch" {
          accept "morgens [[win$0d]]"
          reject "abends"
        }
        "#;
    let (labels, replace, list) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    assert_eq!(labels, vec!["windstill"]);
    assert_eq!(list.items[0].kind, ide::CompletionKind::Word);
    // A sentence still being typed (no closing quote yet), on one line.
    let fixture = "start S\nS { \"morgens\" \"böig\" }\ntest \"t\" { accept \"morgens [[b$0]]\n}\n";
    let (labels, replace, _) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    assert_eq!(labels, vec!["böig"]);
    // After a space inside the quotes: every word, replacing nothing.
    let fixture = "start S\nS { \"a\" \"b\" }\ntest \"t\" {\n  reject \"a [[$0]]\"\n}\n";
    let (labels, replace, _) = completions(fixture);
    assert_eq!(replace, marked(fixture));
    assert!(replace.is_empty());
    assert_eq!(labels, vec!["a", "b"]);
}

#[test]
fn completion_inside_other_quotes_offers_nothing() {
    for fixture in [
        "grammar \"lo$0g\"\nstart S\nS { \"a\" }\n",
        "start S\nS { \"a\" }\ntest \"t$0\" { accept \"a\" }\n",
        "use \"le$0x.trellis\"\nstart S\nS { \"a\" }\n",
    ] {
        let (labels, _, _) = completions(fixture);
        assert!(labels.is_empty(), "{fixture}: {labels:?}");
    }
}

#[test]
fn completion_in_the_middle_of_a_run_of_spaces_offers_names() {
    let (labels, _, _) = completions("start S\nS { \"x\"   $0   }\n");
    assert_eq!(labels, vec!["S"]);
}

#[test]
fn completion_offers_keywords_where_declarations_start_and_relative_after_a_block_name() {
    // At the start of a top-level line: keywords not yet used, then
    // undefined names (to give them a block); `start` is taken.
    let (labels, _, list) = completions("start S\nS { \"a\" | Neu }\n\n$0u\nT \n");
    assert_eq!(labels, vec!["use", "test", "grammar", "Neu"]);
    assert_eq!(list.items[0].kind, ide::CompletionKind::Keyword);
    let fixture = "start S\nS { \"a\" | Neu }\n\n[[u$0]]\nT \n";
    let (labels, replace, _) = completions(fixture);
    assert_eq!(labels, vec!["use", "Neu"]);
    assert_eq!(replace, marked(fixture));
    let (labels, _, _) = completions("start S\nS { \"a\" | Neu }\n\nu\nT $0\n");
    assert_eq!(labels, vec!["relative"]);
    // After `start`: the defined names.
    let (labels, _, _) = completions("start $0\nZiel { \"z\" }\n");
    assert_eq!(labels, vec!["Ziel"]);
}

#[test]
fn completion_in_tests_offers_case_keywords_as_and_tree_labels() {
    let test = |cases: &str| {
        completions(&format!(
            "start S\nS {{ \"a\" }}\ntest \"t\" {{\n  accept \"a\" as (S \"a\")\n{cases}}}\n"
        ))
        .0
    };
    // On a blank line, after a sentence, after an open bracket.
    assert_eq!(
        test("  $0\n  accept \"a\" \n  accept \"a\" as (\n"),
        vec!["accept", "reject"]
    );
    assert_eq!(
        test("  \n  accept \"a\" $0\n  accept \"a\" as (\n"),
        vec!["as"]
    );
    assert_eq!(
        test("  \n  accept \"a\" \n  accept \"a\" as ($0\n"),
        vec!["S"]
    );
}

// ── inlay hints and code lenses ─────────────────────────────────────────

#[test]
fn inlay_hints_show_resolved_probabilities_of_unweighted_and_relative_alternatives() {
    // Marked `[[]]`: where each hint stands (before an unweighted
    // alternative's first item, after a relative weight); between the two
    // `$0`: one line. `Fahrt`'s weighted alternatives get none.
    let (f, a) = analyse_clean(
        r#"
        start Fahrt
        Fahrt {
          0.5  Anzahl Art
          0.5  Art Bitte
        }
        Art { [[]]"Rückfahrt" | [[]]"Einzel" }
        Anzahl relative {
          6[[]]   "eine"
        $0  3[[]]   "zwei"$0
          1[[]]   "drei"
        }
        Bitte { [[]]"bitte" }
        "#,
    );
    let m = id(&a, "grammar.trellis");
    let whole = Span::new(0, f.root().text.len());
    let hints: Vec<(usize, String, bool, bool)> = a
        .inlay_hints(m, whole)
        .into_iter()
        .map(|h| (h.offset, h.label, h.pad_left, h.pad_right))
        .collect();
    let [rueckfahrt, einzel, eine, zwei, drei, bitte] = places(&f, "grammar.trellis");
    assert_eq!(
        hints,
        vec![
            (rueckfahrt, "= 1/2".to_string(), false, true),
            (einzel, "= 1/2".to_string(), false, true),
            (eine, "= 3/5".to_string(), true, false),
            (zwei, "= 3/10".to_string(), true, false),
            (drei, "= 1/10".to_string(), true, false),
            (bitte, "= 1".to_string(), false, true),
        ]
    );
    let tooltip = &a.inlay_hints(m, whole)[2].tooltip;
    assert_eq!(
        tooltip,
        "probability of `Anzahl → \"eine\"`: 3/5 = 0.6 (weight divided by the block's sum)"
    );
    // Only the requested range.
    let line = f.cursor_range();
    assert_eq!(a.inlay_hints(m, Span::new(line.start, line.end)).len(), 1);
}

#[test]
fn inlay_hints_approximate_long_fractions() {
    let (f, a) = analyse("start S\nS relative { 1 \"a\" | 2 \"b\" | 123456 \"c\" }\n");
    let whole = Span::new(0, f.root().text.len());
    let labels: Vec<String> = a
        .inlay_hints(id(&a, "grammar.trellis"), whole)
        .into_iter()
        .map(|h| h.label)
        .collect();
    // 1/123459, 2/123459, 123456/123459: three significant digits, six
    // where three would round to 1.
    assert_eq!(labels, vec!["≈ 0.0000081", "≈ 0.0000162", "≈ 0.999976"]);
}

#[test]
fn code_lenses_sit_on_start_and_on_each_test() {
    // Parse, sample and run every test above `start`; run one above each
    // test; none in a used file that has neither.
    use trellis_ide::{CodeLens, CodeLensKind};
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        [[start Fähre]]
        use "lexikon.trellis"
        [[test "Überfahrt" {
          accept "hin"
        }]]
        === lexikon.trellis ===
        Fähre { "hin" | "zurück" }
        "#,
    );
    let [start, test] = spans(&f, "main.trellis");
    assert_eq!(
        a.code_lenses(id(&a, "main.trellis")),
        vec![
            CodeLens {
                span: start,
                kind: CodeLensKind::ParseSentence
            },
            CodeLens {
                span: start,
                kind: CodeLensKind::Sample
            },
            CodeLens {
                span: start,
                kind: CodeLensKind::RunAllTests { tests: 1 }
            },
            CodeLens {
                span: test,
                kind: CodeLensKind::RunTest {
                    test: 0,
                    name: "Überfahrt".into()
                }
            },
        ]
    );
    assert_eq!(a.code_lenses(id(&a, "lexikon.trellis")), Vec::new());
}

// ── folding, links, highlights ──────────────────────────────────────────

/// The folds of a one-file fixture that analyses cleanly are the ranges
/// it marks `[[…]]`, all of `kind`.
#[track_caller]
fn assert_folds(kind: FoldKind, fixture: &str) {
    let (f, a) = analyse_clean(fixture);
    let marked: Vec<FoldingRange> = f
        .root()
        .ranges
        .iter()
        .map(|r| FoldingRange {
            span: Span::new(r.start, r.end),
            kind,
        })
        .collect();
    assert_eq!(a.folding_ranges(id(&a, "grammar.trellis")), marked);
}

#[test]
fn folding_ranges_cover_multi_line_blocks_and_tests() {
    // `Wunsch { … }` fits on one line: no fold.
    assert_folds(
        FoldKind::Declaration,
        r#"
        start Fahrt
        [[Fahrt {
          0.5  "hin"
          0.5  Wunsch
        }]]
        Wunsch { "zurück" }
        [[test "Überfahrt" {
          accept "hin"
        }]]
        "#,
    );
}

#[test]
fn folding_ranges_cover_runs_of_comment_lines() {
    // Comment lines in a row fold; a comment after code does not count, and
    // a blank line ends a run.
    assert_folds(
        FoldKind::Comment,
        r#"
        [[# eins
        ## zwei
        ### drei]]
        start S # nach Code
        # allein

        [[# a
        # b]]
        S { "s" }
        "#,
    );
}

#[test]
fn document_links_lead_from_use_paths_to_loaded_files() {
    use trellis_ide::DocumentLink;
    let (f, a) = analyse_clean(
        r#"
        === main.trellis ===
        start Fähre
        use [["lexikon.trellis"]]
        === lexikon.trellis ===
        Fähre { "hin" }
        "#,
    );
    assert_eq!(
        a.document_links(id(&a, "main.trellis")),
        vec![DocumentLink {
            span: spans::<1>(&f, "main.trellis")[0],
            target: id(&a, "lexikon.trellis")
        }]
    );
    let (_, a) = analyse("use \"fehlt.trellis\"\n");
    assert_eq!(a.document_links(id(&a, "grammar.trellis")), Vec::new());
}

#[test]
fn document_highlights_mark_definitions_and_uses_of_a_non_terminal_in_one_file() {
    use trellis_ide::Highlight;
    // The word `"Fähre"` is another thing than the name `Fähre`.
    let (f, a) = analyse_clean(
        r#"
        start Fahrt
        Fahrt {
          0.5  "hin" [[Fähre]]
          0.5  [[$0Fähre]]
        }
        [[Fähre]] { "Fähre" }
        test "t" { accept "hin Fähre" as (Fahrt "hin" ([[Fähre]] "Fähre")) }
        "#,
    );
    let (file, offset) = cursor(&f, &a);
    let [in_first, in_second, definition, test_label] = spans(&f, "grammar.trellis");
    let h = |span, definition| Highlight { span, definition };
    assert_eq!(
        a.document_highlights(file, offset),
        vec![
            h(in_first, false),
            h(in_second, false),
            h(definition, true),
            h(test_label, false),
        ]
    );
}

/// Checks that the highlights at the cursor are exactly the `N` ranges
/// marked in `grammar.trellis`, none of them a definition (as for words).
#[track_caller]
fn assert_word_highlights<const N: usize>(f: &Fixture, a: &Analysis) {
    use trellis_ide::Highlight;
    let (file, offset) = cursor(f, a);
    let expected: Vec<Highlight> = spans::<N>(f, "grammar.trellis")
        .into_iter()
        .map(|span| Highlight {
            span,
            definition: false,
        })
        .collect();
    assert_eq!(a.document_highlights(file, offset), expected);
}

#[test]
fn document_highlights_of_words_mark_the_same_words_however_spaced() {
    let (f, a) = analyse(
        r#"
        start Fahrt
        Fahrt { [["einfache $0Fahrt"]] | "Fahrt" }
        test "t" { accept "einfache Fahrt" as (Fahrt [["einfache  Fahrt"]]) }
                                                       ^^^^^^^^^^^^^^^^^ warning terminal-spacing
        "#,
    );
    assert_diagnostics(&f, &a);
    assert_word_highlights::<2>(&f, &a);
}

#[test]
fn document_highlights_of_a_word_mark_the_same_quoted_word_everywhere_in_the_file() {
    let (f, a) = analyse_clean(
        r#"
        start Fahrt
        Fahrt { [["F$0ähre"]] | "hin" [["Fähre"]] }
        test "t" { accept "hin Fähre" as (Fahrt "hin" [["Fähre"]]) }
        "#,
    );
    assert_word_highlights::<3>(&f, &a);
}

/// A learned grammar's shape: many blocks of hundreds of alternatives. The
/// outline lists every block, the same share of rules from each (the
/// largest share within MAX_OUTLINE_CHILDREN), and one "… N more" entry per
/// block for the rest, so its size no longer grows with the alternatives.
#[test]
fn the_whole_outline_lists_at_most_max_outline_children_rules_shared_between_blocks() {
    use trellis_ide::MAX_OUTLINE_CHILDREN;
    const BLOCKS: usize = 60;
    const ALTERNATIVES: usize = 300;
    let mut text = String::from("=== main.trellis ===\nstart S\nS relative {\n");
    for b in 0..BLOCKS {
        text.push_str(&format!("  1 P{b}\n"));
    }
    text.push_str("}\n");
    for b in 0..BLOCKS {
        text.push_str(&format!("P{b} relative {{\n"));
        for a in 0..ALTERNATIVES {
            text.push_str(&format!("  1 \"p{b}x{a}\"\n"));
        }
        text.push_str("}\n");
    }
    let (_, a) = analyse_clean(&text);
    let outline = a.document_symbols(id(&a, "main.trellis"));
    // `start`, `S` and the 60 blocks.
    assert_eq!(outline.len(), 2 + BLOCKS);
    // S asks for 60 rules and each P block for 300: 60 + 60·c ≤ 5,000 gives
    // the share c = 82 (60 + 4,920 = 4,980; c = 83 would list 5,040).
    let share = (MAX_OUTLINE_CHILDREN - BLOCKS) / BLOCKS;
    assert_eq!(share, 82);
    assert_eq!(outline[1].children.len(), BLOCKS, "S lists all its rules");
    for block in &outline[2..] {
        assert_eq!(block.children.len(), share + 1, "{}", block.name);
        assert_eq!(
            block.children[share].name,
            format!("… {} more rules", ALTERNATIVES - share)
        );
    }
    let listed: usize = outline
        .iter()
        .flat_map(|d| &d.children)
        .filter(|c| !c.name.starts_with('…'))
        .count();
    assert!(listed <= MAX_OUTLINE_CHILDREN, "{listed}");
}
