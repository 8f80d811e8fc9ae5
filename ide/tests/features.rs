//! Editor services, specified by example on a small two-file grammar with
//! non-ASCII names: what is found where, what hover says, where navigation
//! leads and what rename changes.

use grammar_lang::source::FileId;
use grammar_lang::syntax::lexer::TokenKind;
use grammar_lang::{analyze, Analysis, Config, Location, MemoryLoader, Span};
use std::path::Path;
use trellis_ide::{self as ide, EngineFacts, IdeIndex, Lookup, NtRole, RenameError, TextEdit};

const MAIN: &str = r#"grammar fähre
start Anfrage
use "lexikon.trellis"

## Was ein Fahrgast am Automaten sagt.
Anfrage {
  0.55  Wunsch Fahrkarte
  0.30  Fahrkarte Bitte      # höflich
  15%   Fahrkarte
}

Fahrkarte {
  1/2   Anzahl Art "Fahrkarte"
  1/2   Art "Fahrkarte"
}

Wunsch { "ich"  "möchte" }

test "Bestellungen" {
  accept "eine Rückfahrt Fahrkarte bitte"
  accept "Tages Fahrkarte" as (Anfrage (Fahrkarte (Art "Tages") "Fahrkarte"))
}
"#;

const LEXIKON: &str = r#"## Die Art der Fahrkarte.
Art {
  "Rückfahrt" | "Einzel" | "Tages"
}

Anzahl relative {
  6   "eine"
  3   "zwei"
  1   "drei"
}

Bitte { "bitte" }
"#;

const M: FileId = FileId(0);
const L: FileId = FileId(1);

fn analysis() -> Analysis {
    let a = analyze(
        Path::new("main.trellis"),
        MAIN,
        &MemoryLoader::new().with("lexikon.trellis", LEXIKON),
        &Config::default(),
    );
    assert!(a.diagnostics.is_empty(), "{:#?}", a.diagnostics);
    a
}

/// The span of the `nth` (0-based) occurrence of `needle` in `text`.
fn at(text: &str, needle: &str, nth: usize) -> Span {
    let start = text
        .match_indices(needle)
        .nth(nth)
        .unwrap_or_else(|| panic!("{needle:?} #{nth} not in text"))
        .0;
    Span::new(start, start + needle.len())
}

/// An offset `delta` bytes into the `nth` occurrence of `needle`.
fn inside(text: &str, needle: &str, nth: usize, delta: usize) -> usize {
    at(text, needle, nth).start as usize + delta
}

// ── lookup ──────────────────────────────────────────────────────────────

#[test]
fn lookup_names_the_role_of_every_non_terminal_occurrence() {
    let a = analysis();
    let g = &a.grammar;
    let anfrage = g.nt("Anfrage").unwrap();
    let fahrkarte = g.nt("Fahrkarte").unwrap();
    let art = g.nt("Art").unwrap();
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "Anfrage", 0, 3)),
        Some(Lookup::NonTerminal {
            nt: anfrage,
            role: NtRole::Start,
            span: at(MAIN, "Anfrage", 0)
        })
    );
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "Anfrage {", 0, 0)),
        Some(Lookup::NonTerminal {
            nt: anfrage,
            role: NtRole::Definition,
            span: at(MAIN, "Anfrage", 1)
        })
    );
    // `Fahrkarte` in `0.55  Wunsch Fahrkarte` is the first rule's second item.
    let first_rule = g.nonterminal(anfrage).rules[0];
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "Fahrkarte", 0, 9)),
        Some(Lookup::NonTerminal {
            nt: fahrkarte,
            role: NtRole::Use {
                rule: Some(first_rule)
            },
            span: at(MAIN, "Fahrkarte", 0)
        }),
        "a cursor right after a name finds the name"
    );
    // The label `Art` inside the expected tree of the test.
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "(Art", 0, 1)),
        Some(Lookup::NonTerminal {
            nt: art,
            role: NtRole::TestLabel,
            span: at(MAIN, "Art", 2)
        })
    );
    // In the used file, `Art` is defined.
    assert_eq!(
        ide::lookup(&a, L, inside(LEXIKON, "Art {", 0, 1)),
        Some(Lookup::NonTerminal {
            nt: art,
            role: NtRole::Definition,
            span: at(LEXIKON, "Art", 1)
        })
    );
}

#[test]
fn lookup_finds_terminals_weights_alternatives_and_keywords() {
    let a = analysis();
    let g = &a.grammar;
    let rueck = g.term("Rückfahrt").unwrap();
    assert_eq!(
        ide::lookup(&a, L, inside(LEXIKON, "\"Rückfahrt\"", 0, 3)),
        Some(Lookup::Terminal {
            term: Some(rueck),
            value: "Rückfahrt".into(),
            span: at(LEXIKON, "\"Rückfahrt\"", 0)
        })
    );
    let anfrage = g.nt("Anfrage").unwrap();
    let rules = &g.nonterminal(anfrage).rules;
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "15%", 0, 1)),
        Some(Lookup::Weight {
            rule: rules[2],
            span: at(MAIN, "15%", 0)
        })
    );
    // Between the weight and the first item: the whole alternative.
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "0.30  Fahrkarte", 0, 5)),
        Some(Lookup::Alternative {
            rule: rules[1],
            span: at(MAIN, "0.30  Fahrkarte Bitte", 0)
        })
    );
    assert_eq!(
        ide::lookup(&a, L, inside(LEXIKON, "relative", 0, 2)),
        Some(Lookup::Keyword {
            keyword: TokenKind::KwRelative,
            span: at(LEXIKON, "relative", 0)
        })
    );
    assert_eq!(
        ide::lookup(&a, M, inside(MAIN, "lexikon", 0, 0)),
        Some(Lookup::UsePath {
            target: Some(L),
            span: at(MAIN, "\"lexikon.trellis\"", 0)
        })
    );
    // Comments, blank lines and braces are nothing.
    assert_eq!(ide::lookup(&a, M, inside(MAIN, "höflich", 0, 2)), None);
    assert_eq!(ide::lookup(&a, M, inside(MAIN, "\n\n", 0, 1)), None);
    assert_eq!(ide::lookup(&a, M, MAIN.len() + 100), None);
    assert_eq!(ide::lookup(&a, FileId(7), 0), None);
}

// ── hover ───────────────────────────────────────────────────────────────

#[test]
fn hover_on_a_weight_gives_the_rule_exact_probability_share_and_total() {
    let a = analysis();
    let index = IdeIndex::new(&a);
    let h = ide::hover(&a, &index, M, inside(MAIN, "0.55", 0, 2), None).unwrap();
    assert_eq!(h.span, at(MAIN, "0.55", 0));
    assert_eq!(
        h.markdown,
        "**rule** `Anfrage → Wunsch Fahrkarte`\n\
         \n\
         - weight as written: `0.55` (decimal)\n\
         - probability: 11/20 = 0.55\n\
         - share of `Anfrage`: 55% of its total\n\
         - total of `Anfrage`: 1\n"
    );
}

#[test]
fn hover_on_a_relative_alternative_shows_the_division_and_expected_uses() {
    let a = analysis();
    let index = IdeIndex::new(&a);
    let zwei = a.grammar.nonterminal(a.grammar.nt("Anzahl").unwrap()).rules[1];
    let mut uses = vec![0.0; a.grammar.rules.len()];
    uses[zwei.index()] = 0.0825;
    let facts = EngineFacts {
        rule_expected_uses: uses,
        ..EngineFacts::default()
    };
    // Hovering the space between weight and word: anywhere on the alternative.
    let h = ide::hover(
        &a,
        &index,
        L,
        inside(LEXIKON, "3   \"zwei\"", 0, 2),
        Some(&facts),
    )
    .unwrap();
    assert_eq!(h.span, at(LEXIKON, "3   \"zwei\"", 0));
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
    let a = analysis();
    let index = IdeIndex::new(&a);
    // `Wunsch { "ich"  "möchte" }`: one unweighted alternative gets everything.
    let h = ide::hover(
        &a,
        &index,
        M,
        inside(MAIN, "\"ich\"  \"möchte\"", 0, 6),
        None,
    )
    .unwrap();
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
    let a = analysis();
    let index = IdeIndex::new(&a);
    let art = a.grammar.nt("Art").unwrap();
    let facts = EngineFacts {
        termination: (0..a.grammar.nonterminals.len())
            .map(|i| if i == art.index() { 1.0 } else { 0.5 })
            .collect(),
        rule_expected_uses: Vec::new(),
    };
    // On a use in the main file; the documentation comes from the lexicon.
    let h = ide::hover(
        &a,
        &index,
        M,
        inside(MAIN, "Art \"Fahrkarte\"", 0, 1),
        Some(&facts),
    )
    .unwrap();
    assert_eq!(h.span, at(MAIN, "Art", 0));
    assert_eq!(
        h.markdown,
        "**non-terminal** `Art`\n\
         \n\
         Die Art der Fahrkarte.\n\
         \n\
         - 3 rules\n\
         - reachable from the start symbol `Anfrage`\n\
         - productive: derives at least one string of words\n\
         - used 2 times on right-hand sides\n\
         - termination probability: 1\n"
    );
    // Without engine facts the hover still answers, without that line.
    let h = ide::hover(&a, &index, M, inside(MAIN, "Anfrage {", 0, 0), None).unwrap();
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
    let text = "start S\nS { \"a\" | Loop }\nLoop { Loop \"b\" }\nIsland { \"c\" | Nirgends }\n";
    let a = grammar_lang::analyze_text(text);
    let index = IdeIndex::new(&a);
    let h = ide::hover(&a, &index, M, inside(text, "Island", 0, 0), None).unwrap();
    assert!(h
        .markdown
        .contains("- **not reachable** from the start symbol `S`\n"));
    let h = ide::hover(&a, &index, M, inside(text, "Loop {", 0, 0), None).unwrap();
    assert!(h
        .markdown
        .contains("- **unproductive**: derives no string of words\n"));
    let h = ide::hover(&a, &index, M, inside(text, "Nirgends", 0, 0), None).unwrap();
    assert_eq!(
        h.markdown,
        "**non-terminal** `Nirgends`\n\nused once but has **no block**: it derives nothing\n"
    );
}

#[test]
fn hover_on_a_terminal_tables_the_rules_that_produce_it() {
    let a = analysis();
    let index = IdeIndex::new(&a);
    let h = ide::hover(&a, &index, M, inside(MAIN, "\"Fahrkarte\"", 1, 1), None).unwrap();
    assert_eq!(h.span, at(MAIN, "\"Fahrkarte\"", 1));
    assert_eq!(
        h.markdown,
        "**terminal** `\"Fahrkarte\"`\n\
         \n\
         produced directly by 2 rules:\n\
         \n\
         | non-terminal | rule | probability |\n\
         |---|---|---|\n\
         | `Fahrkarte` | `Fahrkarte → Anzahl Art \"Fahrkarte\"` | 1/2 = 0.5 |\n\
         | `Fahrkarte` | `Fahrkarte → Art \"Fahrkarte\"` | 1/2 = 0.5 |\n"
    );
    // A word of a test tree that no rule has.
    let text = "start S\nS { \"a\" }\ntest \"t\" { accept \"a\" as (S \"zz\") }\n";
    let a = grammar_lang::analyze_text(text);
    let index = IdeIndex::new(&a);
    let h = ide::hover(&a, &index, M, inside(text, "\"zz\"", 0, 1), None).unwrap();
    assert_eq!(
        h.markdown,
        "**terminal** `\"zz\"`\n\nno rule produces this word\n"
    );
}

#[test]
fn hover_explains_keywords_and_nothing_on_comments() {
    let a = analysis();
    let index = IdeIndex::new(&a);
    let h = ide::hover(&a, &index, L, inside(LEXIKON, "relative", 0, 0), None).unwrap();
    assert!(h.markdown.starts_with("`relative`:"), "{}", h.markdown);
    assert_eq!(
        ide::hover(&a, &index, M, inside(MAIN, "höflich", 0, 0), None),
        None
    );
}

// ── definition and references ───────────────────────────────────────────

#[test]
fn definition_jumps_across_used_files() {
    let a = analysis();
    assert_eq!(
        ide::definition(&a, M, inside(MAIN, "Anzahl", 0, 2)),
        Some(Location::new(L, at(LEXIKON, "Anzahl", 0)))
    );
    assert_eq!(
        ide::definition(&a, M, inside(MAIN, "Anfrage", 0, 0)),
        Some(Location::new(M, at(MAIN, "Anfrage", 1)))
    );
    // The path of a `use` leads to the start of that file.
    assert_eq!(
        ide::definition(&a, M, inside(MAIN, "lexikon", 0, 2)),
        Some(Location::new(L, Span::point(0)))
    );
    assert_eq!(ide::definition(&a, M, inside(MAIN, "0.55", 0, 0)), None);
}

#[test]
fn references_cover_rhs_uses_start_and_test_labels_in_every_file() {
    let a = analysis();
    let refs = ide::references(&a, L, inside(LEXIKON, "Art {", 0, 0), false);
    assert_eq!(
        refs,
        vec![
            Location::new(M, at(MAIN, "Art", 0)),
            Location::new(M, at(MAIN, "Art", 1)),
            Location::new(M, at(MAIN, "Art", 2)),
        ]
    );
    let refs = ide::references(&a, M, inside(MAIN, "Anfrage", 0, 0), true);
    assert_eq!(
        refs,
        vec![
            Location::new(M, at(MAIN, "Anfrage", 0)),
            Location::new(M, at(MAIN, "Anfrage", 1)),
            Location::new(M, at(MAIN, "Anfrage", 2)),
        ]
    );
    // A word: every right-hand side and tree leaf with the same word.
    let refs = ide::references(&a, L, inside(LEXIKON, "\"Tages\"", 0, 0), true);
    assert_eq!(
        refs,
        vec![
            Location::new(M, at(MAIN, "\"Tages\"", 0)),
            Location::new(L, at(LEXIKON, "\"Tages\"", 0)),
        ]
    );
}

// ── rename ──────────────────────────────────────────────────────────────

/// Applies edits to the texts of the analysis; returns the new texts by file.
fn apply(a: &Analysis, edits: &[TextEdit]) -> Vec<String> {
    let mut texts: Vec<String> = a.sources.iter().map(|(_, f)| f.text.clone()).collect();
    let mut sorted = edits.to_vec();
    sorted.sort_by_key(|e| std::cmp::Reverse((e.file, e.span.start)));
    for e in sorted {
        texts[e.file.0 as usize].replace_range(e.span.range(), &e.new_text);
    }
    texts
}

#[test]
fn rename_changes_every_occurrence_in_every_file_including_test_trees() {
    let a = analysis();
    assert_eq!(
        ide::prepare_rename(&a, M, inside(MAIN, "Art \"Fahrkarte\"", 0, 1)),
        Ok(at(MAIN, "Art", 0))
    );
    let edits = ide::rename(&a, M, inside(MAIN, "Art \"Fahrkarte\"", 0, 1), "Kartenart").unwrap();
    assert_eq!(edits.len(), 4);
    let texts = apply(&a, &edits);
    assert_eq!(
        texts[0],
        MAIN.replace("Art ", "Kartenart ")
            .replace("(Art", "(Kartenart")
    );
    assert_eq!(texts[1], LEXIKON.replace("Art {", "Kartenart {"));
    let b = analyze(
        Path::new("main.trellis"),
        &texts[0],
        &MemoryLoader::new().with("lexikon.trellis", texts[1].clone()),
        &Config::default(),
    );
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    assert!(b.grammar.nt("Art").is_none());
    assert_eq!(
        b.grammar.tests[0].cases[1]
            .tree
            .as_ref()
            .unwrap()
            .to_brackets(),
        "(Anfrage (Fahrkarte (Kartenart \"Tages\") \"Fahrkarte\"))"
    );
}

#[test]
fn rename_refuses_terminals_keywords_bad_names_and_collisions() {
    let a = analysis();
    assert_eq!(
        ide::prepare_rename(&a, L, inside(LEXIKON, "\"Einzel\"", 0, 1)),
        Err(RenameError::Terminal)
    );
    assert_eq!(
        ide::prepare_rename(&a, L, inside(LEXIKON, "relative", 0, 1)),
        Err(RenameError::Keyword("relative"))
    );
    assert_eq!(
        ide::prepare_rename(&a, M, inside(MAIN, "0.55", 0, 1)),
        Err(RenameError::NotASymbol)
    );
    let art = inside(MAIN, "Art \"Fahrkarte\"", 0, 0);
    for bad in ["use", "2Art", "Art Art", "", "\"x\""] {
        assert_eq!(
            ide::rename(&a, M, art, bad),
            Err(RenameError::InvalidName(bad.to_string()))
        );
    }
    assert_eq!(
        ide::rename(&a, M, art, "Bitte"),
        Err(RenameError::AlreadyDefined("Bitte".into()))
    );
    assert_eq!(ide::rename(&a, M, art, "Art"), Ok(Vec::new()));
}

#[test]
fn renaming_a_misspelt_undefined_use_onto_a_defined_symbol_fixes_it() {
    let text = "start S\nS { Wrt | Wort }\nWort { \"w\" }\n";
    let a = grammar_lang::analyze_text(text);
    let edits = ide::rename(&a, M, inside(text, "Wrt", 0, 0), "Wort").unwrap();
    assert_eq!(
        edits,
        vec![TextEdit {
            file: M,
            span: at(text, "Wrt", 0),
            new_text: "Wort".into()
        }]
    );
}

// ── semantic tokens ─────────────────────────────────────────────────────

#[test]
fn semantic_tokens_classify_every_token_and_mark_definitions() {
    use trellis_ide::{TokenClass as C, TokenModifiers};
    let text = "## Doc\nstart S # c\nS relative {\n  2 \"wört\" Ä\n}\ntest \"t\" { accept \"wört\" as (S \"wört\") }\n";
    let a = grammar_lang::analyze_text(text);
    let toks = ide::semantic_tokens(&a, M, None);
    let def = TokenModifiers {
        definition: true,
        undefined: false,
    };
    let undef = TokenModifiers {
        definition: false,
        undefined: true,
    };
    let plain = TokenModifiers::default();
    let got: Vec<(&str, C, TokenModifiers)> = toks
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
    let line = at(text, "  2 \"wört\" Ä", 0);
    let got: Vec<&str> = ide::semantic_tokens(&a, M, Some(line))
        .iter()
        .map(|t| t.span.text(text))
        .collect();
    assert_eq!(got, vec!["2", "\"wört\"", "Ä"]);
}

// ── outline and symbol search ───────────────────────────────────────────

#[test]
fn document_symbols_outline_blocks_with_rules_and_tests_with_cases() {
    use trellis_ide::{DocumentSymbol, SymbolKind};
    let a = analysis();
    let outline = ide::document_symbols(&a, L);
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
            ("Art", SymbolKind::Block, Some("3 rules"), 3),
            ("Anzahl", SymbolKind::Block, Some("3 rules · relative"), 3),
            ("Bitte", SymbolKind::Block, Some("1 rule"), 1),
        ]
    );
    let anzahl = &outline[1];
    assert_eq!(anzahl.selection_span, at(LEXIKON, "Anzahl", 0));
    assert_eq!(
        anzahl.span.text(LEXIKON),
        "Anzahl relative {\n  6   \"eine\"\n  3   \"zwei\"\n  1   \"drei\"\n}"
    );
    assert_eq!(
        anzahl.children[0],
        DocumentSymbol {
            name: "\"eine\"".into(),
            detail: Some("6 · p = 3/5 = 0.6".into()),
            kind: SymbolKind::Rule,
            span: at(LEXIKON, "6   \"eine\"", 0),
            selection_span: at(LEXIKON, "\"eine\"", 0),
            children: Vec::new(),
        }
    );
    let outline = ide::document_symbols(&a, M);
    let kinds: Vec<(SymbolKind, &str)> =
        outline.iter().map(|s| (s.kind, s.name.as_str())).collect();
    assert_eq!(
        kinds,
        vec![
            (SymbolKind::Grammar, "fähre"),
            (SymbolKind::Start, "Anfrage"),
            (SymbolKind::Use, "lexikon.trellis"),
            (SymbolKind::Block, "Anfrage"),
            (SymbolKind::Block, "Fahrkarte"),
            (SymbolKind::Block, "Wunsch"),
            (SymbolKind::Test, "Bestellungen"),
        ]
    );
    let test = &outline[6];
    assert_eq!(test.detail.as_deref(), Some("test · 2 cases"));
    assert_eq!(test.children[1].name, "Tages Fahrkarte");
    assert_eq!(test.children[1].detail.as_deref(), Some("accept as tree"));
    assert_eq!(
        outline[3].children[0].detail.as_deref(),
        Some("0.55 · p = 11/20 = 0.55")
    );
    assert_eq!(outline[5].children[0].detail.as_deref(), Some("p = 1"));
}

#[test]
fn workspace_symbols_rank_exact_prefix_substring_then_fuzzy_matches() {
    let a = analysis();
    let names = |q: &str| -> Vec<String> {
        ide::workspace_symbols(&a, q, 10)
            .into_iter()
            .map(|s| s.name)
            .collect()
    };
    assert_eq!(names("art"), vec!["Art", "Fahrkarte"]);
    assert_eq!(names("an"), vec!["Anzahl", "Anfrage"]);
    // Fuzzy: the characters in order.
    assert_eq!(names("fkt"), vec!["Fahrkarte"]);
    assert_eq!(names("zz"), Vec::<String>::new());
    assert_eq!(names("").len(), 6);
    assert_eq!(ide::workspace_symbols(&a, "", 2).len(), 2);
    let anzahl = &ide::workspace_symbols(&a, "Anzahl", 10)[0];
    assert_eq!(anzahl.location, Location::new(L, at(LEXIKON, "Anzahl", 0)));
    assert_eq!(anzahl.detail, "3 rules · relative");
    assert_eq!(
        ide::workspace_symbols(&a, "anfrage", 10)[0].detail,
        "3 rules · start"
    );
}

// ── completion ──────────────────────────────────────────────────────────

fn labels(list: &ide::CompletionList) -> Vec<&str> {
    list.items.iter().map(|i| i.label.as_str()).collect()
}

#[test]
fn completion_offers_names_on_right_hand_sides_filtered_by_the_typed_word() {
    let text = "start S\nS {\n  0.5 Fa\n  0.5 \"x\" \n}\nFahrt { \"f\" }\nFähre { \"ä\" }\nWeg { Fahrt }\n";
    let a = grammar_lang::analyze_text(text);
    let list = ide::completions(&a, M, inside(text, "Fa\n", 0, 2));
    assert_eq!(list.replace, at(text, "Fa", 0));
    // `ä` is not `a`: `Fähre` does not match.
    assert_eq!(labels(&list), vec!["Fahrt"]);
    assert_eq!(list.items[0].kind, ide::CompletionKind::NonTerminal);
    assert_eq!(list.items[0].detail.as_deref(), Some("1 rule"));
    assert!(!list.incomplete);
    // After a terminal, at a space: every defined name, nothing replaced.
    let list = ide::completions(&a, M, inside(text, "\"x\" ", 0, 4));
    assert_eq!(list.replace, Span::point(inside(text, "\"x\" ", 0, 4)));
    assert_eq!(labels(&list), vec!["S", "Weg", "Fahrt", "Fähre"]);
    // Inside a quoted word or a comment: nothing.
    assert!(ide::completions(&a, M, inside(text, "\"x\"", 0, 1))
        .items
        .is_empty());
    // In the middle of a run of spaces: names.
    let text = "start S\nS { \"x\"      }\n";
    let a = grammar_lang::analyze_text(text);
    let list = ide::completions(&a, M, inside(text, "\"x\"   ", 0, 6));
    assert_eq!(labels(&list), vec!["S"]);
}

#[test]
fn completion_offers_keywords_where_declarations_start_and_relative_after_a_block_name() {
    let text = "start S\nS { \"a\" | Neu }\n\nu\nT \n";
    let a = grammar_lang::analyze_text(text);
    // At the start of a top-level line: keywords not yet used, then
    // undefined names (to give them a block); `start` is taken.
    let list = ide::completions(&a, M, inside(text, "\n\n", 0, 2));
    assert_eq!(labels(&list), vec!["use", "test", "grammar", "Neu"]);
    assert_eq!(list.items[0].kind, ide::CompletionKind::Keyword);
    let list = ide::completions(&a, M, inside(text, "\nu\n", 0, 2));
    assert_eq!(labels(&list), vec!["use", "Neu"]);
    let u = inside(text, "\nu\n", 0, 1);
    assert_eq!(list.replace, Span::new(u, u + 1));
    let list = ide::completions(&a, M, inside(text, "T \n", 0, 2));
    assert_eq!(labels(&list), vec!["relative"]);
    // After `start`: the defined names.
    let text = "start \nZiel { \"z\" }\n";
    let a = grammar_lang::analyze_text(text);
    assert_eq!(labels(&ide::completions(&a, M, 6)), vec!["Ziel"]);
}

#[test]
fn completion_in_tests_offers_case_keywords_as_and_tree_labels() {
    let text = "start S\nS { \"a\" }\ntest \"t\" {\n  accept \"a\" as (S \"a\")\n  \n  accept \"a\" \n  accept \"a\" as (\n}\n";
    let a = grammar_lang::analyze_text(text);
    let blank = inside(text, "\n  \n", 0, 3);
    assert_eq!(
        labels(&ide::completions(&a, M, blank)),
        vec!["accept", "reject"]
    );
    let after_sentence = inside(text, "\"a\" \n", 0, 4);
    assert_eq!(labels(&ide::completions(&a, M, after_sentence)), vec!["as"]);
    let open = inside(text, "as (\n", 0, 4);
    assert_eq!(labels(&ide::completions(&a, M, open)), vec!["S"]);
}

// ── inlay hints and code lenses ─────────────────────────────────────────

#[test]
fn inlay_hints_show_resolved_probabilities_of_unweighted_and_relative_alternatives() {
    let a = analysis();
    let whole = Span::new(0, LEXIKON.len());
    let hints: Vec<(usize, String, bool, bool)> = ide::inlay_hints(&a, L, whole)
        .into_iter()
        .map(|h| (h.offset, h.label, h.pad_left, h.pad_right))
        .collect();
    let start = |needle: &str| at(LEXIKON, needle, 0).start as usize;
    assert_eq!(
        hints,
        vec![
            (start("\"Rückfahrt\""), "= 1/3".to_string(), false, true),
            (start("\"Einzel\""), "= 1/3".to_string(), false, true),
            (start("\"Tages\""), "= 1/3".to_string(), false, true),
            (start("6   \"eine\"") + 1, "= 3/5".to_string(), true, false),
            (start("3   \"zwei\"") + 1, "= 3/10".to_string(), true, false),
            (start("1   \"drei\"") + 1, "= 1/10".to_string(), true, false),
            (start("\"bitte\""), "= 1".to_string(), false, true),
        ]
    );
    let tooltip = &ide::inlay_hints(&a, L, whole)[3].tooltip;
    assert_eq!(
        tooltip,
        "probability of `Anzahl → \"eine\"`: 3/5 = 0.6 (weight divided by the block's sum)"
    );
    // Only the requested range; weighted alternatives of plain blocks get none.
    let line = at(LEXIKON, "  3   \"zwei\"", 0);
    assert_eq!(ide::inlay_hints(&a, L, line).len(), 1);
    assert!(ide::inlay_hints(&a, M, Span::new(0, MAIN.len()))
        .iter()
        .all(|h| h.offset == inside(MAIN, "\"ich\"", 0, 0)));
}

#[test]
fn inlay_hints_approximate_long_fractions() {
    let text = "start S\nS relative { 1 \"a\" | 2 \"b\" | 123456 \"c\" }\n";
    let a = grammar_lang::analyze_text(text);
    let labels: Vec<String> = ide::inlay_hints(&a, M, Span::new(0, text.len()))
        .into_iter()
        .map(|h| h.label)
        .collect();
    // 1/123459, 2/123459, 123456/123459: three significant digits, six
    // where three would round to 1.
    assert_eq!(labels, vec!["≈ 0.0000081", "≈ 0.0000162", "≈ 0.999976"]);
}

#[test]
fn code_lenses_sit_on_start_and_on_each_test() {
    // Parse, sample and run every test above `start`; run one above each test.
    use trellis_ide::{CodeLens, CodeLensKind};
    let a = analysis();
    assert_eq!(
        ide::code_lenses(&a, M),
        vec![
            CodeLens {
                span: at(MAIN, "start Anfrage", 0),
                kind: CodeLensKind::ParseSentence
            },
            CodeLens {
                span: at(MAIN, "start Anfrage", 0),
                kind: CodeLensKind::Sample
            },
            CodeLens {
                span: at(MAIN, "start Anfrage", 0),
                kind: CodeLensKind::RunAllTests { tests: 1 }
            },
            CodeLens {
                span: Span::new(at(MAIN, "test", 0).start as usize, MAIN.len() - 1),
                kind: CodeLensKind::RunTest {
                    test: 0,
                    name: "Bestellungen".into()
                }
            },
        ]
    );
    assert_eq!(ide::code_lenses(&a, L), Vec::new());
}

// ── folding, links, highlights ──────────────────────────────────────────

#[test]
fn folding_ranges_cover_multi_line_blocks_tests_and_comment_runs() {
    use trellis_ide::{FoldKind, FoldingRange};
    let a = analysis();
    let folds = ide::folding_ranges(&a, M);
    let fold = |span: Span, kind| FoldingRange { span, kind };
    assert_eq!(
        folds,
        vec![
            fold(
                Span::new(
                    at(MAIN, "Anfrage {", 0).start as usize,
                    at(MAIN, "}", 0).end as usize
                ),
                FoldKind::Declaration
            ),
            fold(
                Span::new(
                    at(MAIN, "Fahrkarte {", 0).start as usize,
                    at(MAIN, "}", 1).end as usize
                ),
                FoldKind::Declaration
            ),
            // `Wunsch { … }` fits on one line: no fold.
            fold(
                Span::new(at(MAIN, "test", 0).start as usize, MAIN.len() - 1),
                FoldKind::Declaration
            ),
        ]
    );
    // Comment lines in a row fold; a comment after code does not count, and
    // a blank line ends a run.
    let text =
        "# eins\n## zwei\n### drei\nstart S # nach Code\n# allein\n\n# a\n# b\nS { \"s\" }\n";
    let a = grammar_lang::analyze_text(text);
    assert_eq!(
        ide::folding_ranges(&a, M),
        vec![
            fold(
                Span::new(0, at(text, "### drei", 0).end as usize),
                FoldKind::Comment
            ),
            fold(
                Span::new(
                    at(text, "# a\n", 0).start as usize,
                    at(text, "# b", 0).end as usize
                ),
                FoldKind::Comment
            ),
        ]
    );
}

#[test]
fn document_links_lead_from_use_paths_to_loaded_files() {
    use trellis_ide::DocumentLink;
    let a = analysis();
    assert_eq!(
        ide::document_links(&a, M),
        vec![DocumentLink {
            span: at(MAIN, "\"lexikon.trellis\"", 0),
            target: L
        }]
    );
    let a = grammar_lang::analyze_text("use \"fehlt.trellis\"\n");
    assert_eq!(ide::document_links(&a, M), Vec::new());
}

#[test]
fn document_highlights_mark_definitions_and_uses_in_one_file() {
    use trellis_ide::Highlight;
    let a = analysis();
    let got = ide::document_highlights(&a, M, inside(MAIN, "Fahrkarte", 2, 0));
    let h = |span, definition| Highlight { span, definition };
    assert_eq!(
        got,
        vec![
            h(at(MAIN, "Fahrkarte", 0), false),
            h(at(MAIN, "Fahrkarte", 1), false),
            h(at(MAIN, "Fahrkarte", 2), false),
            h(at(MAIN, "Fahrkarte", 3), true),
            h(at(MAIN, "Fahrkarte", 8), false),
        ]
    );
    // A word: the same quoted word everywhere in the file.
    let got = ide::document_highlights(&a, M, inside(MAIN, "\"Fahrkarte\"", 0, 2));
    assert_eq!(
        got,
        vec![
            h(at(MAIN, "\"Fahrkarte\"", 0), false),
            h(at(MAIN, "\"Fahrkarte\"", 1), false),
            h(at(MAIN, "\"Fahrkarte\"", 2), false),
        ]
    );
}
