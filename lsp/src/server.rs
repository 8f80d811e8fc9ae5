//! The language server: LSP messages in, core calls, LSP messages out.
//!
//! Document notifications only record text and wake the analysis worker;
//! the worker analyses off the protocol loop (on the blocking pool), drops
//! results that newer edits have overtaken, and publishes diagnostics for
//! every open file and every file an open file `use`s.

use crate::commands;
use crate::convert;
use crate::features;
use crate::guard::{run_blocking, Failure};
use crate::workspace::{analyze_root, Doc, RootResult, Workspace};
use grammar_lang::FileId;
use serde_json::Value;
use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::sync::{Arc, Mutex, MutexGuard};
use std::time::{Duration, Instant};
use tokio::sync::Notify;
use tower_lsp::jsonrpc::{self, ErrorCode};
use tower_lsp::lsp_types::*;
use tower_lsp::{Client, LanguageServer, LspService};
use trellis_ide::Analysis;
use trellis_project::config::{Stamps, FILE_NAME as CONFIG_FILE};

/// Settings that are not part of the protocol.
#[derive(Clone, Debug)]
pub struct Options {
    /// Accept the hidden command `trellis.debug.panic`, which panics inside
    /// core work on purpose (to test that the server survives it).
    pub debug_commands: bool,
    /// How often to look for edits of `trellis.toml` files when the client
    /// cannot watch files for the server.
    pub config_poll: Duration,
}

impl Default for Options {
    fn default() -> Self {
        Options {
            debug_commands: false,
            config_poll: Duration::from_secs(2),
        }
    }
}

/// The hidden command that panics, accepted only with
/// [`Options::debug_commands`].
pub const DEBUG_PANIC: &str = "trellis.debug.panic";

/// The longest pause before analysing during a burst of edits. An edit
/// that arrives while nothing is being analysed starts an analysis at once;
/// edits that arrive while one runs are coalesced, and if they keep coming
/// (a burst of keystrokes) the worker waits half the last analysis time, at
/// most this, for the burst to end before analysing the newest text once.
const MAX_DEBOUNCE: Duration = Duration::from_millis(100);

/// State shared by the handlers and the analysis worker.
#[derive(Debug, Default)]
struct Shared {
    workspace: Mutex<Workspace>,
    wake: Notify,
    /// Signalled after every round of the worker.
    stored: Notify,
    worker_started: std::sync::atomic::AtomicBool,
    /// The client can watch files for the server (dynamic registration of
    /// `workspace/didChangeWatchedFiles`).
    client_watches: std::sync::atomic::AtomicBool,
}

impl Shared {
    fn lock(&self) -> MutexGuard<'_, Workspace> {
        // A panic while the lock was held leaves a workspace whose fields
        // are each still valid; keep serving rather than poisoning forever.
        self.workspace
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
    }
}

/// The `LanguageServer` implementation.
#[derive(Debug)]
pub struct Backend {
    client: Client,
    shared: Arc<Shared>,
    options: Options,
}

/// Builds the service for any transport (stdio in `trellis lsp`, in-memory
/// streams in tests).
pub fn service(options: Options) -> (LspService<Backend>, tower_lsp::ClientSocket) {
    LspService::new(move |client| Backend {
        client,
        shared: Arc::new(Shared::default()),
        options,
    })
}

/// An LSP error response for core work that failed.
fn failure_error(what: &str, failure: &Failure) -> jsonrpc::Error {
    match failure {
        Failure::Cancelled => jsonrpc::Error::request_cancelled(),
        Failure::Panicked(msg) => jsonrpc::Error {
            code: ErrorCode::InternalError,
            message: format!("trellis failed while {what}: {msg}").into(),
            data: None,
        },
    }
}

/// LSP's `RequestFailed` (-32803): the request was valid but could not be done.
pub fn request_failed(message: impl Into<String>) -> jsonrpc::Error {
    jsonrpc::Error {
        code: ErrorCode::ServerError(-32803),
        message: message.into().into(),
        data: None,
    }
}

/// What a feature request works on: one file inside one analysis.
#[derive(Clone, Debug)]
pub struct Target {
    pub result: Arc<RootResult>,
    pub file: FileId,
}

impl Target {
    pub fn analysis(&self) -> &Analysis {
        &self.result.analysis
    }

    pub fn source(&self) -> &grammar_lang::source::SourceFile {
        self.result.analysis.sources.get(self.file)
    }

    /// The byte offset of an LSP position in the target file.
    pub fn offset(&self, pos: Position) -> usize {
        convert::offset(self.source(), pos)
    }

    /// The LSP location of a span in any file of the analysis.
    pub fn location(&self, file: FileId, span: grammar_lang::Span) -> Option<Location> {
        let uri = self.result.uri_of(file)?;
        Some(Location::new(
            uri,
            convert::range(self.result.analysis.sources.get(file), span),
        ))
    }
}

impl Backend {
    /// Logs an internal failure to the client and turns it into an error
    /// response.
    async fn report(&self, what: &str, failure: Failure) -> jsonrpc::Error {
        if let Failure::Panicked(msg) = &failure {
            self.client
                .log_message(
                    MessageType::ERROR,
                    format!("trellis: internal error while {what}: {msg}"),
                )
                .await;
        }
        failure_error(what, &failure)
    }

    fn start_worker(&self) {
        use std::sync::atomic::Ordering;
        if self.shared.worker_started.swap(true, Ordering::SeqCst) {
            return;
        }
        let shared = self.shared.clone();
        let client = self.client.clone();
        tokio::spawn(async move { worker(shared, client).await });
    }

    fn changed(&self, path: &Path) {
        self.shared.lock().touch(path);
        self.shared.wake.notify_one();
    }

    /// What is known now about requests on `path`.
    fn lookup(&self, path: &Path) -> Lookup {
        let ws = self.shared.lock();
        let Some(root) = ws.context_root(path) else {
            return Lookup::NotOpen;
        };
        if let Some(result) = ws.results.get(&root) {
            if result.is_current(&ws.docs) {
                return match result.analysis.sources.find(path) {
                    Some(file) => Lookup::Current(Target {
                        result: result.clone(),
                        file,
                    }),
                    None => Lookup::NotOpen,
                };
            }
        }
        if ws.dirty.contains(&root) || ws.in_flight.contains(&root) {
            Lookup::Coming
        } else {
            Lookup::Missing(root)
        }
    }

    /// The current analysis for a request about `uri`: the stored one if
    /// nothing it read has changed since; else the worker's next one when
    /// the worker has it queued (so a burst of requests during an edit does
    /// not start analyses of its own); else a fresh one. `Ok(None)` when the
    /// document is not open.
    pub async fn target(&self, uri: &Url) -> jsonrpc::Result<Option<Target>> {
        let path = convert::uri_to_path(uri);
        let root = loop {
            let stored = self.shared.stored.notified();
            tokio::pin!(stored);
            stored.as_mut().enable();
            match self.lookup(&path) {
                Lookup::NotOpen => return Ok(None),
                Lookup::Current(target) => return Ok(Some(target)),
                Lookup::Missing(root) => break root,
                Lookup::Coming => stored.await,
            }
        };
        let (snapshot, seq) = {
            let mut ws = self.shared.lock();
            let seq = ws.next_seq();
            (ws.snapshot(), seq)
        };
        let job_root = root.clone();
        let outcome = run_blocking(move || analyze_root(&job_root, &snapshot, seq)).await;
        let result = match outcome {
            Ok(Some(result)) => Arc::new(result),
            Ok(None) => return Ok(None),
            Err(failure) => return Err(self.report("analysing the grammar", failure).await),
        };
        self.shared.lock().store(&root, result.clone());
        Ok(result
            .analysis
            .sources
            .find(&path)
            .map(|file| Target { result, file }))
    }
}

/// See [`Backend::lookup`].
enum Lookup {
    NotOpen,
    Current(Target),
    /// Out of date, and the worker will analyse it.
    Coming,
    /// Out of date and nothing queued: analyse this root.
    Missing(PathBuf),
}

/// The analysis loop: waits for edits, analyses the roots they touched and
/// publishes diagnostics. One analysis runs at a time; edits that arrive
/// meanwhile are coalesced into the next round.
async fn worker(shared: Arc<Shared>, client: Client) {
    let mut in_burst = false;
    loop {
        shared.wake.notified().await;
        if in_burst {
            let debounce = (shared.lock().last_duration / 2).min(MAX_DEBOUNCE);
            tokio::time::sleep(debounce).await;
        }
        let (roots, snapshot, seq, mut affected) = {
            let mut ws = shared.lock();
            let mut roots: Vec<PathBuf> = ws.dirty.drain().collect();
            roots.retain(|r| ws.docs.contains_key(r));
            roots.sort();
            ws.in_flight = roots.iter().cloned().collect();
            let affected: HashSet<PathBuf> = ws.republish.drain().collect();
            let seq = ws.next_seq();
            (roots, Arc::new(ws.snapshot()), seq, affected)
        };
        let mut problems = Vec::new();
        for root in roots {
            let started = Instant::now();
            let job_root = root.clone();
            let job_snapshot = snapshot.clone();
            let outcome = run_blocking(move || analyze_root(&job_root, &job_snapshot, seq)).await;
            let result = match outcome {
                Ok(Some(result)) => Arc::new(result),
                Ok(None) => continue,
                Err(failure) => {
                    let message = format!(
                        "trellis: internal error while analysing {}: {failure}",
                        root.display()
                    );
                    client.log_message(MessageType::ERROR, message).await;
                    continue;
                }
            };
            let mut ws = shared.lock();
            ws.last_duration = started.elapsed();
            if let Some(old) = ws.results.get(&root) {
                affected.extend(old.paths().map(Path::to_path_buf));
            }
            affected.extend(result.paths().map(Path::to_path_buf));
            if let Some(problem) = &result.config_problem {
                problems.push(format!(
                    "{problem}; the default checks apply until it is fixed"
                ));
            }
            ws.store(&root, result);
        }
        for problem in problems {
            client.log_message(MessageType::WARNING, problem).await;
        }
        {
            let mut ws = shared.lock();
            ws.in_flight.clear();
            // Edits arrived while this round ran: more are likely to follow.
            in_burst = !ws.dirty.is_empty();
        }
        shared.stored.notify_waiters();
        publish(&shared, &client, affected).await;
    }
}

/// Looks every `every` at the `trellis.toml` files that could configure
/// each open grammar and has a grammar analysed again when one of them
/// appeared, vanished or changed since its last analysis read them.
async fn poll_configs(shared: Arc<Shared>, every: Duration) {
    loop {
        tokio::time::sleep(every).await;
        let seen: Vec<(PathBuf, Stamps)> = shared
            .lock()
            .results
            .iter()
            .map(|(root, r)| (root.clone(), r.config_stamps.clone()))
            .collect();
        let stale = tokio::task::spawn_blocking(move || {
            seen.into_iter()
                .filter(|(root, stamps)| Stamps::of(root) != *stamps)
                .map(|(root, _)| root)
                .collect::<Vec<PathBuf>>()
        })
        .await;
        let Ok(stale) = stale else { continue };
        if !stale.is_empty() {
            let mut ws = shared.lock();
            for root in &stale {
                ws.touch(root);
            }
            drop(ws);
            shared.wake.notify_one();
        }
    }
}

/// Publishes the diagnostics of every file in `affected` from the stored
/// results, skipping files whose open buffer has moved on since (a newer
/// analysis is queued for them) and never going back to an older version.
async fn publish(shared: &Shared, client: &Client, affected: HashSet<PathBuf>) {
    let mut paths: Vec<PathBuf> = affected.into_iter().collect();
    paths.sort();
    let mut batch = Vec::new();
    {
        let mut ws = shared.lock();
        for path in paths {
            let publishers = ws.publishers(&path);
            let open = ws.docs.get(&path).map(|d| (d.uri.clone(), d.version));
            // The version of this file the diagnostics were computed from.
            let version = publishers.iter().find_map(|r| {
                let file = r.analysis.sources.find(&path)?;
                r.inputs.get(file.0 as usize).copied().flatten()
            });
            if let Some((_, current)) = &open {
                if !publishers.is_empty() && version != Some(*current) {
                    continue;
                }
            }
            if let (Some(Some(previous)), Some(v)) = (ws.published.get(&path), version) {
                if v < *previous {
                    continue;
                }
            }
            let uri = open.map(|(uri, _)| uri).or_else(|| {
                publishers.iter().find_map(|r| {
                    r.analysis
                        .sources
                        .find(&path)
                        .and_then(|file| r.uri_of(file))
                })
            });
            let Some(uri) = uri.or_else(|| convert::path_to_uri(&path)) else {
                continue;
            };
            ws.published.insert(path.clone(), version);
            batch.push((path, uri, version, publishers));
        }
    }
    for (path, uri, version, publishers) in batch {
        let diagnostics = diagnostics_for(&path, &publishers);
        client.publish_diagnostics(uri, diagnostics, version).await;
    }
}

/// The LSP diagnostics located in `path` from all of `results`, without
/// repeats (two grammars using one file report its problems once: the
/// project layer's rule, as `trellis check` applies it).
fn diagnostics_for(path: &Path, results: &[Arc<RootResult>]) -> Vec<Diagnostic> {
    let mut repeats = trellis_project::Repeats::default();
    let mut out: Vec<Diagnostic> = Vec::new();
    for r in results {
        let Some(file) = r.analysis.sources.find(path) else {
            continue;
        };
        let uri_of = |f: FileId| r.uri_of(f);
        for d in r.analysis.diagnostics_in(file) {
            if repeats.first(path, d) {
                out.push(convert::diagnostic(&r.analysis, d, &uri_of));
            }
        }
    }
    out
}

/// The server's capabilities: what is wired to the core so far.
pub fn capabilities() -> ServerCapabilities {
    ServerCapabilities {
        position_encoding: Some(PositionEncodingKind::UTF16),
        text_document_sync: Some(TextDocumentSyncCapability::Options(
            TextDocumentSyncOptions {
                open_close: Some(true),
                change: Some(TextDocumentSyncKind::FULL),
                will_save: None,
                will_save_wait_until: None,
                save: Some(TextDocumentSyncSaveOptions::Supported(true)),
            },
        )),
        hover_provider: Some(HoverProviderCapability::Simple(true)),
        definition_provider: Some(OneOf::Left(true)),
        references_provider: Some(OneOf::Left(true)),
        rename_provider: Some(OneOf::Right(RenameOptions {
            prepare_provider: Some(true),
            work_done_progress_options: Default::default(),
        })),
        document_symbol_provider: Some(OneOf::Left(true)),
        workspace_symbol_provider: Some(OneOf::Left(true)),
        completion_provider: Some(CompletionOptions::default()),
        semantic_tokens_provider: Some(SemanticTokensServerCapabilities::SemanticTokensOptions(
            SemanticTokensOptions {
                legend: features::semantic_tokens_legend(),
                full: Some(SemanticTokensFullOptions::Bool(true)),
                range: None,
                work_done_progress_options: Default::default(),
            },
        )),
        code_action_provider: Some(CodeActionProviderCapability::Options(CodeActionOptions {
            code_action_kinds: Some(vec![CodeActionKind::QUICKFIX, CodeActionKind::REFACTOR]),
            work_done_progress_options: Default::default(),
            resolve_provider: None,
        })),
        inlay_hint_provider: Some(OneOf::Left(true)),
        folding_range_provider: Some(FoldingRangeProviderCapability::Simple(true)),
        document_link_provider: Some(DocumentLinkOptions {
            resolve_provider: Some(false),
            work_done_progress_options: Default::default(),
        }),
        document_highlight_provider: Some(OneOf::Left(true)),
        code_lens_provider: Some(CodeLensOptions {
            resolve_provider: Some(false),
        }),
        execute_command_provider: Some(ExecuteCommandOptions {
            commands: commands::NAMES.iter().map(|s| s.to_string()).collect(),
            work_done_progress_options: Default::default(),
        }),
        ..ServerCapabilities::default()
    }
}

#[tower_lsp::async_trait]
impl LanguageServer for Backend {
    async fn initialize(&self, params: InitializeParams) -> jsonrpc::Result<InitializeResult> {
        let watches = params
            .capabilities
            .workspace
            .and_then(|w| w.did_change_watched_files)
            .and_then(|w| w.dynamic_registration)
            .unwrap_or(false);
        self.shared
            .client_watches
            .store(watches, std::sync::atomic::Ordering::SeqCst);
        self.start_worker();
        Ok(InitializeResult {
            capabilities: capabilities(),
            server_info: Some(ServerInfo {
                name: "trellis".to_string(),
                version: Some(env!("CARGO_PKG_VERSION").to_string()),
            }),
        })
    }

    async fn initialized(&self, _: InitializedParams) {
        self.client
            .log_message(MessageType::INFO, "trellis language server ready")
            .await;
        self.watch_files().await;
    }

    async fn did_change_watched_files(&self, params: DidChangeWatchedFilesParams) {
        {
            let mut ws = self.shared.lock();
            for change in params.changes {
                let path = convert::uri_to_path(&change.uri);
                if path.file_name() == Some(std::ffi::OsStr::new(CONFIG_FILE))
                    || change.typ != FileChangeType::CHANGED
                {
                    // A configuration decides every grammar below it; a file
                    // that appears or vanishes may change how `use`s resolve.
                    ws.touch_all();
                } else {
                    ws.touch(&path);
                }
            }
        }
        self.shared.wake.notify_one();
    }

    async fn shutdown(&self) -> jsonrpc::Result<()> {
        Ok(())
    }

    async fn did_open(&self, params: DidOpenTextDocumentParams) {
        let doc = params.text_document;
        let path = convert::uri_to_path(&doc.uri);
        {
            let mut ws = self.shared.lock();
            ws.docs.insert(
                path.clone(),
                Doc {
                    uri: doc.uri,
                    version: doc.version,
                    text: Arc::new(doc.text),
                },
            );
            // Any grammar may `use` this file, even one whose `use` failed
            // before it existed on disk.
            ws.touch_all();
        }
        self.changed(&path);
    }

    async fn did_change(&self, params: DidChangeTextDocumentParams) {
        let path = convert::uri_to_path(&params.text_document.uri);
        let version = params.text_document.version;
        // Full sync: the last change holds the whole text.
        let Some(change) = params.content_changes.into_iter().last() else {
            return;
        };
        {
            let mut ws = self.shared.lock();
            let Some(doc) = ws.docs.get_mut(&path) else {
                return;
            };
            if version <= doc.version {
                // Out of order or repeated: the text we have is newer.
                return;
            }
            doc.version = version;
            doc.text = Arc::new(change.text);
        }
        self.changed(&path);
    }

    async fn did_save(&self, params: DidSaveTextDocumentParams) {
        // Other grammars may read this file from disk: analyse them again.
        let path = convert::uri_to_path(&params.text_document.uri);
        self.changed(&path);
    }

    async fn did_close(&self, params: DidCloseTextDocumentParams) {
        let path = convert::uri_to_path(&params.text_document.uri);
        {
            let mut ws = self.shared.lock();
            ws.docs.remove(&path);
            if let Some(old) = ws.results.remove(&path) {
                let read: Vec<PathBuf> = old.paths().map(Path::to_path_buf).collect();
                ws.republish.extend(read);
            }
            ws.republish.insert(path.clone());
            ws.published.remove(&path);
            // Grammars that used the buffer now read the file from disk.
            ws.touch(&path);
            ws.touch_all();
        }
        self.shared.wake.notify_one();
    }

    async fn hover(&self, params: HoverParams) -> jsonrpc::Result<Option<Hover>> {
        features::hover(self, params).await
    }

    async fn goto_definition(
        &self,
        params: GotoDefinitionParams,
    ) -> jsonrpc::Result<Option<GotoDefinitionResponse>> {
        features::definition(self, params).await
    }

    async fn references(&self, params: ReferenceParams) -> jsonrpc::Result<Option<Vec<Location>>> {
        features::references(self, params).await
    }

    async fn prepare_rename(
        &self,
        params: TextDocumentPositionParams,
    ) -> jsonrpc::Result<Option<PrepareRenameResponse>> {
        features::prepare_rename(self, params).await
    }

    async fn rename(&self, params: RenameParams) -> jsonrpc::Result<Option<WorkspaceEdit>> {
        features::rename(self, params).await
    }

    async fn document_symbol(
        &self,
        params: DocumentSymbolParams,
    ) -> jsonrpc::Result<Option<DocumentSymbolResponse>> {
        features::document_symbols(self, params).await
    }

    async fn symbol(
        &self,
        params: WorkspaceSymbolParams,
    ) -> jsonrpc::Result<Option<Vec<SymbolInformation>>> {
        features::workspace_symbols(self, params).await
    }

    async fn completion(
        &self,
        params: CompletionParams,
    ) -> jsonrpc::Result<Option<CompletionResponse>> {
        features::completion(self, params).await
    }

    async fn semantic_tokens_full(
        &self,
        params: SemanticTokensParams,
    ) -> jsonrpc::Result<Option<SemanticTokensResult>> {
        features::semantic_tokens(self, params).await
    }

    async fn code_action(
        &self,
        params: CodeActionParams,
    ) -> jsonrpc::Result<Option<CodeActionResponse>> {
        features::code_actions(self, params).await
    }

    async fn inlay_hint(&self, params: InlayHintParams) -> jsonrpc::Result<Option<Vec<InlayHint>>> {
        features::inlay_hints(self, params).await
    }

    async fn folding_range(
        &self,
        params: FoldingRangeParams,
    ) -> jsonrpc::Result<Option<Vec<FoldingRange>>> {
        features::folding_ranges(self, params).await
    }

    async fn document_link(
        &self,
        params: DocumentLinkParams,
    ) -> jsonrpc::Result<Option<Vec<DocumentLink>>> {
        features::document_links(self, params).await
    }

    async fn document_highlight(
        &self,
        params: DocumentHighlightParams,
    ) -> jsonrpc::Result<Option<Vec<DocumentHighlight>>> {
        features::document_highlights(self, params).await
    }

    async fn code_lens(&self, params: CodeLensParams) -> jsonrpc::Result<Option<Vec<CodeLens>>> {
        features::code_lenses(self, params).await
    }

    async fn execute_command(
        &self,
        params: ExecuteCommandParams,
    ) -> jsonrpc::Result<Option<Value>> {
        commands::execute(self, &self.options, params).await
    }
}

impl Backend {
    /// Arranges to hear of edits made outside the editor's buffers: to
    /// `trellis.toml` files (which decide the checks' levels) and to grammar
    /// files read from disk. Clients that can watch files are asked to;
    /// for the others the server looks at the configuration files itself
    /// every [`Options::config_poll`].
    async fn watch_files(&self) {
        use std::sync::atomic::Ordering;
        if self.shared.client_watches.load(Ordering::SeqCst) {
            let watchers = [format!("**/{CONFIG_FILE}"), "**/*.trellis".to_string()]
                .into_iter()
                .map(|glob| FileSystemWatcher {
                    glob_pattern: GlobPattern::String(glob),
                    kind: None,
                })
                .collect();
            let options = DidChangeWatchedFilesRegistrationOptions { watchers };
            let registration = Registration {
                id: "trellis-files".to_string(),
                method: "workspace/didChangeWatchedFiles".to_string(),
                register_options: serde_json::to_value(options).ok(),
            };
            if self
                .client
                .register_capability(vec![registration])
                .await
                .is_ok()
            {
                return;
            }
        }
        let shared = self.shared.clone();
        let every = self.options.config_poll;
        tokio::spawn(async move { poll_configs(shared, every).await });
    }

    /// The latest analysis of every open document (for searches across
    /// the workspace).
    pub fn latest_results(&self) -> Vec<Arc<RootResult>> {
        self.shared.lock().results.values().cloned().collect()
    }

    /// Sends `window/showMessage`.
    pub async fn show(&self, typ: MessageType, message: String) {
        self.client.show_message(typ, message).await;
    }

    /// Runs core work for a request on the blocking pool; a panic is logged
    /// and becomes an error response.
    pub async fn run<T, F>(&self, what: &str, work: F) -> jsonrpc::Result<T>
    where
        T: Send + 'static,
        F: FnOnce() -> T + Send + 'static,
    {
        match run_blocking(work).await {
            Ok(value) => Ok(value),
            Err(failure) => Err(self.report(what, failure).await),
        }
    }
}
