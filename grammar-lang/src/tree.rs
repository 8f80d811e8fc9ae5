//! Parse trees and their labelled-bracket notation.

use crate::syntax::lexer::quote;
use std::fmt;
use std::hash::{Hash, Hasher};

/// How deep the brackets of an expected tree in a `test` block may nest.
/// Deeper brackets are a located `syntax` error and are not read, so that
/// no walk over a tree written by hand (parsing, lowering, judging,
/// printing, formatting, the editor's features) can run out of stack. Hand
/// written trees are a few dozen levels deep; a thousand leaves room for
/// generated ones.
pub const MAX_TREE_DEPTH: usize = 1000;

/// A parse tree: inner nodes carry a non-terminal label, leaves are words.
///
/// A tree the engine finds is as deep as its sentence is long (a chain of
/// `S → A S` rules over thousands of words), so nothing here recurses on
/// the depth: cloning, comparing, hashing, printing, reading the words and
/// dropping all walk the tree with a stack of their own (the derived
/// implementations would recurse once per level and overflow a thread's
/// stack on a deep enough tree).
pub enum Tree {
    Node { label: String, children: Vec<Tree> },
    Leaf(String),
}

impl Tree {
    pub fn node(label: impl Into<String>, children: Vec<Tree>) -> Tree {
        Tree::Node {
            label: label.into(),
            children,
        }
    }

    pub fn leaf(word: impl Into<String>) -> Tree {
        Tree::Leaf(word.into())
    }

    /// Takes a tree apart, for callers that rebuild it: a node's label and
    /// children, or (`Err`) a leaf's word. (`Tree` has a `Drop` of its own,
    /// so its fields cannot be moved out by a pattern.)
    pub fn into_parts(mut self) -> Result<(String, Vec<Tree>), String> {
        match &mut self {
            Tree::Node { label, children } => Ok((std::mem::take(label), std::mem::take(children))),
            Tree::Leaf(word) => Err(std::mem::take(word)),
        }
    }

    pub fn label(&self) -> Option<&str> {
        match self {
            Tree::Node { label, .. } => Some(label),
            Tree::Leaf(_) => None,
        }
    }

    /// The words at the leaves, left to right.
    pub fn words(&self) -> Vec<&str> {
        let mut out = Vec::new();
        let mut stack = vec![self];
        while let Some(tree) = stack.pop() {
            match tree {
                Tree::Leaf(w) => out.push(w.as_str()),
                Tree::Node { children, .. } => stack.extend(children.iter().rev()),
            }
        }
        out
    }

    /// Labelled brackets with terminals quoted, as in `.trellis` tests:
    /// `(Ticket (Kind "day") "ticket")`.
    pub fn to_brackets(&self) -> String {
        let mut out = String::new();
        self.write(&mut out, true);
        out
    }

    /// Labelled brackets with bare terminals, as in plain treebank files.
    pub fn to_treebank(&self) -> String {
        let mut out = String::new();
        self.write(&mut out, false);
        out
    }

    /// Labelled brackets spread over lines for reading: a node whose
    /// children are all words stays on one line, any other node puts each
    /// child on a line of its own, indented by two spaces under it. Every
    /// line starts with `margin`.
    pub fn to_indented(&self, margin: &str) -> String {
        enum Step<'a> {
            /// A tree at a depth, on a new line unless it is the root.
            Tree(&'a Tree, usize, bool),
            Close,
        }
        let mut out = String::new();
        let mut stack = vec![Step::Tree(self, 0, false)];
        while let Some(step) = stack.pop() {
            let Step::Tree(tree, depth, new_line) = step else {
                out.push(')');
                continue;
            };
            if new_line {
                out.push('\n');
            }
            out.push_str(margin);
            for _ in 0..depth {
                out.push_str("  ");
            }
            match tree {
                Tree::Node { label, children } if children.iter().any(|c| c.label().is_some()) => {
                    out.push('(');
                    out.push_str(label);
                    stack.push(Step::Close);
                    stack.extend(
                        children
                            .iter()
                            .rev()
                            .map(|c| Step::Tree(c, depth + 1, true)),
                    );
                }
                _ => tree.write(&mut out, true),
            }
        }
        out
    }

    fn write(&self, out: &mut String, quoted: bool) {
        enum Step<'a> {
            /// A tree, after a space unless it is the first of its siblings.
            Tree(&'a Tree, bool),
            Close,
        }
        let mut stack = vec![Step::Tree(self, false)];
        while let Some(step) = stack.pop() {
            let Step::Tree(tree, space) = step else {
                out.push(')');
                continue;
            };
            if space {
                out.push(' ');
            }
            match tree {
                Tree::Leaf(w) if quoted => out.push_str(&quote(w)),
                Tree::Leaf(w) => out.push_str(w),
                Tree::Node { label, children } => {
                    out.push('(');
                    out.push_str(label);
                    stack.push(Step::Close);
                    stack.extend(children.iter().rev().map(|c| Step::Tree(c, true)));
                }
            }
        }
    }
}

impl Clone for Tree {
    fn clone(&self) -> Tree {
        enum Step<'a> {
            Enter(&'a Tree),
            /// Every child of a node with this label is built: gather them.
            Exit(&'a str, usize),
        }
        let mut work = vec![Step::Enter(self)];
        let mut built: Vec<Tree> = Vec::new();
        while let Some(step) = work.pop() {
            match step {
                Step::Enter(Tree::Leaf(w)) => built.push(Tree::Leaf(w.clone())),
                Step::Enter(Tree::Node { label, children }) => {
                    work.push(Step::Exit(label, children.len()));
                    work.extend(children.iter().rev().map(Step::Enter));
                }
                Step::Exit(label, n) => {
                    let children = built.split_off(built.len() - n);
                    built.push(Tree::node(label, children));
                }
            }
        }
        built.pop().expect("the root is built last")
    }
}

impl PartialEq for Tree {
    fn eq(&self, other: &Tree) -> bool {
        let mut stack = vec![(self, other)];
        while let Some(pair) = stack.pop() {
            match pair {
                (Tree::Leaf(a), Tree::Leaf(b)) if a == b => {}
                (
                    Tree::Node {
                        label: la,
                        children: ca,
                    },
                    Tree::Node {
                        label: lb,
                        children: cb,
                    },
                ) if la == lb && ca.len() == cb.len() => stack.extend(ca.iter().zip(cb)),
                _ => return false,
            }
        }
        true
    }
}

impl Eq for Tree {}

impl Hash for Tree {
    /// The nodes in preorder, each with its label and number of children
    /// (which, with the order, fixes the shape): equal trees hash alike.
    fn hash<H: Hasher>(&self, state: &mut H) {
        let mut stack = vec![self];
        while let Some(tree) = stack.pop() {
            match tree {
                Tree::Leaf(w) => {
                    0u8.hash(state);
                    w.hash(state);
                }
                Tree::Node { label, children } => {
                    1u8.hash(state);
                    label.hash(state);
                    children.len().hash(state);
                    stack.extend(children.iter().rev());
                }
            }
        }
    }
}

impl Drop for Tree {
    /// Takes the children out level by level, so that no node is dropped
    /// while it still holds a subtree.
    fn drop(&mut self) {
        let Tree::Node { children, .. } = self else {
            return;
        };
        if children.iter().all(|c| matches!(c, Tree::Leaf(_))) {
            return;
        }
        let mut stack = std::mem::take(children);
        while let Some(mut tree) = stack.pop() {
            // A node over words only (most nodes: the pre-terminals) drops
            // as it is, without recursion.
            if let Tree::Node { children, .. } = &mut tree {
                if !children.iter().all(|c| matches!(c, Tree::Leaf(_))) {
                    stack.append(children);
                }
            }
        }
    }
}

impl fmt::Debug for Tree {
    /// The labelled brackets, terminals quoted (`(Ticket "day")`): the
    /// derived form would recurse.
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.to_brackets())
    }
}

impl fmt::Display for Tree {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.to_brackets())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn indented_trees_keep_word_only_nodes_on_one_line() {
        let t = Tree::node(
            "Ticket",
            vec![
                Tree::node("Kind", vec![Tree::leaf("day")]),
                Tree::leaf("ticket"),
            ],
        );
        assert_eq!(
            t.to_indented("> "),
            "> (Ticket\n>   (Kind \"day\")\n>   \"ticket\")"
        );
        assert_eq!(Tree::leaf("x").to_indented(""), "\"x\"");
    }

    #[test]
    fn brackets_quote_terminals_only_in_the_language_form() {
        let t = Tree::node(
            "Ticket",
            vec![
                Tree::node("Kind", vec![Tree::leaf("day")]),
                Tree::leaf("ticket"),
            ],
        );
        assert_eq!(t.to_brackets(), r#"(Ticket (Kind "day") "ticket")"#);
        assert_eq!(t.to_treebank(), "(Ticket (Kind day) ticket)");
        assert_eq!(t.words(), vec!["day", "ticket"]);
    }
}
