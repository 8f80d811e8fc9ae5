//! Quick fixes, specified by applying them: the edited text keeps every
//! comment and the user's layout, and analysing it again gives the model
//! the fix promised.
//!
//! Each grammar is a fixture (`trellis_test_support`): `[[…]]` marks the
//! span the actions are asked for (and, where a test needs it, a place the
//! answer is expected at).

use grammar_lang::model::Ratio;
use grammar_lang::source::FileId;
use grammar_lang::syntax::lexer::{lex, TokenKind};
use grammar_lang::{analyze_text, Analysis, Code, Span};
use num_bigint::BigInt;
use trellis_ide::{self as ide, CodeAction, CodeActionKind, TextEdit};
use trellis_test_support::{apply_edits, Fixture};

const M: FileId = FileId(0);

fn r(n: i64, d: i64) -> Ratio {
    Ratio::new(BigInt::from(n), BigInt::from(d))
}

/// The text of a one-file fixture and the `N` spans it marks `[[…]]`.
#[track_caller]
fn marked<const N: usize>(fixture: &str) -> (String, [Span; N]) {
    let f = Fixture::parse(fixture);
    let file = f.root();
    let spans: Vec<Span> = file
        .ranges
        .iter()
        .map(|r| Span::new(r.start, r.end))
        .collect();
    let n = spans.len();
    let spans = spans
        .try_into()
        .unwrap_or_else(|_| panic!("the fixture marks {n} ranges, not {N}"));
    (file.text.clone(), spans)
}

/// `text` with the edits of `file` applied.
fn apply(text: &str, file: FileId, edits: &[TextEdit]) -> String {
    let mine = edits.iter().filter(|e| e.file == file);
    apply_edits(text, mine.map(|e| (e.span.range(), e.new_text.as_str())))
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

/// The action titled like `prefix…` offered at `span` of the one-file
/// grammar `text`, and `text` with its edits applied.
fn apply_action(text: &str, span: Span, prefix: &str) -> (CodeAction, String) {
    let a = analyze_text(text);
    let fix = action(&a, M, span, prefix);
    let fixed = apply(text, M, &fix.edits);
    (fix, fixed)
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
    let (text, [wahl]) = marked(
        "start Wahl\n\
         # Auswahl am Automaten\n\
         [[Wahl {]]   # drei gleich\n\
         \x20 0.33  \"Hin\"     # eins\n\
         \x20 0.33  \"Zurück\"  # zwei\n\
         \x20 0.33  \"Tag\"\n\
         }\n",
    );
    let text = text.as_str();
    let a = analyze_text(text);
    assert_eq!(codes(&a), vec![Code::SumNotOne]);
    let fix = action(&a, M, wahl, "Renormalize");
    assert_eq!(fix.kind, CodeActionKind::QuickFix);
    assert_eq!(fix.diagnostic_code, Some(Code::SumNotOne));
    // 0.33/0.99 = 1/3 has no terminating decimal: fractions, and the title
    // says so.
    assert_eq!(
        fix.title,
        "Renormalize `Wahl` so its weights sum to 1 \
         (decimals cannot be exact here: 1/3 has no finite decimal expansion; writes fractions)"
    );
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
    let (text, [block]) =
        marked("start S\n[[S {]] 0.2 \"a\" | 0.2 \"b\" | 0.1 \"c\" }  # halbe Masse\n");
    let (_, fixed) = apply_action(&text, block, "Renormalize");
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
    let (text, [block]) = marked("start S\n[[S {]]\n  30%  \"a\"\n  30%  \"b\"\n  20%  \"c\"\n}\n");
    let (_, fixed) = apply_action(&text, block, "Renormalize");
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
    let (text, [block]) =
        marked("start S\n[[S {]]\n  1/2 \"a\"\n  1/4 \"b\"\n  1/2 \"c\"\n  0 \"d\"\n}\n");
    let (renormalize, fixed) = apply_action(&text, block, "Renormalize");
    // The zero weight stays 0 and is not rewritten.
    assert_eq!(renormalize.edits.len(), 3);
    assert_eq!(
        fixed,
        "start S\nS {\n  2/5 \"a\"\n  1/5 \"b\"\n  2/5 \"c\"\n  0 \"d\"\n}\n"
    );
    let b = analyze_text(&fixed);
    assert_eq!(codes(&b), vec![Code::ZeroWeight]);
}

#[test]
fn marking_a_block_relative_inserts_the_keyword_after_its_name() {
    // Asked on `Zahl {`; `relative` is expected right after the name.
    let f = Fixture::parse("start Zahl\n$0Zahl[[]] {$0 6 \"eins\" | 3 \"zwei\" | 1 \"drei\" }\n");
    let text = f.root().text.as_str();
    let head = f.cursor_range();
    let after_name = f.root().ranges[0].start;
    let a = analyze_text(text);
    let fix = action(&a, M, Span::new(head.start, head.end), "Mark");
    assert_eq!(
        fix.title,
        "Mark `Zahl` relative (divide its weights by their sum)"
    );
    assert_eq!(
        fix.edits,
        vec![TextEdit {
            file: M,
            span: Span::point(after_name),
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
    let (text, [gruss]) = marked("start Satz\n\nSatz {\n    [[Gruß]] \"Welt\"   # Gruß fehlt\n}\n\ntest \"t\" { accept \"Gruß Welt\" }\n");
    let text = text.as_str();
    let a = analyze_text(text);
    // `Gruß` is no word of the grammar yet: the stub's terminal makes it one.
    assert_eq!(
        codes(&a),
        vec![Code::Unproductive, Code::Undefined, Code::UnknownWord]
    );
    let fix = action(&a, M, gruss, "Define");
    assert_eq!(fix.title, "Define `Gruß` with a stub block");
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start Satz\n\nSatz {\n    Gruß \"Welt\"   # Gruß fehlt\n}\n\
         \nGruß {\n    \"Gruß\"  # TODO: the words or symbols `Gruß` stands for\n}\n\
         \ntest \"t\" { accept \"Gruß Welt\" }\n"
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
    let (text, [use_of_a]) = marked("start S\nS { [[A]] }");
    let (_, fixed) = apply_action(&text, use_of_a, "Define");
    assert_eq!(
        fixed,
        "start S\nS { A }\n\nA {\n  \"A\"  # TODO: the words or symbols `A` stands for\n}\n"
    );
    assert!(analyze_text(&fixed).diagnostics.is_empty());
}

#[test]
fn removing_an_unreachable_block_deletes_its_lines_doc_and_one_blank_line() {
    let f = Fixture::parse(
        r#"
        === main.trellis ===
        start Anfrage
        use "lexikon.trellis"
        Anfrage { Ort }
        === lexikon.trellis ===
        # Orte
        [[Ort {]] "Hafen" }

        ## Nie benutzt.
        ## Zweite Zeile.
        [[Insel]] {  # alt
          "Möwe"
        }  # Ende

        # Wetter
        Wetter { "Regen" }
        "#,
    );
    let lexikon = f.file("lexikon.trellis");
    let [ort, insel] = [0, 1].map(|i| Span::new(lexikon.ranges[i].start, lexikon.ranges[i].end));
    let lexikon = lexikon.text.as_str();
    // The lexikon with another text, the main file as it is.
    let analyse = |lex: &str| {
        let main = f.file("main.trellis");
        ide::analyze(
            &main.path,
            &main.text,
            &grammar_lang::MemoryLoader::new().with("lexikon.trellis", lex),
            &grammar_lang::Config::default(),
        )
    };
    let a = analyse(lexikon);
    assert_eq!(codes(&a), vec![Code::Unreachable, Code::Unreachable]);
    let lex = FileId(1);
    // Nothing is offered where there is no diagnostic.
    assert!(ide::code_actions(&a, lex, ort).is_empty());
    let fix = action(&a, lex, insel, "Remove");
    assert_eq!(fix.title, "Remove the unreachable block `Insel`");
    assert_eq!(fix.diagnostic_code, Some(Code::Unreachable));
    let fixed = apply(lexikon, lex, &fix.edits);
    // Expected, with the block the next request is made on marked.
    let (expected, [wetter]) =
        marked("# Orte\nOrt { \"Hafen\" }\n\n# Wetter\n[[Wetter {]] \"Regen\" }\n");
    assert_eq!(fixed, expected);
    let b = analyse(&fixed);
    assert_eq!(codes(&b), vec![Code::Unreachable]);
    assert!(b.grammar.nt("Insel").is_none());
    // A plain comment above a block is not its documentation: it stays.
    let fix = action(&b, lex, wetter, "Remove");
    assert_eq!(
        apply(&fixed, lex, &fix.edits),
        "# Orte\nOrt { \"Hafen\" }\n\n# Wetter\n"
    );
}

#[test]
fn removing_the_last_block_of_a_file_takes_the_blank_line_before_it() {
    let (text, [block]) = marked("start S\nS { \"a\" }\n\n## Rest\n[[T {]] \"b\" }\n");
    let (_, fixed) = apply_action(&text, block, "Remove");
    assert_eq!(fixed, "start S\nS { \"a\" }\n");
}

#[test]
fn no_renormalization_is_offered_when_every_weight_is_zero() {
    let (text, [block]) = marked("start S\n[[S {]] 0 \"a\" | 0 \"b\" }\n");
    let text = text.as_str();
    let a = analyze_text(text);
    let titles: Vec<String> = ide::code_actions(&a, M, block)
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
    let (text, [relative, eins]) = marked("start Zahl\nZahl [[relative]] {  # gewichtet\n  6  [[\"eins\"]]\n  3  \"zwei\"\n     \"drei\"  # zählt als 1\n}\n");
    let text = text.as_str();
    let a = analyze_text(text);
    assert!(a.diagnostics.is_empty());
    // Offered on the block's head only.
    assert!(ide::code_actions(&a, M, eins).is_empty());
    let fix = action(&a, M, relative, "Write out");
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
    let (text, [head]) = marked("start S\n[[S relative]] { \"a\" | \"b\" | \"c\" }\n");
    let (fix, fixed) = apply_action(&text, head, "Write out");
    assert_eq!(
        fix.title,
        "Write out the probabilities of `S` and drop `relative` \
         (decimals cannot be exact here: 1/3 has no finite decimal expansion; writes fractions)"
    );
    assert_eq!(fixed, "start S\nS { 1/3 \"a\" | 1/3 \"b\" | 1/3 \"c\" }\n");
}

#[test]
fn an_unknown_start_symbol_gets_a_stub_block_after_the_start_line() {
    let (text, [start]) = marked("start [[Anfang]]\n# Rest folgt\nS { \"s\" }\n");
    let text = text.as_str();
    let a = analyze_text(text);
    assert!(codes(&a).contains(&Code::UnknownStart));
    let fix = action(&a, M, start, "Define");
    assert_eq!(fix.diagnostic_code, Some(Code::UnknownStart));
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(
        fixed,
        "start Anfang\n\nAnfang {\n  \"Anfang\"  # TODO: the words or symbols `Anfang` stands for\n}\n# Rest folgt\nS { \"s\" }\n"
    );
    let b = analyze_text(&fixed);
    assert_eq!(codes(&b), vec![Code::Unreachable]);
}

/// A block `S` with one alternative per weight (`None`: unweighted), a
/// comment on every line, its head marked `[[…]]` (`S {` or, for a
/// `relative` block, `S relative`).
fn block_fixture(weights: &[Option<&str>], relative: bool) -> String {
    let head = if relative {
        "[[S relative]] {"
    } else {
        "[[S {]]"
    };
    let mut text = format!("start S\n# vorher\n{head}  # Kopf\n");
    for (i, w) in weights.iter().enumerate() {
        match w {
            Some(w) => text += &format!("  {w}  \"w{i}\"  # Zeile {i}\n"),
            None => text += &format!("  \"w{i}\"  # Zeile {i}\n"),
        }
    }
    text + "}  # Ende\n"
}

/// The text of [`block_fixture`]`(before, …)` after an action that writes
/// the weights `after` and leaves (or makes) the block plain, not
/// `relative`: a replaced weight keeps its spacing, an inserted one is
/// followed by one space.
fn block_after(before: &[Option<&str>], after: &[&str]) -> String {
    let weights: Vec<Option<&str>> = after.iter().map(|a| Some(*a)).collect();
    let mut text = block_fixture(&weights, false).replace("[[S {]]", "S {");
    for (i, (b, a)) in before.iter().zip(after).enumerate() {
        if b.is_none() {
            text = text.replace(&format!("  {a}  \"w{i}\""), &format!("  {a} \"w{i}\""));
        }
    }
    text
}

/// Asks for the action `prefix` on the head of the block written with
/// `before`; checks the text it gives (`after`), the reason in its title
/// (`fallback`, `None` when the block's notation is kept), that comments
/// are kept, and that the block now sums to exactly 1 with the ratios of
/// `before` kept.
#[track_caller]
fn rewrites_block(prefix: &str, before: &[Option<&str>], after: &[&str], fallback: Option<&str>) {
    let relative = prefix == "Write out";
    let (text, [head]) = marked(&block_fixture(before, relative));
    let text = text.as_str();
    let a = analyze_text(text);
    let fix = action(&a, M, head, prefix);
    let context = format!("{prefix} {before:?}");
    match fallback {
        Some(why) => assert!(
            fix.title.ends_with(&format!(" ({why}; writes fractions)")),
            "{context}: {}",
            fix.title
        ),
        None => assert!(
            !fix.title.contains("cannot be exact"),
            "{context}: {}",
            fix.title
        ),
    }
    let fixed = apply(text, M, &fix.edits);
    assert_eq!(fixed, block_after(before, after), "{context}");
    assert_eq!(comments(&fixed), comments(text), "{context}");
    let b = analyze_text(&fixed);
    assert!(
        !codes(&b).contains(&Code::SumNotOne),
        "{context}: {:#?}",
        b.diagnostics
    );
    let p = probabilities(&b, "S");
    assert_eq!(
        p.iter().sum::<Ratio>(),
        r(1, 1),
        "{context}: sums to exactly 1"
    );
    if relative {
        assert_eq!(p, probabilities(&a, "S"), "{context}: the same model");
    } else {
        // Renormalizing keeps the ratios: new weight = old weight / sum.
        let old: Vec<Ratio> = before
            .iter()
            .map(|w| grammar_lang::weight::parse_weight(w.unwrap()).unwrap().0)
            .collect();
        let sum: Ratio = old.iter().sum();
        let expected: Vec<Ratio> = old.iter().map(|w| w / &sum).collect();
        assert_eq!(p, expected, "{context}: ratios kept");
    }
}

#[test]
fn renormalizing_keeps_the_blocks_notation_exactly_or_says_why_not() {
    const P: &str = "percentages cannot be exact here";
    const D: &str = "decimals cannot be exact here";
    let cases: &[(&[&str], &[&str], Option<String>)] = &[
        // Percent blocks.
        // 60+30+20+15 = 125: 60/125 = 48%, 30/125 = 24%, 20/125 = 16%, 15/125 = 12%.
        (
            &["60%", "30%", "20%", "15%"],
            &["48%", "24%", "16%", "12%"],
            None,
        ),
        // 35+25+20 = 80: 43.75%, 31.25%, 25%.
        (&["35%", "25%", "20%"], &["43.75%", "31.25%", "25%"], None),
        // 45+25+20+15 = 105: 45/105 = 3/7 = 42.857142…% repeats; 5/21, 4/21, 1/7.
        (
            &["45%", "25%", "20%", "15%"],
            &["3/7", "5/21", "4/21", "1/7"],
            Some(format!("{P}: 3/7 has no finite decimal expansion")),
        ),
        // 40+30+20+15 = 105: 40/105 = 8/21 = 800/21 % = 38.095238…%.
        (
            &["40%", "30%", "20%", "15%"],
            &["8/21", "2/7", "4/21", "1/7"],
            Some(format!("{P}: 8/21 has no finite decimal expansion")),
        ),
        // 50+30+20+20 = 120: 50/120 = 5/12 = 41.666…%; 30/120 = 1/4 would be
        // 25%, but the block is written wholly in fractions.
        (
            &["50%", "30%", "20%", "20%"],
            &["5/12", "1/4", "1/6", "1/6"],
            Some(format!("{P}: 5/12 has no finite decimal expansion")),
        ),
        // 25.6+25.5+0.1 = 51.2: 50%, then 25.5/51.2 = 255/512 = 49.8046875%,
        // exact but with seven places (more than MAX_DECIMALS = 6).
        (
            &["25.6%", "25.5%", "0.1%"],
            &["1/2", "255/512", "1/512"],
            Some(format!(
                "{P}: 255/512 needs 7 decimal places as a percentage, more than 6"
            )),
        ),
        // A zero keeps its text; 30+30+20 = 80 as above with 30%.
        (
            &["30%", "30%", "20%", "0"],
            &["37.5%", "37.5%", "25%", "0"],
            None,
        ),
        // Decimal blocks.
        // 0.3+0.3+0.15+0.05 = 0.8: 0.375, 0.375, 0.1875, 0.0625.
        (
            &["0.3", "0.3", "0.15", "0.05"],
            &["0.375", "0.375", "0.1875", "0.0625"],
            None,
        ),
        // Integers are decimals: 3+1 = 4: 0.75, 0.25.
        (&["3", "1"], &["0.75", "0.25"], None),
        // 0.5+0.3+0.2+0.2 = 1.2: 5/12 = 0.41666… repeats.
        (
            &["0.5", "0.3", "0.2", "0.2"],
            &["5/12", "1/4", "1/6", "1/6"],
            Some(format!("{D}: 5/12 has no finite decimal expansion")),
        ),
        // 0.5+0.3+0.2+0.024 = 1.024: 0.5/1.024 = 125/256 = 0.48828125, eight places.
        (
            &["0.5", "0.3", "0.2", "0.024"],
            &["125/256", "75/256", "25/128", "3/128"],
            Some(format!("{D}: 125/256 needs 8 decimal places, more than 6")),
        ),
        // Fraction blocks stay fractions even where a decimal exists:
        // 4 · 1/3 = 4/3, each 1/4 (not 0.25).
        (
            &["1/3", "1/3", "1/3", "1/3"],
            &["1/4", "1/4", "1/4", "1/4"],
            None,
        ),
        // 3/4+1/2 = 5/4: 3/5, 2/5.
        (&["3/4", "1/2"], &["3/5", "2/5"], None),
        // Mixed blocks: the notation most weights use.
        // Two decimals, one fraction; 0.5+1/4+0.5 = 1.25: 0.4, 0.2, 0.4.
        (&["0.5", "1/4", "0.5"], &["0.4", "0.2", "0.4"], None),
        // Two percentages, one decimal; 30%+30%+0.2 = 0.8: 37.5%, 37.5%, 25%.
        (&["30%", "30%", "0.2"], &["37.5%", "37.5%", "25%"], None),
        // Ties: fraction before decimal before percent.
        // 0.6+0.4+1/2+1/2 = 2: 3/10, 1/5, 1/4, 1/4 (not 0.3, 0.2, 0.25, 0.25).
        (
            &["0.6", "0.4", "1/2", "1/2"],
            &["3/10", "1/5", "1/4", "1/4"],
            None,
        ),
        // 60%+40%+0.6+0.4 = 2: 0.3, 0.2, 0.3, 0.2 (not 30%, 20%, …).
        (
            &["60%", "40%", "0.6", "0.4"],
            &["0.3", "0.2", "0.3", "0.2"],
            None,
        ),
    ];
    for (before, after, fallback) in cases {
        let before: Vec<Option<&str>> = before.iter().map(|w| Some(*w)).collect();
        rewrites_block("Renormalize", &before, after, fallback.as_deref());
    }
}

/// The weights of a `relative` block (`None`: unweighted), the weights
/// written out, the reason in the title when the notation is not kept.
type WriteOutCase = (
    &'static [Option<&'static str>],
    &'static [&'static str],
    Option<String>,
);

#[test]
fn writing_out_a_relative_block_keeps_its_notation_exactly_or_says_why_not() {
    const P: &str = "percentages cannot be exact here";
    const D: &str = "decimals cannot be exact here";
    let cases: &[WriteOutCase] = &[
        // 30 : 10 → 75%, 25%.
        (&[Some("30%"), Some("10%")], &["75%", "25%"], None),
        // 3 : 4 → 3/7 = 42.857…%: fractions.
        (
            &[Some("3%"), Some("4%")],
            &["3/7", "4/7"],
            Some(format!("{P}: 3/7 has no finite decimal expansion")),
        ),
        // 6 : 3 : 1 (the unweighted alternative counts as 1) → 0.6, 0.3, 0.1.
        (&[Some("6"), Some("3"), None], &["0.6", "0.3", "0.1"], None),
        // 2 : 1 → 2/3: fractions.
        (
            &[Some("2"), None],
            &["2/3", "1/3"],
            Some(format!("{D}: 2/3 has no finite decimal expansion")),
        ),
        // 2/3 : 1/3 : 1/3 (sum 4/3) → 1/2, 1/4, 1/4, still fractions.
        (
            &[Some("2/3"), Some("1/3"), Some("1/3")],
            &["1/2", "1/4", "1/4"],
            None,
        ),
        // Two fractions, one decimal: 2 : 1/2 : 1/2 (sum 3) → 2/3, 1/6, 1/6.
        (
            &[Some("2"), Some("1/2"), Some("1/2")],
            &["2/3", "1/6", "1/6"],
            None,
        ),
        // No written weight: decimals; 1 : 1 : 1 : 1 → 0.25 each.
        (
            &[None, None, None, None],
            &["0.25", "0.25", "0.25", "0.25"],
            None,
        ),
    ];
    for (before, after, fallback) in cases {
        rewrites_block("Write out", before, after, fallback.as_deref());
    }
}

/// Misspelt names, as a table: the grammar with the use marked `[[…]]`,
/// the preferred fix's title, and the text it gives.
#[test]
fn a_misspelt_name_is_replaced_by_the_suggested_one_as_the_preferred_fix() {
    let cases = [
        (
            "start Log\nLog { Obsrvation }  # eine Zeile\nObservation { \"calm\" }\n",
            "start Log\nLog { [[Obsrvation]] }  # eine Zeile\nObservation { \"calm\" }\n",
            "Replace `Obsrvation` with `Observation`",
        ),
        (
            "start Logbok\nLogbook { \"calm\" }\n",
            "start [[Logbok]]\nLogbook { \"calm\" }\n",
            "Replace `Logbok` with `Logbook`",
        ),
        (
            "start S\nS {\n  0.5 \"wind\" Wnd   # Richtung\n  0.5 Wind\n}\nWind { \"nord\" }\n",
            "start S\nS {\n  0.5 \"wind\" [[Wnd]]   # Richtung\n  0.5 Wind\n}\nWind { \"nord\" }\n",
            "Replace `Wnd` with `Wind`",
        ),
    ];
    for (original, fixture, title) in cases {
        let (text, [at]) = marked(fixture);
        assert_eq!(text, original);
        let a = analyze_text(&text);
        let actions = ide::code_actions(&a, M, at);
        let preferred: Vec<_> = actions.iter().filter(|c| c.is_preferred).collect();
        assert_eq!(preferred.len(), 1, "{actions:#?}");
        let fix = preferred[0];
        assert_eq!(fix.title, title);
        assert_eq!(fix.kind, CodeActionKind::QuickFix);
        assert!(matches!(
            fix.diagnostic_code,
            Some(Code::Undefined | Code::UnknownStart)
        ));
        // The stub stays on offer, not preferred.
        assert!(actions
            .iter()
            .any(|c| c.title.starts_with("Define") && !c.is_preferred));
        let fixed = apply(&text, M, &fix.edits);
        let right = title.split('`').nth(3).unwrap();
        let wrong = title.split('`').nth(1).unwrap();
        assert_eq!(fixed, text.replacen(wrong, right, 1));
        assert_eq!(comments(&fixed), comments(&text));
        let b = analyze_text(&fixed);
        assert!(
            !codes(&b)
                .iter()
                .any(|c| matches!(c, Code::Undefined | Code::UnknownStart)),
            "{:#?}",
            b.diagnostics
        );
    }
}

#[test]
fn replacing_a_misspelt_name_edits_only_the_use_asked_for() {
    let (text, [first]) = marked("start S\nS { [[Wrd]] Wrd }\nWord { \"w\" }\n");
    let (fix, fixed) = apply_action(&text, first, "Replace");
    assert!(fix.is_preferred);
    assert_eq!(fixed, "start S\nS { Word Wrd }\nWord { \"w\" }\n");
}

#[test]
fn a_name_with_nothing_close_gets_no_replacement() {
    let (text, [at]) = marked("start S\nS { [[Quux]] }\nWord { \"w\" }\n");
    let a = analyze_text(&text);
    let actions = ide::code_actions(&a, M, at);
    assert!(actions
        .iter()
        .all(|c| !c.is_preferred && !c.title.starts_with("Replace")));
}

/// Misspelt words of test sentences and expected trees, as a table: the
/// grammar with the word marked `[[…]]`, the preferred fix's title and the
/// text it gives. The fix replaces the word inside the quotes only.
#[test]
fn a_misspelt_word_of_a_test_is_replaced_by_the_suggested_one_as_the_preferred_fix() {
    let grammar =
        "start Log\nLog { \"wind\" Dir }  # eine Zeile\nDir { \"nord\" | \"süd west\" }\n";
    let cases = [
        (
            "test \"t\" {\n  accept \"wind [[nrod]]\"  # Tippfehler\n}\n",
            "Replace `nrod` with `nord`",
            "test \"t\" {\n  accept \"wind nord\"  # Tippfehler\n}\n",
        ),
        (
            "test \"t\" {\n  accept \"wind süd [[wst]]\"\n}\n",
            "Replace `wst` with `west`",
            "test \"t\" {\n  accept \"wind süd west\"\n}\n",
        ),
        (
            "test \"t\" {\n  accept \"wind nord\" as (Log \"wind\" (Dir \"[[nort]]\"))\n}\n",
            "Replace `nort` with `nord`",
            "test \"t\" {\n  accept \"wind nord\" as (Log \"wind\" (Dir \"nord\"))\n}\n",
        ),
        (
            "test \"t\" {\n  reject \"[[wnd]] nord\"\n}\n",
            "Replace `wnd` with `wind`",
            "test \"t\" {\n  reject \"wind nord\"\n}\n",
        ),
    ];
    for (test, title, fixed_test) in cases {
        let (text, [at]) = marked(&format!("{grammar}{test}"));
        let a = analyze_text(&text);
        let actions = ide::code_actions(&a, M, at);
        let preferred: Vec<_> = actions.iter().filter(|c| c.is_preferred).collect();
        assert_eq!(preferred.len(), 1, "{actions:#?}");
        let fix = preferred[0];
        assert_eq!(fix.title, title);
        assert_eq!(fix.kind, CodeActionKind::QuickFix);
        assert_eq!(fix.diagnostic_code, Some(Code::UnknownWord));
        let fixed = apply(&text, M, &fix.edits);
        assert_eq!(fixed, format!("{grammar}{fixed_test}"));
        assert_eq!(comments(&fixed), comments(&text));
        assert_eq!(codes(&analyze_text(&fixed)), []);
    }
}

#[test]
fn a_badly_spaced_terminal_is_normalised_as_the_preferred_fix_without_changing_the_model() {
    let (text, [at]) = marked(
        "start Log\nLog {\n  0.5 [[\" wind  nord\"]] Dir  # Richtung\n  0.5 \"still\"\n}\nDir { \"bei\tsüd\" }\n",
    );
    let (fix, fixed) = apply_action(&text, at, "Normalise");
    assert!(fix.is_preferred);
    assert_eq!(fix.title, "Normalise the spacing: \"wind nord\"");
    assert_eq!(fix.diagnostic_code, Some(Code::TerminalSpacing));
    assert_eq!(
        fixed,
        "start Log\nLog {\n  0.5 \"wind nord\" Dir  # Richtung\n  0.5 \"still\"\n}\nDir { \"bei\tsüd\" }\n"
    );
    let before = analyze_text(&text);
    let after = analyze_text(&fixed);
    // The other badly spaced terminal is still reported; this one is not.
    assert_eq!(
        codes(&before),
        [Code::TerminalSpacing, Code::TerminalSpacing]
    );
    assert_eq!(codes(&after), [Code::TerminalSpacing]);
    // The same rules: only the spelling changed.
    let rules = |a: &Analysis| -> Vec<String> {
        a.grammar
            .rule_ids()
            .map(|id| a.grammar.rule_text(id))
            .collect()
    };
    assert_eq!(rules(&before), rules(&after));
    assert_eq!(comments(&fixed), comments(&text));
}
