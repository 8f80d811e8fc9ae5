//! Formatting: the whole document or a range, as the façade's minimal
//! edits. A document with syntax errors gets no edits (its errors are
//! already among the published diagnostics).

use crate::convert;
use crate::server::Backend;
use crate::state::Target;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn formatting(
    backend: &Backend,
    params: DocumentFormattingParams,
) -> jsonrpc::Result<Option<Vec<TextEdit>>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend.run("formatting", move || edits(&t, None)).await
}

pub async fn range_formatting(
    backend: &Backend,
    params: DocumentRangeFormattingParams,
) -> jsonrpc::Result<Option<Vec<TextEdit>>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("formatting a range", move || {
            let range = convert::span(t.source(), params.range);
            edits(&t, Some(range))
        })
        .await
}

fn edits(t: &Target, range: Option<grammar_lang::Span>) -> Option<Vec<TextEdit>> {
    let edits = t.analysis().formatting(t.file, range).ok()?;
    Some(
        edits
            .into_iter()
            .map(|e| TextEdit::new(convert::range(t.source(), e.span), e.new_text))
            .collect(),
    )
}
