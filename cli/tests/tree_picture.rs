//! `trellis parse --svg`: tree pictures that are well-formed XML, whose
//! boxes never overlap, whose words read as the sentence, and that a real
//! browser draws.

mod common;

use common::{trellis, KIOSK};
use std::fs;
use std::path::Path;

/// A box drawn in the picture: its class and rectangle.
#[derive(Debug)]
struct Box_ {
    class: String,
    label: String,
    x: f64,
    y: f64,
    w: f64,
    h: f64,
    tip: String,
}

/// Reads every node and word box of an SVG picture with an XML parser
/// (roxmltree, an independent reader: a malformed document fails here).
fn boxes(svg: &str) -> Vec<Box_> {
    let doc = roxmltree::Document::parse(svg).expect("the picture is well-formed XML");
    assert_eq!(doc.root_element().tag_name().name(), "svg");
    let num = |n: roxmltree::Node, a: &str| -> f64 {
        n.attribute(a)
            .and_then(|v| v.parse().ok())
            .unwrap_or_else(|| panic!("<{}> has a numeric {a}", n.tag_name().name()))
    };
    doc.descendants()
        .filter(|n| n.has_tag_name("g") && matches!(n.attribute("class"), Some("node" | "word")))
        .map(|g| {
            let rect = g
                .children()
                .find(|c| c.has_tag_name("rect"))
                .expect("a box");
            let text = g
                .children()
                .find(|c| c.has_tag_name("text"))
                .expect("a label");
            let tip = g
                .children()
                .find(|c| c.has_tag_name("title"))
                .and_then(|t| t.text())
                .unwrap_or_default();
            Box_ {
                class: g.attribute("class").unwrap_or_default().to_string(),
                label: text.text().unwrap_or_default().to_string(),
                x: num(rect, "x"),
                y: num(rect, "y"),
                w: num(rect, "width"),
                h: num(rect, "height"),
                tip: tip.to_string(),
            }
        })
        .collect()
}

fn overlap(a: &Box_, b: &Box_) -> bool {
    a.x < b.x + b.w && b.x < a.x + a.w && a.y < b.y + b.h && b.y < a.y + a.h
}

fn assert_no_overlaps(boxes: &[Box_]) {
    for (i, a) in boxes.iter().enumerate() {
        for b in &boxes[i + 1..] {
            assert!(!overlap(a, b), "boxes overlap: {a:?} and {b:?}");
        }
    }
}

/// The words of the picture, left to right on their baseline.
fn words_left_to_right(boxes: &[Box_]) -> Vec<String> {
    let mut words: Vec<&Box_> = boxes.iter().filter(|b| b.class == "word").collect();
    let baseline = words.first().map(|w| w.y).unwrap_or_default();
    assert!(
        words.iter().all(|w| w.y == baseline),
        "every word on one baseline"
    );
    words.sort_by(|a, b| a.x.total_cmp(&b.x));
    words.iter().map(|w| w.label.clone()).collect()
}

fn ferry(dir: &Path) -> String {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("../examples");
    for name in ["ferry_kiosk.trellis", "ferry_lexicon.trellis"] {
        fs::copy(root.join(name), dir.join(name)).unwrap();
    }
    "ferry_kiosk.trellis".to_string()
}

#[test]
fn a_parsed_sentence_is_drawn_with_its_words_in_order_and_no_overlaps() {
    let dir = tempfile::tempdir().unwrap();
    let grammar = ferry(dir.path());
    let sentence = "two adults and one child return to quillan with a car";
    let run = trellis(
        dir.path(),
        &["parse", &grammar, sentence, "--svg", "tree.svg"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    assert!(run.stderr.contains("wrote tree.svg"), "{}", run.stderr);
    let svg = fs::read_to_string(dir.path().join("tree.svg")).unwrap();
    let boxes = boxes(&svg);
    assert_eq!(words_left_to_right(&boxes).join(" "), sentence);
    assert_no_overlaps(&boxes);
    // Every category names its rule and that rule's probability.
    for b in boxes.iter().filter(|b| b.class == "node") {
        assert!(b.tip.starts_with(&format!("{} →", b.label)), "{b:?}");
        assert!(b.tip.contains("rule probability"), "{b:?}");
    }
    // Dark and light themes alike: drawn in the current colour.
    assert!(svg.contains("currentColor") && svg.contains("prefers-color-scheme: dark"));
}

#[test]
fn kbest_trees_stand_side_by_side_without_touching() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), KIOSK).unwrap();
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "kiosk.trellis",
            "a day ticket",
            "--kbest",
            "2",
            "--svg",
            "two.svg",
        ],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let svg = fs::read_to_string(dir.path().join("two.svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let captions: Vec<&str> = doc
        .descendants()
        .filter(|n| n.attribute("class") == Some("caption"))
        .filter_map(|n| n.text())
        .collect();
    // Both trees of "a day ticket" have probability 1/12 (worked by hand in
    // tests/common/mod.rs).
    assert_eq!(captions, ["#1 p = 0.0833333", "#2 p = 0.0833333"]);
    let boxes = boxes(&svg);
    assert_no_overlaps(&boxes);
    let words: Vec<&str> = boxes
        .iter()
        .filter(|b| b.class == "word")
        .map(|b| b.label.as_str())
        .collect();
    assert_eq!(words, ["a", "day", "ticket", "a", "day", "ticket"]);
}

#[test]
fn several_sentences_get_one_numbered_picture_each_and_a_failure_none() {
    let dir = tempfile::tempdir().unwrap();
    fs::write(dir.path().join("kiosk.trellis"), KIOSK).unwrap();
    let run = trellis(
        dir.path(),
        &[
            "parse",
            "kiosk.trellis",
            "a day ticket",
            "ticket day",
            "--svg",
            "out.svg",
        ],
    );
    assert_eq!(
        run.code, 1,
        "the second sentence does not parse: {}",
        run.stderr
    );
    assert!(dir.path().join("out-1.svg").is_file());
    assert!(!dir.path().join("out-2.svg").exists());
    assert!(
        run.stderr.contains("no picture for sentence 2"),
        "{}",
        run.stderr
    );
}

#[test]
fn a_forty_word_sentence_stays_readable() {
    // A right-branching list grammar: forty words, forty-one levels.
    let dir = tempfile::tempdir().unwrap();
    fs::write(
        dir.path().join("list.trellis"),
        "start List\nList { 0.9 Item List | 0.1 Item }\nItem { 0.5 \"buoy\" | 0.5 \"beacon\" }\n",
    )
    .unwrap();
    let sentence = ["buoy", "beacon"].repeat(20).join(" ");
    let run = trellis(
        dir.path(),
        &["parse", "list.trellis", &sentence, "--svg", "long.svg"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let svg = fs::read_to_string(dir.path().join("long.svg")).unwrap();
    let boxes = boxes(&svg);
    assert_eq!(words_left_to_right(&boxes).join(" "), sentence);
    assert_no_overlaps(&boxes);
    // Labels keep their font size however long the sentence: the picture
    // grows instead of shrinking the text.
    assert!(svg.contains("font-size=\"14\""));
}

/// Renders a picture in a real browser and checks the screenshot is a
/// picture of the expected size with something drawn on it. Debian's
/// `chromium` is installed by `.ci/run`, which sets TRELLIS_REQUIRE_CHROMIUM
/// so that CI cannot pass without it; elsewhere the test says it skipped.
#[test]
fn a_browser_draws_the_picture() {
    let Some(chromium) = ["chromium", "chromium-browser"].into_iter().find(|c| {
        std::process::Command::new(c)
            .arg("--version")
            .output()
            .is_ok()
    }) else {
        assert!(
            std::env::var_os("TRELLIS_REQUIRE_CHROMIUM").is_none(),
            "chromium is required here but not installed"
        );
        eprintln!("skipped: no chromium on this machine");
        return;
    };
    let dir = tempfile::tempdir().unwrap();
    let grammar = ferry(dir.path());
    let run = trellis(
        dir.path(),
        &["parse", &grammar, "one day pass", "--svg", "tree.svg"],
    );
    assert_eq!(run.code, 0, "{}{}", run.stdout, run.stderr);
    let svg = fs::read_to_string(dir.path().join("tree.svg")).unwrap();
    let doc = roxmltree::Document::parse(&svg).unwrap();
    let size = |a: &str| -> u32 { doc.root_element().attribute(a).unwrap().parse().unwrap() };
    let (width, height) = (size("width"), size("height"));
    let shot = dir.path().join("shot.png");
    let out = std::process::Command::new(chromium)
        .args([
            "--headless",
            "--no-sandbox",
            "--disable-gpu",
            "--hide-scrollbars",
            &format!("--user-data-dir={}", dir.path().join("profile").display()),
            &format!("--window-size={width},{height}"),
            &format!("--screenshot={}", shot.display()),
        ])
        .arg(format!("file://{}", dir.path().join("tree.svg").display()))
        .output()
        .expect("chromium runs");
    assert!(
        shot.is_file(),
        "no screenshot: {}",
        String::from_utf8_lossy(&out.stderr)
    );
    let png = fs::read(&shot).unwrap();
    // PNG signature and IHDR size (the PNG specification, section 5).
    assert_eq!(&png[..8], b"\x89PNG\r\n\x1a\n");
    let be = |i: usize| u32::from_be_bytes([png[i], png[i + 1], png[i + 2], png[i + 3]]);
    assert_eq!((be(16), be(20)), (width, height));
    // Something was drawn: a blank page of one colour compresses to a few
    // hundred bytes; boxes, lines and text do not.
    assert!(
        png.len() > 2_000,
        "screenshot looks empty ({} bytes)",
        png.len()
    );
}
