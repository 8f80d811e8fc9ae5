//! Properties of the editor services on any text:
//!
//! * Totality: every service, at every byte offset (also inside a
//!   multi-byte character and past the end), on soups of the language's
//!   own tokens, answers without a panic.
//! * Answers point into the file: hover spans, semantic tokens, symbols and
//!   edits lie inside the text, on character boundaries; semantic tokens
//!   are in order and do not overlap; the edits of one answer do not overlap.
//! * Quick fixes are safe: applying any offered fix keeps every comment of
//!   the file (except for block removals, which keep every comment outside
//!   the removed lines), and the result analyses without a panic; a fix
//!   removes the diagnostic it was offered for (a removed block's name may
//!   stay unreachable when a second block of that name takes its place).
//! * Refactors keep the model: the same rules with the same probabilities.
//! * Rename is faithful: renaming a symbol and analysing again gives a
//!   grammar with the same number of rules, and the old name is gone.
//!
//! The same properties are checked on the example grammars of the
//! repository.

use grammar_lang::source::FileId;
use grammar_lang::syntax::lexer::{lex, TokenKind};
use grammar_lang::{analyze, Analysis, Code, Config, MemoryLoader, Span};
use proptest::prelude::*;
use proptest::sample::select;
use std::path::Path;
use trellis_ide::{self as ide, CodeActionKind, IdeIndex, TextEdit};

const ALPHABET: &[&str] = &[
    "start S",
    "start Fähre",
    "use \"b.trellis\"",
    "grammar g",
    "S {",
    "Fähre relative {",
    "Ä {",
    "𝄞x {",
    "}",
    "}",
    "{",
    "(",
    ")",
    "|",
    "\n",
    "\n",
    "\n",
    "\n",
    " ",
    "  ",
    "\t",
    "# nöte",
    "## döc",
    "relative",
    "0.33",
    "1/2",
    "25%",
    "0",
    "-1",
    "1/0",
    "S",
    "Fähre",
    "Ä",
    "Neu",
    "\"wört\"",
    "\"a b\"",
    "\"",
    "\"open",
    "test \"t\" {",
    "accept \"wört\"",
    "reject \"a b\"",
    "as",
    "(S \"wört\")",
    "(Fähre (Ä \"a b\"))",
    "@",
];

const USED: &str = "## Gebraucht.\nÄ { \"a b\" | 0.5 \"wört\" }\nUnbenutzt { \"u\" }\n";

fn analyse(text: &str) -> Analysis {
    analyze(
        Path::new("a.trellis"),
        text,
        &MemoryLoader::new().with("b.trellis", USED),
        &Config::default(),
    )
}

fn comments(text: &str) -> Vec<String> {
    lex(text)
        .into_iter()
        .filter(|t| matches!(t.kind, TokenKind::Comment | TokenKind::DocComment))
        .map(|t| t.span.text(text).to_string())
        .collect()
}

fn in_text(text: &str, span: Span) -> bool {
    span.start <= span.end
        && (span.end as usize) <= text.len()
        && text.is_char_boundary(span.start as usize)
        && text.is_char_boundary(span.end as usize)
}

fn texts(a: &Analysis) -> Vec<String> {
    a.sources.iter().map(|(_, f)| f.text.clone()).collect()
}

/// Applies edits to every file; checks they lie in their files and do not overlap.
fn apply(a: &Analysis, edits: &[TextEdit]) -> Result<Vec<String>, TestCaseError> {
    let mut out = texts(a);
    let mut sorted = edits.to_vec();
    sorted.sort_by_key(|e| (e.file, e.span.start, e.span.end));
    for pair in sorted.windows(2) {
        prop_assert!(
            pair[0].file != pair[1].file || pair[0].span.end <= pair[1].span.start,
            "overlapping edits {pair:?}"
        );
    }
    for e in sorted.iter().rev() {
        let text = &mut out[e.file.0 as usize];
        prop_assert!(in_text(text, e.span), "edit {e:?} outside its file");
        text.replace_range(e.span.range(), &e.new_text);
    }
    Ok(out)
}

fn reanalyse(a: &Analysis, new_texts: &[String]) -> Analysis {
    let mut loader = MemoryLoader::new();
    for ((_, f), text) in a.sources.iter().zip(new_texts).skip(1) {
        loader = loader.with(f.path.clone(), text.clone());
    }
    analyze(
        &a.sources.get(FileId(0)).path,
        &new_texts[0],
        &loader,
        &Config::default(),
    )
}

fn services_are_total(a: &Analysis) -> Result<(), TestCaseError> {
    let index = IdeIndex::new(a);
    let facts = ide::EngineFacts {
        termination: vec![0.5; a.grammar.nonterminals.len()],
        rule_expected_uses: vec![1.5; a.grammar.rules.len()],
    };
    for (file, source) in a.sources.iter() {
        let text = &source.text;
        let whole = Span::new(0, text.len());
        let mut renamed = std::collections::HashSet::new();
        for offset in 0..=text.len() + 1 {
            if let Some(found) = ide::lookup(a, file, offset) {
                prop_assert!(in_text(text, found.span()));
            }
            if let Some(h) = ide::hover(a, &index, file, offset, Some(&facts)) {
                prop_assert!(in_text(text, h.span));
                prop_assert!(!h.markdown.is_empty());
            }
            ide::hover(a, &index, file, offset, None);
            if let Some(def) = ide::definition(a, file, offset) {
                prop_assert!(in_text(&a.sources.get(def.file).text, def.span));
            }
            for at in ide::references(a, file, offset, true) {
                prop_assert!(in_text(&a.sources.get(at.file).text, at.span));
            }
            if let Ok(span) = ide::prepare_rename(a, file, offset) {
                prop_assert!(in_text(text, span));
                // Renaming (and analysing again) once per symbol is enough.
                if renamed.insert(span.text(text).to_string()) {
                    if let Ok(edits) = ide::rename(a, file, offset, "Umbenannt_2") {
                        let new_texts = apply(a, &edits)?;
                        let b = reanalyse(a, &new_texts);
                        prop_assert_eq!(b.grammar.rules.len(), a.grammar.rules.len());
                        prop_assert!(b.grammar.nt(span.text(text)).is_none());
                    }
                }
            }
            for h in ide::document_highlights(a, file, offset) {
                prop_assert!(in_text(text, h.span));
            }
            let list = ide::completions(a, file, offset);
            prop_assert!(in_text(text, list.replace) || offset > text.len());
            for action in ide::code_actions(a, file, Span::point(offset.min(text.len()))) {
                prop_assert_eq!(
                    action.kind == CodeActionKind::QuickFix,
                    action.diagnostic_code.is_some()
                );
                apply(a, &action.edits)?;
            }
        }
        let toks = ide::semantic_tokens(a, file, None);
        for t in &toks {
            prop_assert!(in_text(text, t.span) && !t.span.is_empty());
        }
        for pair in toks.windows(2) {
            prop_assert!(pair[0].span.end <= pair[1].span.start);
        }
        for s in ide::document_symbols(a, file) {
            prop_assert!(in_text(text, s.span) && in_text(text, s.selection_span));
            for c in &s.children {
                prop_assert!(in_text(text, c.span) && in_text(text, c.selection_span));
            }
        }
        for h in ide::inlay_hints(a, file, whole) {
            prop_assert!(h.offset <= text.len() && text.is_char_boundary(h.offset));
        }
        for fold in ide::folding_ranges(a, file) {
            prop_assert!(in_text(text, fold.span));
        }
        for link in ide::document_links(a, file) {
            prop_assert!(in_text(text, link.span));
            prop_assert!((link.target.0 as usize) < a.sources.len());
        }
        for lens in ide::code_lenses(a, file) {
            prop_assert!(in_text(text, lens.span));
        }
        fixes_are_safe(a, file)?;
    }
    for s in ide::workspace_symbols(a, "", usize::MAX) {
        prop_assert!(in_text(
            &a.sources.get(s.location.file).text,
            s.location.span
        ));
    }
    Ok(())
}

/// Every fix offered anywhere in `file` keeps the comments and removes its
/// diagnostic.
fn fixes_are_safe(a: &Analysis, file: FileId) -> Result<(), TestCaseError> {
    let text = &a.sources.get(file).text;
    for action in ide::code_actions(a, file, Span::new(0, text.len())) {
        let new_texts = apply(a, &action.edits)?;
        let removal = action.title.starts_with("Remove");
        for (i, (old, new)) in texts(a).iter().zip(&new_texts).enumerate() {
            let kept = comments(new);
            if removal {
                // Every comment left is one that was there.
                let mut before = comments(old);
                for c in &kept {
                    let found = before.iter().position(|b| b == c);
                    prop_assert!(found.is_some(), "comment {c:?} appeared in file {i}");
                    if let Some(p) = found {
                        before.remove(p);
                    }
                }
            } else {
                let mut kept = kept;
                let mut before = comments(old);
                // A stub block brings its own `# TODO` comment.
                kept.retain(|c| !c.starts_with("# TODO: the words or symbols"));
                before.sort();
                kept.sort();
                prop_assert_eq!(&kept, &before, "comments changed by {}", &action.title);
            }
        }
        let b = reanalyse(a, &new_texts);
        let (Some(code), Some(at)) = (action.diagnostic_code, action.diagnostic_location) else {
            // A refactor keeps the model: the same rules with the same
            // probabilities.
            let rules = |g: &grammar_lang::Grammar| -> Vec<(String, grammar_lang::model::Ratio)> {
                g.rule_ids()
                    .map(|id| (g.rule_text(id), g.rule(id).probability.clone()))
                    .collect()
            };
            prop_assert_eq!(rules(&b.grammar), rules(&a.grammar), "{}", &action.title);
            continue;
        };
        // The same name no longer carries the same finding (unless it has a
        // second block, which takes the place of a removed first one).
        let name = at.span.text(text);
        let duplicated = a.diagnostics.iter().any(|d| {
            d.code == Code::DuplicateBlock
                && d.location.span.text(&a.sources.get(d.location.file).text) == name
        });
        if duplicated {
            continue;
        }
        // A fix that only rewrites its own finding's text (replacing a
        // misspelt use, quoting a bare word, normalising one terminal's
        // spacing) answers that one finding of the name: its other uses
        // keep theirs, each with its own fix. Every other fix clears the
        // name.
        let count = |analysis: &Analysis, texts: &[String]| {
            analysis
                .diagnostics
                .iter()
                .filter(|d| {
                    d.code == code
                        && d.location.file == at.file
                        && d.location.span.text(&texts[at.file.0 as usize]) == name
                })
                .count()
        };
        let before = count(a, &texts(a));
        let after = count(&b, &new_texts);
        let local = action.edits.iter().all(|e| {
            e.file == at.file && at.span.start <= e.span.start && e.span.end <= at.span.end
        });
        let expected = if local { before.saturating_sub(1) } else { 0 };
        prop_assert_eq!(
            after,
            expected,
            "{} left {} of {} `{}` at `{}`",
            &action.title,
            after,
            before,
            code,
            name
        );
    }
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig { cases: 48, ..ProptestConfig::default() })]

    #[test]
    fn every_service_answers_any_token_soup_at_every_offset(
        pieces in proptest::collection::vec(select(ALPHABET), 0..60)
    ) {
        let text = pieces.join(" ");
        services_are_total(&analyse(&text))?;
    }

    #[test]
    fn every_service_answers_any_token_soup_glued_without_spaces(
        pieces in proptest::collection::vec(select(ALPHABET), 0..60)
    ) {
        services_are_total(&analyse(&pieces.concat()))?;
    }
}

#[test]
fn every_service_answers_on_the_example_grammars() {
    let examples = [
        (
            "ferry_kiosk.trellis",
            include_str!("../../examples/ferry_kiosk.trellis"),
        ),
        (
            "greenhouse_voice.trellis",
            include_str!("../../examples/greenhouse_voice.trellis"),
        ),
        (
            "broken.trellis",
            include_str!("../../examples/broken.trellis"),
        ),
        (
            "broken_unknown_start.trellis",
            include_str!("../../examples/broken_unknown_start.trellis"),
        ),
    ];
    let loader = MemoryLoader::new()
        .with(
            "ferry_lexicon.trellis",
            include_str!("../../examples/ferry_lexicon.trellis"),
        )
        .with(
            "broken_cycle.trellis",
            include_str!("../../examples/broken_cycle.trellis"),
        );
    for (name, text) in examples {
        let a = analyze(Path::new(name), text, &loader, &Config::default());
        if let Err(e) = services_are_total(&a) {
            panic!("{name}: {e}");
        }
    }
}

/// A case the token-soup property once shrank to: the bare word `a` is used
/// twice, each use has its own "Quote" fix, and quoting one leaves the other.
#[test]
fn quoting_one_use_of_a_bare_word_leaves_the_other_uses_to_their_own_fixes() {
    let text = "S {\"\"a b\"(Fähre (Ä \"a b\"))\n\"a b\"}";
    let a = analyse(text);
    let uses = a
        .diagnostics
        .iter()
        .filter(|d| d.code == Code::Undefined && d.location.span.text(text) == "a")
        .count();
    assert_eq!(uses, 2, "{:?}", a.diagnostics);
    if let Err(e) = services_are_total(&a) {
        panic!("{e}");
    }
}
