//! Keeping the analyses current: the analysis worker and the watch on
//! files edited outside the editor.
//!
//! Document notifications only record text and wake the worker; the worker
//! analyses the roots they touched off the protocol loop (on the blocking
//! pool), one at a time, coalescing edits that arrive meanwhile, drops
//! results that newer edits have overtaken, and has the diagnostics
//! published. Edits of `trellis.toml` and of grammar files on disk reach it
//! through the client's file watching, or, for clients that cannot watch
//! files, through the server's own look at the configuration files.

use crate::guard::run_blocking;
use crate::publish::publish;
use crate::server::Backend;
use crate::state::Shared;
use crate::workspace::analyze_root;
use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::sync::atomic::Ordering;
use std::sync::Arc;
use std::time::{Duration, Instant};
use tower_lsp::lsp_types::{
    DidChangeWatchedFilesRegistrationOptions, FileSystemWatcher, GlobPattern, MessageType,
    Registration,
};
use tower_lsp::Client;
use trellis_project::config::{Stamps, FILE_NAME as CONFIG_FILE};

/// The longest pause before analysing during a burst of edits. An edit
/// that arrives while nothing is being analysed starts an analysis at once;
/// edits that arrive while one runs are coalesced, and if they keep coming
/// (a burst of keystrokes) the worker waits half the last analysis time, at
/// most this, for the burst to end before analysing the newest text once.
const MAX_DEBOUNCE: Duration = Duration::from_millis(100);

/// Starts the analysis worker, once.
pub fn start(backend: &Backend) {
    if backend.shared.worker_started.swap(true, Ordering::SeqCst) {
        return;
    }
    let shared = backend.shared.clone();
    let client = backend.client.clone();
    tokio::spawn(async move { worker(shared, client).await });
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
            let parsed = shared.parsed.clone();
            let outcome =
                run_blocking(move || analyze_root(&job_root, &job_snapshot, seq, &parsed)).await;
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
            // Keep the syntax of the files some open grammar still reads.
            let ws = &*ws;
            shared.parsed.retain(|path| {
                ws.docs.contains_key(path)
                    || ws
                        .results
                        .values()
                        .any(|r| r.analysis.sources.find(path).is_some())
            });
            // Edits arrived while this round ran: more are likely to follow.
            in_burst = !ws.dirty.is_empty();
        }
        shared.stored.notify_waiters();
        publish(&shared, &client, affected).await;
    }
}

/// Arranges to hear of edits made outside the editor's buffers: to
/// `trellis.toml` files (which decide the checks' levels) and to grammar
/// files read from disk. Clients that can watch files are asked to; for the
/// others the server looks at the configuration files itself every
/// `Options::config_poll`.
pub async fn watch_files(backend: &Backend) {
    if backend.shared.client_watches.load(Ordering::SeqCst) {
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
        if backend
            .client
            .register_capability(vec![registration])
            .await
            .is_ok()
        {
            return;
        }
    }
    let shared = backend.shared.clone();
    let every = backend.options.config_poll;
    tokio::spawn(async move { poll_configs(shared, every).await });
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
