//! The bundled example grammars through the front end, the consistency
//! analysis and the sampler together.

use grammar_lang::{analyze, Config, Grammar, MemoryLoader};
use std::path::Path;
use trellis_engine::consistency::{analyze as consistency, leaky_diagnostic, Regime};
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::Sampler;

const KIOSK: &str = include_str!("../../examples/ferry_kiosk.trellis");
const LEXICON: &str = include_str!("../../examples/ferry_lexicon.trellis");
const GREENHOUSE: &str = include_str!("../../examples/greenhouse_voice.trellis");

fn load(path: &str, text: &str) -> Grammar {
    let loader = MemoryLoader::new().with("examples/ferry_lexicon.trellis", LEXICON);
    let analysis = analyze(Path::new(path), text, &loader, &Config::default());
    assert!(!analysis.has_errors(), "{:?}", analysis.diagnostics);
    analysis.grammar
}

#[test]
fn the_example_grammars_are_tight_with_finite_expected_size() {
    for (path, text) in [
        ("examples/ferry_kiosk.trellis", KIOSK),
        ("examples/greenhouse_voice.trellis", GREENHOUSE),
    ] {
        let g = load(path, text);
        let report = consistency(&g).unwrap();
        assert!(report.tight, "{path}");
        assert_eq!(report.regime, Regime::Subcritical, "{path}");
        assert!(report.leak_sources.is_empty());
        assert!(report.rescaled_blocks.is_empty());
        assert_eq!(leaky_diagnostic(&g, &report), None);
        assert!(report.expected_length.unwrap() >= 1.0);
        // The start symbol is used exactly once per sentence.
        let start = g.start.unwrap();
        assert_eq!(report.symbols[start.index()].expected_uses, Some(1.0));
    }
}

#[test]
fn sampled_kiosk_utterances_have_the_computed_mean_length() {
    let g = load("examples/ferry_kiosk.trellis", KIOSK);
    let start = g.start.unwrap();
    let mu = consistency(&g).unwrap().expected_length.unwrap();
    let sampler = Sampler::new(&g).unwrap();
    let mut rng = Xoshiro256StarStar::seed_from_u64(2026);
    let draws = 100_000;
    let (mut sum, mut sum_sq) = (0.0, 0.0);
    let mut out = Vec::new();
    for _ in 0..draws {
        sampler
            .sentence_into(&mut rng, start, 10_000, &mut out)
            .unwrap();
        let n = out.len() as f64;
        sum += n;
        sum_sq += n * n;
    }
    let mean = sum / draws as f64;
    let se = ((sum_sq / draws as f64 - mean * mean) / draws as f64).sqrt();
    // Central limit theorem: within five standard errors.
    assert!(
        (mean - mu).abs() < 5.0 * se,
        "mean {mean} vs {mu} (se {se})"
    );
}
