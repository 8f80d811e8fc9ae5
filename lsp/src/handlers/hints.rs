//! `textDocument/inlayHint`: the façade's hints (such as probabilities
//! beside weights) with their tooltips.

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn inlay_hints(
    backend: &Backend,
    params: InlayHintParams,
) -> jsonrpc::Result<Option<Vec<InlayHint>>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    let range = params.range;
    backend
        .run("computing inlay hints", move || {
            let file = t.source();
            let span = convert::span(file, range);
            let hints = t
                .analysis()
                .inlay_hints(t.file, span)
                .into_iter()
                .map(|h| InlayHint {
                    position: convert::position(file, h.offset),
                    label: InlayHintLabel::String(h.label),
                    kind: None,
                    text_edits: None,
                    tooltip: Some(InlayHintTooltip::String(h.tooltip)),
                    padding_left: Some(h.pad_left),
                    padding_right: Some(h.pad_right),
                    data: None,
                })
                .collect();
            Some(hints)
        })
        .await
}
