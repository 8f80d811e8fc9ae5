//! `trellis.parse`: the engine's parser on sentences, with the grammar of an
//! open document; the best tree (and the k best), probabilities, the
//! number of trees, or why there is none.

use super::{finish, grammar_of};
use crate::ext::{ParseParams, ParseResult, ScoredTree, SentenceParse};
use crate::guard::CancelFlag;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::MessageType;
use trellis_engine::parser::{ParseOptions, ParseOutcome, ParsedTree};
use trellis_ide::picture::{tree_picture, Surface};

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
    let options = ParseOptions {
        kbest: params.kbest.unwrap_or(1).max(1),
        ..ParseOptions::default()
    };
    let picture = params.picture;
    let cancel = CancelFlag::default();
    let guard = cancel.guard();
    let outcome = backend
        .run("parsing", move || {
            let parser = target.analysis().parser().map_err(|e| e.to_string())?;
            let grammar = target.analysis().runnable().map_err(|e| e.to_string())?;
            let mut results = Vec::new();
            for sentence in sentences {
                if cancel.is_cancelled() {
                    return Ok(None);
                }
                results.push(match parser.parse_line(&sentence, &options) {
                    Err(e) => SentenceParse {
                        sentence,
                        parsed: false,
                        error: Some(e.to_string()),
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
            Ok(Some(ParseResult { results }))
        })
        .await?;
    guard.disarm();
    finish(backend, params.show, outcome, summary).await
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
                "{}: {tree}  p = {}",
                r.sentence,
                trellis_engine::numbers::probability(p)
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
    lines.join("\n")
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
            ],
        };
        assert_eq!(
            summary(&result),
            "ferries sail: (S (NP \"ferries\") (VP \"sail\"))  p = 0.225\n\
             sail ferries: no parse — no tree ends here\n\
             x: no parse — no parse"
        );
    }
}
