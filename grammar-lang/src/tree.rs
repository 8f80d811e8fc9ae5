//! Parse trees and their labelled-bracket notation.

use crate::syntax::lexer::quote;
use std::fmt;

/// How deep the brackets of an expected tree in a `test` block may nest.
/// Deeper brackets are a located `syntax` error and are not read, so that
/// no walk over a tree written by hand (parsing, lowering, judging,
/// printing, formatting, the editor's features) can run out of stack. Hand
/// written trees are a few dozen levels deep; a thousand leaves room for
/// generated ones.
pub const MAX_TREE_DEPTH: usize = 1000;

/// A parse tree: inner nodes carry a non-terminal label, leaves are words.
#[derive(Clone, Debug, PartialEq, Eq, Hash)]
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

    pub fn label(&self) -> Option<&str> {
        match self {
            Tree::Node { label, .. } => Some(label),
            Tree::Leaf(_) => None,
        }
    }

    /// The words at the leaves, left to right.
    pub fn words(&self) -> Vec<&str> {
        let mut out = Vec::new();
        self.collect_words(&mut out);
        out
    }

    fn collect_words<'a>(&'a self, out: &mut Vec<&'a str>) {
        match self {
            Tree::Leaf(w) => out.push(w),
            Tree::Node { children, .. } => children.iter().for_each(|c| c.collect_words(out)),
        }
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
        let mut out = String::new();
        self.write_indented(&mut out, margin, 0);
        out
    }

    fn write_indented(&self, out: &mut String, margin: &str, depth: usize) {
        out.push_str(margin);
        for _ in 0..depth {
            out.push_str("  ");
        }
        match self {
            Tree::Node { label, children } if children.iter().any(|c| c.label().is_some()) => {
                out.push('(');
                out.push_str(label);
                for c in children {
                    out.push('\n');
                    c.write_indented(out, margin, depth + 1);
                }
                out.push(')');
            }
            _ => self.write(out, true),
        }
    }

    fn write(&self, out: &mut String, quoted: bool) {
        match self {
            Tree::Leaf(w) if quoted => out.push_str(&quote(w)),
            Tree::Leaf(w) => out.push_str(w),
            Tree::Node { label, children } => {
                out.push('(');
                out.push_str(label);
                for c in children {
                    out.push(' ');
                    c.write(out, quoted);
                }
                out.push(')');
            }
        }
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
