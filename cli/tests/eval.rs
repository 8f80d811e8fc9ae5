//! `trellis eval`: PARSEVAL figures people read, and located refusals.

mod common;

use common::trellis;
use std::fs;

#[test]
fn a_hand_computed_evaluation() {
    let dir = tempfile::tempdir().unwrap();
    // Sentence 1 (worked in treebank/src/eval.rs): gold brackets S NP VP PP
    // NP, predicted S NP PP; S and PP match, NP[0,3) crosses VP[2,5).
    // Sentence 2: the same tree on both sides: S NP VP, all matched.
    // Totals: matched 2 + 3 = 5, gold 5 + 3 = 8, predicted 3 + 3 = 6:
    // precision 5/6 = 83.33%, recall 5/8 = 62.50%,
    // F1 = 2·(5/6)(5/8)/(5/6 + 5/8) = 10/14 = 71.43%; exact 1 of 2;
    // crossing 1 in 2 sentences = 0.50; half the sentences have none.
    fs::write(
        dir.path().join("gold.mrg"),
        "(S (NP (D a) (N ferry)) (VP (V sails) (PP (P to) (NP (N oxna)))))\n\
         (S (NP (N ferries)) (VP (V sail) (R daily)))\n",
    )
    .unwrap();
    fs::write(
        dir.path().join("parsed.mrg"),
        "(S (NP (D a) (N ferry) (V sails)) (PP (P to) (N oxna)))\n\
         (S (NP (N ferries)) (VP (V sail) (R daily)))\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["eval", "gold.mrg", "parsed.mrg"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    for line in [
        "sentences    2\n",
        "brackets     8 gold, 6 predicted, 5 matched\n",
        "precision    83.33%\n",
        "recall       62.50%\n",
        "F1           71.43%\n",
        "exact match  50.00% (1 of 2)\n",
        "crossing     0.50 brackets per sentence; 50.00% of sentences with none\n",
    ] {
        assert!(run.stdout.contains(line), "{line}\n{}", run.stdout);
    }
    // NP: gold 3 (two in sentence 1, one in 2), predicted 2, matched 1.
    assert!(
        run.stdout.contains("NP          3          2        1"),
        "{}",
        run.stdout
    );

    let json = trellis(
        dir.path(),
        &["eval", "gold.mrg", "parsed.mrg", "--format", "json"],
    );
    let doc: serde_json::Value = serde_json::from_str(&json.stdout).unwrap();
    assert_eq!(doc["total"]["matched"], 5);
    assert_eq!(doc["sentences"][1]["exact"], true);
    assert_eq!(doc["sentences"][1]["gold_line"], 2);
    assert_eq!(doc["labels"]["PP"]["matched"], 1);
}

#[test]
fn mismatched_files_are_located() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("gold.mrg"),
        "(S (A x) (B y))\n\n(S (A x) (B y))\n",
    )
    .unwrap();
    fs::write(dir.path().join("short.mrg"), "(S (A x) (B y))\n").unwrap();
    fs::write(
        dir.path().join("other.mrg"),
        "(S (A x) (B y))\n(S (A x) (B z))\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["eval", "gold.mrg", "short.mrg"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(
        run.stderr.contains("short.mrg:1:1: it ends after 1 trees, but gold.mrg has more (its tree 2 starts at line 3)"),
        "{}",
        run.stderr
    );
    let run = trellis(dir.path(), &["eval", "gold.mrg", "other.mrg"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(
        run.stderr.contains(
            "other.mrg:2:1: sentence 2 cannot be compared with its gold tree (gold.mrg:3): \
             word 2 differs: `y` in the gold tree, `z` in the predicted one"
        ),
        "{}",
        run.stderr
    );
}
