//! Why a sentence did not parse.
//!
//! Three facts, each precise and in the user's own symbols:
//! * **unknown words** — words no rule produces, with the closest known
//!   words (optimal-string-alignment edit distance: insertions, deletions,
//!   substitutions and swaps of two neighbouring characters);
//! * **fragments** — the largest spans that do analyse (no analysable span
//!   contains them), with every user category that covers them, best first;
//! * **breakdown** — the longest prefix that some analysis rooted in the
//!   start symbol covers, computed by an Earley recognizer over the user's
//!   rules (a prefix is viable exactly when its Earley set is non-empty),
//!   the word where every such analysis fails, and the words the grammar
//!   would accept there.

use crate::compile::{CompiledGrammar, Item};
use crate::viterbi::ViterbiChart;
use grammar_lang::check::suggest::distance as edit_distance;
use grammar_lang::syntax::lexer::quote;
use std::collections::{BTreeSet, HashMap, HashSet};
use std::fmt;

/// How many expected words a breakdown lists before summarising the rest.
const MAX_EXPECTED: usize = 12;
/// How many suggestions an unknown word gets at most.
const MAX_SUGGESTIONS: usize = 3;

#[derive(Clone, Debug, PartialEq)]
pub struct Explanation {
    pub unknown_words: Vec<UnknownWord>,
    pub fragments: Vec<Fragment>,
    pub breakdown: Breakdown,
}

/// A word that no rule of the grammar produces.
#[derive(Clone, Debug, PartialEq)]
pub struct UnknownWord {
    /// 0-based word position.
    pub position: usize,
    pub word: String,
    /// Closest known words, nearest first.
    pub suggestions: Vec<String>,
}

/// A maximal span that analyses as some user category.
#[derive(Clone, Debug, PartialEq)]
pub struct Fragment {
    /// 0-based half-open word range `start..end`.
    pub start: usize,
    pub end: usize,
    pub text: String,
    /// Every user category that derives the span, most probable first.
    pub categories: Vec<Category>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Category {
    pub symbol: String,
    /// Log-probability of the category's best derivation of the span.
    pub log_probability: f64,
}

/// Where every analysis from the start symbol fails.
#[derive(Clone, Debug, PartialEq)]
pub struct Breakdown {
    pub start_symbol: String,
    /// Number of leading words that some start-rooted analysis covers.
    pub prefix_words: usize,
    /// The first word no analysis can take, or `None` when the whole sentence
    /// is a viable prefix (it ends too early).
    pub stuck_at: Option<UnknownPosition>,
    /// Words the grammar accepts at that point (quoted), at most 12.
    pub expected: Vec<String>,
    /// How many more expected words there are beyond `expected`.
    pub more_expected: usize,
}

#[derive(Clone, Debug, PartialEq)]
pub struct UnknownPosition {
    pub position: usize,
    pub word: String,
}

impl Explanation {
    /// The explanation as readable lines (word positions are 1-based here).
    pub fn render(&self) -> Vec<String> {
        let mut lines = Vec::new();
        for u in &self.unknown_words {
            let mut line = format!("unknown word {} (word {})", quote(&u.word), u.position + 1);
            if u.suggestions.is_empty() {
                line.push_str(": no similar word in the grammar");
            } else {
                let s: Vec<String> = u.suggestions.iter().map(|s| quote(s)).collect();
                line.push_str(&format!("; did you mean {}?", s.join(" or ")));
            }
            lines.push(line);
        }
        let b = &self.breakdown;
        let expected = if b.expected.is_empty() {
            String::new()
        } else if b.more_expected > 0 {
            format!(
                "; expected there: {} or {} more",
                b.expected.join(", "),
                b.more_expected
            )
        } else {
            format!("; expected there: {}", b.expected.join(", "))
        };
        match &b.stuck_at {
            Some(at) if b.prefix_words == 0 => lines.push(format!(
                "no analysis from {} can begin with {} (word 1){expected}",
                b.start_symbol,
                quote(&at.word)
            )),
            Some(at) => lines.push(format!(
                "every analysis from {} breaks down at {} (word {}), after the first {} word{}{expected}",
                b.start_symbol,
                quote(&at.word),
                at.position + 1,
                b.prefix_words,
                if b.prefix_words == 1 { "" } else { "s" }
            )),
            None => lines.push(format!(
                "the sentence ends too early: every analysis from {} needs more words{}",
                b.start_symbol,
                expected.replace("expected there", "next could be")
            )),
        }
        if self.fragments.is_empty() {
            lines.push("no span of the sentence analyses as any category".to_string());
        }
        for f in &self.fragments {
            let cats: Vec<String> = f
                .categories
                .iter()
                .map(|c| {
                    format!(
                        "{} (p ≈ {})",
                        c.symbol,
                        crate::numbers::probability(c.log_probability.exp())
                    )
                })
                .collect();
            let (range, verb) = if f.end - f.start == 1 {
                (format!("word {}", f.start + 1), "analyses")
            } else {
                (format!("words {}–{}", f.start + 1, f.end), "analyse")
            };
            lines.push(format!(
                "{range} {} {verb} as {}",
                quote(&f.text),
                cats.join(", ")
            ));
        }
        lines
    }
}

impl fmt::Display for Explanation {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        for (n, line) in self.render().iter().enumerate() {
            if n > 0 {
                f.write_str("\n")?;
            }
            f.write_str(line)?;
        }
        Ok(())
    }
}

pub(crate) fn explain(g: &CompiledGrammar, words: &[&str], vit: &ViterbiChart) -> Explanation {
    Explanation {
        unknown_words: unknown_words(g, words),
        fragments: fragments(g, words, vit),
        breakdown: breakdown(g, words),
    }
}

fn unknown_words(g: &CompiledGrammar, words: &[&str]) -> Vec<UnknownWord> {
    let mut out = Vec::new();
    for (position, &word) in words.iter().enumerate() {
        if g.lexicon.contains_key(word) {
            continue;
        }
        let len = word.chars().count();
        let limit = match len {
            0..=3 => 1,
            4..=6 => 2,
            _ => len / 3,
        };
        let mut near: Vec<(usize, &str)> = g
            .lexicon
            .keys()
            .filter_map(|known| {
                let d = edit_distance(word, known);
                (d <= limit).then_some((d, known.as_str()))
            })
            .collect();
        near.sort();
        out.push(UnknownWord {
            position,
            word: word.to_string(),
            suggestions: near
                .into_iter()
                .take(MAX_SUGGESTIONS)
                .map(|(_, w)| w.to_string())
                .collect(),
        });
    }
    out
}

fn fragments(g: &CompiledGrammar, words: &[&str], vit: &ViterbiChart) -> Vec<Fragment> {
    let n = words.len();
    let layout = vit.layout;
    let analysable =
        |i: usize, j: usize| vit.present(layout.cell(i, j)).iter().any(|&s| g.is_user(s));
    // covered[i][j]: some analysable span contains i..j (itself included).
    let mut covered = vec![false; (n + 1) * (n + 1)];
    let mut out = Vec::new();
    for len in (1..=n).rev() {
        for i in 0..=n - len {
            let j = i + len;
            let by_larger = (i > 0 && covered[(i - 1) * (n + 1) + j])
                || (j < n && covered[i * (n + 1) + j + 1]);
            let here = analysable(i, j);
            covered[i * (n + 1) + j] = by_larger || here;
            if here && !by_larger {
                let c = layout.cell(i, j);
                let mut categories: Vec<Category> = vit
                    .present(c)
                    .iter()
                    .filter(|&&s| g.is_user(s))
                    .map(|&s| Category {
                        symbol: g.names[s as usize].clone(),
                        log_probability: vit.score[c * layout.n_sym + s as usize],
                    })
                    .collect();
                categories.sort_by(|a, b| {
                    b.log_probability
                        .total_cmp(&a.log_probability)
                        .then_with(|| a.symbol.cmp(&b.symbol))
                });
                out.push(Fragment {
                    start: i,
                    end: j,
                    text: words[i..j].join(" "),
                    categories,
                });
            }
        }
    }
    out.sort_by_key(|f| (f.start, f.end));
    out
}

/// An Earley item: user rule, dot position, origin.
type EarleyItem = (u32, u32, u32);

/// The Earley sets over the user's rules, one per position.
struct Earley {
    sets: Vec<Vec<EarleyItem>>,
    seen: Vec<HashSet<EarleyItem>>,
    /// Per set, its items waiting for each symbol (in the set's order), so
    /// that completing a symbol visits only the items that wait for it.
    waiting: Vec<HashMap<u32, Vec<EarleyItem>>>,
}

impl Earley {
    /// Adds `item` to set `at` unless it is there.
    fn add(&mut self, g: &CompiledGrammar, at: usize, item: EarleyItem) {
        if self.seen[at].insert(item) {
            self.push(g, at, item);
        }
    }

    /// Adds the rules of a symbol predicted at `at`, with the dot at their
    /// start: no other step makes such items, and a symbol is predicted
    /// once per set, so they need no look-up in `seen` (most items of a
    /// large grammar's sets are these).
    fn predict(&mut self, g: &CompiledGrammar, at: usize, symbol: u32) {
        for &r in &g.user_rules_of[symbol as usize] {
            self.push(g, at, (r, 0, at as u32));
        }
    }

    fn push(&mut self, g: &CompiledGrammar, at: usize, item: EarleyItem) {
        self.sets[at].push(item);
        if let Some(Item::N(b)) = g.user_rules[item.0 as usize].1.get(item.1 as usize) {
            self.waiting[at].entry(*b).or_default().push(item);
        }
    }
}

#[allow(clippy::needless_range_loop)] // set `i` is filled while it is read
fn breakdown(g: &CompiledGrammar, words: &[&str]) -> Breakdown {
    let n = words.len();
    let mut chart = Earley {
        sets: vec![Vec::new(); n + 1],
        seen: vec![HashSet::new(); n + 1],
        waiting: vec![HashMap::new(); n + 1],
    };
    chart.predict(g, 0, g.start);
    let mut prefix = 0;
    for i in 0..=n {
        if chart.sets[i].is_empty() {
            break;
        }
        prefix = i;
        let mut predicted: HashSet<u32> = HashSet::new();
        if i == 0 {
            predicted.insert(g.start);
        }
        // (symbol, origin) pairs completed here: completing one again
        // would only add items the set has.
        let mut completed: HashSet<(u32, u32)> = HashSet::new();
        let mut pos = 0;
        while pos < chart.sets[i].len() {
            let (r, dot, origin) = chart.sets[i][pos];
            pos += 1;
            let (lhs, rhs) = &g.user_rules[r as usize];
            match rhs.get(dot as usize) {
                Some(Item::N(b)) => {
                    if predicted.insert(*b) {
                        chart.predict(g, i, *b);
                    }
                }
                Some(Item::T(w)) => {
                    if i < n && words[i] == w {
                        chart.add(g, i + 1, (r, dot + 1, origin));
                    }
                }
                None => {
                    // No empty rules: the origin set is finished.
                    if (origin as usize) < i && completed.insert((*lhs, origin)) {
                        let for_lhs = chart.waiting[origin as usize]
                            .get(lhs)
                            .cloned()
                            .unwrap_or_default();
                        for (r2, d2, o2) in for_lhs {
                            chart.add(g, i, (r2, d2 + 1, o2));
                        }
                    }
                }
            }
        }
    }
    let mut expected: BTreeSet<String> = BTreeSet::new();
    for &(r, dot, _) in &chart.sets[prefix] {
        if let Some(Item::T(w)) = g.user_rules[r as usize].1.get(dot as usize) {
            expected.insert(quote(w));
        }
    }
    let total = expected.len();
    Breakdown {
        start_symbol: g.names[g.start as usize].clone(),
        prefix_words: prefix,
        stuck_at: (prefix < n).then(|| UnknownPosition {
            position: prefix,
            word: words[prefix].to_string(),
        }),
        expected: expected.into_iter().take(MAX_EXPECTED).collect(),
        more_expected: total.saturating_sub(MAX_EXPECTED),
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_counts_a_swap_of_neighbours_as_one_edit() {
        // Optimal string alignment distance; values worked by hand.
        assert_eq!(edit_distance("tikcet", "ticket"), 1);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("", "abc"), 3);
        assert_eq!(edit_distance("fähre", "fahre"), 1);
    }
}
