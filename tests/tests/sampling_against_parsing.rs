//! The sampler and the parser describe the same distribution: drawing
//! sentences from a bundled example grammar, each sentence turns up with
//! the probability the parser's inside pass gives it (summed over all its
//! trees). Judged by Pearson's chi-square test at α = 0.001.

use grammar_lang::model::Grammar;
use std::collections::HashMap;
use trellis_acceptance::{example, grammar};
use trellis_engine::parser::{ParseOptions, Parser};
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{Sampler, DEFAULT_LIMIT};
use trellis_test_support::grammars::ASTRONOMERS;
use trellis_test_support::stats::{chi_square, chi_square_critical, Z_0_999};

fn draw(sampler: &Sampler, seed: u64, draws: usize) -> HashMap<String, usize> {
    let start = sampler.start().unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
    let mut counts: HashMap<String, usize> = HashMap::new();
    for _ in 0..draws {
        let words = sampler.words(&mut rng, start, DEFAULT_LIMIT).unwrap();
        *counts.entry(words.join(" ")).or_default() += 1;
    }
    counts
}

fn sampled_frequencies_match_inside_probabilities(root: &str, g: &Grammar, seed: u64) {
    let sampler = Sampler::new(g).unwrap();
    let parser = Parser::new(g).unwrap();
    let options = ParseOptions {
        kbest: 0,
        count_parses: false,
        explain: false,
        ..ParseOptions::default()
    };
    let draws = 100_000usize;
    // The bins are chosen from a pilot sample of their own, so that they do
    // not depend on the counts being tested: every sentence the pilot saw
    // twice whose expected count is at least 10, and one bin for the rest.
    let mut bins: Vec<(String, f64)> = Vec::new();
    for (sentence, count) in draw(&sampler, seed ^ 0x9e37, 20_000) {
        if count < 2 {
            continue;
        }
        let p = parser
            .parse_line(&sentence, &options)
            .unwrap()
            .sentence_probability;
        assert!(p > 0.0, "{root}: sampled {sentence:?} does not parse");
        if p * draws as f64 >= 10.0 {
            bins.push((sentence, p));
        }
    }
    assert!(
        bins.len() >= 30,
        "{root}: only {} sentences are frequent enough to test",
        bins.len()
    );
    let counts = draw(&sampler, seed, draws);
    let mut observed: Vec<f64> = Vec::new();
    let mut expected: Vec<f64> = Vec::new();
    for (sentence, p) in &bins {
        observed.push(counts.get(sentence).copied().unwrap_or(0) as f64);
        expected.push(p * draws as f64);
    }
    let binned: f64 = observed.iter().sum();
    let binned_probability: f64 = bins.iter().map(|(_, p)| p).sum();
    observed.push(draws as f64 - binned);
    expected.push((1.0 - binned_probability) * draws as f64);
    let df = observed.len() - 1;
    let stat = chi_square(&observed, &expected);
    let critical = chi_square_critical(df, Z_0_999);
    assert!(
        stat < critical,
        "{root}: chi-square {stat:.1} with {df} degrees of freedom exceeds {critical:.1}"
    );
}

#[test]
fn ferry_kiosk_sentences_are_drawn_with_their_parse_probabilities() {
    let g = example("ferry_kiosk.trellis", &["ferry_lexicon.trellis"]);
    sampled_frequencies_match_inside_probabilities("the ferry kiosk", &g, 0x00fe_4441);
}

#[test]
fn greenhouse_sentences_are_drawn_with_their_parse_probabilities() {
    let g = example("greenhouse_voice.trellis", &[]);
    sampled_frequencies_match_inside_probabilities("the greenhouse", &g, 0x0067_4ee4);
}

#[test]
fn ambiguous_sentences_are_drawn_with_the_sum_of_their_trees_probabilities() {
    // The PCFG of Manning & Schütze, *Foundations of Statistical Natural
    // Language Processing* (1999), ch. 11 (recalled from memory): PP
    // attachment makes many of its sentences ambiguous, so a sentence's
    // frequency is the sum over its trees, not the best tree's probability.
    let g = grammar(ASTRONOMERS);
    sampled_frequencies_match_inside_probabilities("the textbook grammar", &g, 0x0a57_0004);
}
