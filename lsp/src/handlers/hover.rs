//! `textDocument/hover`: the façade's hover text (with the engine's numbers
//! for symbols and rules) as Markdown.

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn hover(backend: &Backend, params: HoverParams) -> jsonrpc::Result<Option<Hover>> {
    let at = params.text_document_position_params;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("computing hover", move || {
            let found = t.analysis().hover(t.file, t.offset(at.position))?;
            Some(Hover {
                contents: HoverContents::Markup(MarkupContent {
                    kind: MarkupKind::Markdown,
                    value: found.markdown,
                }),
                range: Some(convert::range(t.source(), found.span)),
            })
        })
        .await
}
