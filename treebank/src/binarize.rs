//! Binarization with horizontal and vertical markovization, and its exact
//! inverse.
//!
//! A node with more than two children is factored to the right: `X → c1
//! c2 … cn` becomes `X → c1 I1`, `I1 → c2 I2`, …, `I(n−2) → c(n−1) cn`
//! (unary and binary nodes are kept as they are). What an intermediate
//! symbol `Ik` remembers decides how much the learned grammar generalises:
//!
//! * **lossless**: the children still to come, `c(k+1) … cn` — the
//!   learned grammar generates exactly the treebank's n-ary rules, with
//!   their probabilities;
//! * **horizontal order h** (Klein and Manning 2003, "Accurate
//!   unlexicalized parsing", §2): only the last `h` children generated,
//!   `c(k−h+1) … ck`, so rules never seen whole can be built from seen
//!   pieces.
//!
//! **Vertical order v** annotates each phrasal node (one with a node among
//! its children) with its `v − 1` nearest ancestors' labels (Johnson 1998,
//! "PCFG models of linguistic tree representations": parent annotation is
//! v = 2). Names follow `names.rs`.

use crate::names::{annotated, escape, is_intermediate, label_of};
use grammar_lang::tree::Tree;

/// How to binarize.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Markov {
    /// Siblings an intermediate symbol remembers; `None` for lossless.
    pub horizontal: Option<usize>,
    /// 1 = no annotation, 2 = parent, 3 = parent and grandparent, …
    pub vertical: usize,
}

impl Markov {
    pub const LOSSLESS: Markov = Markov {
        horizontal: None,
        vertical: 1,
    };
}

/// The name of a child in an intermediate symbol's sibling list: its
/// category, or for a word `_word_` and the escaped word.
fn sibling_name(child: &Tree) -> String {
    match child {
        Tree::Node { label, .. } => escape(label),
        Tree::Leaf(word) => format!("_word_{}", escape(word)),
    }
}

/// The binarized, annotated tree of `tree`, its labels trellis names.
/// Iterative: trees of any depth.
pub fn binarize(tree: &Tree, how: Markov) -> Tree {
    enum Step<'a> {
        /// A node to convert, with its ancestors' escaped labels (nearest first).
        Enter(&'a Tree, Vec<String>),
        /// Children converted; build the node.
        Close(&'a Tree, String),
    }
    let mut built: Vec<Tree> = Vec::new();
    let mut steps = vec![Step::Enter(tree, Vec::new())];
    let keep = how.vertical.saturating_sub(1);
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(Tree::Leaf(word), _) => built.push(Tree::leaf(word.clone())),
            Step::Enter(node @ Tree::Node { label, children }, ancestors) => {
                let escaped = escape(label);
                let phrasal = children.iter().any(|c| c.label().is_some());
                let name = if phrasal && keep > 0 {
                    let above: Vec<&str> =
                        ancestors.iter().take(keep).map(String::as_str).collect();
                    annotated(&escaped, &above)
                } else {
                    escaped.clone()
                };
                steps.push(Step::Close(node, name));
                let mut below = Vec::with_capacity(keep);
                if keep > 0 {
                    below.push(escaped);
                    below.extend(ancestors.into_iter().take(keep - 1));
                }
                for child in children.iter().rev() {
                    steps.push(Step::Enter(child, below.clone()));
                }
            }
            Step::Close(Tree::Node { children, .. }, name) => {
                let mut converted = built.split_off(built.len() - children.len());
                if converted.len() <= 2 {
                    built.push(Tree::node(name, converted));
                    continue;
                }
                let siblings: Vec<String> = children.iter().map(sibling_name).collect();
                // Build from the right: the last intermediate holds the last two.
                let n = converted.len();
                let last = converted.pop().expect("more than two children");
                let before = converted.pop().expect("more than two children");
                let mut right = Tree::node(
                    intermediate(&name, &siblings, n - 2, how),
                    vec![before, last],
                );
                for k in (1..n - 2).rev() {
                    let child = converted.pop().expect("one child per position");
                    right = Tree::node(intermediate(&name, &siblings, k, how), vec![child, right]);
                }
                let first = converted.pop().expect("the first child");
                built.push(Tree::node(name, vec![first, right]));
            }
            Step::Close(Tree::Leaf(_), _) => unreachable!("leaves are never closed"),
        }
    }
    built.pop().expect("the root was built")
}

/// The intermediate symbol that covers children `k..` (0-based, k ≥ 1) of
/// a node named `parent` whose children are `siblings`.
fn intermediate(parent: &str, siblings: &[String], k: usize, how: Markov) -> String {
    match how.horizontal {
        None => {
            let mut out = parent.to_string();
            for s in &siblings[k..] {
                out.push('+');
                out.push_str(s);
            }
            out
        }
        Some(h) => {
            let mut out = format!("{parent}'");
            let from = k.saturating_sub(h);
            if h == 0 || from == k {
                out.push('+');
            }
            for s in &siblings[from..k] {
                out.push('+');
                out.push_str(s);
            }
            out
        }
    }
}

/// The tree in the treebank's own labels: intermediate symbols dissolved
/// into their parents, annotations dropped, labels unescaped. Names the
/// scheme did not make are kept as they are. Iterative.
pub fn debinarize(tree: &Tree) -> Tree {
    enum Step<'a> {
        Enter(&'a Tree),
        Close(&'a str, usize),
    }
    // Each finished subtree, or (for an intermediate) the children it
    // passes up to its parent.
    let mut built: Vec<Vec<Tree>> = Vec::new();
    let mut steps = vec![Step::Enter(tree)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(Tree::Leaf(word)) => built.push(vec![Tree::leaf(word.clone())]),
            Step::Enter(Tree::Node { label, children }) => {
                steps.push(Step::Close(label, children.len()));
                steps.extend(children.iter().rev().map(Step::Enter));
            }
            Step::Close(label, n) => {
                let children: Vec<Tree> = built
                    .split_off(built.len() - n)
                    .into_iter()
                    .flatten()
                    .collect();
                if is_intermediate(label) {
                    built.push(children);
                } else {
                    let original = label_of(label).unwrap_or_else(|| label.to_string());
                    built.push(vec![Tree::node(original, children)]);
                }
            }
        }
    }
    let mut top = built.pop().unwrap_or_default();
    if top.len() == 1 {
        top.pop().expect("one tree")
    } else {
        // An intermediate symbol at the root: not from `binarize`; keep
        // its children under an unnamed node rather than lose them.
        Tree::node(String::new(), top)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::read::TreeReader;

    fn tree(text: &str) -> Tree {
        TreeReader::new(text.as_bytes()).next().unwrap().unwrap()
    }

    #[test]
    fn lossless_intermediates_name_the_children_still_to_come() {
        let t = tree("(NP (DT the) (JJ fast) (JJ red) (NN ferry))");
        let b = binarize(&t, Markov::LOSSLESS);
        assert_eq!(
            b.to_treebank(),
            "(NP (DT the) (NP+JJ+JJ+NN (JJ fast) (NP+JJ+NN (JJ red) (NN ferry))))"
        );
        assert_eq!(debinarize(&b), t);
    }

    #[test]
    fn markovized_intermediates_remember_the_last_siblings() {
        let t = tree("(NP (DT the) (JJ fast) (JJ red) (NN ferry))");
        let h1 = Markov {
            horizontal: Some(1),
            vertical: 1,
        };
        assert_eq!(
            binarize(&t, h1).to_treebank(),
            "(NP (DT the) (NP'+DT (JJ fast) (NP'+JJ (JJ red) (NN ferry))))"
        );
        let h0 = Markov {
            horizontal: Some(0),
            vertical: 1,
        };
        assert_eq!(
            binarize(&t, h0).to_treebank(),
            "(NP (DT the) (NP'+ (JJ fast) (NP'+ (JJ red) (NN ferry))))"
        );
        assert_eq!(debinarize(&binarize(&t, h0)), t);
    }

    #[test]
    fn parent_annotation_marks_phrasal_nodes_with_their_ancestors() {
        let t = tree("(S (NP (PRP$ our) (NN ferry)) (VP (VBZ sails) (PP (IN at) (NP (CD nine)))))");
        let v3 = Markov {
            horizontal: None,
            vertical: 3,
        };
        assert_eq!(
            binarize(&t, v3).to_treebank(),
            "(S (NP.S (PRP_dollar_ our) (NN ferry)) (VP.S (VBZ sails) (PP.VP.S (IN at) (NP.PP.VP (CD nine)))))"
        );
        assert_eq!(debinarize(&binarize(&t, v3)), t);
    }
}
