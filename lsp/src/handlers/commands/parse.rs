//! `trellis.parse`: the engine's parser on sentences, with the grammar of an
//! open document; the best tree (and the k best), probabilities, the
//! number of trees, or why there is none.

use super::{finish, grammar_of, ran, ran_summary};
use crate::ext::{ParseBeam, ParseParams, ParseResult, ScoredTree, SentenceParse};
use crate::guard::CancelFlag;
use crate::server::Backend;
use std::time::{Duration, Instant};
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::MessageType;
use trellis_engine::parser::{Beam, ParseError, ParseOptions, ParseOutcome, ParsedTree};
use trellis_ide::picture::{tree_picture, Surface};
use trellis_project::EditorLimits;

pub async fn parse(backend: &Backend, params: ParseParams) -> jsonrpc::Result<ParseResult> {
    let mut sentences = params.sentences;
    sentences.extend(params.sentence);
    if sentences.is_empty() {
        let message = "trellis.parse needs a sentence (`sentence` or `sentences`); \
                       the editor asks for one when it supports it";
        if params.show {
            backend
                .show(MessageType::WARNING, message.to_string())
                .await;
        }
        return Err(jsonrpc::Error::invalid_params(message));
    }
    let target = grammar_of(backend, &params.uri, params.show).await?;
    let limits = target.result.limits;
    let kbest = params.kbest.unwrap_or(1).max(1);
    if kbest > limits.parse_max_kbest {
        let message = format!(
            "trellis.parse: {kbest} trees were asked for, more than `parse-max-kbest` = {} \
             allows; ask for fewer or raise `parse-max-kbest` in the `[editor]` section of \
             trellis.toml",
            limits.parse_max_kbest
        );
        if params.show {
            backend.show(MessageType::ERROR, message.clone()).await;
        }
        return Err(jsonrpc::Error::invalid_params(message));
    }
    let beam = match (params.beam, params.beam_size) {
        (None, None) => None,
        // The params' reader refuses what `Beam::new` refuses, naming the
        // field; this is the same refusal for params built otherwise.
        (width, size) => Some(
            Beam::new(width.unwrap_or(f64::INFINITY), size)
                .map_err(|e| jsonrpc::Error::invalid_params(format!("trellis.parse: {e}")))?,
        ),
    };
    let options = ParseOptions {
        kbest,
        max_chart_bytes: limits.parse_chart_mib.saturating_mul(1 << 20),
        beam,
        ..ParseOptions::default()
    };
    let picture = params.picture;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    // The work outlives a cancelled request; it reports in the log.
    let client = backend.client.clone();
    let runtime = tokio::runtime::Handle::current();
    let log = move |message: String| {
        let client = client.clone();
        runtime.spawn(async move { client.log_message(MessageType::LOG, message).await });
    };
    let outcome = backend
        .run("parsing", move || {
            let run = target.analysis().run(None).map_err(|e| e.to_string())?;
            let parser = run.parser().map_err(|e| e.to_string())?;
            let grammar = run.grammar();
            let total = sentences.len();
            log(format!(
                "trellis.parse: parsing {total} sentence{} (at most {} s and {} MiB each)",
                if total == 1 { "" } else { "s" },
                limits.parse_seconds,
                limits.parse_chart_mib
            ));
            let mut results = Vec::new();
            for sentence in sentences {
                // Each sentence's clock starts when its parse does.
                let deadline =
                    Instant::now().checked_add(Duration::from_secs_f64(limits.parse_seconds));
                let stop =
                    || cancel.is_cancelled() || deadline.is_some_and(|at| Instant::now() >= at);
                let words: Vec<&str> = sentence.split_whitespace().collect();
                let parsed = if cancel.is_cancelled() {
                    Err(ParseError::Stopped)
                } else {
                    parser.parse_until(&words, &options, &stop)
                };
                if cancel.is_cancelled() {
                    // The request is gone, and no response will say that
                    // its work stopped: the log does.
                    log(format!(
                        "trellis.parse: stopped after {} of {total} sentences: the request was \
                         cancelled",
                        results.len()
                    ));
                    return Ok(None);
                }
                results.push(match parsed {
                    Err(e) => SentenceParse {
                        error: Some(error_text(&e, &limits)),
                        sentence,
                        parsed: false,
                        ..SentenceParse::default()
                    },
                    Ok(out) => {
                        let mut parse = sentence_parse(sentence, &out);
                        if picture {
                            parse.picture = picture_of(grammar, &parse.sentence, &out);
                        }
                        parse
                    }
                });
            }
            Ok(Some(ParseResult {
                results,
                ran: ran(&target, &run),
            }))
        })
        .await?;
    guard.disarm();
    finish(backend, params.show, outcome, summary).await
}

/// Why a sentence was not analysed, naming the setting to change.
fn error_text(e: &ParseError, limits: &EditorLimits) -> String {
    let what = e.refusal();
    let mib = limits.parse_chart_mib;
    let setting = "in the `[editor]` section of trellis.toml";
    match e {
        ParseError::EmptySentence => what,
        ParseError::ChartTooLarge { .. } => format!(
            "{what}; split it into shorter sentences or raise `parse-chart-mib` (now {mib}) \
             {setting}"
        ),
        ParseError::KbestTooLarge { fits, .. } => format!(
            "{what}; ask for {fits} trees or fewer, or raise `parse-chart-mib` (now {mib}) \
             {setting}"
        ),
        ParseError::Stopped => format!(
            "{what}: it took longer than `parse-seconds` = {} allows; raise it {setting}",
            limits.parse_seconds
        ),
    }
}

/// The picture of a parsed sentence's trees (the k best when more than one
/// was asked for), drawn for a webview.
fn picture_of(
    grammar: &grammar_lang::Grammar,
    sentence: &str,
    out: &ParseOutcome,
) -> Option<String> {
    let trees: Vec<ParsedTree> = if out.kbest.len() > 1 {
        out.kbest.clone()
    } else {
        out.best.iter().cloned().collect()
    };
    (!trees.is_empty()).then(|| tree_picture(grammar, sentence, &trees, Surface::Inline))
}

fn sentence_parse(sentence: String, out: &ParseOutcome) -> SentenceParse {
    let best = out.best.as_ref();
    SentenceParse {
        sentence,
        parsed: out.parsed(),
        tree: best.map(|t| t.tree.to_brackets()),
        probability: best.map(|t| t.probability),
        log_probability: best.map(|t| t.log_probability),
        sentence_probability: Some(out.sentence_probability),
        parse_count: out.parse_count.as_ref().map(|c| c.to_string()),
        kbest: out
            .kbest
            .iter()
            .map(|t| ScoredTree {
                tree: t.tree.to_brackets(),
                probability: t.probability,
            })
            .collect(),
        explanation: out.explanation.as_ref().map(|e| e.to_string()),
        error: None,
        picture: None,
        exact: Some(out.beam.is_none()),
        beam: out.beam.map(|b| ParseBeam {
            log_width: b.log_width.is_finite().then_some(b.log_width),
            max_symbols: b.max_symbols,
        }),
        beam_abandoned: out.beam_abandoned.is_some(),
    }
}

/// A short text for the user: a line per sentence with its best tree and
/// probability, or why it has none.
fn summary(result: &ParseResult) -> String {
    let lines: Vec<String> = result
        .results
        .iter()
        .map(|r| match (&r.tree, r.probability) {
            (Some(tree), Some(p)) => format!(
                "{}: {tree}  p = {}{}",
                r.sentence,
                trellis_engine::numbers::probability(p),
                if r.exact == Some(false) {
                    " (pruned by the beam: not exact, a lower bound)"
                } else if r.beam_abandoned {
                    " (the beam left no tree and was given up: exact)"
                } else {
                    ""
                }
            ),
            _ => {
                let why = r
                    .error
                    .as_deref()
                    .or(r.explanation.as_deref())
                    .unwrap_or("no parse");
                format!("{}: no parse — {why}", r.sentence)
            }
        })
        .collect();
    lines.join("\n") + &ran_summary(&result.ran)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn the_summary_gives_each_tree_or_why_there_is_none() {
        let result = ParseResult {
            results: vec![
                SentenceParse {
                    sentence: "ferries sail".into(),
                    parsed: true,
                    tree: Some("(S (NP \"ferries\") (VP \"sail\"))".into()),
                    probability: Some(0.225),
                    ..SentenceParse::default()
                },
                SentenceParse {
                    sentence: "sail ferries".into(),
                    explanation: Some("no tree ends here".into()),
                    ..SentenceParse::default()
                },
                SentenceParse {
                    sentence: "x".into(),
                    ..SentenceParse::default()
                },
                SentenceParse {
                    sentence: "water fern".into(),
                    parsed: true,
                    tree: Some("(Command \"water\" (Plant \"fern\"))".into()),
                    probability: Some(0.09),
                    exact: Some(false),
                    ..SentenceParse::default()
                },
                SentenceParse {
                    sentence: "water ivy".into(),
                    parsed: true,
                    tree: Some("(Command \"water\" (Plant \"ivy\"))".into()),
                    probability: Some(0.01),
                    exact: Some(true),
                    beam_abandoned: true,
                    ..SentenceParse::default()
                },
            ],
            ..ParseResult::default()
        };
        assert_eq!(
            summary(&result),
            "ferries sail: (S (NP \"ferries\") (VP \"sail\"))  p = 0.225\n\
             sail ferries: no parse — no tree ends here\n\
             x: no parse — no parse\n\
             water fern: (Command \"water\" (Plant \"fern\"))  p = 0.09 (pruned by the beam: \
             not exact, a lower bound)\n\
             water ivy: (Command \"water\" (Plant \"ivy\"))  p = 0.01 (the beam left no tree \
             and was given up: exact)"
        );
    }
}
