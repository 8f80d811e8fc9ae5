//! PARSEVAL: how well predicted trees match gold trees, by labelled
//! brackets (Black et al. 1991, "A procedure for quantitatively comparing
//! the syntactic coverage of English grammars"), with the conventions of
//! the EVALB program (Sekine and Collins 1997) where the original leaves a
//! choice:
//!
//! * a bracket is a node's label and the span of words it covers; every
//!   node is one except words and pre-terminals (a node whose only child is
//!   a word) — so unary nodes above a pre-terminal count;
//! * brackets match as multisets: a gold bracket matches at most one
//!   predicted bracket with the same label and span;
//! * a predicted bracket crosses the gold tree when it overlaps some gold
//!   bracket without either containing the other;
//! * words under punctuation pre-terminals (a label list) are removed
//!   before spans are computed and do not count towards the length;
//! * labels in one equivalence class count as the same label.

use grammar_lang::tree::Tree;
use std::collections::{BTreeMap, HashMap};

/// The conventional options.
#[derive(Clone, Debug, Default)]
pub struct EvalOptions {
    /// Do not count the root's bracket.
    pub ignore_root: bool,
    /// Pre-terminal labels whose words are punctuation (removed first).
    pub punctuation: Vec<String>,
    /// Classes of labels that count as one (`ADVP`, `PRT`).
    pub equivalent: Vec<Vec<String>>,
    /// Sentences longer than this (after punctuation is removed) are left
    /// out of the totals.
    pub max_length: Option<usize>,
}

/// One labelled bracket: label and word span `[start, end)`.
#[derive(Clone, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Bracket {
    pub label: String,
    pub start: usize,
    pub end: usize,
}

/// The score of one sentence.
#[derive(Clone, Debug, Default, PartialEq, Eq)]
pub struct SentenceScore {
    /// Words counted (punctuation removed).
    pub length: usize,
    pub gold: usize,
    pub test: usize,
    pub matched: usize,
    /// Predicted brackets that cross a gold bracket.
    pub crossing: usize,
    /// Left out of the totals by the length cut-off.
    pub skipped: bool,
    /// Per label: (matched, gold, test).
    pub labels: BTreeMap<String, (usize, usize, usize)>,
}

impl SentenceScore {
    /// Both trees have exactly the same brackets.
    pub fn exact(&self) -> bool {
        self.matched == self.gold && self.matched == self.test
    }
}

/// Why two trees cannot be compared.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Mismatch {
    /// Different numbers of words.
    Length { gold: usize, test: usize },
    /// The words differ at this position (0-based).
    Word {
        at: usize,
        gold: String,
        test: String,
    },
}

impl std::fmt::Display for Mismatch {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Mismatch::Length { gold, test } => {
                write!(
                    f,
                    "the gold tree has {gold} words but the predicted tree {test}"
                )
            }
            Mismatch::Word { at, gold, test } => write!(
                f,
                "word {} differs: `{gold}` in the gold tree, `{test}` in the predicted one",
                at + 1
            ),
        }
    }
}

impl EvalOptions {
    fn canonical<'a>(&'a self, label: &'a str) -> &'a str {
        self.equivalent
            .iter()
            .find(|class| class.iter().any(|l| l == label))
            .and_then(|class| class.first())
            .map(String::as_str)
            .unwrap_or(label)
    }
}

/// The words and brackets of a tree under `options`. Iterative.
pub fn brackets(tree: &Tree, options: &EvalOptions) -> (Vec<String>, Vec<Bracket>) {
    enum Step<'a> {
        Enter(&'a Tree, bool),
        Close(&'a str, usize, bool),
    }
    let mut words = Vec::new();
    let mut out = Vec::new();
    let mut steps = vec![Step::Enter(tree, true)];
    while let Some(step) = steps.pop() {
        match step {
            Step::Enter(Tree::Leaf(word), _) => words.push(word.clone()),
            Step::Enter(Tree::Node { label, children }, root) => {
                let pre_terminal = matches!(children.as_slice(), [Tree::Leaf(_)]);
                if pre_terminal {
                    if !options.punctuation.iter().any(|p| p == label) {
                        if let [Tree::Leaf(word)] = children.as_slice() {
                            words.push(word.clone());
                        }
                    }
                    continue;
                }
                steps.push(Step::Close(label, words.len(), root));
                for child in children.iter().rev() {
                    steps.push(Step::Enter(child, false));
                }
            }
            Step::Close(label, start, root) => {
                let end = words.len();
                if (root && options.ignore_root) || start == end {
                    continue;
                }
                out.push(Bracket {
                    label: options.canonical(label).to_string(),
                    start,
                    end,
                });
            }
        }
    }
    (words, out)
}

/// Scores a predicted tree against its gold tree.
pub fn score(gold: &Tree, test: &Tree, options: &EvalOptions) -> Result<SentenceScore, Mismatch> {
    let (gold_words, gold_brackets) = brackets(gold, options);
    let (test_words, test_brackets) = brackets(test, options);
    if gold_words.len() != test_words.len() {
        return Err(Mismatch::Length {
            gold: gold_words.len(),
            test: test_words.len(),
        });
    }
    if let Some(at) = gold_words.iter().zip(&test_words).position(|(g, t)| g != t) {
        return Err(Mismatch::Word {
            at,
            gold: gold_words[at].clone(),
            test: test_words[at].clone(),
        });
    }
    let mut unmatched: HashMap<&Bracket, usize> = HashMap::new();
    for b in &gold_brackets {
        *unmatched.entry(b).or_default() += 1;
    }
    let mut labels: BTreeMap<String, (usize, usize, usize)> = BTreeMap::new();
    for b in &gold_brackets {
        labels.entry(b.label.clone()).or_default().1 += 1;
    }
    let mut matched = 0;
    let mut crossing = 0;
    for b in &test_brackets {
        labels.entry(b.label.clone()).or_default().2 += 1;
        if let Some(n) = unmatched.get_mut(b).filter(|n| **n > 0) {
            *n -= 1;
            matched += 1;
            labels.entry(b.label.clone()).or_default().0 += 1;
            continue;
        }
        let crosses = gold_brackets.iter().any(|g| {
            (b.start < g.start && g.start < b.end && b.end < g.end)
                || (g.start < b.start && b.start < g.end && g.end < b.end)
        });
        crossing += usize::from(crosses);
    }
    let length = gold_words.len();
    Ok(SentenceScore {
        length,
        gold: gold_brackets.len(),
        test: test_brackets.len(),
        matched,
        crossing,
        skipped: options.max_length.is_some_and(|max| length > max),
        labels,
    })
}

/// Totals over sentences (those not skipped).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct Totals {
    pub sentences: usize,
    pub skipped: usize,
    pub gold: usize,
    pub test: usize,
    pub matched: usize,
    pub crossing: usize,
    pub exact: usize,
    pub no_crossing: usize,
    pub labels: BTreeMap<String, (usize, usize, usize)>,
}

impl Totals {
    pub fn add(&mut self, s: &SentenceScore) {
        if s.skipped {
            self.skipped += 1;
            return;
        }
        self.sentences += 1;
        self.gold += s.gold;
        self.test += s.test;
        self.matched += s.matched;
        self.crossing += s.crossing;
        self.exact += usize::from(s.exact());
        self.no_crossing += usize::from(s.crossing == 0);
        for (label, (m, g, t)) in &s.labels {
            let e = self.labels.entry(label.clone()).or_default();
            e.0 += m;
            e.1 += g;
            e.2 += t;
        }
    }

    /// Precision, recall and F1 (as fractions; 0 where undefined).
    pub fn prf(matched: usize, gold: usize, test: usize) -> (f64, f64, f64) {
        let ratio = |a: usize, b: usize| if b == 0 { 0.0 } else { a as f64 / b as f64 };
        let (p, r) = (ratio(matched, test), ratio(matched, gold));
        let f = if p + r == 0.0 {
            0.0
        } else {
            2.0 * p * r / (p + r)
        };
        (p, r, f)
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
    fn a_hand_computed_pair() {
        // Gold: (S (NP (D a) (N ferry)) (VP (V sails) (PP (P to) (NP (N oxna)))))
        //   brackets S[0,5) NP[0,2) VP[2,5) PP[3,5) NP[4,5)     → 5
        // Test: (S (NP (D a) (N ferry) (V sails)) (PP (P to) (N oxna)))
        //   brackets S[0,5) NP[0,3) PP[3,5)                      → 3
        // Matched S, PP → 2; precision 2/3, recall 2/5, F1 = 2·(2/3)(2/5)/(2/3+2/5) = 1/2.
        // NP[0,3) crosses VP[2,5) (0<2<3<5): 1 crossing bracket.
        let g = tree("(S (NP (D a) (N ferry)) (VP (V sails) (PP (P to) (NP (N oxna)))))");
        let t = tree("(S (NP (D a) (N ferry) (V sails)) (PP (P to) (N oxna)))");
        let s = score(&g, &t, &EvalOptions::default()).unwrap();
        assert_eq!((s.matched, s.gold, s.test, s.crossing), (2, 5, 3, 1));
        let (p, r, f) = Totals::prf(s.matched, s.gold, s.test);
        assert!(
            (p - 2.0 / 3.0).abs() < 1e-12 && (r - 0.4).abs() < 1e-12 && (f - 0.5).abs() < 1e-12
        );
        assert_eq!(s.labels["NP"], (0, 2, 1));
        assert!(!s.exact());
    }

    #[test]
    fn punctuation_root_and_equivalent_labels() {
        // Without the comma the spans shift: ADVP[2,3) in both, once the
        // comma's word is gone; PRT and ADVP count as one label.
        let g = tree("(S (NP (N ferries)) (, ,) (VP (V sail) (ADVP (R out))))");
        let t = tree("(S (NP (N ferries)) (, ,) (VP (V sail) (PRT (R out))))");
        let options = EvalOptions {
            ignore_root: true,
            punctuation: vec![",".into()],
            equivalent: vec![vec!["ADVP".into(), "PRT".into()]],
            max_length: Some(2),
        };
        let s = score(&g, &t, &options).unwrap();
        // NP[0,1) VP[1,3) ADVP[2,3): all three match; the root is ignored.
        assert_eq!((s.matched, s.gold, s.test, s.length), (3, 3, 3, 3));
        assert!(s.exact());
        // Three words is over the cut-off of two.
        assert!(s.skipped);
    }

    #[test]
    fn unary_chains_match_as_multisets() {
        // Gold has NP twice over [0,1) (a unary chain); the test has it once.
        let g = tree("(S (NP (NP (N ferries))) (V sail))");
        let t = tree("(S (NP (N ferries)) (V sail))");
        let s = score(&g, &t, &EvalOptions::default()).unwrap();
        assert_eq!((s.matched, s.gold, s.test), (2, 3, 2));
    }

    #[test]
    fn different_words_cannot_be_compared() {
        let g = tree("(S (A x) (B y))");
        assert_eq!(
            score(&g, &tree("(S (A x))"), &EvalOptions::default()),
            Err(Mismatch::Length { gold: 2, test: 1 })
        );
        assert_eq!(
            score(&g, &tree("(S (A x) (B z))"), &EvalOptions::default())
                .unwrap_err()
                .to_string(),
            "word 2 differs: `y` in the gold tree, `z` in the predicted one"
        );
    }
}
