//! Symbols: the outline of a document (`textDocument/documentSymbol`) and
//! the search across every open grammar (`workspace/symbol`).

use crate::convert;
use crate::server::Backend;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use trellis_ide::SymbolKind as IdeSymbolKind;

/// Most symbols one workspace-symbol answer lists.
pub const WORKSPACE_SYMBOL_LIMIT: usize = 256;

fn symbol_kind(kind: IdeSymbolKind) -> SymbolKind {
    match kind {
        IdeSymbolKind::Grammar => SymbolKind::NAMESPACE,
        IdeSymbolKind::Start => SymbolKind::EVENT,
        IdeSymbolKind::Use => SymbolKind::FILE,
        IdeSymbolKind::Block => SymbolKind::CLASS,
        IdeSymbolKind::Rule => SymbolKind::FIELD,
        IdeSymbolKind::Test => SymbolKind::MODULE,
        IdeSymbolKind::TestCase => SymbolKind::METHOD,
    }
}

#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be written.
fn document_symbol(
    file: &grammar_lang::source::SourceFile,
    s: trellis_ide::DocumentSymbol,
) -> DocumentSymbol {
    DocumentSymbol {
        name: s.name,
        detail: s.detail,
        kind: symbol_kind(s.kind),
        tags: None,
        deprecated: None,
        range: convert::range(file, s.span),
        selection_range: convert::range(file, s.selection_span),
        children: Some(
            s.children
                .into_iter()
                .map(|c| document_symbol(file, c))
                .collect(),
        ),
    }
}

pub async fn document_symbols(
    backend: &Backend,
    params: DocumentSymbolParams,
) -> jsonrpc::Result<Option<DocumentSymbolResponse>> {
    let Some(t) = backend.target(&params.text_document.uri).await? else {
        return Ok(None);
    };
    backend
        .run("listing symbols", move || {
            let symbols = t
                .analysis()
                .document_symbols(t.file)
                .into_iter()
                .map(|s| document_symbol(t.source(), s))
                .collect();
            Some(DocumentSymbolResponse::Nested(symbols))
        })
        .await
}

#[allow(deprecated)] // `SymbolInformation::deprecated` must still be written.
pub async fn workspace_symbols(
    backend: &Backend,
    params: WorkspaceSymbolParams,
) -> jsonrpc::Result<Option<Vec<SymbolInformation>>> {
    let results = backend.latest_results();
    let query = params.query;
    backend
        .run("searching symbols", move || {
            let mut out: Vec<SymbolInformation> = Vec::new();
            for r in results {
                for s in r.analysis.workspace_symbols(&query, WORKSPACE_SYMBOL_LIMIT) {
                    let Some(uri) = r.uri_of(s.location.file) else {
                        continue;
                    };
                    let range =
                        convert::range(r.analysis.sources.get(s.location.file), s.location.span);
                    let location = Location::new(uri, range);
                    if out.iter().any(|o| o.location == location) {
                        continue;
                    }
                    out.push(SymbolInformation {
                        name: s.name,
                        kind: SymbolKind::CLASS,
                        tags: None,
                        deprecated: None,
                        location,
                        container_name: Some(s.detail),
                    });
                }
            }
            out.truncate(WORKSPACE_SYMBOL_LIMIT);
            Some(out)
        })
        .await
}
