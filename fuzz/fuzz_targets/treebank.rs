//! Feeds arbitrary bytes to the treebank reader (`TreeReader`, a stream of
//! labelled-bracket trees with located errors and resynchronisation) and
//! every tree it reads through the clean-up and binarization. Besides "no
//! panic and no stack overflow" it checks that:
//!
//! * every error is located at a line and column of at least 1;
//! * a tree printed with quoted words (`to_brackets`: a word read in
//!   quotes may hold spaces and brackets, which the bare treebank notation
//!   cannot) reads back as the same tree;
//! * `debinarize(binarize(t))` is `t` for lossless binarization, and for
//!   markovized binarizations too (debinarization dissolves the
//!   intermediate symbols and drops the annotations, whatever they
//!   remember);
//! * a cleaned tree round-trips through binarization as well.
#![no_main]

use grammar_lang::tree::Tree;
use libfuzzer_sys::fuzz_target;
use trellis_treebank::{binarize, clean, debinarize, Cleaning, Markov, TreeReader};

/// Most trees looked at per input: enough for resynchronisation after
/// errors to matter, few enough to keep each run short.
const MAX_TREES: usize = 32;

const MARKOV: [Markov; 4] = [
    Markov::LOSSLESS,
    Markov {
        horizontal: Some(1),
        vertical: 1,
    },
    Markov {
        horizontal: Some(2),
        vertical: 2,
    },
    Markov {
        horizontal: None,
        vertical: 3,
    },
];

fn round_trips(tree: &Tree) {
    for how in MARKOV {
        let binary = binarize(tree, how);
        assert_eq!(binary.words(), tree.words(), "binarize keeps the words");
        assert_eq!(
            &debinarize(&binary),
            tree,
            "debinarize(binarize(t, {how:?})) is t"
        );
    }
}

fuzz_target!(|data: &[u8]| {
    for item in TreeReader::new(data).take(MAX_TREES) {
        let tree = match item {
            Ok(tree) => tree,
            Err(e) => {
                assert!(e.line >= 1 && e.column >= 1, "unlocated error: {e}");
                continue;
            }
        };
        let printed = tree.to_brackets();
        let mut again = TreeReader::new(printed.as_bytes());
        match again.next() {
            Some(Ok(back)) => assert_eq!(back, tree, "{printed} reads back as itself"),
            other => panic!("{printed} does not read back: {other:?}"),
        }
        round_trips(&tree);
        let everything = Cleaning {
            strip_functions: true,
            drop_empty: true,
            collapse_unary: true,
        };
        if let Some(cleaned) = clean(tree.clone(), &everything) {
            round_trips(&cleaned);
        }
    }
});
