//! The request handlers, one file per feature family. Each finds the
//! request's analysis ([`Backend::target`](crate::server::Backend::target)),
//! calls the analysis façade (`trellis_ide::Analysis`) on the blocking pool
//! with panics caught, and turns the answer into LSP types. Nothing here
//! decides anything about grammars.

pub mod code_actions;
pub mod commands;
pub mod completion;
pub mod documents;
pub mod formatting;
pub mod hints;
pub mod hover;
pub mod lenses;
pub mod lifecycle;
pub mod navigation;
pub mod semantic_tokens;
pub mod structure;
pub mod symbols;

use crate::state::Target;
use std::collections::HashMap;
use tower_lsp::lsp_types::{TextEdit, Url, WorkspaceEdit};

/// The façade's edits as an LSP workspace edit, grouped by file URI.
fn workspace_edit(target: &Target, edits: &[trellis_ide::TextEdit]) -> WorkspaceEdit {
    let mut changes: HashMap<Url, Vec<TextEdit>> = HashMap::new();
    for e in edits {
        if let Some(location) = target.location(e.file, e.span) {
            changes
                .entry(location.uri)
                .or_default()
                .push(TextEdit::new(location.range, e.new_text.clone()));
        }
    }
    WorkspaceEdit::new(changes)
}
