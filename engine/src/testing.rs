//! Running the `test` blocks written in a grammar.
//!
//! A case is judged as the language defines it:
//! * `accept S` holds when S has at least one parse;
//! * `reject S` holds when it has none;
//! * `accept S as TREE` holds when TREE is the most probable parse of S.
//!
//! The last is decided exactly, not by comparing floats: the expected tree
//! is scored in exact rationals (the product of its rules' probabilities,
//! [`tree_probability`]) and so is the tree the Viterbi pass found. The case
//! holds when the expected tree is at least as probable as the found one,
//! so a tie between two best trees (where the parser's pick is arbitrary)
//! does not fail a test, and a float rounding in the chart cannot either.
//!
//! A failure says why in the grammar's own terms: the explanation of a
//! missing parse, the tree that should not exist, or where the expected and
//! the found tree part ways and how probable each is.
//!
//! The runner works case by case ([`run_case`]) so that callers can stop
//! between cases or spread them over threads.

use crate::explain::Explanation;
use crate::parser::{ParseError, ParseOptions, ParsedTree, Parser};
use grammar_lang::model::{fraction, to_f64, Expectation, Grammar, Ratio, RuleId, Sym, TestCase};
use grammar_lang::syntax::lexer::quote;
use grammar_lang::tree::Tree;
use num_traits::One;

/// What became of one case.
#[derive(Clone, Debug, PartialEq)]
pub enum CaseOutcome {
    /// The case holds. `best` is the most probable tree for an accepted
    /// sentence (`None` for a rejected one); `tied` is set when an expected
    /// tree holds by tying with a different tree the parser picked.
    Passed {
        best: Option<ParsedTree>,
        tied: bool,
    },
    Failed(Box<Failure>),
}

impl CaseOutcome {
    fn failed(failure: Failure) -> CaseOutcome {
        CaseOutcome::Failed(Box::new(failure))
    }

    pub fn passed(&self) -> bool {
        matches!(self, CaseOutcome::Passed { .. })
    }

    /// Why the case does not hold, if it does not.
    pub fn failure(&self) -> Option<&Failure> {
        match self {
            CaseOutcome::Failed(failure) => Some(failure),
            CaseOutcome::Passed { .. } => None,
        }
    }

    /// The most probable tree the parser found, whether the case held or
    /// not (`None` when the sentence does not parse).
    pub fn best(&self) -> Option<&ParsedTree> {
        match self {
            CaseOutcome::Passed { best, .. } => best.as_ref(),
            CaseOutcome::Failed(failure) => failure.found(),
        }
    }

    /// Whether the case held only by a tie with another tree.
    pub fn tied(&self) -> bool {
        matches!(self, CaseOutcome::Passed { tied: true, .. })
    }

    /// Why the case failed as readable lines (none when it held).
    pub fn reasons(&self) -> Vec<String> {
        self.failure().map(Failure::render).unwrap_or_default()
    }
}

/// Why a case does not hold.
#[derive(Clone, Debug, PartialEq)]
pub enum Failure {
    /// `accept`, but the sentence has no parse.
    NoParse { explanation: Option<Explanation> },
    /// `reject`, but the sentence parses; its most probable tree.
    UnexpectedParse { best: ParsedTree },
    /// `accept … as TREE`, but the most probable parse is another tree.
    OtherTree {
        expected: Tree,
        found: ParsedTree,
        /// The exact probability of `found`.
        found_probability: Ratio,
        /// What the grammar makes of the expected tree.
        standing: Standing,
        /// The first place where the two trees differ: (expected, found)
        /// subtrees at the same position.
        difference: Option<(Tree, Tree)>,
    },
    /// The sentence could not be analysed at all (empty, or too long for
    /// the chart limit).
    NotAnalysed(ParseError),
}

/// What the grammar makes of a tree written in a test.
#[derive(Clone, Debug, PartialEq)]
pub enum Standing {
    /// A tree of the grammar; the exact probability of its best derivation.
    Derivable { probability: Ratio },
    /// Not a tree of the grammar: `reason` names the first node no rule
    /// accounts for.
    NotDerivable { reason: String },
}

/// Runs one case. `max_chart_bytes` bounds the chart as in
/// [`ParseOptions::max_chart_bytes`].
pub fn run_case(
    parser: &Parser,
    grammar: &Grammar,
    case: &TestCase,
    max_chart_bytes: u64,
) -> CaseOutcome {
    run_case_until(parser, grammar, case, max_chart_bytes, &|| false)
}

/// [`run_case`], giving up as [`Parser::parse_until`] does when `stop`
/// says so: the case then fails as not analysed ([`ParseError::Stopped`]).
pub fn run_case_until(
    parser: &Parser,
    grammar: &Grammar,
    case: &TestCase,
    max_chart_bytes: u64,
    stop: &dyn Fn() -> bool,
) -> CaseOutcome {
    let words = case.words();
    let best = match parser.best_tree_until(&words, max_chart_bytes, stop) {
        Ok(best) => best,
        Err(e) => return CaseOutcome::failed(Failure::NotAnalysed(e)),
    };
    match (case.expect, best) {
        (Expectation::Reject, None) => CaseOutcome::Passed {
            best: None,
            tied: false,
        },
        (Expectation::Reject, Some(best)) => CaseOutcome::failed(Failure::UnexpectedParse { best }),
        (Expectation::Accept, None) => {
            let options = ParseOptions {
                kbest: 0,
                max_chart_bytes,
                count_parses: false,
                explain: true,
                ..ParseOptions::default()
            };
            let explanation = parser
                .parse_until(&words, &options, stop)
                .ok()
                .and_then(|outcome| outcome.explanation);
            CaseOutcome::failed(Failure::NoParse { explanation })
        }
        (Expectation::Accept, Some(best)) => match &case.tree {
            None => CaseOutcome::Passed {
                best: Some(best),
                tied: false,
            },
            Some(expected) if *expected == best.tree => CaseOutcome::Passed {
                best: Some(best),
                tied: false,
            },
            Some(expected) => judge_tree(grammar, &words, expected, best),
        },
    }
}

/// `accept S as TREE` where the parser's best tree is not TREE.
fn judge_tree(
    grammar: &Grammar,
    words: &[&str],
    expected: &Tree,
    found: ParsedTree,
) -> CaseOutcome {
    let standing = standing(grammar, words, expected);
    // The found tree comes from the grammar's own rules, so it always scores;
    // zero is only a fallback that keeps the comparison meaningful.
    let found_probability =
        tree_probability(grammar, &found.tree).unwrap_or_else(|_| Ratio::from_integer(0.into()));
    if let Standing::Derivable { probability } = &standing {
        if *probability >= found_probability {
            return CaseOutcome::Passed {
                best: Some(found),
                tied: true,
            };
        }
    }
    let difference = first_difference(expected, &found.tree);
    CaseOutcome::failed(Failure::OtherTree {
        expected: expected.clone(),
        found,
        found_probability,
        standing,
        difference,
    })
}

/// Whether `tree` is a tree of `grammar` for `words`, rooted in the start
/// symbol, and how probable it is.
pub fn standing(grammar: &Grammar, words: &[&str], tree: &Tree) -> Standing {
    let leaves = tree.words();
    if leaves != words {
        return Standing::NotDerivable {
            reason: format!(
                "its words are {} but the sentence is {}",
                quote(&leaves.join(" ")),
                quote(&words.join(" "))
            ),
        };
    }
    let start = grammar.start.map(|s| grammar.nt_name(s));
    match (tree.label(), start) {
        (Some(root), Some(start)) if root != start => {
            return Standing::NotDerivable {
                reason: format!("its root is {root}, not the start symbol {start}"),
            }
        }
        _ => {}
    }
    match tree_probability(grammar, tree) {
        Ok(probability) => Standing::Derivable { probability },
        Err(reason) => Standing::NotDerivable { reason },
    }
}

/// The exact probability of `tree`'s best derivation in `grammar`: the
/// product over its nodes of the probability of the rule that rewrites the
/// node's label as its children (the most probable such rule, should a
/// block list the same alternative twice). `Err` says which node no rule
/// accounts for.
///
/// Iterative, so arbitrarily deep trees are fine.
pub fn tree_probability(grammar: &Grammar, tree: &Tree) -> Result<Ratio, String> {
    let mut probability = Ratio::one();
    for rule in tree_rules(grammar, tree)? {
        probability *= &grammar.rule(rule).probability;
    }
    Ok(probability)
}

/// The rule used at each node of `tree` (in pre-order, once per node): the
/// rule of `grammar` that rewrites the node's label as its children, the
/// most probable one should a block list the same alternative twice (the
/// one a most probable parse uses). `Err` says which node no rule accounts
/// for.
///
/// Iterative, so arbitrarily deep trees are fine.
pub fn tree_rules(grammar: &Grammar, tree: &Tree) -> Result<Vec<RuleId>, String> {
    let mut rules = Vec::new();
    let mut stack = vec![tree];
    while let Some(node) = stack.pop() {
        let Tree::Node { label, children } = node else {
            // Words are accounted for by the rule of their parent.
            continue;
        };
        let Some(lhs) = grammar
            .nt(label)
            .filter(|&n| grammar.nonterminal(n).is_defined())
        else {
            return Err(format!("the grammar has no block named `{label}`"));
        };
        let mut rhs = Vec::with_capacity(children.len());
        for child in children {
            let sym = match child {
                Tree::Leaf(word) => grammar.word_term(word).map(Sym::T),
                Tree::Node { label, .. } => grammar.nt(label).map(Sym::N),
            };
            let Some(sym) = sym else {
                return Err(format!("no rule {}", rule_text(label, children)));
            };
            rhs.push(sym);
        }
        let best = grammar
            .rules_of(lhs)
            .filter(|(_, rule)| rule.rhs == rhs)
            .max_by(|(_, a), (_, b)| a.probability.cmp(&b.probability));
        match best {
            Some((id, _)) => rules.push(id),
            None => return Err(format!("no rule {}", rule_text(label, children))),
        }
        stack.extend(children.iter().rev());
    }
    Ok(rules)
}

/// `Label → child child …` as written in the grammar.
fn rule_text(label: &str, children: &[Tree]) -> String {
    let mut out = format!("{label} →");
    for child in children {
        out.push(' ');
        match child {
            Tree::Leaf(word) => out.push_str(&quote(word)),
            Tree::Node { label, .. } => out.push_str(label),
        }
    }
    out
}

/// The outermost pair of subtrees at the same position where `a` and `b`
/// differ (a node differs when its label or its children's labels differ).
pub fn first_difference(a: &Tree, b: &Tree) -> Option<(Tree, Tree)> {
    if a == b {
        return None;
    }
    let (mut a, mut b) = (a, b);
    loop {
        match (a, b) {
            (
                Tree::Node {
                    label: la,
                    children: ca,
                },
                Tree::Node {
                    label: lb,
                    children: cb,
                },
            ) if la == lb
                && ca.len() == cb.len()
                && ca.iter().zip(cb).all(|(x, y)| same_top(x, y)) =>
            {
                // Same node and same child labels: the difference is below
                // the first child that differs.
                match ca.iter().zip(cb).find(|(x, y)| x != y) {
                    Some((x, y)) => (a, b) = (x, y),
                    None => return None,
                }
            }
            _ => return Some((a.clone(), b.clone())),
        }
    }
}

fn same_top(a: &Tree, b: &Tree) -> bool {
    match (a, b) {
        (Tree::Leaf(x), Tree::Leaf(y)) => x == y,
        (Tree::Node { label: x, .. }, Tree::Node { label: y, .. }) => x == y,
        _ => false,
    }
}

/// A probability for people: the exact fraction when it is short, and a
/// decimal.
fn probability_text(p: &Ratio) -> String {
    let exact = fraction(p);
    let float = to_f64(p);
    if exact.len() <= 24 {
        format!("{exact} ≈ {}", crate::numbers::probability(float))
    } else {
        format!("≈ {}", crate::numbers::probability(float))
    }
}

impl Failure {
    /// The most probable tree the parser found, when the sentence parses.
    pub fn found(&self) -> Option<&ParsedTree> {
        match self {
            Failure::UnexpectedParse { best } => Some(best),
            Failure::OtherTree { found, .. } => Some(found),
            Failure::NoParse { .. } | Failure::NotAnalysed(_) => None,
        }
    }

    /// The failure as readable lines (no trailing newlines).
    pub fn render(&self) -> Vec<String> {
        match self {
            Failure::NoParse { explanation } => {
                let mut lines = vec!["expected a parse, but the sentence has none".to_string()];
                if let Some(e) = explanation {
                    lines.extend(e.render());
                }
                lines
            }
            Failure::UnexpectedParse { best } => vec![
                "expected no parse, but the sentence parses; its most probable tree:".to_string(),
                format!(
                    "{}  (p ≈ {})",
                    best.tree.to_brackets(),
                    crate::numbers::probability(best.probability)
                ),
            ],
            Failure::OtherTree {
                expected,
                found,
                found_probability,
                standing,
                difference,
            } => {
                let mut lines = vec![
                    "the most probable parse is another tree".to_string(),
                    format!("expected: {}", expected.to_brackets()),
                    format!(
                        "found:    {}  (p = {})",
                        found.tree.to_brackets(),
                        probability_text(found_probability)
                    ),
                ];
                match standing {
                    Standing::Derivable { probability } => lines.push(format!(
                        "the expected tree is a tree of the grammar, less probable: p = {}",
                        probability_text(probability)
                    )),
                    Standing::NotDerivable { reason } => lines.push(format!(
                        "the expected tree is not a tree of the grammar: {reason}"
                    )),
                }
                if let Some((want, got)) = difference {
                    if want != expected || got != &found.tree {
                        lines.push(format!(
                            "they part at: expected {} where the parse has {}",
                            want.to_brackets(),
                            got.to_brackets()
                        ));
                    }
                }
                lines
            }
            Failure::NotAnalysed(e) => vec![format!("the sentence cannot be analysed: {e}")],
        }
    }
}
