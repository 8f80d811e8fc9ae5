//! The state the protocol handlers and the analysis worker share, and how a
//! request finds the analysis it works on.
//!
//! [`Shared`] holds the [`Workspace`] (open documents, latest results,
//! pending work) behind one lock, with the signals between the handlers and
//! the worker: `wake` (a document changed) and `stored` (a round of the
//! worker ended). A request about a document gets a [`Target`]: the current
//! analysis of the grammar that speaks for the document and the document's
//! file in it. The analysis is the stored one while nothing it read has
//! changed, else the worker's next one when the worker has it queued, else
//! one made for the request from a snapshot of the open documents.

use crate::convert;
use crate::guard::{run_blocking, Failure};
use crate::workspace::{analyze_root, RootResult, Workspace};
use grammar_lang::FileId;
use std::path::{Path, PathBuf};
use std::sync::atomic::AtomicBool;
use std::sync::{Arc, Mutex, MutexGuard};
use tokio::sync::Notify;
use tower_lsp::lsp_types::{Location, Position, Url};
use trellis_ide::Analysis;
use trellis_project::SyntaxCache;

/// State shared by the handlers and the analysis worker.
#[derive(Debug, Default)]
pub struct Shared {
    workspace: Mutex<Workspace>,
    /// Signalled when a document changed and the worker has work.
    pub wake: Notify,
    /// Signalled after every round of the worker.
    pub stored: Notify,
    pub worker_started: AtomicBool,
    /// The client can watch files for the server (dynamic registration of
    /// `workspace/didChangeWatchedFiles`).
    pub client_watches: AtomicBool,
    /// The syntax of every file the open grammars read, shared by their
    /// analyses.
    pub parsed: Arc<SyntaxCache>,
}

impl Shared {
    pub fn lock(&self) -> MutexGuard<'_, Workspace> {
        // A panic while the lock was held leaves a workspace whose fields
        // are each still valid; keep serving rather than poisoning forever.
        self.workspace
            .lock()
            .unwrap_or_else(|poisoned| poisoned.into_inner())
    }

    /// Marks every grammar that reads `path` for analysis and wakes the
    /// worker.
    pub fn changed(&self, path: &Path) {
        self.lock().touch(path);
        self.wake.notify_one();
    }

    /// The latest analysis of every open document (for searches across
    /// the workspace).
    pub fn latest_results(&self) -> Vec<Arc<RootResult>> {
        self.lock().results.values().cloned().collect()
    }

    /// What is known now about requests on `path`.
    fn lookup(&self, path: &Path) -> Lookup {
        let ws = self.lock();
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
    /// document is not open; an error when analysing failed.
    pub async fn target(&self, uri: &Url) -> Result<Option<Target>, Failure> {
        let path = convert::uri_to_path(uri);
        let root = loop {
            let stored = self.stored.notified();
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
            let mut ws = self.lock();
            let seq = ws.next_seq();
            (ws.snapshot(), seq)
        };
        let job_root = root.clone();
        let parsed = self.parsed.clone();
        let Some(result) =
            run_blocking(move || analyze_root(&job_root, &snapshot, seq, &parsed)).await?
        else {
            return Ok(None);
        };
        let result = Arc::new(result);
        self.lock().store(&root, result.clone());
        Ok(result
            .analysis
            .sources
            .find(&path)
            .map(|file| Target { result, file }))
    }
}

/// See [`Shared::lookup`].
enum Lookup {
    NotOpen,
    Current(Target),
    /// Out of date, and the worker will analyse it.
    Coming,
    /// Out of date and nothing queued: analyse this root.
    Missing(PathBuf),
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
