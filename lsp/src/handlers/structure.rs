//! The shape of a document: folding ranges and the links of `use`
//! declarations to the files they name.

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn folding_ranges(
    backend: &Backend,
    params: FoldingRangeParams,
) -> jsonrpc::Result<Option<Vec<FoldingRange>>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding folding ranges", move || {
            let file = t.source();
            let ranges = t
                .analysis()
                .folding_ranges(t.file)
                .into_iter()
                .map(|f| {
                    let range = convert::range(file, f.span);
                    FoldingRange {
                        start_line: range.start.line,
                        start_character: None,
                        end_line: range.end.line,
                        end_character: None,
                        kind: Some(match f.kind {
                            trellis_ide::FoldKind::Declaration => FoldingRangeKind::Region,
                            trellis_ide::FoldKind::Comment => FoldingRangeKind::Comment,
                        }),
                        collapsed_text: None,
                    }
                })
                .collect();
            Some(ranges)
        })
        .await
}

pub async fn document_links(
    backend: &Backend,
    params: DocumentLinkParams,
) -> jsonrpc::Result<Option<Vec<DocumentLink>>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding document links", move || {
            let links = t
                .analysis()
                .document_links(t.file)
                .into_iter()
                .filter_map(|l| {
                    Some(DocumentLink {
                        range: convert::range(t.source(), l.span),
                        target: Some(t.result.uri_of(l.target)?),
                        tooltip: None,
                        data: None,
                    })
                })
                .collect();
            Some(links)
        })
        .await
}
