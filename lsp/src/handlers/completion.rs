//! `textDocument/completion`: the façade's ranked completions, each
//! replacing the word being typed.

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use trellis_ide::CompletionKind;

pub async fn completion(
    backend: &Backend,
    params: CompletionParams,
) -> jsonrpc::Result<Option<CompletionResponse>> {
    let at = params.text_document_position;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("completing", move || {
            let list = t.analysis().completions(t.file, t.offset(at.position));
            let range = convert::range(t.source(), list.replace);
            let items = list
                .items
                .into_iter()
                .enumerate()
                .map(|(i, item)| CompletionItem {
                    kind: Some(match item.kind {
                        CompletionKind::NonTerminal => CompletionItemKind::CLASS,
                        CompletionKind::Keyword => CompletionItemKind::KEYWORD,
                        CompletionKind::Word => CompletionItemKind::TEXT,
                    }),
                    detail: item.detail,
                    // Keep the core's ranking: best first.
                    sort_text: Some(format!("{i:05}")),
                    text_edit: Some(CompletionTextEdit::Edit(TextEdit::new(
                        range,
                        item.label.clone(),
                    ))),
                    label: item.label,
                    ..CompletionItem::default()
                })
                .collect();
            Some(CompletionResponse::List(CompletionList {
                is_incomplete: list.incomplete,
                items,
            }))
        })
        .await
}
