//! `trellis.sample`: sentences (and their trees) drawn from the grammar of
//! an open document by the engine's sampler, reproducibly from a seed.

use super::{finish, grammar_of, ran, ran_summary};
use crate::ext::{Sample, SampleParams, SampleResult, SampledSentence};
use crate::guard::CancelFlag;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use trellis_engine::rng::Xoshiro256StarStar;
use trellis_engine::sample::{Sampler, DEFAULT_LIMIT};

pub async fn sample(backend: &Backend, params: SampleParams) -> jsonrpc::Result<SampleResult> {
    let count = params.count.unwrap_or(Sample::DEFAULT_COUNT);
    if count > Sample::MAX_COUNT {
        return Err(jsonrpc::Error::invalid_params(format!(
            "trellis.sample makes at most {} sentences per call, not {count}",
            Sample::MAX_COUNT
        )));
    }
    let target = grammar_of(backend, &params.uri, params.show).await?;
    let seed = params.seed.unwrap_or(0);
    let trees = params.trees;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome = backend
        .run("sampling", move || {
            let run = target.analysis().run(None).map_err(|e| e.to_string())?;
            let sampler = Sampler::new(run.grammar()).map_err(|e| e.to_string())?;
            let start = run.start();
            sampler.check(start).map_err(|e| e.to_string())?;
            let mut rng = Xoshiro256StarStar::seed_from_u64(seed);
            let mut samples = Vec::with_capacity(count);
            for _ in 0..count {
                if cancel.is_cancelled() {
                    return Ok(None);
                }
                let sample = if trees {
                    let tree = sampler
                        .tree(&mut rng, start, DEFAULT_LIMIT)
                        .map_err(|e| e.to_string())?;
                    SampledSentence {
                        sentence: tree.words().join(" "),
                        tree: Some(tree.to_brackets()),
                    }
                } else {
                    let words = sampler
                        .words(&mut rng, start, DEFAULT_LIMIT)
                        .map_err(|e| e.to_string())?;
                    SampledSentence {
                        sentence: words.join(" "),
                        tree: None,
                    }
                };
                samples.push(sample);
            }
            Ok(Some(SampleResult {
                seed,
                samples,
                ran: ran(&target, &run),
            }))
        })
        .await?;
    guard.disarm();
    finish(backend, params.show, outcome, summary).await
}

/// A short text for the user: a line per sample, its tree when there is one.
fn summary(result: &SampleResult) -> String {
    let lines: Vec<&str> = result
        .samples
        .iter()
        .map(|s| s.tree.as_deref().unwrap_or(&s.sentence))
        .collect();
    lines.join("\n") + &ran_summary(&result.ran)
}
