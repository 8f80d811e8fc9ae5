//! Go to definition, find references, rename.

use super::locate;
use super::lookup::{lookup, Lookup};
use super::walk::{walk, Node};
use super::TextEdit;
use grammar_lang::analysis::Analysis;
use grammar_lang::diagnostic::Location;
use grammar_lang::model::words;
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::lexer::is_valid_symbol_name;
use std::fmt;

/// Where the thing at `offset` of `file` is defined: a non-terminal's block
/// name (in whichever file it is), or the start of a `use`d file. `None`
/// for anything else or a symbol without a block.
pub fn definition(analysis: &Analysis, file: FileId, offset: usize) -> Option<Location> {
    match lookup(analysis, file, offset)? {
        Lookup::NonTerminal { nt, .. } => analysis
            .grammar
            .nonterminal(nt)
            .block
            .as_ref()
            .map(|b| b.name),
        Lookup::UsePath {
            target: Some(target),
            ..
        } => Some(Location::new(target, Span::point(0))),
        _ => None,
    }
}

/// Every place the non-terminal or word at `offset` of `file` is written,
/// in every file, sorted by file and position.
///
/// For a non-terminal: its uses on right-hand sides, in `start` and as a
/// label of a test tree, plus (if `include_definition`) the head of its
/// block (and of any second block of the same name). For a quoted word:
/// every right-hand side and test-tree leaf with the same word.
///
/// Cost: one scan over the syntax of every file.
pub fn references(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    include_definition: bool,
) -> Vec<Location> {
    let mut out = Vec::new();
    match lookup(analysis, file, offset) {
        Some(Lookup::NonTerminal { nt, .. }) => {
            let name = analysis.grammar.nt_name(nt);
            for_each_name(analysis, name, |at, is_definition| {
                if include_definition || !is_definition {
                    out.push(at);
                }
            });
        }
        Some(Lookup::Terminal { value, .. }) => {
            for id in 0..analysis.syntax.len() {
                let file = FileId(id as u32);
                words_in_file(analysis, file, &value, |span| {
                    out.push(Location::new(file, span))
                });
            }
        }
        _ => {}
    }
    out
}

/// Calls `f` with every place `name` is written as a non-terminal (and
/// whether it is a block head), file by file in source order.
fn for_each_name(analysis: &Analysis, name: &str, mut f: impl FnMut(Location, bool)) {
    for id in 0..analysis.syntax.len() {
        let file = FileId(id as u32);
        names_in_file(analysis, file, name, |span, def| {
            f(Location::new(file, span), def)
        });
    }
}

/// Calls `f` with every place in `file` where `name` is written as a
/// non-terminal, and whether it is a block head, in source order.
pub(crate) fn names_in_file(
    analysis: &Analysis,
    file: FileId,
    name: &str,
    mut f: impl FnMut(Span, bool),
) {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return;
    };
    let text = locate::text(analysis, file);
    let is_name = |span: Span| span.len() == name.len() && span.text(text) == name;
    walk(&syntax.decls, &mut |node| match node {
        Node::BlockName(span) if is_name(span) => f(span, true),
        Node::StartName(span) | Node::NtUse(span) | Node::TreeLabel(span) if is_name(span) => {
            f(span, false)
        }
        _ => {}
    });
}

/// Calls `f` with every quoted `word` in `file` (right-hand sides and
/// test-tree leaves), in source order. Quoted texts of the same words
/// match however they are spaced (they mean the same).
pub(crate) fn words_in_file(
    analysis: &Analysis,
    file: FileId,
    word: &str,
    mut f: impl FnMut(Span),
) {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return;
    };
    // The same words, however spaced: `"fresh  water"` is `"fresh water"`.
    let same = |value: &str| value == word || words(value).eq(words(word));
    walk(&syntax.decls, &mut |node| match node {
        Node::Terminal(s) | Node::Leaf(s) if same(&s.value) => f(s.span),
        _ => {}
    });
}

/// Why a rename is refused.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum RenameError {
    /// Nothing renameable at the offset.
    NotASymbol,
    /// A quoted terminal: words are data, not names.
    Terminal,
    /// A keyword of the language.
    Keyword(&'static str),
    /// The new name is not a valid symbol name (or is a keyword).
    InvalidName(String),
    /// Both the symbol and the new name have a block: renaming would give
    /// one symbol two blocks.
    AlreadyDefined(String),
}

impl fmt::Display for RenameError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        match self {
            RenameError::NotASymbol => f.write_str("only non-terminal names can be renamed"),
            RenameError::Terminal => f.write_str(
                "a quoted terminal is a word of the language, not a name; edit the words instead",
            ),
            RenameError::Keyword(k) => write!(f, "`{k}` is a keyword and cannot be renamed"),
            RenameError::InvalidName(n) => write!(
                f,
                "`{n}` is not a valid symbol name: start with a letter or `_`, then letters, \
                 digits, `_ - . ' +`; keywords are not allowed"
            ),
            RenameError::AlreadyDefined(n) => write!(
                f,
                "`{n}` already has a block; renaming would give it a second one"
            ),
        }
    }
}

impl std::error::Error for RenameError {}

/// The span of the name a rename at `offset` would change, or why there is
/// nothing to rename there.
pub fn prepare_rename(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
) -> Result<Span, RenameError> {
    match lookup(analysis, file, offset) {
        Some(Lookup::NonTerminal { span, .. }) => Ok(span),
        Some(Lookup::Terminal { .. }) => Err(RenameError::Terminal),
        Some(Lookup::Keyword { keyword, .. }) => Err(RenameError::Keyword(
            grammar_lang::syntax::lexer::TokenKind::KEYWORDS
                .iter()
                .find(|(_, k)| *k == keyword)
                .map_or("keyword", |(s, _)| s),
        )),
        _ => Err(RenameError::NotASymbol),
    }
}

/// The edits that rename the non-terminal at `offset` of `file` to
/// `new_name` everywhere: block heads, right-hand sides, `start`, and the
/// labels of test trees, in every file.
///
/// Renaming onto a name that is only used (never defined) is allowed and
/// merges the two, as is renaming a symbol without a block onto a defined
/// one (fixing a misspelt use); renaming a defined symbol onto another
/// defined one is refused. Renaming to the same name gives no edits.
pub fn rename(
    analysis: &Analysis,
    file: FileId,
    offset: usize,
    new_name: &str,
) -> Result<Vec<TextEdit>, RenameError> {
    prepare_rename(analysis, file, offset)?;
    let Some(Lookup::NonTerminal { nt, .. }) = lookup(analysis, file, offset) else {
        return Err(RenameError::NotASymbol);
    };
    if !is_valid_symbol_name(new_name) {
        return Err(RenameError::InvalidName(new_name.to_string()));
    }
    let grammar = &analysis.grammar;
    let old = grammar.nt_name(nt);
    if old == new_name {
        return Ok(Vec::new());
    }
    if let Some(existing) = grammar.nt(new_name) {
        if grammar.nonterminal(existing).is_defined() && grammar.nonterminal(nt).is_defined() {
            return Err(RenameError::AlreadyDefined(new_name.to_string()));
        }
    }
    let mut edits = Vec::new();
    for_each_name(analysis, old, |at, _| {
        edits.push(TextEdit {
            file: at.file,
            span: at.span,
            new_text: new_name.to_string(),
        })
    });
    Ok(edits)
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn definition(&self, file: FileId, offset: usize) -> Option<Location> {
        definition(self.core(), file, offset)
    }

    pub fn references(
        &self,
        file: FileId,
        offset: usize,
        include_definition: bool,
    ) -> Vec<Location> {
        references(self.core(), file, offset, include_definition)
    }

    pub fn prepare_rename(&self, file: FileId, offset: usize) -> Result<Span, RenameError> {
        prepare_rename(self.core(), file, offset)
    }

    pub fn rename(
        &self,
        file: FileId,
        offset: usize,
        new_name: &str,
    ) -> Result<Vec<TextEdit>, RenameError> {
        rename(self.core(), file, offset, new_name)
    }
}
