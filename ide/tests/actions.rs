//! Quick fixes, specified by applying them: the edited text keeps every
//! comment and the user's layout, and analysing it again gives the model
//! the fix promised.

use grammar_lang::model::Ratio;
use grammar_lang::source::FileId;
use grammar_lang::syntax::lexer::{lex, TokenKind};
use grammar_lang::{analyze, analyze_text, Analysis, Code, Config, MemoryLoader, Span};
use num_bigint::BigInt;
use std::path::Path;
use trellis_ide::{self as ide, CodeAction, CodeActionKind, TextEdit};

const M: FileId = FileId(0);

fn r(n: i64, d: i64) -> Ratio {
    Ratio::new(BigInt::from(n), BigInt::from(d))
}

fn at(text: &str, needle: &str) -> Span {
    let start = text
        .find(needle)
        .unwrap_or_else(|| panic!("{needle:?} not in text"));
    Span::new(start, start + needle.len())
}

/// Applies the edits of one file, last first.
fn apply(text: &str, file: FileId, edits: &[TextEdit]) -> String {
    let mut out = text.to_string();
    let mut mine: Vec<&TextEdit> = edits.iter().filter(|e| e.file == file).collect();
    mine.sort_by_key(|e| std::cmp::Reverse(e.span.start));
    for e in mine {
        out.replace_range(e.span.range(), &e.new_text);
    }
    out
}

fn comments(text: &str) -> Vec<&str> {
    lex(text)
        .into_iter()
        .filter(|t| matches!(t.kind, TokenKind::Comment | TokenKind::DocComment))
        .map(|t| t.span.text(text))
        .collect()
}

fn codes(a: &Analysis) -> Vec<Code> {
    a.diagnostics.iter().map(|d| d.code).collect()
}

/// The action titled like `prefix…` among those offered at `span`.
fn action(a: &Analysis, file: FileId, span: Span, prefix: &str) -> CodeAction {
    let actions = ide::code_actions(a, file, span);
    actions
        .iter()
        .find(|c| c.title.starts_with(prefix))
        .cloned()
        .unwrap_or_else(|| panic!("no {prefix:?} among {actions:#?}"))
}

fn probabilities(a: &Analysis, name: &str) -> Vec<Ratio> {
    let nt = a.grammar.nt(name).unwrap();
    a.grammar
        .rules_of(nt)
        .map(|(_, rule)| rule.probability.clone())
        .collect()
}

#[test]
fn renormalizing_thirds_written_as_decimals_gives_exact_fractions_and_keeps_comments() {
    let text = "start Wahl\n\
                # Auswahl am Automaten\n\
                Wahl {   # drei gleich\n\
                \x20 0.33  \"Hin\"     # eins\n\
                \x20 0.33  \"Zurück\"  # zwei\n\
                \x20 0.33  \"Tag\"\n\
                }\n";
    let a = analyze_text(text);
    assert_eq!(codes(&a), vec![Code::SumNotOne]);
    let fix = action(&a, M, at(text, "Wahl {"), "Renormalize");
    assert_eq!(fix.kind, CodeActionKind::QuickFix);
    assert_eq!(fix.diagnostic_code, Some(Code::SumNotOne));
    assert_eq!(fix.title, "Renormalize `Wahl` so its weights sum to 1");
    // 0.33/0.99 = 1/3 has no terminating decimal: fractions.
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start Wahl\n\
         # Auswahl am Automaten\n\
         Wahl {   # drei gleich\n\
         \x20 1/3  \"Hin\"     # eins\n\
         \x20 1/3  \"Zurück\"  # zwei\n\
         \x20 1/3  \"Tag\"\n\
         }\n"
    );
    assert_eq!(comments(&fixed), comments(text));
    let b = analyze_text(&fixed);
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    assert_eq!(probabilities(&b, "Wahl"), vec![r(1, 3); 3]);
}

#[test]
fn renormalizing_keeps_decimal_style_when_the_results_are_short_decimals() {
    let text = "start S\nS { 0.2 \"a\" | 0.2 \"b\" | 0.1 \"c\" }  # halbe Masse\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "S {"), "Renormalize");
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start S\nS { 0.4 \"a\" | 0.4 \"b\" | 0.2 \"c\" }  # halbe Masse\n"
    );
    let b = analyze_text(&fixed);
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    assert_eq!(probabilities(&b, "S"), vec![r(2, 5), r(2, 5), r(1, 5)]);
}

#[test]
fn renormalizing_a_percent_block_writes_percentages() {
    let text = "start S\nS {\n  30%  \"a\"\n  30%  \"b\"\n  20%  \"c\"\n}\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "S {"), "Renormalize");
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start S\nS {\n  37.5%  \"a\"\n  37.5%  \"b\"\n  25%  \"c\"\n}\n"
    );
    assert!(analyze_text(&fixed).diagnostics.is_empty());
}

#[test]
fn renormalizing_a_block_with_fractions_writes_fractions_and_only_changed_weights() {
    // 1/2 + 1/4 + 1/2 = 5/4; divided: 2/5, 1/5, 2/5 (0.4 would be shorter,
    // but the block is written in fractions).
    let text = "start S\nS {\n  1/2 \"a\"\n  1/4 \"b\"\n  1/2 \"c\"\n  0 \"d\"\n}\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "S {"), "Renormalize");
    // The zero weight stays 0 and is not rewritten.
    assert_eq!(fix.edits.len(), 3);
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start S\nS {\n  2/5 \"a\"\n  1/5 \"b\"\n  2/5 \"c\"\n  0 \"d\"\n}\n"
    );
    let b = analyze_text(&fixed);
    assert_eq!(codes(&b), vec![Code::ZeroWeight]);
}

#[test]
fn marking_a_block_relative_inserts_the_keyword_after_its_name() {
    let text = "start Zahl\nZahl { 6 \"eins\" | 3 \"zwei\" | 1 \"drei\" }\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "Zahl {"), "Mark");
    assert_eq!(
        fix.title,
        "Mark `Zahl` relative (divide its weights by their sum)"
    );
    assert_eq!(
        fix.edits,
        vec![TextEdit {
            file: M,
            span: Span::point(15),
            new_text: " relative".into()
        }]
    );
    let fixed = apply(text, M, &fix.edits);
    let b = analyze_text(&fixed);
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    // README, "The grammar language": `Count relative { 6 | 3 | 1 }` gives 6/10, 3/10, 1/10.
    assert_eq!(probabilities(&b, "Zahl"), vec![r(3, 5), r(3, 10), r(1, 10)]);
}

#[test]
fn defining_a_missing_symbol_inserts_a_stub_block_after_the_user() {
    let text = "start Satz\n\nSatz {\n    Gruß \"Welt\"   # Gruß fehlt\n}\n\ntest \"t\" { accept \"hallo Welt\" }\n";
    let a = analyze_text(text);
    assert_eq!(codes(&a), vec![Code::Unproductive, Code::Undefined]);
    let fix = action(&a, M, at(text, "Gruß"), "Define");
    assert_eq!(fix.title, "Define `Gruß` with a stub block");
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start Satz\n\nSatz {\n    Gruß \"Welt\"   # Gruß fehlt\n}\n\
         \nGruß {\n    \"Gruß\"  # TODO: the words or symbols `Gruß` stands for\n}\n\
         \ntest \"t\" { accept \"hallo Welt\" }\n"
    );
    for c in comments(text) {
        assert!(fixed.contains(c));
    }
    let b = analyze_text(&fixed);
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    assert_eq!(probabilities(&b, "Gruß"), vec![r(1, 1)]);
}

#[test]
fn a_stub_for_a_block_on_the_last_line_without_newline_starts_on_its_own_line() {
    let text = "start S\nS { A }";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "A"), "Define");
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start S\nS { A }\n\nA {\n  \"A\"  # TODO: the words or symbols `A` stands for\n}\n"
    );
    assert!(analyze_text(&fixed).diagnostics.is_empty());
}

#[test]
fn removing_an_unreachable_block_deletes_its_lines_doc_and_one_blank_line() {
    let main = "start Anfrage\nuse \"lexikon.trellis\"\nAnfrage { Ort }\n";
    let lexikon = "# Orte\nOrt { \"Hafen\" }\n\n## Nie benutzt.\n## Zweite Zeile.\nInsel {  # alt\n  \"Möwe\"\n}  # Ende\n\n# Wetter\nWetter { \"Regen\" }\n";
    let analyse = |lex: &str| {
        analyze(
            Path::new("main.trellis"),
            main,
            &MemoryLoader::new().with("lexikon.trellis", lex),
            &Config::default(),
        )
    };
    let a = analyse(lexikon);
    assert_eq!(codes(&a), vec![Code::Unreachable, Code::Unreachable]);
    let lex = FileId(1);
    // Nothing is offered where there is no diagnostic.
    assert!(ide::code_actions(&a, lex, at(lexikon, "Ort {")).is_empty());
    let fix = action(&a, lex, at(lexikon, "Insel"), "Remove");
    assert_eq!(fix.title, "Remove the unreachable block `Insel`");
    assert_eq!(fix.diagnostic_code, Some(Code::Unreachable));
    let fixed = apply(lexikon, lex, &fix.edits);
    assert_eq!(
        fixed,
        "# Orte\nOrt { \"Hafen\" }\n\n# Wetter\nWetter { \"Regen\" }\n"
    );
    let b = analyse(&fixed);
    assert_eq!(codes(&b), vec![Code::Unreachable]);
    assert!(b.grammar.nt("Insel").is_none());
    // A plain comment above a block is not its documentation: it stays.
    let fix = action(&b, lex, at(&fixed, "Wetter {"), "Remove");
    assert_eq!(
        apply(&fixed, lex, &fix.edits),
        "# Orte\nOrt { \"Hafen\" }\n\n# Wetter\n"
    );
}

#[test]
fn removing_the_last_block_of_a_file_takes_the_blank_line_before_it() {
    let text = "start S\nS { \"a\" }\n\n## Rest\nT { \"b\" }\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "T {"), "Remove");
    assert_eq!(apply(text, M, &fix.edits), "start S\nS { \"a\" }\n");
}

#[test]
fn no_renormalization_is_offered_when_every_weight_is_zero() {
    let text = "start S\nS { 0 \"a\" | 0 \"b\" }\n";
    let a = analyze_text(text);
    let titles: Vec<String> = ide::code_actions(&a, M, at(text, "S {"))
        .into_iter()
        .map(|c| c.title)
        .collect();
    assert_eq!(
        titles,
        vec!["Mark `S` relative (divide its weights by their sum)"]
    );
}

#[test]
fn writing_out_a_relative_block_gives_plain_probabilities_and_the_same_model() {
    let text = "start Zahl\nZahl relative {  # gewichtet\n  6  \"eins\"\n  3  \"zwei\"\n     \"drei\"  # zählt als 1\n}\n";
    let a = analyze_text(text);
    assert!(a.diagnostics.is_empty());
    // Offered on the block's head only.
    assert!(ide::code_actions(&a, M, at(text, "\"eins\"")).is_empty());
    let fix = action(&a, M, at(text, "relative"), "Write out");
    assert_eq!(fix.kind, CodeActionKind::Refactor);
    assert_eq!(fix.diagnostic_code, None);
    assert_eq!(
        fix.title,
        "Write out the probabilities of `Zahl` and drop `relative`"
    );
    let fixed = apply(text, M, &fix.edits);
    // 6 : 3 : 1 (the unweighted alternative counts as 1), divided by 10.
    assert_eq!(
        fixed,
        "start Zahl\nZahl {  # gewichtet\n  0.6  \"eins\"\n  0.3  \"zwei\"\n     0.1 \"drei\"  # zählt als 1\n}\n"
    );
    assert_eq!(comments(&fixed), comments(text));
    let b = analyze_text(&fixed);
    assert!(b.diagnostics.is_empty(), "{:#?}", b.diagnostics);
    assert_eq!(probabilities(&b, "Zahl"), probabilities(&a, "Zahl"));
    // Thirds have no decimal: fractions.
    let text = "start S\nS relative { \"a\" | \"b\" | \"c\" }\n";
    let a = analyze_text(text);
    let fix = action(&a, M, at(text, "S relative"), "Write out");
    assert_eq!(
        apply(text, M, &fix.edits),
        "start S\nS { 1/3 \"a\" | 1/3 \"b\" | 1/3 \"c\" }\n"
    );
}

#[test]
fn an_unknown_start_symbol_gets_a_stub_block_after_the_start_line() {
    let text = "start Anfang\n# Rest folgt\nS { \"s\" }\n";
    let a = analyze_text(text);
    assert!(codes(&a).contains(&Code::UnknownStart));
    let fix = action(&a, M, at(text, "Anfang"), "Define");
    assert_eq!(fix.diagnostic_code, Some(Code::UnknownStart));
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start Anfang\n\nAnfang {\n  \"Anfang\"  # TODO: the words or symbols `Anfang` stands for\n}\n# Rest folgt\nS { \"s\" }\n"
    );
    let b = analyze_text(&fixed);
    assert_eq!(codes(&b), vec![Code::Unreachable]);
}
