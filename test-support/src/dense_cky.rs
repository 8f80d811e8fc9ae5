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

/// What the benchmarks compare, in thread CPU time per sentence
/// (nanoseconds): the dense CKY's Viterbi and inside passes, and the
/// engine's Viterbi pass (its best tree) and inside pass (a parse without
/// count, less the best tree).
#[derive(Clone, Copy, Debug)]
pub struct AgainstDense {
    pub dense_viterbi: f64,
    pub dense_inside: f64,
    pub viterbi: f64,
    pub inside: f64,
}

impl AgainstDense {
    /// Times both on `sentences`, with `best` and `full` the engine's best
    /// tree and parse of one sentence: the four measurements interleaved,
    /// least of five rounds of at least 0.1 s
    /// ([`crate::bench::least_cpu_times`]). `None` where the CPU clock
    /// cannot be read.
    pub fn measure(
        grammar: &Grammar,
        sentences: &[Vec<String>],
        best: &dyn Fn(&[String]),
        full: &dyn Fn(&[String]),
    ) -> Option<AgainstDense> {
        let (max, sum) = (DenseCky::new(grammar, true), DenseCky::new(grammar, false));
        let each = |f: &dyn Fn(&[String])| sentences.iter().for_each(|s| f(s));
        let least = crate::bench::least_cpu_times(
            5,
            1e8,
            &[
                &|| {
                    each(&|s| {
                        std::hint::black_box(max.parse(s));
                    })
                },
                &|| {
                    each(&|s| {
                        std::hint::black_box(sum.parse(s));
                    })
                },
                &|| each(best),
                &|| each(full),
            ],
        );
        let per = |ns: f64| ns / sentences.len() as f64;
        match least[..] {
            [dense_viterbi, dense_inside, viterbi, full] if least.iter().all(|t| t.is_finite()) => {
                Some(AgainstDense {
                    dense_viterbi: per(dense_viterbi),
                    dense_inside: per(dense_inside),
                    viterbi: per(viterbi),
                    inside: per(full - viterbi),
                })
            }
            _ => None,
        }
    }

    /// "Viterbi R× (engine vs dense ms), inside R× (…)".
    pub fn describe(&self) -> String {
        format!(
            "Viterbi {:.2}× ({:.3} vs {:.3} ms), inside {:.2}× ({:.3} vs {:.3} ms)",
            self.dense_viterbi / self.viterbi,
            self.viterbi / 1e6,
            self.dense_viterbi / 1e6,
            self.dense_inside / self.inside,
            self.inside / 1e6,
            self.dense_inside / 1e6
        )
    }
}
