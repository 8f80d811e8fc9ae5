//! Moving between a symbol's definition and its uses: go to definition,
//! find references, rename (with its preparation) and document highlights.

use super::workspace_edit;
use crate::convert;
use crate::server::{request_failed, Backend};
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn definition(
    backend: &Backend,
    params: GotoDefinitionParams,
) -> jsonrpc::Result<Option<GotoDefinitionResponse>> {
    let at = params.text_document_position_params;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding the definition", move || {
            let found = t.analysis().definition(t.file, t.offset(at.position))?;
            t.location(found.file, found.span)
                .map(GotoDefinitionResponse::Scalar)
        })
        .await
}

pub async fn references(
    backend: &Backend,
    params: ReferenceParams,
) -> jsonrpc::Result<Option<Vec<Location>>> {
    let at = params.text_document_position;
    let include = params.context.include_declaration;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("finding references", move || {
            let found = t
                .analysis()
                .references(t.file, t.offset(at.position), include);
            Some(
                found
                    .into_iter()
                    .filter_map(|l| t.location(l.file, l.span))
                    .collect(),
            )
        })
        .await
}

pub async fn prepare_rename(
    backend: &Backend,
    params: TextDocumentPositionParams,
) -> jsonrpc::Result<Option<PrepareRenameResponse>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    let answer = backend
        .run("preparing rename", move || {
            t.analysis()
                .prepare_rename(t.file, t.offset(params.position))
                .map(|span| convert::range(t.source(), span))
                .map_err(|e| e.to_string())
        })
        .await?;
    match answer {
        Ok(range) => Ok(Some(PrepareRenameResponse::Range(range))),
        Err(message) => Err(request_failed(message)),
    }
}

pub async fn rename(
    backend: &Backend,
    params: RenameParams,
) -> jsonrpc::Result<Option<WorkspaceEdit>> {
    let at = params.text_document_position;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    let new_name = params.new_name;
    let answer = backend
        .run("renaming", move || {
            t.analysis()
                .rename(t.file, t.offset(at.position), &new_name)
                .map(|edits| workspace_edit(&t, &edits))
                .map_err(|e| e.to_string())
        })
        .await?;
    answer.map(Some).map_err(request_failed)
}

pub async fn document_highlights(
    backend: &Backend,
    params: DocumentHighlightParams,
) -> jsonrpc::Result<Option<Vec<DocumentHighlight>>> {
    let at = params.text_document_position_params;
    let Some(t) = backend.target(&at.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("highlighting occurrences", move || {
            let found = t
                .analysis()
                .document_highlights(t.file, t.offset(at.position))
                .into_iter()
                .map(|h| DocumentHighlight {
                    range: convert::range(t.source(), h.span),
                    kind: Some(if h.definition {
                        DocumentHighlightKind::WRITE
                    } else {
                        DocumentHighlightKind::READ
                    }),
                })
                .collect();
            Some(found)
        })
        .await
}
