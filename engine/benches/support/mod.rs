//! The generated treebank-sized grammar of `parse.rs`, shared by the
//! benchmarks that measure the passes after Viterbi and inside (the same
//! generator, seed and sizes, so the figures are comparable).

use grammar_lang::model::{Grammar, NtId, Rule, Sym};
use grammar_lang::{FileId, Location, Span};
use num_bigint::BigInt;

/// The tests' generator, the same draws from the same seeds.
#[path = "../../tests/parse_support/rng.rs"]
mod rng;
pub use rng::Rng;

fn push(g: &mut Grammar, lhs: NtId, rhs: Vec<Sym>, weight: u64, sum: u64) {
    let loc = Location::new(FileId(0), Span::new(0, 0));
    let probability = grammar_lang::model::Ratio::new(BigInt::from(weight), BigInt::from(sum));
    g.push_rule(Rule {
        lhs,
        rhs,
        weight: None,
        p: weight as f64 / sum as f64,
        probability,
        location: loc,
        doc: None,
    });
}

const CLASSES: usize = 50;
const PHRASES: usize = 250;
const BINARY_RULES: usize = 30_000;
pub const WORDS: usize = 2_000;

/// 300 non-terminals (50 word classes, 250 phrase symbols), 30,000 binary
/// rules, a 2,000-word lexicon. `ambiguity`: extra word classes per word
/// (0 keeps the lexicon nearly unambiguous).
pub fn generated_grammar(ambiguity: usize) -> Grammar {
    let mut rng = Rng(0x5eed);
    let mut g = Grammar::new();
    let names: Vec<String> = (0..CLASSES)
        .map(|i| format!("C{i}"))
        .chain((0..PHRASES).map(|i| format!("P{i}")))
        .collect();
    let nts: Vec<NtId> = names.iter().map(|n| g.intern_nt(n)).collect();
    g.start = Some(nts[CLASSES]);
    let per_phrase = BINARY_RULES / PHRASES;
    for p in 0..PHRASES {
        let mut pairs = std::collections::HashSet::new();
        while pairs.len() < per_phrase {
            pairs.insert((rng.below(nts.len()), rng.below(nts.len())));
        }
        let weights: Vec<u64> = (0..per_phrase).map(|_| 1 + rng.below(9) as u64).collect();
        let sum = weights.iter().sum();
        let mut pairs: Vec<_> = pairs.into_iter().collect();
        pairs.sort_unstable();
        for ((l, r), w) in pairs.into_iter().zip(weights) {
            push(
                &mut g,
                nts[CLASSES + p],
                vec![Sym::N(nts[l]), Sym::N(nts[r])],
                w,
                sum,
            );
        }
    }
    let mut by_class: Vec<Vec<usize>> = vec![Vec::new(); CLASSES];
    for w in 0..WORDS {
        by_class[w % CLASSES].push(w);
        if rng.below(3) == 0 {
            by_class[rng.below(CLASSES)].push(w);
        }
        for _ in 0..ambiguity {
            by_class[rng.below(CLASSES)].push(w);
        }
    }
    for (c, words) in by_class.iter().enumerate() {
        let sum = words.len() as u64;
        for &w in words {
            let t = g.intern_term(&format!("w{w}"));
            push(&mut g, nts[c], vec![Sym::T(t)], 1, sum);
        }
    }
    g
}

/// `count` sentences of `len` random words of the generated lexicon.
pub fn sentences(seed: u64, count: usize, len: usize) -> Vec<Vec<String>> {
    let mut rng = Rng(seed);
    (0..count)
        .map(|_| (0..len).map(|_| format!("w{}", rng.below(WORDS))).collect())
        .collect()
}
