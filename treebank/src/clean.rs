//! The usual clean-up of treebank trees before counting.

use grammar_lang::tree::Tree;

/// What to clean; everything off by default.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct Cleaning {
    /// `NP-SBJ-1` → `NP`, `NP=2` → `NP` (labels that start with `-`, like
    /// `-NONE-` and `-LRB-`, are kept whole).
    pub strip_functions: bool,
    /// Drop empty elements (nodes labelled `-NONE-`) and the nodes left
    /// without children by dropping them.
    pub drop_empty: bool,
    /// `(NP (NP …))` → `(NP …)`: a node whose only child is a node of the
    /// same label is replaced by that child.
    pub collapse_unary: bool,
}

/// The label without function tags and indices.
pub fn strip_label(label: &str) -> &str {
    if label.starts_with('-') {
        return label;
    }
    match label.find(['-', '=']) {
        Some(0) | None => label,
        Some(cut) => &label[..cut],
    }
}

/// Cleans `tree`; `None` if nothing is left of it (a tree of empty
/// elements only). Iterative: trees of any depth.
pub fn clean(tree: Tree, how: &Cleaning) -> Option<Tree> {
    enum Step {
        Enter(Tree),
        Close(String, usize),
    }
    // Post-order rebuild: `built` holds finished children (None = dropped).
    let mut built: Vec<Option<Tree>> = Vec::new();
    let mut steps = vec![Step::Enter(tree)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(tree) => {
                let (label, children) = match tree.into_parts() {
                    Ok(node) => node,
                    Err(word) => {
                        built.push(Some(Tree::Leaf(word)));
                        continue;
                    }
                };
                if how.drop_empty && label == "-NONE-" {
                    built.push(None);
                    continue;
                }
                let label = if how.strip_functions {
                    strip_label(&label).to_string()
                } else {
                    label
                };
                steps.push(Step::Close(label, children.len()));
                steps.extend(children.into_iter().rev().map(Step::Enter));
            }
            Step::Close(label, n) => {
                let children: Vec<Tree> = built
                    .split_off(built.len() - n)
                    .into_iter()
                    .flatten()
                    .collect();
                if children.is_empty() {
                    built.push(None);
                    continue;
                }
                if how.collapse_unary
                    && children.len() == 1
                    && children[0].label() == Some(label.as_str())
                {
                    built.extend(children.into_iter().map(Some));
                    continue;
                }
                built.push(Some(Tree::node(label, children)));
            }
        }
    }
    built.pop().flatten()
}

/// [`clean`], carrying along a position per node: `positions` gives one
/// for each node of `tree` in pre-order (as
/// [`TreeReader::positions`](crate::read::TreeReader::positions) does), and
/// the answer gives one for each node of the cleaned tree, in pre-order —
/// each node keeps its own, a collapsed chain keeps its lowest node's.
/// Positions missing from `positions` come out as `P::default()`.
pub fn clean_located<P: Clone + Default>(
    tree: Tree,
    positions: &[P],
    how: &Cleaning,
) -> Option<(Tree, Vec<P>)> {
    enum Step<P> {
        Enter(Tree),
        Close(String, usize, P),
    }
    let mut next = 0usize;
    let mut built: Vec<Option<(Tree, Vec<P>)>> = Vec::new();
    let mut steps = vec![Step::Enter(tree)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(tree) => {
                let (label, children) = match tree.into_parts() {
                    Ok(node) => node,
                    Err(word) => {
                        built.push(Some((Tree::Leaf(word), Vec::new())));
                        continue;
                    }
                };
                let at = positions.get(next).cloned().unwrap_or_default();
                next += 1;
                if how.drop_empty && label == "-NONE-" {
                    // Its descendants are dropped with it: skip their positions.
                    next += count_nodes(&children);
                    built.push(None);
                    continue;
                }
                let label = if how.strip_functions {
                    strip_label(&label).to_string()
                } else {
                    label
                };
                steps.push(Step::Close(label, children.len(), at));
                steps.extend(children.into_iter().rev().map(Step::Enter));
            }
            Step::Close(label, n, at) => {
                let children: Vec<(Tree, Vec<P>)> = built
                    .split_off(built.len() - n)
                    .into_iter()
                    .flatten()
                    .collect();
                if children.is_empty() {
                    built.push(None);
                    continue;
                }
                if how.collapse_unary
                    && children.len() == 1
                    && children[0].0.label() == Some(label.as_str())
                {
                    built.extend(children.into_iter().map(Some));
                    continue;
                }
                let mut all = vec![at];
                let mut kids = Vec::with_capacity(children.len());
                for (child, positions) in children {
                    all.extend(positions);
                    kids.push(child);
                }
                built.push(Some((Tree::node(label, kids), all)));
            }
        }
    }
    built.pop().flatten()
}

/// How many nodes (not words) `trees` hold, iteratively.
fn count_nodes(trees: &[Tree]) -> usize {
    let mut n = 0;
    let mut stack: Vec<&Tree> = trees.iter().collect();
    while let Some(t) = stack.pop() {
        if let Tree::Node { children, .. } = t {
            n += 1;
            stack.extend(children.iter());
        }
    }
    n
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::read::TreeReader;

    fn tree(text: &str) -> Tree {
        TreeReader::new(text.as_bytes()).next().unwrap().unwrap()
    }

    #[test]
    fn function_tags_indices_and_empty_elements_go() {
        let all = Cleaning {
            strip_functions: true,
            drop_empty: true,
            collapse_unary: true,
        };
        let t = tree(
            "(S (NP-SBJ-1 (-NONE- *T*-1)) (VP=2 (VB sail) (NP (NP (NN ferries)))) (-LRB- -LRB-))",
        );
        assert_eq!(
            clean(t, &all).map(|t| t.to_treebank()).as_deref(),
            Some("(S (VP (VB sail) (NP (NN ferries))) (-LRB- -LRB-))")
        );
        assert_eq!(clean(tree("(S (-NONE- *))"), &all), None);
        // With positions: each surviving node keeps its own, in pre-order.
        let t = tree("(S (NP-SBJ (-NONE- *)) (VP (VP (V x))) (A y))");
        // Pre-order: S NP-SBJ -NONE- VP VP V A.
        let (cleaned, at) = clean_located(t, &[0, 1, 2, 3, 4, 5, 6], &all).unwrap();
        assert_eq!(cleaned.to_treebank(), "(S (VP (V x)) (A y))");
        assert_eq!(at, [0, 4, 5, 6]);
        // Nothing asked, nothing changed.
        let t = tree("(S (NP-SBJ (-NONE- *)) (VP (VP x)))");
        assert_eq!(clean(t.clone(), &Cleaning::default()), Some(t));
    }
}
