//! Symbols: the outline of a document (`textDocument/documentSymbol`) and
//! the search across every open grammar (`workspace/symbol`). The outline
//! lists at most `trellis_ide::MAX_CHILDREN` rules of a block and
//! `MAX_OUTLINE_CHILDREN` in all (the rest of each block in one entry), so
//! its size follows the blocks, not the alternatives.

use crate::convert::{self, Positions};
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

/// One outline entry, its positions converted in file order (the entry's
/// start, its name, its children, its end) so that `Positions` moves forward.
#[allow(deprecated)] // `DocumentSymbol::deprecated` must still be written.
fn document_symbol(positions: &mut Positions, s: trellis_ide::DocumentSymbol) -> DocumentSymbol {
    let start = positions.position(s.span.start as usize);
    let selection_range = Range::new(
        positions.position(s.selection_span.start as usize),
        positions.position(s.selection_span.end as usize),
    );
    let children = s
        .children
        .into_iter()
        .map(|c| document_symbol(positions, c))
        .collect();
    let end = positions.position(s.span.end as usize);
    DocumentSymbol {
        name: s.name,
        detail: s.detail,
        kind: symbol_kind(s.kind),
        tags: None,
        deprecated: None,
        range: Range::new(start, end),
        selection_range,
        children: Some(children),
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
            let mut positions = Positions::new(t.source());
            let symbols = t
                .analysis()
                .document_symbols(t.file)
                .into_iter()
                .map(|s| document_symbol(&mut positions, s))
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
