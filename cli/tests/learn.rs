//! `trellis learn`: a treebank in, a checked grammar out, that parses the
//! treebank's sentences and passes tests written against it.

mod common;

use common::trellis;
use std::fs;

/// Hand-bracketed kiosk requests (invented for the test).
const TREES: &str = "\
# kiosk requests, bracketed by hand
(S (NP (CD two) (NNS tickets)) (PP (TO to) (NP (NNP tolsey))))
(S (NP (CD one) (JJ return) (NN ticket)) (PP (TO to) (NP (NNP oxna))))
( (S (NP (CD two) (NNS tickets))) )
(S (NP (CD one) (NN ticket))
   (PP (TO to)
       (NP (NNP tolsey))))
";

#[test]
fn a_learned_grammar_checks_clean_parses_its_sentences_and_passes_tests() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.mrg"), TREES).unwrap();
    let run = trellis(dir.path(), &["learn", "kiosk.mrg", "-o", "learned.trellis"]);
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("from 4 trees"), "{}", run.stderr);
    let learned = fs::read_to_string(dir.path().join("learned.trellis")).unwrap();
    assert!(
        learned.starts_with("# Learned by `trellis learn`"),
        "{learned}"
    );
    assert!(learned.contains("inputs: kiosk.mrg"), "{learned}");
    // S → NP PP three times out of four, S → NP once: 3/4 and 1/4 as
    // relative counts.
    assert!(
        learned.contains("S relative {\n  3  NP PP\n  1  NP\n}"),
        "{learned}"
    );

    let check = trellis(dir.path(), &["check", "learned.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    let fmt = trellis(dir.path(), &["fmt", "--check", "learned.trellis"]);
    assert_eq!(fmt.code, 0, "{}{}", fmt.stdout, fmt.stderr);

    // A sentence of the treebank parses, as the tree it was bracketed as:
    // p = P(S → NP PP) · P(NP → CD NNS) · P(CD → two) · P(NNS → tickets)
    //     · P(PP → TO NP) · P(TO → to) · P(NP → NNP) · P(NNP → tolsey)
    //   = 3/4 · 2/7 · 2/4 · 1 · 1 · 1 · 3/7 · 2/3 = 3/98 ≈ 0.0306122
    // (NP is used 7 times: 3 NNP, 2 CD NNS, 1 CD NN, 1 CD JJ NN).
    let parse = trellis(
        dir.path(),
        &["parse", "learned.trellis", "two tickets to tolsey"],
    );
    assert_eq!(parse.code, 0, "{}{}", parse.stdout, parse.stderr);
    assert!(parse.stdout.contains("p = 0.0306122"), "{}", parse.stdout);

    // Tests written against the learned grammar, in a file of their own.
    fs::write(
        dir.path().join("tests.trellis"),
        "use \"learned.trellis\"\n\ntest \"learned\" {\n  accept \"one return ticket to tolsey\"\n  reject \"tickets two\"\n}\n",
    )
    .unwrap();
    let test = trellis(dir.path(), &["test", "tests.trellis"]);
    assert_eq!(test.code, 0, "{}{}", test.stdout, test.stderr);
}

#[test]
fn learn_parse_and_eval_close_the_loop_in_the_treebanks_labels() {
    // Learned with markovization and parent annotation, the parses come
    // back in the treebank's own labels and score perfectly against the
    // trees they were learned from when each sentence has one tree.
    let dir = tempfile::tempdir().unwrap();
    let gold = "(S (NP (CD two) (NNS tickets)) (PP (TO to) (NP (NNP tolsey))))\n\
                (S (NP (CD one) (JJ return) (NN ticket)) (PP (TO to) (NP (NNP oxna))))\n";
    fs::write(dir.path().join("gold.mrg"), gold).unwrap();
    let run = trellis(
        dir.path(),
        &[
            "learn",
            "gold.mrg",
            "-o",
            "g.trellis",
            "--horizontal",
            "1",
            "--vertical",
            "2",
        ],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    let parse = trellis(
        dir.path(),
        &[
            "parse",
            "g.trellis",
            "two tickets to tolsey",
            "one return ticket to oxna",
            "--format",
            "brackets",
            "--treebank-labels",
        ],
    );
    assert_eq!(parse.code, 0, "{}", parse.stderr);
    assert_eq!(parse.stdout, gold);
    fs::write(dir.path().join("parsed.mrg"), &parse.stdout).unwrap();
    let eval = trellis(dir.path(), &["eval", "gold.mrg", "parsed.mrg"]);
    assert!(
        eval.stdout.contains("F1           100.00%"),
        "{}",
        eval.stdout
    );
}

#[test]
fn gzip_treebanks_are_read_as_they_are() {
    let dir = tempfile::tempdir().unwrap();
    let plain = dir.path().join("kiosk.mrg");
    fs::write(&plain, TREES).unwrap();
    let status = std::process::Command::new("gzip")
        .arg("-k")
        .arg(&plain)
        .status()
        .expect("gzip runs");
    assert!(status.success());
    let from_plain = trellis(dir.path(), &["learn", "kiosk.mrg"]);
    let from_gzip = trellis(dir.path(), &["learn", "kiosk.mrg.gz"]);
    assert_eq!(from_gzip.code, 0, "{}", from_gzip.stderr);
    // The same grammar but for the input's name in the header.
    assert_eq!(
        from_gzip.stdout.replace("kiosk.mrg.gz", "kiosk.mrg"),
        from_plain.stdout
    );
}

#[test]
fn a_malformed_tree_is_located_and_keep_going_counts_it() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("bad.mrg"),
        "(S (NP (CD two)) (VP x))\n(S (NP (CD one)) (NP)\n(S (NP (CD three)))\n",
    )
    .unwrap();
    let run = trellis(dir.path(), &["learn", "bad.mrg"]);
    assert_eq!(run.code, 1, "{}", run.stderr);
    assert!(
        run.stderr
            .contains("bad.mrg:2:18: the node `NP` has no children"),
        "{}",
        run.stderr
    );
    assert!(run.stderr.contains("--keep-going"), "{}", run.stderr);

    let run = trellis(dir.path(), &["learn", "bad.mrg", "--keep-going"]);
    assert_eq!(run.code, 0, "{}", run.stderr);
    assert!(
        run.stderr
            .contains("warning: skipped a malformed tree: bad.mrg:2:18"),
        "{}",
        run.stderr
    );
    assert!(
        run.stderr
            .contains("from 2 trees (1 malformed trees skipped)"),
        "{}",
        run.stderr
    );
    assert!(
        run.stdout.contains("skipped: 1 malformed trees"),
        "{}",
        run.stdout
    );
}

#[test]
fn markovization_options_shape_the_symbols() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.mrg"), TREES).unwrap();
    let run = trellis(
        dir.path(),
        &["learn", "kiosk.mrg", "--horizontal", "1", "--vertical", "2"],
    );
    assert_eq!(run.code, 0, "{}", run.stderr);
    // NP under S and under PP are told apart; the three-child NP gets an
    // intermediate remembering the one child before.
    assert!(run.stdout.contains("NP.S relative"), "{}", run.stdout);
    assert!(run.stdout.contains("NP.PP relative"), "{}", run.stdout);
    assert!(run.stdout.contains("NP.S'+CD relative"), "{}", run.stdout);
    let missing = trellis(dir.path(), &["learn", "nowhere.mrg"]);
    assert_eq!(missing.code, 2, "{}", missing.stderr);
    assert!(
        missing.stderr.contains("nowhere.mrg: cannot read it"),
        "{}",
        missing.stderr
    );
}

#[test]
fn with_rare_words_a_learned_grammar_parses_and_tests_sentences_with_new_words() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.mrg"), TREES).unwrap();
    let run = trellis(
        dir.path(),
        &["learn", "kiosk.mrg", "--rare", "1", "-o", "learned.trellis"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let learned = fs::read_to_string(dir.path().join("learned.trellis")).unwrap();
    // "oxna" is seen once (lower-case, no listed suffix), "tolsey" twice.
    assert!(
        learned
            .contains("NNP relative {\n  2  \"tolsey\"\n  1  \"<unseen:lower>\"\n  1  \"oxna\"\n}"),
        "{learned}"
    );
    let check = trellis(dir.path(), &["check", "learned.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);

    // "skerry" was never seen: read as an unseen lower-case word.
    let parse = trellis(
        dir.path(),
        &["parse", "learned.trellis", "two tickets to skerry"],
    );
    assert_eq!(parse.code, 0, "{}{}", parse.stdout, parse.stderr);
    assert!(
        parse
            .stdout
            .contains("unseen word \"skerry\" (word 4) read as \"<unseen:lower>\""),
        "{}",
        parse.stdout
    );
    let brackets = trellis(
        dir.path(),
        &[
            "parse",
            "learned.trellis",
            "--format",
            "brackets",
            "--treebank-labels",
            "two tickets to skerry",
        ],
    );
    assert_eq!(
        brackets.stdout.trim(),
        "(S (NP (CD two) (NNS tickets)) (PP (TO to) (NP (NNP skerry))))"
    );

    // A test block against it: the new word is no `unknown-word`.
    fs::write(
        dir.path().join("tests.trellis"),
        "use \"learned.trellis\"\n\ntest \"new places\" {\n  accept \"one ticket to skerry\"\n}\n",
    )
    .unwrap();
    let check = trellis(dir.path(), &["check", "tests.trellis"]);
    assert_eq!(check.code, 0, "{}{}", check.stdout, check.stderr);
    assert!(!check.stdout.contains("unknown-word"), "{}", check.stdout);
    let test = trellis(dir.path(), &["test", "tests.trellis"]);
    assert_eq!(test.code, 0, "{}{}", test.stdout, test.stderr);
}
