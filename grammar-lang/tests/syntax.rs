//! The syntax layer, specified by example: what parses, what is reported,
//! and that nothing the user wrote is lost.

use grammar_lang::syntax::ast::{Decl, Expectation, Item, TreeChild};
use grammar_lang::syntax::parse;
use grammar_lang::LineIndex;

/// The example of README's "The grammar language", verbatim in spirit.
const KIOSK: &str = r#"grammar ferry_kiosk            # optional
start Request
use "lexicon.trellis"

## What a passenger says at the kiosk.
## Spoken, not typed.
Request {
  0.55  Want Ticket
  0.30  Ticket Please
  15%   Ticket                 # percent is a weight too
}

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

test "ticket requests" {
  accept "one return ticket please"
  reject "ticket ticket"
  accept "day ticket" as (Request (Ticket (Kind "day") "ticket"))
}
"#;

fn blocks(text: &str) -> Vec<grammar_lang::syntax::ast::Block> {
    parse(text)
        .decls
        .into_iter()
        .filter_map(|d| match d {
            Decl::Block(b) => Some(b),
            _ => None,
        })
        .collect()
}

/// `(line, column)` 1-based of each error, with its message.
fn errors(text: &str) -> Vec<(u32, u32, String)> {
    let index = LineIndex::new(text);
    parse(text)
        .errors
        .into_iter()
        .map(|e| {
            let lc = index.chars(text, e.span.start as usize);
            (lc.line + 1, lc.col + 1, e.message)
        })
        .collect()
}

#[test]
fn the_design_example_parses_without_errors() {
    let file = parse(KIOSK);
    assert!(file.errors.is_empty(), "{:?}", file.errors);
    let kinds: Vec<&str> = file
        .decls
        .iter()
        .map(|d| match d {
            Decl::Grammar(_) => "grammar",
            Decl::Start(_) => "start",
            Decl::Use(_) => "use",
            Decl::Block(_) => "block",
            Decl::Test(_) => "test",
        })
        .collect();
    assert_eq!(
        kinds,
        ["grammar", "start", "use", "block", "block", "block", "block", "test"]
    );
}

#[test]
fn blocks_keep_names_weights_items_and_the_relative_flag() {
    let bs = blocks(KIOSK);
    let names: Vec<&str> = bs.iter().map(|b| b.name.span.text(KIOSK)).collect();
    assert_eq!(names, ["Request", "Ticket", "Kind", "Count"]);
    let request = &bs[0];
    let weights: Vec<&str> = request
        .alternatives
        .iter()
        .map(|a| a.weight.map_or("", |w| w.text(KIOSK)))
        .collect();
    assert_eq!(weights, ["0.55", "0.30", "15%"]);
    assert_eq!(bs[2].alternatives.len(), 3, "`|` separates alternatives");
    assert!(bs[2].alternatives.iter().all(|a| a.weight.is_none()));
    assert!(bs[3].relative.is_some());
    match &bs[1].alternatives[0].items[2] {
        Item::Terminal(s) => assert_eq!(s.value, "ticket"),
        other => panic!("expected a terminal, got {other:?}"),
    }
}

#[test]
fn doc_comments_attach_to_the_next_declaration_only() {
    let bs = blocks(KIOSK);
    let doc = bs[0].doc.as_ref().expect("Request has a doc comment");
    assert_eq!(
        doc.lines,
        ["What a passenger says at the kiosk.", "Spoken, not typed."]
    );
    assert!(bs[1].doc.is_none());
    let text = "# plain\nA { \"a\" }\n\n## about B\n\nB { \"b\" }\n";
    let bs = blocks(text);
    assert!(bs[0].doc.is_none(), "a plain comment is not documentation");
    assert!(bs[1].doc.is_none(), "a blank line detaches a doc comment");
}

#[test]
fn doc_comments_can_document_single_alternatives() {
    let text = "A {\n  ## the polite form\n  0.5 \"please\"\n  0.5 \"now\"\n}\n";
    let bs = blocks(text);
    assert_eq!(
        bs[0].alternatives[0].doc.as_ref().unwrap().lines,
        ["the polite form"]
    );
    assert!(bs[0].alternatives[1].doc.is_none());
}

#[test]
fn test_blocks_keep_cases_and_expected_trees() {
    let file = parse(KIOSK);
    let Some(Decl::Test(test)) = file.decls.last() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.name.value, "ticket requests");
    let expects: Vec<Expectation> = test.cases.iter().map(|c| c.expect).collect();
    assert_eq!(
        expects,
        [
            Expectation::Accept,
            Expectation::Reject,
            Expectation::Accept
        ]
    );
    let tree = test.cases[2].tree.as_ref().expect("third case has a tree");
    assert_eq!(tree.label.span.text(KIOSK), "Request");
    let TreeChild::Node(ticket) = &tree.children[0] else {
        panic!("Request's child is a node")
    };
    assert_eq!(ticket.children.len(), 2);
    assert!(matches!(&ticket.children[1], TreeChild::Leaf(s) if s.value == "ticket"));
}

#[test]
fn leading_and_trailing_pipes_across_lines_are_layout_not_empty_rules() {
    let text = "Kind {\n    \"return\"\n  | \"single\"\n  | \"day\"\n}\nMode { \"a\" |\n \"b\" }\n";
    let file = parse(text);
    assert!(file.errors.is_empty(), "{:?}", file.errors);
    let bs = blocks(text);
    assert_eq!(bs[0].alternatives.len(), 3);
    assert_eq!(bs[1].alternatives.len(), 2);
}

#[test]
fn empty_alternatives_are_reported_as_unsupported_epsilon_rules() {
    for text in [
        "A { \"x\" | | \"y\" }\n",
        "A { | }\n",
        "A {\n  0.5\n  0.5 \"x\"\n}\n",
        "A { \"\" }\n",
    ] {
        let file = parse(text);
        assert_eq!(file.errors.len(), 1, "{text:?}: {:?}", file.errors);
        let err = &file.errors[0];
        assert!(err.empty_rule, "{text:?}: {err:?}");
        assert!(
            err.help.as_deref().unwrap_or("").contains("factor"),
            "{err:?}"
        );
    }
}

#[test]
fn one_file_with_many_mistakes_reports_each_at_its_place_and_keeps_the_rest() {
    let text = "start Request\n\
                Request {\n\
                \x20 0.5 Want ( Ticket\n\
                \x20 0.5 Ticket\n\
                }\n\
                Lonely \"x\"\n\
                Ticket {\n\
                \x20 \"a\" @ \"b\"\n\
                \x20 \"c\"\n\
                Want { \"i\" \"want\" }\n\
                start\n";
    let errs = errors(text);
    let places: Vec<(u32, u32)> = errs.iter().map(|(l, c, _)| (*l, *c)).collect();
    assert_eq!(
        places,
        [(3, 12), (6, 8), (7, 8), (8, 7), (11, 6)],
        "{errs:#?}"
    );
    assert!(errs[0].2.contains("unexpected `(`"));
    assert!(errs[1].2.contains("expected `{` to open its block"));
    assert!(errs[2].2.contains("block `Ticket` is not closed"));
    assert!(errs[3].2.contains("character `@`"));
    assert!(errs[4].2.contains("needs a symbol name"));
    // Everything intact is still there: three blocks and the start symbol.
    let bs = blocks(text);
    let names: Vec<&str> = bs.iter().map(|b| b.name.span.text(text)).collect();
    assert_eq!(names, ["Request", "Ticket", "Want"]);
    assert_eq!(
        bs[0].alternatives.len(),
        1,
        "the broken alternative is dropped"
    );
    assert_eq!(
        bs[1].alternatives.len(),
        1,
        "`c` survives the bad line before it"
    );
    assert!(matches!(parse(text).decls[0], Decl::Start(_)));
}

#[test]
fn unterminated_terminals_and_stray_braces_are_reported_with_help() {
    let file = parse("A {\n  \"open\n}\n}\n");
    assert_eq!(file.errors.len(), 2, "{:?}", file.errors);
    assert!(file.errors[0].message.contains("closing `\"`"));
    assert!(file.errors[1].message.contains("closes no block"));
}

#[test]
fn keywords_cannot_name_symbols() {
    let file = parse("start A\nA { use }\n");
    assert_eq!(file.errors.len(), 1);
    assert!(file.errors[0].help.as_deref().unwrap().contains("keyword"));
}

#[test]
fn the_token_list_is_a_lossless_image_of_the_file() {
    for text in [
        KIOSK,
        "A {\n  \"open\n}\n}\n",
        "  # only a comment",
        "",
        "@@ ## x\r\n",
    ] {
        let file = parse(text);
        let rebuilt: String = file.tokens.iter().map(|t| t.span.text(text)).collect();
        assert_eq!(rebuilt, text);
    }
}

#[test]
fn spans_point_at_the_source_text_of_each_node() {
    let bs = blocks(KIOSK);
    let alt = &bs[1].alternatives[0];
    assert_eq!(alt.span.text(KIOSK), "1/2   Count Kind \"ticket\"");
    assert_eq!(
        bs[2].span.text(KIOSK),
        "Kind {\n  \"return\" | \"single\" | \"day\"\n}"
    );
}

#[test]
fn an_expected_tree_may_span_several_lines() {
    let text = "start S\nS { NP VP }\nNP { \"ferries\" }\nVP { \"sail\" }\n\
        test \"layout\" {\n  accept \"ferries sail\" as (S\n    (NP \"ferries\")\n\n    (VP\n      \"sail\"\n    )\n  )\n  reject \"sail\"\n}\n";
    let file = parse(text);
    assert!(file.errors.is_empty(), "{:?}", file.errors);
    let Some(Decl::Test(test)) = file.decls.last() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.cases.len(), 2);
    let tree = test.cases[0]
        .tree
        .as_ref()
        .expect("the first case has a tree");
    assert_eq!(tree.label.span.text(text), "S");
    assert_eq!(tree.children.len(), 2);
    let TreeChild::Node(vp) = &tree.children[1] else {
        panic!("S's second child is a node")
    };
    assert!(matches!(&vp.children[..], [TreeChild::Leaf(s)] if s.value == "sail"));
    assert_eq!(test.cases[1].expect, Expectation::Reject);
}

#[test]
fn an_unclosed_bracket_in_an_expected_tree_is_reported_once_at_the_bracket() {
    // The tree ends where the next case begins; that case is read as usual.
    let text = "start S\nS { \"a\" }\n\
        test \"t\" {\n  accept \"a\" as (S\n    \"a\"\n  accept \"a\"\n  reject \"b\"\n}\n";
    assert_eq!(
        errors(text),
        [(
            4,
            17,
            "this bracket of the expected tree is not closed".into()
        )]
    );
    let Some(Decl::Test(test)) = parse(text).decls.last().cloned() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.cases.len(), 3);
}

#[test]
fn a_mistake_inside_a_multi_line_tree_is_reported_once_and_reading_resumes_at_the_next_case() {
    let text = "start S\nS { \"a\" }\n\
        test \"t\" {\n  accept \"a\" as (S\n    0.5\n    (S \"a\")\n    \"a\")\n  reject \"b\"\n}\n";
    let found = errors(text);
    assert_eq!(found.len(), 1, "{found:?}");
    assert_eq!((found[0].0, found[0].1), (5, 5), "{found:?}");
    let Some(Decl::Test(test)) = parse(text).decls.last().cloned() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.cases.len(), 1);
    assert_eq!(test.cases[0].expect, Expectation::Reject);
}

#[test]
fn brackets_deeper_than_the_limit_are_one_error_at_the_first_bracket_too_deep() {
    use grammar_lang::tree::MAX_TREE_DEPTH;
    let depth = 3 * MAX_TREE_DEPTH;
    let text = format!(
        "start S\nS {{ \"a\" }}\ntest \"t\" {{\n  accept \"a\" as {}\"a\"{}\n  reject \"b\"\n}}\n",
        "(S ".repeat(depth),
        ")".repeat(depth)
    );
    let column = "  accept \"a\" as ".len() + 3 * MAX_TREE_DEPTH + 1;
    assert_eq!(
        errors(&text),
        [(
            4,
            column as u32,
            format!("this expected tree nests deeper than {MAX_TREE_DEPTH} levels; the brackets from here to their `)` are not read")
        )]
    );
    // The tree is kept down to the limit, and the next case is read.
    let Some(Decl::Test(test)) = parse(&text).decls.last().cloned() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.cases.len(), 2);
    let mut levels = 0;
    let mut node = test.cases[0].tree.as_ref();
    while let Some(tree) = node {
        levels += 1;
        node = tree.children.iter().find_map(|c| match c {
            TreeChild::Node(n) => Some(n),
            TreeChild::Leaf(_) => None,
        });
    }
    assert_eq!(levels, MAX_TREE_DEPTH);
}

#[test]
fn unclosed_brackets_deeper_than_the_limit_end_at_the_next_case() {
    use grammar_lang::tree::MAX_TREE_DEPTH;
    let text = format!(
        "start S\nS {{ \"a\" }}\ntest \"t\" {{\n  accept \"a\" as {}\n  reject \"b\"\n}}\n",
        "(S ".repeat(2 * MAX_TREE_DEPTH),
    );
    let found = errors(&text);
    assert!(found.iter().all(|(line, ..)| *line == 4), "{found:?}");
    assert!(found[0].2.contains("is not closed"), "{found:?}");
    assert!(
        found.iter().any(|(.., m)| m.contains("nests deeper than")),
        "{found:?}"
    );
    let Some(Decl::Test(test)) = parse(&text).decls.last().cloned() else {
        panic!("last declaration is the test block")
    };
    assert_eq!(test.cases.len(), 2);
    assert_eq!(test.cases[1].expect, Expectation::Reject);
}
