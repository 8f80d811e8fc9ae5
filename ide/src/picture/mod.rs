//! Tree pictures: a parse tree drawn as SVG, the same picture for the
//! command line (`trellis parse --svg`) and the language server
//! (`trellis.parse` with `picture: true`, shown in editors' webviews).
//!
//! `layout.rs` places the nodes (Reingold–Tilford, words on one
//! baseline); `svg.rs` draws a layout. This file joins them to the
//! grammar: each category's tooltip names the rule it used and that
//! rule's probability (the factor the node contributes to the tree's
//! probability), each word's tooltip its position in the sentence.

mod layout;
mod svg;

pub use layout::{box_width, layout, Layout, Placed, Shape};
pub use svg::{Surface, BOX_HEIGHT, ROW_HEIGHT};

use grammar_lang::syntax::lexer::quote;
use grammar_lang::tree::Tree;
use grammar_lang::Grammar;
use trellis_engine::numbers;
use trellis_engine::parser::ParsedTree;
use trellis_engine::testing::tree_rules;

/// Draws `trees` (a sentence's most probable trees, best first) side by
/// side in one SVG document, each under a caption with its rank and
/// probability. `grammar` is the grammar the trees were parsed with: it
/// supplies each node's rule for the tooltips.
pub fn tree_picture(
    grammar: &Grammar,
    sentence: &str,
    trees: &[ParsedTree],
    surface: Surface,
) -> String {
    let drawings: Vec<svg::Drawing> = trees
        .iter()
        .enumerate()
        .map(|(rank, parsed)| {
            let shape = shape_of(&parsed.tree);
            let layout = layout::layout(&shape);
            let caption = if trees.len() > 1 {
                format!(
                    "#{} p = {}",
                    rank + 1,
                    numbers::probability(parsed.probability)
                )
            } else {
                format!("p = {}", numbers::probability(parsed.probability))
            };
            let tooltips = tooltips(grammar, &parsed.tree, &layout);
            svg::Drawing {
                layout,
                caption,
                tooltips,
            }
        })
        .collect();
    let description = match trees.len() {
        1 => format!("parse tree of \u{201c}{sentence}\u{201d}"),
        n => format!("the {n} most probable parse trees of \u{201c}{sentence}\u{201d}"),
    };
    svg::render(&drawings, &description, surface)
}

/// The tooltips of a tree's nodes in pre-order: a category's rule and
/// probability, a word's position.
fn tooltips(grammar: &Grammar, tree: &Tree, layout: &Layout) -> Vec<String> {
    // A tree from the parser always has its rules; should a caller pass a
    // tree the grammar does not derive, the picture just has no rule tips.
    let rules = tree_rules(grammar, tree).unwrap_or_default();
    let mut rules = rules.into_iter();
    let words = layout.nodes.iter().filter(|n| n.is_word).count();
    let mut word = 0;
    layout
        .nodes
        .iter()
        .map(|node| {
            if node.is_word {
                word += 1;
                format!("\u{201c}{}\u{201d}: word {word} of {words}", node.label)
            } else {
                match rules.next() {
                    Some(id) => {
                        let rule = grammar.rule(id);
                        format!(
                            "{}\nrule probability {}",
                            rule_text(grammar, id),
                            numbers::probability(rule.p)
                        )
                    }
                    None => node.label.clone(),
                }
            }
        })
        .collect()
}

/// `Lhs → A "word" B`, as the grammar writes the rule.
fn rule_text(grammar: &Grammar, id: grammar_lang::model::RuleId) -> String {
    use grammar_lang::model::Sym;
    let rule = grammar.rule(id);
    let mut out = format!("{} \u{2192}", grammar.nt_name(rule.lhs));
    for sym in &rule.rhs {
        out.push(' ');
        match *sym {
            Sym::N(n) => out.push_str(grammar.nt_name(n)),
            Sym::T(t) => out.push_str(&quote(grammar.term_text(t))),
        }
    }
    out
}

/// The shape of a parse tree, built without recursion.
fn shape_of(tree: &Tree) -> Shape {
    enum Step<'a> {
        Enter(&'a Tree),
        Close(&'a str, usize),
    }
    let mut built: Vec<Shape> = Vec::new();
    let mut steps = vec![Step::Enter(tree)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(Tree::Leaf(word)) => built.push(Shape {
                label: word.clone(),
                children: Vec::new(),
            }),
            Step::Enter(Tree::Node { label, children }) => {
                steps.push(Step::Close(label, children.len()));
                steps.extend(children.iter().rev().map(Step::Enter));
            }
            Step::Close(label, n) => {
                let children = built.split_off(built.len() - n);
                built.push(Shape {
                    label: label.to_string(),
                    children,
                });
            }
        }
    }
    built.pop().unwrap_or(Shape {
        label: String::new(),
        children: Vec::new(),
    })
}
