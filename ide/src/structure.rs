//! The shape of a file: foldable regions, links to used files, and the
//! occurrences of one symbol to highlight.

use super::locate;
use super::lookup::{lookup, Lookup};
use super::navigation::{names_in_file, words_in_file};
use grammar_lang::analysis::Analysis;
use grammar_lang::source::{resolve_use, FileId};
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::Decl;
use grammar_lang::syntax::lexer::TokenKind;

/// What a foldable region holds.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum FoldKind {
    /// A block or a test block.
    Declaration,
    /// Two or more consecutive comment lines.
    Comment,
}

/// A region an editor may fold: from the line of `span.start` to the line
/// of `span.end`.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct FoldingRange {
    pub span: Span,
    pub kind: FoldKind,
}

/// The foldable regions of `file`, in order of their start: every block and
/// test block that spans more than one line, and every run of two or more
/// lines holding only a comment (`#` or `##`).
///
/// Cost: linear in the file's tokens.
pub fn folding_ranges(analysis: &Analysis, file: FileId) -> Vec<FoldingRange> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let text = locate::text(analysis, file);
    let multi_line = |span: Span| text.get(span.range()).is_some_and(|s| s.contains('\n'));
    let mut out: Vec<FoldingRange> = syntax
        .decls
        .iter()
        .filter(|d| matches!(d, Decl::Block(_) | Decl::Test(_)))
        .map(Decl::span)
        .filter(|&s| multi_line(s))
        .map(|span| FoldingRange {
            span,
            kind: FoldKind::Declaration,
        })
        .collect();
    // Comment runs: a comment that is the first significant token of its
    // line, on consecutive lines.
    let mut run: Option<(Span, usize)> = None;
    let mut line_has_code = false;
    let mut previous_line_was_comment = false;
    for token in &syntax.tokens {
        match token.kind {
            TokenKind::Whitespace => {}
            TokenKind::Newline => {
                if !previous_line_was_comment {
                    close_run(&mut run, &mut out);
                }
                line_has_code = false;
                previous_line_was_comment = false;
            }
            TokenKind::Comment | TokenKind::DocComment if !line_has_code => {
                previous_line_was_comment = true;
                run = Some(match run {
                    Some((span, lines)) => (span.cover(token.span), lines + 1),
                    None => (token.span, 1),
                });
            }
            _ => {
                line_has_code = true;
                close_run(&mut run, &mut out);
            }
        }
    }
    close_run(&mut run, &mut out);
    out.sort_by_key(|f| (f.span.start, f.span.end));
    out
}

/// Ends a run of comment lines, keeping it if it has two lines or more.
fn close_run(run: &mut Option<(Span, usize)>, out: &mut Vec<FoldingRange>) {
    if let Some((span, lines)) = run.take() {
        if lines >= 2 {
            out.push(FoldingRange {
                span,
                kind: FoldKind::Comment,
            });
        }
    }
}

/// A `use` path that leads to a loaded file.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct DocumentLink {
    /// The quoted path.
    pub span: Span,
    pub target: FileId,
}

/// The `use` paths of `file` that lead to files of the analysis (paths
/// that could not be loaded have no link).
pub fn document_links(analysis: &Analysis, file: FileId) -> Vec<DocumentLink> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let from = &analysis.sources.get(file).path;
    syntax
        .decls
        .iter()
        .filter_map(|d| match d {
            Decl::Use(u) => Some(DocumentLink {
                span: u.path.span,
                target: analysis.sources.find(&resolve_use(from, &u.path.value))?,
            }),
            _ => None,
        })
        .collect()
}

/// One occurrence to highlight.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Highlight {
    pub span: Span,
    /// The head of a block (a definition) rather than a use.
    pub definition: bool,
}

/// Every occurrence in `file` of the non-terminal or word at `offset`:
/// for a non-terminal its block heads, uses, `start` and test-tree labels;
/// for a word every right-hand side and tree leaf with the same word.
///
/// Cost: one scan of the file's syntax.
pub fn document_highlights(analysis: &Analysis, file: FileId, offset: usize) -> Vec<Highlight> {
    let mut out = Vec::new();
    match lookup(analysis, file, offset) {
        Some(Lookup::NonTerminal { nt, .. }) => {
            let name = analysis.grammar.nt_name(nt);
            names_in_file(analysis, file, name, |span, definition| {
                out.push(Highlight { span, definition })
            });
        }
        Some(Lookup::Terminal { value, .. }) => {
            words_in_file(analysis, file, &value, |span| {
                out.push(Highlight {
                    span,
                    definition: false,
                })
            });
        }
        _ => {}
    }
    out
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn folding_ranges(&self, file: FileId) -> Vec<FoldingRange> {
        folding_ranges(self.core(), file)
    }

    pub fn document_links(&self, file: FileId) -> Vec<DocumentLink> {
        document_links(self.core(), file)
    }

    pub fn document_highlights(&self, file: FileId, offset: usize) -> Vec<Highlight> {
        document_highlights(self.core(), file, offset)
    }
}
