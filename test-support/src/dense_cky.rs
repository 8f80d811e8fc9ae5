//! The straightforward CKY that the engine's chart passes are measured
//! against in the benchmarks (engine and treebank): kept plain on purpose,
//! about thirty lines of loops, so that its speed is what a careful first
//! implementation gets.

use grammar_lang::model::{Grammar, Sym};

/// The straightforward CKY the engine's speed is measured against: a dense chart of
/// `f64` scores, binary rules indexed by left child, loops over split
/// points, present left symbols and that symbol's rules, then the unary
/// rules relaxed to a fixed point. `max` picks Viterbi in log space,
/// otherwise inside sums in linear space. Returns the root's value.
pub struct DenseCky {
    n_sym: usize,
    by_left: Vec<Vec<(usize, usize, f64)>>,
    unary: Vec<(usize, usize, f64)>,
    /// Rule weights are stored once for each mode: log-probabilities for
    /// Viterbi, probabilities for inside.
    max: bool,
    lex: std::collections::HashMap<String, Vec<(usize, f64)>>,
    start: usize,
}

impl DenseCky {
    pub fn new(g: &Grammar, max: bool) -> DenseCky {
        let n_sym = g.nonterminals.len();
        let mut b = DenseCky {
            n_sym,
            by_left: vec![Vec::new(); n_sym],
            unary: Vec::new(),
            max,
            lex: Default::default(),
            start: g.start.expect("start").0 as usize,
        };
        for rule in &g.rules {
            let a = rule.lhs.0 as usize;
            let p = if max { rule.p.ln() } else { rule.p };
            match rule.rhs[..] {
                [Sym::N(l), Sym::N(r)] => b.by_left[l.0 as usize].push((r.0 as usize, a, p)),
                [Sym::N(c)] => b.unary.push((c.0 as usize, a, p)),
                [Sym::T(t)] => b
                    .lex
                    .entry(g.term_text(t).to_string())
                    .or_default()
                    .push((a, p)),
                _ => panic!("the baseline reads binary, unary and lexical rules only"),
            }
        }
        b
    }

    #[allow(clippy::needless_range_loop)] // cells are addressed by (i, j)
    pub fn parse(&self, words: &[String]) -> f64 {
        let max = self.max;
        let (n, m) = (words.len(), self.n_sym);
        let zero = if max { f64::NEG_INFINITY } else { 0.0 };
        let mut chart = vec![zero; (n + 1) * (n + 1) * m];
        let at = |i: usize, j: usize| (i * (n + 1) + j) * m;
        for len in 1..=n {
            for i in 0..=n - len {
                let (j, c) = (i + len, at(i, i + len));
                for &(a, p) in self
                    .lex
                    .get(&words[i])
                    .filter(|_| len == 1)
                    .into_iter()
                    .flatten()
                {
                    chart[c + a] = if max {
                        chart[c + a].max(p)
                    } else {
                        chart[c + a] + p
                    };
                }
                for k in i + 1..j {
                    let (l, r) = (at(i, k), at(k, j));
                    for b in 0..m {
                        let lb = chart[l + b];
                        if lb == zero {
                            continue;
                        }
                        for &(rc, a, p) in &self.by_left[b] {
                            let rv = chart[r + rc];
                            if rv == zero {
                                continue;
                            }
                            chart[c + a] = if max {
                                chart[c + a].max(p + lb + rv)
                            } else {
                                chart[c + a] + p * lb * rv
                            };
                        }
                    }
                }
                for _ in 0..m {
                    let mut changed = false;
                    for &(b, a, p) in &self.unary {
                        let v = if max {
                            p + chart[c + b]
                        } else {
                            p * chart[c + b]
                        };
                        if v > chart[c + a] {
                            chart[c + a] = v;
                            changed = true;
                        }
                    }
                    if !changed || !max {
                        break;
                    }
                }
            }
        }
        chart[at(0, n) + self.start]
    }
}
