//! Property tests of the language front end.
//!
//! * Totality: any text — arbitrary bytes, or a soup of the language's own
//!   tokens, which reaches much deeper into the parser — goes through the
//!   lexer, the parser and the whole analysis without a panic; the tokens
//!   cover the text exactly and every diagnostic points inside its file, on
//!   character boundaries.
//! * Round trip: a random semantic model printed with
//!   [`grammar_lang::print::print_grammar`] and analysed again is the same
//!   model (names, right-hand sides, exact probabilities, `relative` flags,
//!   docs and tests; spans are not compared).

use grammar_lang::diagnostic::{Code, Location};
use grammar_lang::model::{
    BlockInfo, Expectation, Grammar, GrammarTest, Notation, Ratio, Rule, Sym, TestCase, Weight,
};
use grammar_lang::print::print_grammar;
use grammar_lang::source::FileId;
use grammar_lang::syntax::{self, lexer};
use grammar_lang::tree::Tree;
use grammar_lang::weight::exact_decimal;
use grammar_lang::{analyze, analyze_text, Analysis, Config, MemoryLoader, Span};
use num_bigint::BigInt;
use num_traits::{One, Zero};
use proptest::prelude::*;
use proptest::sample::select;
use std::collections::{BTreeMap, BTreeSet};
use std::path::Path;

// ---------------------------------------------------------------------------
// Totality
// ---------------------------------------------------------------------------

/// Pieces of `.trellis` text, well formed and not, for token-soup inputs.
const ALPHABET: &[&str] = &[
    "grammar",
    "start",
    "use",
    "relative",
    "test",
    "accept",
    "reject",
    "as",
    "{",
    "}",
    "(",
    ")",
    "|",
    "\n",
    "\n",
    "\n",
    " ",
    " ",
    "  ",
    "\t",
    "\r\n",
    "# note",
    "## doc",
    "##",
    "###",
    "\"x\"",
    "\"a b\"",
    "\"\"",
    "\"",
    "\"\\\"\"",
    "\\",
    "\"é\\\\\"",
    "\"open",
    "0.5",
    "1/2",
    "25%",
    "1",
    "0",
    "-1",
    "1/0",
    ".5",
    "3.",
    "0.1",
    "12.5%",
    "1/-2",
    "A",
    "B",
    "Req",
    "NP-SBJ",
    "S'",
    "x.1",
    "_",
    "Ä",
    "Fähre",
    "2A",
    "@",
    ";",
    "=",
    "%",
    "/",
    "-",
    "\u{FEFF}",
    "ß",
    "🦀",
    "\"trellis.toml\"",
];

/// Whether `span` lies inside `text` and starts and ends on character boundaries.
fn span_within(text: &str, span: Span) -> bool {
    let range = span.range();
    range.start <= range.end
        && range.end <= text.len()
        && text.is_char_boundary(range.start)
        && text.is_char_boundary(range.end)
}

/// Every diagnostic's spans (primary and related) lie inside its file and
/// start and end on character boundaries.
fn assert_diagnostics_located(analysis: &Analysis) -> Result<(), TestCaseError> {
    let in_file = |loc: &Location| -> bool {
        if (loc.file.0 as usize) >= analysis.sources.len() {
            return false;
        }
        span_within(&analysis.sources.get(loc.file).text, loc.span)
    };
    for d in &analysis.diagnostics {
        prop_assert!(
            in_file(&d.location),
            "{} at {:?} is outside its file",
            d.code,
            d.location
        );
        for related in &d.related {
            prop_assert!(
                in_file(&related.location),
                "related note of {} at {:?} is outside its file",
                d.code,
                related.location
            );
        }
    }
    Ok(())
}

/// Lexes, parses and analyses `text`, checking the totality properties.
fn front_end_is_total(text: &str) -> Result<(), TestCaseError> {
    let tokens = lexer::lex(text);
    let rebuilt: String = tokens.iter().map(|t| t.span.text(text)).collect();
    prop_assert_eq!(&rebuilt, text, "the tokens must concatenate to the text");
    prop_assert!(
        tokens.windows(2).all(|w| w[0].span.end == w[1].span.start),
        "tokens must be contiguous"
    );

    let file = syntax::parse(text);
    prop_assert_eq!(&file.tokens, &tokens, "the parser keeps the lexer's tokens");
    for error in &file.errors {
        prop_assert!(
            span_within(text, error.span),
            "syntax error at {:?}",
            error.span
        );
    }
    for decl in &file.decls {
        prop_assert!(
            span_within(text, decl.span()),
            "declaration at {:?}",
            decl.span()
        );
    }

    let analysis = analyze_text(text);
    assert_diagnostics_located(&analysis)?;
    Ok(())
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn arbitrary_bytes_never_make_the_front_end_panic(
        bytes in proptest::collection::vec(any::<u8>(), 0..400)
    ) {
        let text = String::from_utf8_lossy(&bytes);
        front_end_is_total(&text)?;
    }

    #[test]
    fn arbitrary_unicode_text_never_makes_the_front_end_panic(text in "\\PC{0,200}") {
        front_end_is_total(&text)?;
    }

    #[test]
    fn soups_of_language_tokens_never_make_the_front_end_panic(
        pieces in proptest::collection::vec(select(ALPHABET), 0..120)
    ) {
        let text: String = pieces.concat();
        front_end_is_total(&text)?;
    }
}

// ---------------------------------------------------------------------------
// Round trip through the printer
// ---------------------------------------------------------------------------

/// How one weight is written.
#[derive(Clone, Copy, Debug)]
enum Style {
    Decimal,
    Fraction,
    Percent,
}

#[derive(Clone, Debug)]
enum ItemSpec {
    /// A non-terminal, by index (taken modulo the number of blocks).
    N(usize),
    T(String),
}

#[derive(Clone, Debug)]
struct RuleSpec {
    rhs: Vec<ItemSpec>,
    /// Share of the block's mass (relative weight in `relative` blocks).
    part: u32,
    style: Style,
    doc: Option<Vec<String>>,
}

#[derive(Clone, Debug)]
struct BlockSpec {
    relative: bool,
    doc: Option<Vec<String>>,
    rules: Vec<RuleSpec>,
    /// How many of the last rules are unweighted (non-relative blocks only).
    unweighted: usize,
    /// Mass left to the unweighted rules, in the same parts as `part`.
    left: u32,
}

#[derive(Clone, Debug)]
struct TestSpec {
    name: String,
    doc: Option<Vec<String>>,
    cases: Vec<(bool, String, Option<Tree>)>,
}

#[derive(Clone, Debug)]
struct ModelSpec {
    name: Option<String>,
    start: Option<usize>,
    names: Vec<String>,
    blocks: Vec<BlockSpec>,
    tests: Vec<TestSpec>,
}

fn doc_lines() -> impl Strategy<Value = Option<Vec<String>>> {
    proptest::option::of(proptest::collection::vec(
        "([A-Za-z0-9#\"ü→(),.]([A-Za-z0-9 #\"ü→(),.]{0,20}[A-Za-z0-9#\"ü→(),.])?)?",
        1..3,
    ))
}

/// Words for terminals and sentences: any printable text without
/// whitespace, quotes and backslashes included. (A word of the model has no
/// whitespace: a quoted text with whitespace inside stands for its words.)
fn word() -> impl Strategy<Value = String> {
    prop_oneof![
        3 => "[a-z]{1,6}",
        1 => "[^\n\r\u{2028}\u{2029}]{1,6}".prop_filter("printable, no whitespace", |s| {
            s.chars().all(|c| !c.is_control() && !c.is_whitespace())
        }),
        1 => select(vec!["\"", "\\", "say\"hi\"", "a\\b", "ünïcödé", "🦀"]).prop_map(str::to_string),
    ]
}

fn symbol_name() -> impl Strategy<Value = String> {
    "[A-Z_ÄŽ][a-zA-Z0-9_'+.é-]{0,5}"
}

fn style() -> impl Strategy<Value = Style> {
    prop_oneof![
        Just(Style::Decimal),
        Just(Style::Fraction),
        Just(Style::Percent)
    ]
}

fn rule_spec() -> impl Strategy<Value = RuleSpec> {
    (
        proptest::collection::vec(
            prop_oneof![
                (0usize..8).prop_map(ItemSpec::N),
                word().prop_map(ItemSpec::T),
            ],
            1..5,
        ),
        1u32..12,
        style(),
        doc_lines(),
    )
        .prop_map(|(rhs, part, style, doc)| RuleSpec {
            rhs,
            part,
            style,
            doc,
        })
}

fn block_spec() -> impl Strategy<Value = BlockSpec> {
    (
        any::<bool>(),
        doc_lines(),
        proptest::collection::vec(rule_spec(), 1..6),
        0usize..3,
        1u32..6,
    )
        .prop_map(|(relative, doc, rules, unweighted, left)| BlockSpec {
            relative,
            doc,
            unweighted: if relative {
                0
            } else {
                unweighted.min(rules.len())
            },
            left,
            rules,
        })
}

fn tree(labels: Vec<String>) -> impl Strategy<Value = Tree> {
    let leaf = word().prop_map(Tree::leaf);
    let node_labels = labels.clone();
    leaf.prop_recursive(2, 8, 3, move |inner| {
        (
            select(node_labels.clone()),
            proptest::collection::vec(inner, 1..3),
        )
            .prop_map(|(label, children)| Tree::node(label, children))
    })
    .prop_flat_map(move |t| match &t {
        // A test tree is always rooted in a node.
        Tree::Leaf(w) => {
            let w = w.clone();
            select(labels.clone())
                .prop_map(move |label| Tree::node(label, vec![Tree::leaf(w.clone())]))
                .boxed()
        }
        Tree::Node { .. } => Just(t).boxed(),
    })
}

fn test_spec(labels: Vec<String>) -> impl Strategy<Value = TestSpec> {
    (
        "[^\n\r\u{2028}\u{2029}]{1,10}"
            .prop_filter("printable", |s| s.chars().all(|c| !c.is_control())),
        doc_lines(),
        proptest::collection::vec(
            (
                any::<bool>(),
                proptest::collection::vec(word(), 1..4),
                proptest::option::of(tree(labels)),
            )
                .prop_map(|(accept, words, tree)| {
                    // Only `accept` cases carry a tree.
                    let tree = if accept { tree } else { None };
                    (accept, words.join(" "), tree)
                }),
            0..4,
        ),
    )
        .prop_map(|(name, doc, cases)| TestSpec { name, doc, cases })
}

fn model_spec() -> impl Strategy<Value = ModelSpec> {
    (1usize..7)
        .prop_flat_map(|n| {
            (
                proptest::collection::vec(symbol_name(), n),
                proptest::collection::vec(block_spec(), n),
                proptest::option::of(0..n),
                proptest::option::of("[a-z_][a-z0-9_-]{0,8}"),
            )
        })
        .prop_flat_map(|(bases, blocks, start, name)| {
            // Distinct names: a unique suffix after a letter-initial base.
            let names: Vec<String> = bases
                .iter()
                .enumerate()
                .map(|(i, b)| format!("{b}{i}"))
                .collect();
            let tests = proptest::collection::vec(test_spec(names.clone()), 0..3);
            (Just(names), Just(blocks), Just(start), Just(name), tests)
        })
        .prop_map(|(names, blocks, start, name, tests)| ModelSpec {
            // `grammar` names must not be keywords.
            name: name.filter(|n| !lexer::TokenKind::KEYWORDS.iter().any(|(k, _)| k == n)),
            start,
            names,
            blocks,
            tests,
        })
}

fn nowhere() -> Location {
    Location::new(FileId(0), Span::default())
}

fn ratio(n: u32, d: u32) -> Ratio {
    Ratio::new(BigInt::from(n), BigInt::from(d))
}

/// The weight `value` written in `style` (falling back to a fraction when
/// the value has no exact decimal form).
fn written(value: &Ratio, style: Style) -> Weight {
    let hundred = Ratio::from_integer(BigInt::from(100));
    let fraction = || (grammar_lang::model::fraction(value), Notation::Fraction);
    let (text, notation) = match style {
        Style::Fraction => fraction(),
        Style::Decimal => exact_decimal(value, 12)
            .map(|t| (t, Notation::Decimal))
            .unwrap_or_else(fraction),
        Style::Percent => exact_decimal(&(value * &hundred), 12)
            .map(|t| (format!("{t}%"), Notation::Percent))
            .unwrap_or_else(fraction),
    };
    Weight {
        text: text.into(),
        value: value.clone(),
        notation,
        location: nowhere(),
    }
}

fn doc_text(lines: &Option<Vec<String>>) -> Option<String> {
    lines.as_ref().map(|l| l.join("\n"))
}

/// Builds a consistent model: every non-relative block sums to exactly 1
/// (unweighted rules share what is left), relative blocks are normalised.
fn build(spec: &ModelSpec) -> Grammar {
    let mut g = Grammar::new();
    let n = spec.names.len();
    let ids: Vec<_> = spec.names.iter().map(|name| g.intern_nt(name)).collect();
    g.name = spec.name.clone();
    g.start = spec.start.map(|i| ids[i]);
    for (b, block) in spec.blocks.iter().enumerate() {
        // One rule per right-hand side: duplicates are a different matter.
        let mut seen = BTreeSet::new();
        let mut rules = Vec::new();
        for rule in &block.rules {
            let rhs: Vec<Sym> = rule
                .rhs
                .iter()
                .map(|item| match item {
                    ItemSpec::N(i) => Sym::N(ids[i % n]),
                    ItemSpec::T(w) => Sym::T(g.intern_term(w)),
                })
                .collect();
            if seen.insert(rhs.clone()) {
                rules.push((rule, rhs));
            }
        }
        let unweighted = block.unweighted.min(rules.len());
        let weighted = rules.len() - unweighted;
        let parts: u32 = rules[..weighted].iter().map(|(r, _)| r.part).sum();
        let (denominator, left) = if block.relative {
            (parts, 0)
        } else if unweighted > 0 {
            (parts + block.left, block.left)
        } else {
            (parts, 0)
        };
        for (k, (rule, rhs)) in rules.into_iter().enumerate() {
            let (weight, probability) = if block.relative {
                // Relative weights as written: part/4, normalised by their sum.
                let value = ratio(rule.part, 4);
                (
                    Some(written(&value, rule.style)),
                    ratio(rule.part, denominator),
                )
            } else if k < weighted {
                let p = ratio(rule.part, denominator);
                (Some(written(&p, rule.style)), p)
            } else {
                (None, ratio(left, denominator * unweighted as u32))
            };
            g.push_rule(Rule {
                lhs: ids[b],
                rhs,
                weight,
                p: grammar_lang::model::to_f64(&probability),
                probability,
                location: nowhere(),
                doc: doc_text(&rule.doc),
            });
        }
        g.nonterminals[ids[b].index()].block = Some(BlockInfo {
            name: nowhere(),
            location: nowhere(),
            relative: block.relative,
            doc: doc_text(&block.doc),
            mass: Ratio::one(),
            approximate: None,
        });
    }
    for test in &spec.tests {
        g.tests.push(GrammarTest {
            name: test.name.clone(),
            location: nowhere(),
            doc: doc_text(&test.doc),
            cases: test
                .cases
                .iter()
                .map(|(accept, sentence, tree)| TestCase {
                    expect: if *accept {
                        Expectation::Accept
                    } else {
                        Expectation::Reject
                    },
                    sentence: sentence.clone(),
                    tree: tree.clone(),
                    location: nowhere(),
                })
                .collect(),
        });
    }
    g
}

/// A rule without its places: right-hand side as text, probability, weight value, doc.
type RuleFacts = (Vec<String>, Ratio, Option<Ratio>, Option<String>);
/// A test case without its place: expectation, sentence, tree.
type CaseFacts = (bool, String, Option<Tree>);

/// The facts of a model that printing must preserve, free of ids and spans.
#[derive(Debug, PartialEq)]
struct Facts {
    name: Option<String>,
    start: Option<String>,
    /// Block name → (relative, doc, rules in order).
    blocks: BTreeMap<String, (bool, Option<String>, Vec<RuleFacts>)>,
    tests: Vec<(String, Option<String>, Vec<CaseFacts>)>,
}

fn facts(g: &Grammar) -> Facts {
    let mut blocks = BTreeMap::new();
    for id in g.nt_ids() {
        let nt = g.nonterminal(id);
        let Some(block) = &nt.block else { continue };
        let rules = g
            .rules_of(id)
            .map(|(_, rule)| {
                let rhs = rule
                    .rhs
                    .iter()
                    .map(|&sym| match sym {
                        Sym::N(n) => format!("N {}", g.nt_name(n)),
                        Sym::T(t) => format!("T {}", g.term_text(t)),
                    })
                    .collect();
                (
                    rhs,
                    rule.probability.clone(),
                    rule.weight.as_ref().map(|w| w.value.clone()),
                    rule.doc.clone(),
                )
            })
            .collect();
        blocks.insert(nt.name.clone(), (block.relative, block.doc.clone(), rules));
    }
    Facts {
        name: g.name.clone(),
        start: g.start.map(|s| g.nt_name(s).to_string()),
        blocks,
        tests: g
            .tests
            .iter()
            .map(|t| {
                let cases = t
                    .cases
                    .iter()
                    .map(|c| {
                        (
                            c.expect == Expectation::Accept,
                            c.sentence.clone(),
                            c.tree.clone(),
                        )
                    })
                    .collect();
                (t.name.clone(), t.doc.clone(), cases)
            })
            .collect(),
    }
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn a_printed_model_reads_back_as_the_same_model(spec in model_spec()) {
        let model = build(&spec);
        let text = print_grammar(&model);
        let analysis = analyze_text(&text);
        let syntax_errors: Vec<_> = analysis
            .diagnostics
            .iter()
            .filter(|d| matches!(d.code, Code::Syntax | Code::BadWeight | Code::EmptyRule))
            .map(|d| &d.message)
            .collect();
        prop_assert!(syntax_errors.is_empty(), "printed text does not read back:\n{text}\n{syntax_errors:?}");
        prop_assert_eq!(facts(&analysis.grammar), facts(&model), "printed text:\n{}", text);
        // Printing is a fixed point after one round.
        prop_assert_eq!(print_grammar(&analysis.grammar), text);
    }
}

// ---------------------------------------------------------------------------
// The example grammars
// ---------------------------------------------------------------------------

const FERRY: &str = include_str!("../../examples/ferry_kiosk.trellis");
const FERRY_LEXICON: &str = include_str!("../../examples/ferry_lexicon.trellis");
const GREENHOUSE: &str = include_str!("../../examples/greenhouse_voice.trellis");
const BROKEN: &str = include_str!("../../examples/broken.trellis");
const BROKEN_CYCLE: &str = include_str!("../../examples/broken_cycle.trellis");
const BROKEN_NO_START: &str = include_str!("../../examples/broken_no_start.trellis");
const BROKEN_UNKNOWN_START: &str = include_str!("../../examples/broken_unknown_start.trellis");
const BROKEN_PRECISION: &str = include_str!("../../examples/broken_precision.trellis");

/// Analyses `examples/<file>` with the other example files loadable.
fn analyze_example(file: &str, text: &str) -> Analysis {
    let loader = MemoryLoader::new()
        .with("examples/ferry_lexicon.trellis", FERRY_LEXICON)
        .with("examples/broken.trellis", BROKEN)
        .with("examples/broken_cycle.trellis", BROKEN_CYCLE);
    analyze(
        Path::new(&format!("examples/{file}")),
        text,
        &loader,
        &Config::default(),
    )
}

#[test]
fn the_example_grammars_are_clean_under_every_check() {
    for (file, text) in [
        ("ferry_kiosk.trellis", FERRY),
        ("greenhouse_voice.trellis", GREENHOUSE),
    ] {
        let analysis = analyze_example(file, text);
        let findings: Vec<String> = analysis
            .diagnostics
            .iter()
            .map(|d| format!("{}: {}", d.code, d.message))
            .collect();
        assert!(findings.is_empty(), "{file}: {findings:#?}");
        assert!(analysis.grammar.rules.len() >= 80, "{file} has 80+ rules");
        assert!(!analysis.grammar.tests.is_empty(), "{file} has tests");
    }
}

#[test]
fn the_example_grammars_survive_a_print_and_reanalysis_unchanged() {
    for (file, text) in [
        ("ferry_kiosk.trellis", FERRY),
        ("greenhouse_voice.trellis", GREENHOUSE),
    ] {
        let first = analyze_example(file, text);
        // The printed grammar is self-contained: the lexicon is inlined.
        let printed = print_grammar(&first.grammar);
        let second = analyze_text(&printed);
        assert_eq!(facts(&second.grammar), facts(&first.grammar), "{file}");
        assert!(
            second.diagnostics.is_empty(),
            "{file}: {:#?}",
            second.diagnostics
        );
        // Exactness survives the trip: every non-relative block still sums to 1.
        for id in second.grammar.nt_ids() {
            let nt = second.grammar.nonterminal(id);
            if nt.block.as_ref().is_some_and(|b| !b.relative) {
                let sum = second
                    .grammar
                    .rules_of(id)
                    .fold(Ratio::zero(), |sum, (_, r)| sum + &r.probability);
                assert_eq!(sum, Ratio::one(), "{file}: block {}", nt.name);
            }
        }
    }
}

/// Codes that the static analysis of `grammar-lang` does not produce: the
/// configuration file's own errors, and `leaky`, which the engine's
/// consistency analysis reports.
const NOT_FROM_STATIC_CHECKS: &[Code] = &[Code::Config, Code::Leaky, Code::Uncovered];

#[test]
fn the_broken_examples_show_every_static_diagnostic_code() {
    let mut shown = BTreeSet::new();
    for (file, text) in [
        ("broken.trellis", BROKEN),
        ("broken_no_start.trellis", BROKEN_NO_START),
        ("broken_unknown_start.trellis", BROKEN_UNKNOWN_START),
        ("broken_precision.trellis", BROKEN_PRECISION),
    ] {
        shown.extend(
            analyze_example(file, text)
                .diagnostics
                .iter()
                .map(|d| d.code),
        );
    }
    let expected: BTreeSet<Code> = Code::ALL
        .iter()
        .copied()
        .filter(|c| !NOT_FROM_STATIC_CHECKS.contains(c))
        .collect();
    let missing: Vec<_> = expected.difference(&shown).collect();
    assert!(
        missing.is_empty(),
        "codes not shown by the broken examples: {missing:?}"
    );
}

// ---------------------------------------------------------------------------
// Printing whatever a text lowers to
// ---------------------------------------------------------------------------

/// Grammar-shaped text: declarations and blocks from well-formed and broken pieces.
fn grammar_soup() -> impl Strategy<Value = String> {
    let line = prop_oneof![
        select(vec![
            "0.5", "1/3", "25%", "-1/4", "0", "1/0", "2", "", "", ""
        ])
        .prop_flat_map(|w| {
            proptest::collection::vec(
                select(vec!["A", "B", "C", "\"x\"", "\"y z\"", "\"\\\"\"", "\"é\""]),
                0..4,
            )
            .prop_map(move |items| format!("  {w} {}", items.join(" ")))
        }),
        select(vec!["  |", "  \"a\" | \"b\"", "  ## doc", "  # c", "  @"]).prop_map(str::to_string),
    ];
    let block = (
        select(vec!["A", "B", "C"]),
        any::<bool>(),
        proptest::collection::vec(line, 0..5),
    )
        .prop_map(|(name, relative, lines)| {
            format!(
                "## {name} doc\n{name}{} {{\n{}\n}}\n",
                if relative { " relative" } else { "" },
                lines.join("\n")
            )
        });
    (
        select(vec![
            "",
            "start A\n",
            "start B\n",
            "start A\nstart C\n",
            "grammar g\nstart A\n",
        ]),
        proptest::collection::vec(block, 0..5),
        select(vec![
            "",
            "test \"t\" {\n  accept \"x\" as (A \"x\")\n  reject \"y\"\n}\n",
            "}\n",
        ]),
    )
        .prop_map(|(head, blocks, tail)| format!("{head}{}{tail}", blocks.concat()))
}

/// The facts that survive printing any lowered model: names, right-hand
/// sides and exact probabilities (a weight may be written differently, e.g.
/// an unweighted rule left without mass is written with weight 0).
fn probabilities(g: &Grammar) -> BTreeMap<String, Vec<(Vec<String>, Ratio)>> {
    facts(g)
        .blocks
        .into_iter()
        .map(|(name, (_, _, rules))| {
            let rules = rules.into_iter().map(|(rhs, p, _, _)| (rhs, p)).collect();
            (name, rules)
        })
        .collect()
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn any_lowered_grammar_prints_to_text_with_the_same_probabilities(text in grammar_soup()) {
        let first = analyze_text(&text).grammar;
        let printed = print_grammar(&first);
        let second = analyze_text(&printed);
        prop_assert_eq!(
            probabilities(&second.grammar),
            probabilities(&first),
            "source:\n{}\nprinted:\n{}",
            text,
            printed
        );
        prop_assert_eq!(facts(&second.grammar).tests, facts(&first).tests);
    }
}

// ---------------------------------------------------------------------------
// Formatting
// ---------------------------------------------------------------------------

mod common;

use common::format_checks::check_formatting;
use grammar_lang::FormatOptions;

/// Lays a printed grammar out again at random: other spaces and
/// indentation, blank lines, comments and `##` lines sprinkled above and
/// after lines, alternatives joined with `|` (sometimes with a leading
/// `|`), first lines pulled onto `{` and `}` onto last lines. `dice` drives
/// every choice. The result still has no syntax errors.
fn scramble(text: &str, dice: &[u8]) -> String {
    let mut dice = dice.iter().cycle().copied();
    let mut roll = move |n: u8| dice.next().unwrap_or(0) % n;
    let lines: Vec<&str> = text.lines().collect();
    let kind = |line: &str| {
        let t = line.trim();
        if t.is_empty() {
            'b'
        } else if t.starts_with('#') {
            'c'
        } else if t == "}" {
            '}'
        } else if t.ends_with('{') {
            if t.starts_with("test ") {
                't'
            } else {
                '{'
            }
        } else if line.starts_with("  ") {
            'a'
        } else {
            'd'
        }
    };
    let spaces = [" ", "  ", "\t", " \t "];
    let mut out = String::new();
    let mut in_test = false;
    let mut joined = false;
    for (i, line) in lines.iter().enumerate() {
        let k = kind(line);
        let next = lines.get(i + 1).map_or('b', |l| kind(l));
        if !joined {
            match roll(10) {
                0 => out.push('\n'),
                1 => out.push_str("  # a note\n"),
                2 => out.push_str("## a doc line?\n"),
                _ => {}
            }
            out.push_str(["", "  ", "    ", "\t"][roll(4) as usize]);
            if k == 'a' && !in_test && roll(6) == 0 {
                out.push_str("| ");
            }
        }
        match k {
            't' => in_test = true,
            '}' => in_test = false,
            _ => {}
        }
        let trimmed = line.trim();
        for token in lexer::lex(trimmed) {
            match token.kind {
                lexer::TokenKind::Whitespace => out.push_str(spaces[roll(4) as usize]),
                _ => out.push_str(token.span.text(trimmed)),
            }
        }
        let code = !matches!(k, 'b' | 'c');
        if code && roll(5) == 0 {
            out.push_str([" # after", "   ## not a doc", "\t#"][roll(3) as usize]);
            out.push('\n');
            joined = false;
            continue;
        }
        joined = match (k, next) {
            ('a', 'a') if !in_test && roll(3) == 0 => {
                out.push_str(" | ");
                true
            }
            ('{' | 't', 'a') | ('a', '}') if roll(3) == 0 => {
                out.push(' ');
                true
            }
            _ => false,
        };
        if !joined {
            out.push('\n');
        }
    }
    out
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(256))]

    #[test]
    fn formatting_a_scrambled_grammar_is_idempotent_and_keeps_model_and_comments(
        spec in model_spec(),
        dice in proptest::collection::vec(any::<u8>(), 1..64),
        width in prop_oneof![Just(100usize), 20usize..60],
    ) {
        let text = scramble(&print_grammar(&build(&spec)), &dice);
        let errors = syntax::parse(&text).errors;
        prop_assert!(errors.is_empty(), "the scrambled text does not parse:\n{}\n{:?}", text, errors);
        if let Err(problem) = check_formatting(&text, &FormatOptions { width }) {
            return Err(TestCaseError::fail(problem));
        }
    }
}

proptest! {
    // About a third of the soups have syntax errors and are skipped.
    #![proptest_config(ProptestConfig { max_global_rejects: 1 << 20, ..ProptestConfig::with_cases(256) })]

    #[test]
    fn formatting_any_soup_that_parses_keeps_model_and_comments(text in grammar_soup()) {
        prop_assume!(syntax::parse(&text).errors.is_empty());
        if let Err(problem) = check_formatting(&text, &FormatOptions::default()) {
            return Err(TestCaseError::fail(problem));
        }
    }
}
