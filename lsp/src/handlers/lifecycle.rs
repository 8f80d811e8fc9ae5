//! `initialize`, `initialized` and `shutdown`: the server learns what the
//! client can do, answers with its capabilities, starts the analysis worker
//! and arranges to hear of files edited outside the editor.

use crate::capabilities::capabilities;
use crate::server::Backend;
use crate::worker;
use std::sync::atomic::Ordering;
use tower_lsp::jsonrpc;
use tower_lsp::lsp_types::*;

pub async fn initialize(
    backend: &Backend,
    params: InitializeParams,
) -> jsonrpc::Result<InitializeResult> {
    let watches = params
        .capabilities
        .workspace
        .and_then(|w| w.did_change_watched_files)
        .and_then(|w| w.dynamic_registration)
        .unwrap_or(false);
    backend
        .shared
        .client_watches
        .store(watches, Ordering::SeqCst);
    worker::start(backend);
    Ok(InitializeResult {
        capabilities: capabilities(),
        server_info: Some(ServerInfo {
            name: "trellis".to_string(),
            version: Some(env!("CARGO_PKG_VERSION").to_string()),
        }),
    })
}

pub async fn initialized(backend: &Backend, _: InitializedParams) {
    backend
        .client
        .log_message(MessageType::INFO, "trellis language server ready")
        .await;
    worker::watch_files(backend).await;
}

pub async fn shutdown(_: &Backend) -> jsonrpc::Result<()> {
    Ok(())
}
