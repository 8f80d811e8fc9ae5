//! `textDocument/codeAction`: the façade's quick fixes and refactorings as
//! workspace edits, each with the published diagnostic it fixes.

use super::workspace_edit;
use crate::convert;
use crate::server::Backend;
use grammar_lang::FileId;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn code_actions(
    backend: &Backend,
    params: CodeActionParams,
) -> jsonrpc::Result<Option<CodeActionResponse>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    let range = params.range;
    backend
        .run("finding code actions", move || {
            let span = convert::span(t.source(), range);
            let r = &t.result;
            let uri_of = |f: FileId| r.uri_of(f);
            let actions = t
                .analysis()
                .code_actions(t.file, span)
                .into_iter()
                .map(|a| {
                    // The diagnostic it fixes, as published.
                    let diagnostics = r
                        .analysis
                        .diagnostics
                        .iter()
                        .filter(|d| {
                            Some(d.code) == a.diagnostic_code
                                && Some(d.location) == a.diagnostic_location
                        })
                        .map(|d| convert::diagnostic(&r.analysis, d, &uri_of))
                        .collect::<Vec<_>>();
                    CodeActionOrCommand::CodeAction(CodeAction {
                        title: a.title,
                        kind: Some(match a.kind {
                            trellis_ide::CodeActionKind::QuickFix => CodeActionKind::QUICKFIX,
                            trellis_ide::CodeActionKind::Refactor => CodeActionKind::REFACTOR,
                        }),
                        diagnostics: (!diagnostics.is_empty()).then_some(diagnostics),
                        edit: Some(workspace_edit(&t, &a.edits)),
                        is_preferred: a.is_preferred.then_some(true),
                        ..CodeAction::default()
                    })
                })
                .collect();
            Some(actions)
        })
        .await
}
