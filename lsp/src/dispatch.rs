//! The `LanguageServer` implementation: every LSP request and notification
//! tower-lsp hands the server is routed to its handler in `handlers`, and
//! nothing else happens here.

use crate::handlers::{self, commands};
use crate::server::Backend;
use serde_json::Value;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;
use tower_lsp::LanguageServer;

#[tower_lsp::async_trait]
impl LanguageServer for Backend {
    async fn initialize(&self, params: InitializeParams) -> jsonrpc::Result<InitializeResult> {
        handlers::lifecycle::initialize(self, params).await
    }

    async fn initialized(&self, params: InitializedParams) {
        handlers::lifecycle::initialized(self, params).await
    }

    async fn shutdown(&self) -> jsonrpc::Result<()> {
        handlers::lifecycle::shutdown(self).await
    }

    async fn did_change_watched_files(&self, params: DidChangeWatchedFilesParams) {
        handlers::documents::did_change_watched_files(self, params)
    }

    async fn did_open(&self, params: DidOpenTextDocumentParams) {
        handlers::documents::did_open(self, params)
    }

    async fn did_change(&self, params: DidChangeTextDocumentParams) {
        handlers::documents::did_change(self, params)
    }

    async fn did_save(&self, params: DidSaveTextDocumentParams) {
        handlers::documents::did_save(self, params)
    }

    async fn did_close(&self, params: DidCloseTextDocumentParams) {
        handlers::documents::did_close(self, params)
    }

    async fn hover(&self, params: HoverParams) -> jsonrpc::Result<Option<Hover>> {
        handlers::hover::hover(self, params).await
    }

    async fn goto_definition(
        &self,
        params: GotoDefinitionParams,
    ) -> jsonrpc::Result<Option<GotoDefinitionResponse>> {
        handlers::navigation::definition(self, params).await
    }

    async fn references(&self, params: ReferenceParams) -> jsonrpc::Result<Option<Vec<Location>>> {
        handlers::navigation::references(self, params).await
    }

    async fn prepare_rename(
        &self,
        params: TextDocumentPositionParams,
    ) -> jsonrpc::Result<Option<PrepareRenameResponse>> {
        handlers::navigation::prepare_rename(self, params).await
    }

    async fn rename(&self, params: RenameParams) -> jsonrpc::Result<Option<WorkspaceEdit>> {
        handlers::navigation::rename(self, params).await
    }

    async fn document_highlight(
        &self,
        params: DocumentHighlightParams,
    ) -> jsonrpc::Result<Option<Vec<DocumentHighlight>>> {
        handlers::navigation::document_highlights(self, params).await
    }

    async fn document_symbol(
        &self,
        params: DocumentSymbolParams,
    ) -> jsonrpc::Result<Option<DocumentSymbolResponse>> {
        handlers::symbols::document_symbols(self, params).await
    }

    async fn symbol(
        &self,
        params: WorkspaceSymbolParams,
    ) -> jsonrpc::Result<Option<Vec<SymbolInformation>>> {
        handlers::symbols::workspace_symbols(self, params).await
    }

    async fn completion(
        &self,
        params: CompletionParams,
    ) -> jsonrpc::Result<Option<CompletionResponse>> {
        handlers::completion::completion(self, params).await
    }

    async fn semantic_tokens_full(
        &self,
        params: SemanticTokensParams,
    ) -> jsonrpc::Result<Option<SemanticTokensResult>> {
        handlers::semantic_tokens::semantic_tokens(self, params).await
    }

    async fn code_action(
        &self,
        params: CodeActionParams,
    ) -> jsonrpc::Result<Option<CodeActionResponse>> {
        handlers::code_actions::code_actions(self, params).await
    }

    async fn inlay_hint(&self, params: InlayHintParams) -> jsonrpc::Result<Option<Vec<InlayHint>>> {
        handlers::hints::inlay_hints(self, params).await
    }

    async fn code_lens(&self, params: CodeLensParams) -> jsonrpc::Result<Option<Vec<CodeLens>>> {
        handlers::lenses::code_lenses(self, params).await
    }

    async fn folding_range(
        &self,
        params: FoldingRangeParams,
    ) -> jsonrpc::Result<Option<Vec<FoldingRange>>> {
        handlers::structure::folding_ranges(self, params).await
    }

    async fn document_link(
        &self,
        params: DocumentLinkParams,
    ) -> jsonrpc::Result<Option<Vec<DocumentLink>>> {
        handlers::structure::document_links(self, params).await
    }

    async fn formatting(
        &self,
        params: DocumentFormattingParams,
    ) -> jsonrpc::Result<Option<Vec<TextEdit>>> {
        handlers::formatting::formatting(self, params).await
    }

    async fn range_formatting(
        &self,
        params: DocumentRangeFormattingParams,
    ) -> jsonrpc::Result<Option<Vec<TextEdit>>> {
        handlers::formatting::range_formatting(self, params).await
    }

    async fn execute_command(
        &self,
        params: ExecuteCommandParams,
    ) -> jsonrpc::Result<Option<Value>> {
        commands::execute(self, params).await
    }
}
