//! Unseen words: the shape classes of words a grammar does not know, the
//! chain a word is read along, and what `unknown-word` says about test
//! words a class covers. The classes are our own scheme (README, "Unseen
//! words"); the table below is its specification.

use grammar_lang::analyze_text;
use grammar_lang::unseen::{chain, class_name, class_of, is_unseen_terminal, resolve, GENERIC};
use trellis_test_support::check;

#[test]
fn words_fall_into_the_documented_shape_classes() {
    let table = [
        ("1995", "number"),
        ("3.5", "number"),
        ("12:30", "number"),
        ("1,200", "number"),
        ("B52", "has-digit"),
        ("4th", "has-digit"),
        ("NATO", "all-caps"),
        ("MV-X", "all-caps"),
        ("Aino", "capitalised"),
        ("A", "capitalised"),
        ("Ölfärbung", "capitalised"),
        ("iPhone", "mixed-case"),
        ("well-kept", "hyphenated"),
        ("sailing", "suffix-ing"),
        ("docked", "suffix-ed"),
        ("ferries", "suffix-s"),
        ("quickly", "suffix-ly"),
        ("navigation", "suffix-tion"),
        ("calmness", "suffix-ness"),
        ("payment", "suffix-ment"),
        ("seaworthy", "lower"),
        ("glass", "lower"),
        ("bed", "lower"),
        ("is", "lower"),
        ("é", "lower"),
        ("übersetzungen", "lower"),
        ("cafés", "suffix-s"),
        ("&", "symbol"),
        ("--", "symbol"),
        ("日本", "unseen"),
    ];
    for (word, class) in table {
        assert_eq!(class_name(class_of(word)), class, "{word}");
    }
}

#[test]
fn every_chain_runs_from_the_specific_class_to_the_generic_one() {
    assert_eq!(
        chain("1995"),
        ["<unseen:number>", "<unseen:has-digit>", "<unseen>"]
    );
    assert_eq!(
        chain("NATO"),
        ["<unseen:all-caps>", "<unseen:capitalised>", "<unseen>"]
    );
    assert_eq!(
        chain("sailing"),
        ["<unseen:suffix-ing>", "<unseen:lower>", "<unseen>"]
    );
    assert_eq!(chain("日本"), [GENERIC]);
    for word in ["1995", "NATO", "sailing", "Aino", "&", "iPhone", "x-y"] {
        let c = chain(word);
        assert_eq!(c.last(), Some(&GENERIC), "{word}");
        assert!(c.iter().all(|t| is_unseen_terminal(t)), "{word}");
    }
}

#[test]
fn an_unknown_word_is_read_as_the_most_specific_class_the_grammar_has() {
    let known = |set: &'static [&'static str]| move |t: &str| set.contains(&t);
    assert_eq!(
        resolve("sailing", known(&["<unseen:lower>", "<unseen>"])),
        Some("<unseen:lower>")
    );
    assert_eq!(
        resolve("sailing", known(&["<unseen:suffix-ing>", "<unseen:lower>"])),
        Some("<unseen:suffix-ing>")
    );
    assert_eq!(resolve("Aino", known(&["<unseen>"])), Some("<unseen>"));
    assert_eq!(resolve("Aino", known(&["<unseen:lower>"])), None);
}

#[test]
fn the_grammar_reads_a_word_as_itself_before_any_class() {
    let a = analyze_text("start Vessel\nVessel {\n  \"Aurora\"\n  \"<unseen:capitalised>\"\n}\n");
    let g = &a.grammar;
    assert_eq!(g.word_term("Aurora"), g.term("Aurora"));
    assert_eq!(g.word_term("Borealis"), g.term("<unseen:capitalised>"));
    assert_eq!(g.word_term("borealis"), None);
}

#[test]
fn a_test_word_a_class_covers_is_no_unknown_word_but_a_close_typo_is_a_note() {
    check(
        r#"
        start Request
        Request { Vessel "departs" }
        Vessel {
          "ferry" | "tug"
          "<unseen:capitalised>"
        }
        test "vessels" {
          accept "Aurora departs" as (Request (Vessel "Aurora") "departs")
          accept "Ferry departs"
                  ^^^^^ note unknown-word: it is read as an unseen word of class `capitalised` ("<unseen:capitalised>"); did you mean `ferry`?
          accept "fery departs"
                  ^^^^ warning unknown-word: `fery` is not a word of the grammar (no terminal contains it)
        }
        "#,
    );
}
