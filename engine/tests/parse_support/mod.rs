//! Shared helpers of the parse tests: grammars written as rule lists and
//! read by the grammar-language front end, a
//! seeded generator of random grammars, and brute-force references that
//! follow the definitions directly (no chart, no binarization).
#![allow(dead_code)]

use grammar_lang::model::{Grammar, Sym};
use grammar_lang::tree::Tree;
use std::collections::HashMap;
use std::sync::Mutex;
use trellis_engine::parser::{Spread, Task};
use trellis_test_support::grammars::{grammar_text, ASTRONOMERS};

mod rng;
pub use rng::Rng;

/// Analyses the grammar of `grammar_text` with the front end; it must have
/// no errors.
pub fn grammar(start: &str, rules: &[(&str, &str, &str)]) -> Grammar {
    let text = grammar_text(start, rules);
    let analysis = grammar_lang::analyze_text(&text);
    assert!(!analysis.has_errors(), "{text}\n{:?}", analysis.diagnostics);
    analysis.grammar
}

/// Like [`grammar`], for grammars that the checks reject (the parser must
/// still refuse or handle them cleanly).
pub fn grammar_with_errors(start: &str, rules: &[(&str, &str, &str)]) -> Grammar {
    grammar_lang::analyze_text(&grammar_text(start, rules)).grammar
}

/// The textbook grammar of Manning & Schütze ([`ASTRONOMERS`], with its
/// source and published numbers), analysed; it must have no errors.
pub fn astronomers() -> Grammar {
    let analysis = grammar_lang::analyze_text(ASTRONOMERS);
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    analysis.grammar
}

/// Relative difference, 0 when both are 0.
pub fn rel(a: f64, b: f64) -> f64 {
    if a == b {
        0.0
    } else {
        (a - b).abs() / a.abs().max(b.abs())
    }
}

/// A random grammar over non-terminals `N0..N{nts-1}` (start `N0`) and
/// terminals "a", "b": every block has a lexical rule, plus random binary,
/// ternary (with a terminal in the middle), all-terminal and unary rules.
/// With `cycles == false`, unary rules only go from `Ni` to `Nj` with
/// `j > i`, so the unary graph is acyclic. Weights are small integers made
/// exact fractions of their block's sum, so each block sums to 1 and (with a
/// non-unary rule in every block) every unary cycle has product < 1.
pub fn random_grammar(rng: &mut Rng, nts: usize, cycles: bool) -> Grammar {
    let name = |i: usize| format!("N{i}");
    let mut rules: Vec<(String, String, u64)> = Vec::new();
    for a in 0..nts {
        let mut block: Vec<(String, u64)> = Vec::new();
        let term = ["\"a\"", "\"b\""][rng.below(2)];
        block.push((term.to_string(), 1 + rng.below(4) as u64));
        let extra = 1 + rng.below(4);
        for _ in 0..extra {
            let rhs = match rng.below(5) {
                0 | 1 => format!("{} {}", name(rng.below(nts)), name(rng.below(nts))),
                2 => format!("{} \"a\" {}", name(rng.below(nts)), name(rng.below(nts))),
                3 => "\"a\" \"b\"".to_string(),
                _ => {
                    let b = if cycles {
                        rng.below(nts)
                    } else if a + 1 < nts {
                        a + 1 + rng.below(nts - a - 1)
                    } else {
                        continue;
                    };
                    name(b)
                }
            };
            block.push((rhs, 1 + rng.below(4) as u64));
        }
        for (rhs, w) in block {
            rules.push((name(a), rhs, w));
        }
    }
    let sums: HashMap<String, u64> = rules.iter().fold(HashMap::new(), |mut m, (l, _, w)| {
        *m.entry(l.clone()).or_insert(0) += w;
        m
    });
    let weights: Vec<String> = rules
        .iter()
        .map(|(l, _, w)| format!("{w}/{}", sums[l]))
        .collect();
    let triples: Vec<(&str, &str, &str)> = rules
        .iter()
        .zip(&weights)
        .map(|((l, r, _), w)| (l.as_str(), r.as_str(), w.as_str()))
        .collect();
    grammar("N0", &triples)
}

/// Every derivation of `sym` over `words`, straight from the definition:
/// a rule's right-hand side is matched against every way of cutting the
/// span into non-empty pieces. Unary chains are cut off after `budget`
/// consecutive unary steps (every derivation when the unary graph is acyclic
/// and `budget` ≥ the number of non-terminals).
pub fn derivations(g: &Grammar, sym: u32, words: &[&str], budget: usize) -> Vec<(Tree, f64)> {
    let mut out = Vec::new();
    for (_, rule) in g.rules_of(grammar_lang::model::NtId(sym)) {
        let label = g.nt_name(rule.lhs).to_string();
        if rule.is_unary() {
            if budget == 0 {
                continue;
            }
            let Sym::N(child) = rule.rhs[0] else { continue };
            for (t, p) in derivations(g, child.0, words, budget - 1) {
                out.push((Tree::node(label.clone(), vec![t]), rule.p * p));
            }
            continue;
        }
        for (kids, p) in sequence(g, &rule.rhs, words, budget) {
            out.push((Tree::node(label.clone(), kids), rule.p * p));
        }
    }
    out
}

fn sequence(g: &Grammar, rhs: &[Sym], words: &[&str], budget: usize) -> Vec<(Vec<Tree>, f64)> {
    let Some((first, rest)) = rhs.split_first() else {
        return if words.is_empty() {
            vec![(Vec::new(), 1.0)]
        } else {
            Vec::new()
        };
    };
    let mut out = Vec::new();
    // The first item takes 1..=len − |rest| words (each item takes ≥ 1).
    for take in 1..=words.len().saturating_sub(rest.len()) {
        let heads: Vec<(Tree, f64)> = match *first {
            Sym::T(t) => {
                if take == 1 && g.term_text(t) == words[0] {
                    vec![(Tree::leaf(words[0]), 1.0)]
                } else {
                    Vec::new()
                }
            }
            Sym::N(n) => derivations(g, n.0, &words[..take], budget_for_child(g, budget)),
        };
        if heads.is_empty() {
            continue;
        }
        let tails = sequence(g, rest, &words[take..], budget);
        for (h, ph) in &heads {
            for (t, pt) in &tails {
                let mut kids = vec![h.clone()];
                kids.extend(t.iter().cloned());
                out.push((kids, ph * pt));
            }
        }
    }
    out
}

thread_local! {
    static FULL_BUDGET: std::cell::Cell<usize> = const { std::cell::Cell::new(0) };
}

/// Children of a non-unary rule start a fresh unary chain.
fn budget_for_child(_g: &Grammar, _budget: usize) -> usize {
    FULL_BUDGET.with(|b| b.get())
}

/// Every derivation of the start symbol over `words` with unary chains of at
/// most `budget` steps per span.
pub fn all_derivations(g: &Grammar, words: &[&str], budget: usize) -> Vec<(Tree, f64)> {
    FULL_BUDGET.with(|b| b.set(budget));
    let start = g.start.expect("test grammars have a start").0;
    derivations(g, start, words, budget)
}

/// The number of derivations with unary chains of at most `budget` steps
/// per span (by the same definition, memoised, saturating).
pub fn count_derivations(g: &Grammar, words: &[&str], budget: usize) -> u128 {
    let mut memo = HashMap::new();
    let start = g.start.expect("test grammars have a start").0;
    count_sym(g, start, words, 0, words.len(), budget, budget, &mut memo)
}

#[allow(clippy::too_many_arguments)]
fn count_sym(
    g: &Grammar,
    sym: u32,
    words: &[&str],
    i: usize,
    j: usize,
    left: usize,
    full: usize,
    memo: &mut HashMap<(u32, usize, usize, usize), u128>,
) -> u128 {
    if let Some(&c) = memo.get(&(sym, i, j, left)) {
        return c;
    }
    let mut total: u128 = 0;
    for (_, rule) in g.rules_of(grammar_lang::model::NtId(sym)) {
        if rule.is_unary() {
            if left > 0 {
                let Sym::N(child) = rule.rhs[0] else { continue };
                total =
                    total.saturating_add(count_sym(g, child.0, words, i, j, left - 1, full, memo));
            }
        } else {
            total = total.saturating_add(count_seq(g, &rule.rhs, words, i, j, full, memo));
        }
    }
    memo.insert((sym, i, j, left), total);
    total
}

fn count_seq(
    g: &Grammar,
    rhs: &[Sym],
    words: &[&str],
    i: usize,
    j: usize,
    full: usize,
    memo: &mut HashMap<(u32, usize, usize, usize), u128>,
) -> u128 {
    let Some((first, rest)) = rhs.split_first() else {
        return u128::from(i == j);
    };
    let mut total: u128 = 0;
    for mid in i + 1..=j.saturating_sub(rest.len()) {
        let head = match *first {
            Sym::T(t) => u128::from(mid == i + 1 && g.term_text(t) == words[i]),
            Sym::N(n) => count_sym(g, n.0, words, i, mid, full, full, memo),
        };
        if head > 0 {
            total = total
                .saturating_add(head.saturating_mul(count_seq(g, rest, words, mid, j, full, memo)));
        }
    }
    total
}

/// P(words) by fixed-point iteration of the inside equations on the user's
/// rules (no binarization, no matrix inverse): within each span the unary
/// part is iterated until it no longer changes, i.e. the series Σ Uᵏ is
/// summed term by term.
pub fn inside_by_iteration(g: &Grammar, words: &[&str]) -> f64 {
    let n = words.len();
    let nts = g.nonterminals.len();
    let mut ins: HashMap<(usize, usize), Vec<f64>> = HashMap::new();
    for len in 1..=n {
        for i in 0..=n - len {
            let j = i + len;
            let mut base = vec![0.0; nts];
            for (a, slot) in base.iter_mut().enumerate() {
                for (_, rule) in g.rules_of(grammar_lang::model::NtId(a as u32)) {
                    if !rule.is_unary() {
                        *slot += rule.p * seq_inside(g, &rule.rhs, words, i, j, &ins);
                    }
                }
            }
            let mut v = base.clone();
            for _ in 0..100_000 {
                let mut next = base.clone();
                for (a, slot) in next.iter_mut().enumerate() {
                    for (_, rule) in g.rules_of(grammar_lang::model::NtId(a as u32)) {
                        if let (true, Sym::N(b)) = (rule.is_unary(), rule.rhs[0]) {
                            *slot += rule.p * v[b.index()];
                        }
                    }
                }
                let done = next.iter().zip(&v).all(|(x, y)| rel(*x, *y) < 1e-16);
                v = next;
                if done {
                    break;
                }
            }
            ins.insert((i, j), v);
        }
    }
    ins[&(0, n)][g.start.expect("start").index()]
}

fn seq_inside(
    g: &Grammar,
    rhs: &[Sym],
    words: &[&str],
    i: usize,
    j: usize,
    ins: &HashMap<(usize, usize), Vec<f64>>,
) -> f64 {
    let Some((first, rest)) = rhs.split_first() else {
        return if i == j { 1.0 } else { 0.0 };
    };
    let mut total = 0.0;
    for mid in i + 1..=j.saturating_sub(rest.len()) {
        let head = match *first {
            Sym::T(t) => {
                if mid == i + 1 && g.term_text(t) == words[i] {
                    1.0
                } else {
                    0.0
                }
            }
            Sym::N(nt) => ins.get(&(i, mid)).map_or(0.0, |v| v[nt.index()]),
        };
        if head > 0.0 {
            total += head * seq_inside(g, rest, words, mid, j, ins);
        }
    }
    total
}

/// All strings over {a, b} of length 1..=max_len.
pub fn all_sentences(max_len: usize) -> Vec<Vec<&'static str>> {
    let mut out = Vec::new();
    for len in 1..=max_len {
        for bits in 0..(1u32 << len) {
            out.push(
                (0..len)
                    .map(|k| if bits >> k & 1 == 1 { "b" } else { "a" })
                    .collect(),
            );
        }
    }
    out
}

/// Runs tasks on two scoped threads, last first, and spreads every batch,
/// however small.
pub struct Scrambled;

impl Spread for Scrambled {
    fn threads(&self) -> usize {
        2
    }

    fn run<'a>(&self, tasks: Vec<Task<'a>>) {
        let queue = Mutex::new(tasks);
        std::thread::scope(|s| {
            for _ in 0..2 {
                s.spawn(|| loop {
                    let task = queue.lock().expect("no task panics").pop();
                    match task {
                        Some(t) => t(),
                        None => break,
                    }
                });
            }
        });
    }

    fn min_work(&self) -> u64 {
        0
    }
}
