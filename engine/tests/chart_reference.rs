//! The Viterbi and inside passes against a plain dense CKY written here
//! from the definitions (Manning & Schütze 1999, §11.3: the inside
//! algorithm; its max-product form for the best tree), on random grammars
//! large enough to take every way the passes visit rules; and the same
//! parses spread over several threads, in scrambled order, against the
//! calling thread alone: equal bit for bit.

mod parse_support;

use grammar_lang::model::{Grammar, NtId, Ratio, Rule, Sym};
use grammar_lang::{FileId, Location, Span};
use num_bigint::BigInt;
use parse_support::{rel, Rng, Scrambled};
use trellis_engine::parser::{ParseOptions, Parser, Workers};

/// A random grammar in binary, unary and lexical rules over `nts`
/// non-terminals (start `N0`) and the words `w0..w{words-1}`; unary rules
/// only from `Ni` to `Nj` with `j > i`, so chains are finite.
fn random_grammar(rng: &mut Rng, nts: usize, binary_per_nt: usize, words: usize) -> Grammar {
    let mut g = Grammar::new();
    let ids: Vec<NtId> = (0..nts).map(|i| g.intern_nt(&format!("N{i}"))).collect();
    g.start = Some(ids[0]);
    for a in 0..nts {
        let mut rhs: Vec<Vec<Sym>> = Vec::new();
        for _ in 0..binary_per_nt {
            rhs.push(vec![
                Sym::N(ids[rng.below(nts)]),
                Sym::N(ids[rng.below(nts)]),
            ]);
        }
        if a + 1 < nts && rng.below(3) == 0 {
            rhs.push(vec![Sym::N(ids[a + 1 + rng.below(nts - a - 1)])]);
        }
        for _ in 0..1 + rng.below(3) {
            let t = g.intern_term(&format!("w{}", rng.below(words)));
            rhs.push(vec![Sym::T(t)]);
        }
        rhs.sort_by_key(|r| format!("{r:?}"));
        rhs.dedup();
        let weights: Vec<u64> = rhs.iter().map(|_| 1 + rng.below(9) as u64).collect();
        let sum: u64 = weights.iter().sum();
        for (rhs, w) in rhs.into_iter().zip(weights) {
            g.push_rule(Rule {
                lhs: ids[a],
                rhs,
                weight: None,
                p: w as f64 / sum as f64,
                probability: Ratio::new(BigInt::from(w), BigInt::from(sum)),
                location: Location::new(FileId(0), Span::new(0, 0)),
                doc: None,
            });
        }
    }
    g
}

/// Dense CKY over `words`: with `max`, the log-probability of the best
/// tree; otherwise the inside probability (linear space: the sentences
/// here are short). `None` when the sentence does not parse.
fn reference(g: &Grammar, words: &[&str], max: bool) -> Option<f64> {
    let (n, m) = (words.len(), g.nonterminals.len());
    let zero = if max { f64::NEG_INFINITY } else { 0.0 };
    let mut chart = vec![zero; (n + 1) * (n + 1) * m];
    let at = |i: usize, j: usize, a: usize| (i * (n + 1) + j) * m + a;
    let combine = |old: f64, new: f64| if max { old.max(new) } else { old + new };
    for len in 1..=n {
        for i in 0..=n - len {
            let j = i + len;
            for rule in &g.rules {
                let (a, p) = (rule.lhs.0 as usize, rule.p);
                let w = if max { p.ln() } else { p };
                match rule.rhs[..] {
                    [Sym::T(t)] if len == 1 && g.term_text(t) == words[i] => {
                        chart[at(i, j, a)] = combine(chart[at(i, j, a)], w);
                    }
                    [Sym::N(l), Sym::N(r)] => {
                        for k in i + 1..j {
                            let (x, y) =
                                (chart[at(i, k, l.0 as usize)], chart[at(k, j, r.0 as usize)]);
                            let v = if max { w + x + y } else { w * x * y };
                            chart[at(i, j, a)] = combine(chart[at(i, j, a)], v);
                        }
                    }
                    _ => {}
                }
            }
            // Unary rules go from lower to higher numbers: one pass from
            // the highest parent down applies every chain, each once.
            for rule in g.rules.iter().rev() {
                if let [Sym::N(c)] = rule.rhs[..] {
                    let (a, c) = (rule.lhs.0 as usize, c.0 as usize);
                    let v = if max {
                        rule.p.ln() + chart[at(i, j, c)]
                    } else {
                        rule.p * chart[at(i, j, c)]
                    };
                    chart[at(i, j, a)] = combine(chart[at(i, j, a)], v);
                }
            }
        }
    }
    let root = chart[at(0, n, g.start?.0 as usize)];
    (root != zero).then_some(root)
}

fn sentence<'a>(rng: &mut Rng, vocabulary: &'a [String], len: usize) -> Vec<&'a str> {
    (0..len)
        .map(|_| vocabulary[rng.below(vocabulary.len())].as_str())
        .collect()
}

#[test]
fn viterbi_and_inside_match_a_dense_reference_on_random_grammars() {
    let mut rng = Rng(14);
    let mut parsed = 0;
    for round in 0..24 {
        let (nts, per_nt, vocabulary) = [(6, 3, 4), (20, 8, 6), (40, 30, 10)][round % 3];
        let g = random_grammar(&mut rng, nts, per_nt, vocabulary);
        let parser = Parser::new(&g).expect("compiles");
        let words: Vec<String> = (0..vocabulary).map(|w| format!("w{w}")).collect();
        for len in [1, 2, 5, 9] {
            let s = sentence(&mut rng, &words, len);
            let options = ParseOptions {
                count_parses: false,
                ..ParseOptions::default()
            };
            let outcome = parser.parse(&s, &options).expect("fits");
            match (reference(&g, &s, true), &outcome.best) {
                (None, None) => continue,
                (Some(best), Some(tree)) => {
                    assert!(
                        rel(best, tree.log_probability) < 1e-12,
                        "{s:?}: {best} vs {tree:?}"
                    );
                }
                (expected, found) => panic!("{s:?}: reference {expected:?}, found {found:?}"),
            }
            let inside = reference(&g, &s, false).expect("parses").ln();
            assert!(
                rel(inside, outcome.sentence_log_probability) < 1e-10,
                "{s:?}: {inside} vs {}",
                outcome.sentence_log_probability
            );
            parsed += 1;
        }
    }
    assert!(parsed >= 40, "only {parsed} sentences parsed");
}

#[test]
fn parses_spread_over_threads_equal_the_calling_threads_bit_for_bit() {
    let mut rng = Rng(41);
    let spread = Workers::new(Scrambled);
    for round in 0..6 {
        let g = random_grammar(&mut rng, 30, 12, 6);
        let parser = Parser::new(&g).expect("compiles");
        let words: Vec<String> = (0..6).map(|w| format!("w{w}")).collect();
        for len in [3, 8, 14] {
            let s = sentence(&mut rng, &words, len);
            let alone = ParseOptions {
                kbest: 1 + round % 3,
                ..ParseOptions::default()
            };
            let together = ParseOptions {
                workers: spread.clone(),
                ..alone.clone()
            };
            let a = parser.parse(&s, &alone).expect("fits");
            let b = parser.parse(&s, &together).expect("fits");
            assert_eq!(a, b, "{s:?}");
            assert_eq!(
                a.sentence_log_probability.to_bits(),
                b.sentence_log_probability.to_bits()
            );
            assert_eq!(
                parser.best_tree(&s, u64::MAX).expect("fits"),
                parser
                    .best_tree_with(&s, &together, &|| false)
                    .expect("fits")
            );
        }
    }
}
