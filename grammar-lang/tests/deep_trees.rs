//! A parse tree is as deep as its sentence is long, and a tree of a
//! hundred thousand levels must survive every operation `Tree` offers on a
//! thread with a small stack: building, cloning, comparing, hashing,
//! printing in each notation, reading its words and dropping. (The
//! derived implementations recursed once per level; at this depth they
//! overflow even the main thread's 8 MiB stack.)

use grammar_lang::tree::Tree;
use std::collections::hash_map::DefaultHasher;
use std::hash::{Hash, Hasher};

/// `(S "w" (S "w" … (S "end")))`, `depth` nodes deep, built bottom-up.
fn chain(depth: usize, last: &str) -> Tree {
    let mut tree = Tree::node("S", vec![Tree::leaf(last)]);
    for _ in 1..depth {
        tree = Tree::node("S", vec![Tree::leaf("w"), tree]);
    }
    tree
}

fn hash_of(tree: &Tree) -> u64 {
    let mut h = DefaultHasher::new();
    tree.hash(&mut h);
    h.finish()
}

/// Runs `f` on a thread with a 64 KiB stack.
fn on_small_stack(f: impl FnOnce() + Send + 'static) {
    std::thread::Builder::new()
        .stack_size(64 * 1024)
        .spawn(f)
        .expect("a thread")
        .join()
        .expect("the thread finishes without overflowing its stack");
}

#[test]
fn a_tree_100000_levels_deep_is_cloned_compared_printed_and_dropped_without_recursion() {
    on_small_stack(|| {
        const DEPTH: usize = 100_000;
        let tree = chain(DEPTH, "end");
        let copy = tree.clone();
        assert!(copy == tree);
        assert_eq!(hash_of(&copy), hash_of(&tree));
        // A difference at the bottom is found, and changes the hash.
        let other = chain(DEPTH, "fin");
        assert!(other != tree);
        assert_ne!(hash_of(&other), hash_of(&tree));
        // A different depth is a different tree.
        assert!(chain(DEPTH - 1, "end") != tree);

        let words = tree.words();
        assert_eq!(words.len(), DEPTH);
        assert_eq!(words[0], "w");
        assert_eq!(words[DEPTH - 1], "end");

        // `(S "w" ` per level but the last, `(S "end")`, then the closing
        // brackets of the other levels.
        let brackets = tree.to_brackets();
        let expected_len = (DEPTH - 1) * "(S \"w\" ".len() + "(S \"end\")".len() + (DEPTH - 1);
        assert_eq!(brackets.len(), expected_len);
        assert!(brackets.starts_with("(S \"w\" (S \"w\" "));
        let closing = ")".repeat(DEPTH - 1);
        assert!(brackets.ends_with(&format!("(S \"end\"){closing}")));
        assert_eq!(tree.to_string(), brackets);
        assert_eq!(format!("{tree:?}"), brackets);
        let plain = tree.to_treebank();
        assert!(plain.starts_with("(S w (S w ") && plain.ends_with(&format!("(S end){closing}")));
        assert_eq!(plain.len(), expected_len - 2 * DEPTH);

        drop(copy);
        drop(other);
        drop(tree);
    });
}

#[test]
fn a_deep_tree_is_indented_without_recursion() {
    // The indented form grows with the square of the depth (each line is
    // indented by its level), so a smaller depth, still far deeper than
    // the small stack allows to recurse.
    on_small_stack(|| {
        const DEPTH: usize = 3_000;
        let tree = chain(DEPTH, "end");
        let text = tree.to_indented("> ");
        let lines: Vec<&str> = text.lines().collect();
        // Each node with a node child puts its two children on lines of
        // their own: the word and the next node.
        assert_eq!(lines.len(), 1 + 2 * (DEPTH - 1));
        assert_eq!(lines[0], "> (S");
        assert_eq!(lines[1], ">   \"w\"");
        assert_eq!(lines[2], ">   (S");
        let last = lines[lines.len() - 1];
        let indent = "  ".repeat(DEPTH - 1);
        assert_eq!(
            last,
            format!("> {indent}(S \"end\"){}", ")".repeat(DEPTH - 1))
        );
    });
}

#[test]
fn the_iterative_forms_agree_with_the_small_cases_written_out() {
    let t = Tree::node(
        "Ticket",
        vec![
            Tree::node("Kind", vec![Tree::leaf("day")]),
            Tree::leaf("ticket"),
            Tree::node("Count", vec![Tree::node("N", vec![Tree::leaf("two")])]),
        ],
    );
    assert_eq!(
        t.to_brackets(),
        r#"(Ticket (Kind "day") "ticket" (Count (N "two")))"#
    );
    assert_eq!(
        t.to_treebank(),
        "(Ticket (Kind day) ticket (Count (N two)))"
    );
    assert_eq!(
        t.to_indented(""),
        "(Ticket\n  (Kind \"day\")\n  \"ticket\"\n  (Count\n    (N \"two\")))"
    );
    assert_eq!(t.words(), ["day", "ticket", "two"]);
    let c = t.clone();
    assert_eq!(c, t);
    assert_eq!(c.to_brackets(), t.to_brackets());
    // Same labels, different shape: not equal.
    let flat = Tree::node(
        "Ticket",
        vec![
            Tree::node("Kind", vec![Tree::leaf("day"), Tree::leaf("ticket")]),
            Tree::node("Count", vec![Tree::node("N", vec![Tree::leaf("two")])]),
        ],
    );
    assert_ne!(flat, t);
    assert_ne!(hash_of(&flat), hash_of(&t));
    assert_eq!(Tree::leaf("x"), Tree::leaf("x"));
    assert_ne!(Tree::leaf("x"), Tree::node("x", vec![]));
    assert_eq!(
        Tree::node("A", vec![Tree::leaf("b")]).into_parts(),
        Ok(("A".to_string(), vec![Tree::leaf("b")]))
    );
    assert_eq!(Tree::leaf("b").into_parts(), Err("b".to_string()));
}
