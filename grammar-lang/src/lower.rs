//! Lowering: syntax trees of the root file and its `use`d files → [`Grammar`].

use crate::diagnostic::Diagnostic;
use crate::model::Grammar;
use crate::source::{FileLoader, SourceMap};
use crate::syntax::ast::SyntaxFile;
use std::path::Path;

/// The result of lowering: files, their syntax, the model and the findings so far.
pub struct Lowered {
    pub sources: SourceMap,
    pub syntax: Vec<SyntaxFile>,
    pub grammar: Grammar,
    pub diagnostics: Vec<Diagnostic>,
}

pub fn lower(root: &Path, text: &str, loader: &dyn FileLoader) -> Lowered {
    let _ = loader;
    let mut sources = SourceMap::new();
    sources.add(root.to_path_buf(), text.to_string());
    Lowered {
        sources,
        syntax: vec![crate::syntax::parse(text)],
        grammar: Grammar::new(),
        diagnostics: Vec::new(),
    }
}
