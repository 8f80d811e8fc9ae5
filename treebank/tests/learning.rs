//! From trees to a grammar: exactness of binarization, maximum-likelihood
//! counts, and recovery of a known grammar from trees sampled from it.

use grammar_lang::model::{to_f64, Sym};
use grammar_lang::ratio::Ratio;
use grammar_lang::tree::Tree;
use proptest::prelude::*;
use trellis_engine::rng::SplitMix64;
use trellis_engine::sample::Sampler;
use trellis_treebank::learn::{Counts, LearnOptions};
use trellis_treebank::{binarize, debinarize, Markov, TreeReader};

/// Learns a grammar from `trees` and analyses it as trellis would.
fn learn(trees: &[Tree], how: Markov) -> (String, grammar_lang::Analysis) {
    let mut counts = Counts::new();
    for t in trees {
        counts.add(&binarize(t, how));
    }
    let text = counts.to_source(&LearnOptions {
        header: vec![format!("learned from {} trees", trees.len())],
        rare: 0,
    });
    let analysis = grammar_lang::analyze_text(&text);
    (text, analysis)
}

fn probability(analysis: &grammar_lang::Analysis, lhs: &str, rhs: &str) -> Ratio {
    let g = &analysis.grammar;
    let nt = g.nt(lhs).unwrap_or_else(|| panic!("no block {lhs}"));
    g.rules_of(nt)
        .find(|(id, _)| rule_rhs(g, *id) == rhs)
        .map(|(_, r)| r.probability.clone())
        .unwrap_or_else(|| panic!("no rule {lhs} → {rhs}"))
}

/// A rule's right-hand side as written: symbols by name, words quoted.
fn rule_rhs(g: &grammar_lang::Grammar, id: grammar_lang::model::RuleId) -> String {
    g.rule(id)
        .rhs
        .iter()
        .map(|s| match *s {
            Sym::N(n) => g.nt_name(n).to_string(),
            Sym::T(t) => grammar_lang::syntax::lexer::quote(g.term_text(t)),
        })
        .collect::<Vec<_>>()
        .join(" ")
}

fn read(text: &str) -> Vec<Tree> {
    TreeReader::new(text.as_bytes())
        .map(|t| t.expect("a tree"))
        .collect()
}

#[test]
fn three_and_four_sightings_give_three_sevenths_and_four_sevenths() {
    // Maximum likelihood for a multinomial: count over the parent's count
    // (common practice).
    let mut text = String::new();
    for _ in 0..3 {
        text.push_str("(Trip (Leg out) (Leg back))\n");
    }
    for _ in 0..4 {
        text.push_str("(Trip (Leg out))\n");
    }
    let (source, analysis) = learn(&read(&text), Markov::LOSSLESS);
    assert!(
        analysis.diagnostics.is_empty(),
        "{source}\n{:?}",
        analysis.diagnostics
    );
    assert_eq!(
        probability(&analysis, "Trip", "Leg Leg"),
        Ratio::new_i64(3, 7)
    );
    assert_eq!(probability(&analysis, "Trip", "Leg"), Ratio::new_i64(4, 7));
    // "out" 7 times and "back" 3 times among 10 Legs.
    assert_eq!(
        probability(&analysis, "Leg", "\"out\""),
        Ratio::new_i64(7, 10)
    );
}

#[test]
fn the_learned_grammar_is_clean_and_in_canonical_layout() {
    let trees = read(
        "(S (NP (PRP$ our) (NN ferry)) (VP (VBZ leaves) (PP (IN at) (NP (CD nine))) (, ,) (ADVP (RB daily))))\n\
         (S (NP (NN ferry)) (VP (VBZ waits)))\n( (FRAG (NP (CD nine)) (. .)) )\n",
    );
    for how in [
        Markov::LOSSLESS,
        Markov {
            horizontal: Some(1),
            vertical: 2,
        },
        Markov {
            horizontal: Some(0),
            vertical: 3,
        },
    ] {
        let (source, analysis) = learn(&trees, how);
        assert!(
            analysis.diagnostics.is_empty(),
            "{how:?}\n{source}\n{:?}",
            analysis.diagnostics
        );
        let formatted = grammar_lang::format(&source, &grammar_lang::FormatOptions::default())
            .expect("formats");
        assert_eq!(formatted, source, "{how:?}: not in canonical layout");
        // And it checks clean as `trellis check` would see it.
        assert!(analysis.grammar.start.is_some());
    }
}

/// A known grammar of ferry announcements, with an n-ary rule so that
/// binarization matters. Its probabilities are the truth to recover.
const KNOWN: &str = r#"
start Call
Call { 0.6 Ferry Verb Time | 0.3 Ferry Verb | 0.1 Ferry Verb Time Place }
Ferry { 0.7 "the" Boat | 0.3 Boat }
Boat { 0.5 "ferry" | 0.25 "boat" | 0.25 "launch" }
Verb { 0.8 "leaves" | 0.2 "arrives" }
Time { 0.9 "now" | 0.1 "later" }
Place { 1 "here" }
"#;

#[test]
fn a_known_grammar_is_recovered_from_trees_sampled_from_it() {
    let truth = grammar_lang::analyze_text(KNOWN);
    assert!(truth.diagnostics.is_empty(), "{:?}", truth.diagnostics);
    let sampler = Sampler::new(&truth.grammar).expect("samples");
    let start = sampler.start().expect("a start");
    let mut rng = SplitMix64::new(20261203);
    let n = 50_000;
    let trees: Vec<Tree> = (0..n)
        .map(|_| sampler.tree(&mut rng, start, 1_000).expect("a tree"))
        .collect();
    let (source, learned) = learn(&trees, Markov::LOSSLESS);
    assert!(learned.diagnostics.is_empty(), "{source}");
    // Every rule of the known grammar: the learned probability is a
    // frequency over the parent's N uses; its standard error is
    // sqrt(p(1−p)/N) (binomial), and we allow 4.5 of them (a two-sided
    // normal tail of about 7e-6 per rule; common practice for such bounds).
    let g = &truth.grammar;
    for (id, rule) in g.rule_ids().map(|id| (id, g.rule(id))) {
        let lhs = g.nt_name(rule.lhs);
        let rhs = rule_rhs(g, id);
        let parent_uses: usize = trees.iter().map(|t| uses(t, lhs)).sum();
        let p = rule.p;
        let learned_p = learned_probability(&learned, lhs, &rhs);
        let bound = 4.5 * (p * (1.0 - p) / parent_uses as f64).sqrt();
        assert!(
            (learned_p - p).abs() <= bound.max(1e-12),
            "{lhs} → {rhs}: learned {learned_p}, true {p}, bound {bound} over {parent_uses} uses"
        );
    }
}

/// How many nodes of `tree` are labelled `label`.
fn uses(tree: &Tree, label: &str) -> usize {
    let mut n = 0;
    let mut stack = vec![tree];
    while let Some(t) = stack.pop() {
        if let Tree::Node { label: l, children } = t {
            n += usize::from(l == label);
            stack.extend(children.iter());
        }
    }
    n
}

/// The learned probability of an n-ary rule: the product along its
/// binarized chain (exact for lossless binarization).
fn learned_probability(learned: &grammar_lang::Analysis, lhs: &str, rhs: &str) -> f64 {
    let items: Vec<&str> = rhs.split(' ').collect();
    if items.len() <= 2 {
        return to_f64(&probability(learned, lhs, rhs));
    }
    let mut p = 1.0;
    let mut parent = lhs.to_string();
    for k in 0..items.len() - 2 {
        let rest: String = items[k + 1..].iter().map(|s| format!("+{s}")).collect();
        let inter = format!("{lhs}{rest}");
        p *= to_f64(&probability(
            learned,
            &parent,
            &format!("{} {inter}", items[k]),
        ));
        parent = inter;
    }
    p * to_f64(&probability(
        learned,
        &parent,
        &items[items.len() - 2..].join(" "),
    ))
}

/// Random trees over awkward labels (function tags, `$`, punctuation,
/// brackets), 1–5 children per node, words as leaves.
fn arb_tree() -> impl Strategy<Value = Tree> {
    let labels = prop::sample::select(vec![
        "S", "NP", "VP", "PRP$", ",", "-LRB-", "NP-SBJ", "S1", "_x", "Ö",
    ]);
    let words = prop::sample::select(vec!["ferry", "at", "nine", "(", "\"", "é"]);
    let leaf = (labels.clone(), words).prop_map(|(l, w)| Tree::node(l, vec![Tree::leaf(w)]));
    leaf.prop_recursive(5, 60, 5, move |inner| {
        (labels.clone(), prop::collection::vec(inner, 1..=5)).prop_map(|(l, c)| Tree::node(l, c))
    })
}

proptest! {
    #[test]
    fn debinarize_undoes_binarize_for_every_order(
        tree in arb_tree(),
        h in prop::option::of(0usize..4),
        v in 1usize..4,
    ) {
        let how = Markov { horizontal: h, vertical: v };
        let binary = binarize(&tree, how);
        // Every node of the binarized tree has at most two children, and
        // every name is a valid trellis symbol name.
        let mut stack = vec![&binary];
        while let Some(t) = stack.pop() {
            if let Tree::Node { label, children } = t {
                prop_assert!(children.len() <= 2);
                prop_assert!(grammar_lang::syntax::lexer::is_valid_symbol_name(label), "{label}");
                stack.extend(children.iter());
            }
        }
        prop_assert_eq!(debinarize(&binary), tree);
    }

    #[test]
    fn counting_while_binarizing_counts_what_binarizing_first_counts(
        trees in prop::collection::vec(arb_tree(), 1..6),
        h in prop::option::of(0usize..4),
        v in 1usize..5,
    ) {
        let how = Markov { horizontal: h, vertical: v };
        let (mut fused, mut apart) = (Counts::new(), Counts::new());
        for t in &trees {
            fused.add_binarized(t, how);
            apart.add(&binarize(t, how));
        }
        prop_assert_eq!(fused.trees(), apart.trees());
        prop_assert_eq!(fused.rule_count(), apart.rule_count());
        let options = LearnOptions { header: Vec::new(), rare: 1 };
        prop_assert_eq!(fused.to_source(&options), apart.to_source(&options));
    }
}

/// Learns with rare words (seen at most `rare` times) feeding the
/// unseen-word classes.
fn learn_rare(trees: &[Tree], how: Markov, rare: u64) -> (String, grammar_lang::Analysis) {
    let mut counts = Counts::new();
    for t in trees {
        counts.add(&binarize(t, how));
    }
    let text = counts.to_source(&LearnOptions {
        header: Vec::new(),
        rare,
    });
    let analysis = grammar_lang::analyze_text(&text);
    (text, analysis)
}

#[test]
fn rare_words_feed_their_shape_class_with_a_count_based_share() {
    let trees = read(
        "(S (NP (NNP Aino)) (VP (VBZ sails)))
         (S (NP (NNP Bertil)) (VP (VBZ sails)))
         (S (NP (NNP Aino)) (VP (VBZ docks)))
         (S (NP (NN ferry)) (VP (VBZ sails)))",
    );
    let (source, analysis) = learn_rare(&trees, Markov::LOSSLESS, 1);
    assert!(
        analysis.diagnostics.is_empty(),
        "{source}\n{:?}",
        analysis.diagnostics
    );
    // Counted by hand (maximum likelihood, count over the block's count;
    // common practice): NNP saw "Aino" twice and "Bertil" once; only
    // "Bertil" is rare (1 ≤ K = 1), and it is capitalised, so the block
    // holds Aino 2, Bertil 1, "<unseen:capitalised>" 1: 1/4 for the class.
    assert_eq!(
        probability(&analysis, "NNP", "\"<unseen:capitalised>\""),
        Ratio::new_i64(1, 4)
    );
    assert_eq!(
        probability(&analysis, "NNP", "\"Aino\""),
        Ratio::new_i64(2, 4)
    );
    // VBZ: sails 3, docks 1 (rare, suffix -s): docks 1/5, the class 1/5.
    assert_eq!(
        probability(&analysis, "VBZ", "\"<unseen:suffix-s>\""),
        Ratio::new_i64(1, 5)
    );
    // NN: ferry 1 (rare, lower-case, no listed suffix): 1/2 and 1/2.
    assert_eq!(
        probability(&analysis, "NN", "\"<unseen:lower>\""),
        Ratio::new_i64(1, 2)
    );

    // The learned grammar parses a sentence with words it never saw, each
    // read as its class, and the tree keeps the words as written.
    let parser = trellis_engine::parser::Parser::new(&analysis.grammar).expect("compiles");
    let best = parser
        .best_tree(&["Zorbo", "anchors"], 1 << 30)
        .expect("analysed")
        .expect("parses");
    assert_eq!(
        best.tree.to_brackets(),
        r#"(S (NP (NNP "Zorbo")) (VP (VBZ "anchors")))"#
    );
    // P = S→NP VP · NP→NNP · NNP→class · VP→VBZ · VBZ→class
    //   = 1 · 3/4 · 1/4 · 1 · 1/5 = 3/80.
    assert!((best.probability - 3.0 / 80.0).abs() < 1e-12, "{best:?}");
    assert_eq!(
        parser.unseen_words(&["Zorbo", "anchors"]),
        [
            (0, "Zorbo", "<unseen:capitalised>"),
            (1, "anchors", "<unseen:suffix-s>")
        ]
    );
    // Without rare words the same grammar knows no class and cannot parse it.
    let (_, plain) = learn_rare(&trees, Markov::LOSSLESS, 0);
    let parser = trellis_engine::parser::Parser::new(&plain.grammar).expect("compiles");
    assert_eq!(parser.best_tree(&["Zorbo", "anchors"], 1 << 30), Ok(None));
}
