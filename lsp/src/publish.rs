//! Publishing diagnostics (`textDocument/publishDiagnostics`).
//!
//! After each round of the worker, the diagnostics of every file a changed
//! analysis read are published from the stored results: a file's findings
//! come from every open grammar that speaks for it (the project layer's
//! `speakers`), a finding shared by several of them once (its `Repeats`
//! rule, as `trellis check` applies it). A file whose open buffer has moved
//! on since is skipped (a newer analysis is queued for it), and no file
//! ever goes back to diagnostics of an older version.

use crate::convert;
use crate::state::Shared;
use crate::workspace::RootResult;
use grammar_lang::FileId;
use std::collections::HashSet;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use tower_lsp::lsp_types::Diagnostic;
use tower_lsp::Client;

/// Publishes the diagnostics of every file in `affected` from the stored
/// results, skipping files whose open buffer has moved on since (a newer
/// analysis is queued for them) and never going back to an older version.
pub async fn publish(shared: &Shared, client: &Client, affected: HashSet<PathBuf>) {
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
