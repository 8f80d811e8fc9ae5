//! Document synchronisation (`didOpen`, `didChange`, `didSave`,
//! `didClose`) and `workspace/didChangeWatchedFiles`: each records what
//! changed in the workspace, marks the grammars that read it for analysis
//! and wakes the worker. Nothing is analysed here.

use crate::convert;
use crate::server::Backend;
use crate::workspace::Doc;
use std::path::{Path, PathBuf};
use std::sync::Arc;
use tower_lsp::lsp_types::*;
use trellis_project::config::FILE_NAME as CONFIG_FILE;

pub fn did_change_watched_files(backend: &Backend, params: DidChangeWatchedFilesParams) {
    {
        let mut ws = backend.shared.lock();
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
    backend.shared.wake.notify_one();
}

pub fn did_open(backend: &Backend, params: DidOpenTextDocumentParams) {
    let doc = params.text_document;
    let path = convert::uri_to_path(&doc.uri);
    {
        let mut ws = backend.shared.lock();
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
    backend.shared.changed(&path);
}

pub fn did_change(backend: &Backend, params: DidChangeTextDocumentParams) {
    let path = convert::uri_to_path(&params.text_document.uri);
    let version = params.text_document.version;
    // Full sync: the last change holds the whole text.
    let Some(change) = params.content_changes.into_iter().last() else {
        return;
    };
    {
        let mut ws = backend.shared.lock();
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
    backend.shared.changed(&path);
}

pub fn did_save(backend: &Backend, params: DidSaveTextDocumentParams) {
    // Other grammars may read this file from disk: analyse them again.
    let path = convert::uri_to_path(&params.text_document.uri);
    backend.shared.changed(&path);
}

pub fn did_close(backend: &Backend, params: DidCloseTextDocumentParams) {
    let path = convert::uri_to_path(&params.text_document.uri);
    {
        let mut ws = backend.shared.lock();
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
    backend.shared.wake.notify_one();
}
