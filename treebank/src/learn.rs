//! Maximum-likelihood grammars from counted trees.
//!
//! Every node of every (binarized) tree is one use of the rule that
//! rewrites its label as its children; a rule's probability is its count
//! over the count of its left-hand side (the maximum-likelihood estimate of
//! a multinomial; common practice). The grammar is written with the counts
//! themselves as `relative` weights, so it states exactly what was seen.

use crate::names::{escape, is_intermediate};
use grammar_lang::syntax::lexer::quote;
use grammar_lang::tree::Tree;
use std::collections::HashMap;
use std::fmt::Write;

/// One right-hand-side item of a counted rule.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Item {
    Symbol(String),
    Word(String),
}

/// What to say about the learning in the grammar's header.
#[derive(Clone, Debug, Default)]
pub struct LearnOptions {
    /// Lines of the header comment (inputs, options, tree count), without `#`.
    pub header: Vec<String>,
}

/// Rule counts over any number of trees, in memory proportional to the
/// grammar (not to the trees).
#[derive(Clone, Debug, Default)]
pub struct Counts {
    rules: HashMap<String, HashMap<Vec<Item>, u64>>,
    roots: HashMap<String, u64>,
    trees: u64,
}

/// The start symbol when trees have different root labels: a name with
/// `+`, so debinarization dissolves it and each tree keeps its own root.
pub const SHARED_ROOT: &str = "ROOT+";

impl Counts {
    pub fn new() -> Counts {
        Counts::default()
    }

    /// How many trees were counted.
    pub fn trees(&self) -> u64 {
        self.trees
    }

    /// How many distinct rules were seen.
    pub fn rule_count(&self) -> usize {
        self.rules.values().map(HashMap::len).sum()
    }

    /// Counts the rules of one tree whose labels are already trellis names
    /// (a tree from [`crate::binarize`]).
    pub fn add(&mut self, tree: &Tree) {
        self.trees += 1;
        if let Some(root) = tree.label() {
            *self.roots.entry(root.to_string()).or_default() += 1;
        }
        let mut stack = vec![tree];
        while let Some(node) = stack.pop() {
            let Tree::Node { label, children } = node else {
                continue;
            };
            let rhs: Vec<Item> = children
                .iter()
                .map(|c| match c {
                    Tree::Node { label, .. } => Item::Symbol(label.clone()),
                    Tree::Leaf(word) => Item::Word(word.clone()),
                })
                .collect();
            let block = match self.rules.get_mut(label.as_str()) {
                Some(block) => block,
                None => self.rules.entry(label.clone()).or_default(),
            };
            *block.entry(rhs).or_default() += 1;
            stack.extend(children.iter());
        }
    }

    /// The count of a rule (`lhs` and `rhs` as trellis names and words).
    pub fn count(&self, lhs: &str, rhs: &[Item]) -> u64 {
        self.rules
            .get(lhs)
            .and_then(|b| b.get(rhs))
            .copied()
            .unwrap_or(0)
    }

    /// The start symbol: the one root label, or [`SHARED_ROOT`] over all.
    pub fn start(&self) -> Option<String> {
        match self.roots.len() {
            0 => None,
            1 => self.roots.keys().next().cloned(),
            _ => Some(SHARED_ROOT.to_string()),
        }
    }

    /// The learned grammar as trellis source in canonical layout (the
    /// formatter's, as `trellis fmt` writes it): the header comment, the
    /// start symbol, then one `relative` block per symbol — the start
    /// first, the others by name, intermediate symbols after the symbols
    /// they serve — with alternatives by falling count.
    pub fn to_source(&self, options: &LearnOptions) -> String {
        let raw = self.unformatted(options);
        grammar_lang::format(&raw, &grammar_lang::FormatOptions::default()).unwrap_or(raw)
    }

    fn unformatted(&self, options: &LearnOptions) -> String {
        let mut out = String::new();
        for line in &options.header {
            if line.is_empty() {
                out.push_str("#\n");
            } else {
                let _ = writeln!(out, "# {line}");
            }
        }
        if !options.header.is_empty() {
            out.push('\n');
        }
        let Some(start) = self.start() else {
            return out;
        };
        let _ = writeln!(out, "start {start}");
        if start == SHARED_ROOT {
            let mut roots: Vec<(&String, &u64)> = self.roots.iter().collect();
            roots.sort_by(|a, b| b.1.cmp(a.1).then(a.0.cmp(b.0)));
            let _ = writeln!(
                out,
                "\n## Trees of every root label.\n{SHARED_ROOT} relative {{"
            );
            for (root, n) in roots {
                let _ = writeln!(out, "  {n} {root}");
            }
            out.push_str("}\n");
        }
        let mut names: Vec<&String> = self.rules.keys().collect();
        names.sort_by(|a, b| {
            let key = |n: &str| {
                (
                    n != start,
                    is_intermediate(n),
                    n.split('+').next().unwrap_or(n).to_string(),
                )
            };
            key(a).cmp(&key(b)).then(a.cmp(b))
        });
        for name in names {
            let block = &self.rules[name];
            let mut rules: Vec<(&Vec<Item>, &u64)> = block.iter().collect();
            rules.sort_by(|a, b| b.1.cmp(a.1).then(a.0.cmp(b.0)));
            let _ = writeln!(out, "\n{name} relative {{");
            for (rhs, n) in rules {
                let _ = write!(out, "  {n}");
                for item in rhs {
                    match item {
                        Item::Symbol(s) => {
                            out.push(' ');
                            out.push_str(s);
                        }
                        Item::Word(w) => {
                            out.push(' ');
                            out.push_str(&quote(w));
                        }
                    }
                }
                out.push('\n');
            }
            out.push_str("}\n");
        }
        out
    }
}

/// A plain treebank label as a trellis name (for callers that count trees
/// they did not binarize).
pub fn name_of(label: &str) -> String {
    escape(label)
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::read::TreeReader;

    fn trees(text: &str) -> Vec<Tree> {
        TreeReader::new(text.as_bytes())
            .map(Result::unwrap)
            .collect()
    }

    #[test]
    fn counts_become_relative_weights_by_falling_count() {
        let mut counts = Counts::new();
        for t in trees("(S (A x) (B y)) (S (A x) (B y)) (S (A x)) (S (A x) (B y))") {
            counts.add(&t);
        }
        assert_eq!(counts.trees(), 4);
        let text = counts.to_source(&LearnOptions {
            header: vec!["learned from 4 trees".into()],
        });
        assert_eq!(
            text,
            "# learned from 4 trees\n\nstart S\n\nS relative {\n  3  A B\n  1  A\n}\n\n\
             A relative {\n  4  \"x\"\n}\n\nB relative {\n  3  \"y\"\n}\n"
        );
    }

    #[test]
    fn trees_with_different_roots_share_a_start_that_dissolves() {
        let mut counts = Counts::new();
        for t in trees("(S (A x)) (FRAG (A x)) (S (A y))") {
            counts.add(&t);
        }
        assert_eq!(counts.start().as_deref(), Some(SHARED_ROOT));
        let text = counts.to_source(&LearnOptions::default());
        assert!(
            text.contains("ROOT+ relative {\n  2  S\n  1  FRAG\n}"),
            "{text}"
        );
    }
}
