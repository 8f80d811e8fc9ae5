//! Finding things in one file's syntax by binary search, and tying syntax
//! nodes to the ids of the semantic model.

use grammar_lang::analysis::Analysis;
use grammar_lang::model::{NtId, RuleId};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::{Alternative, Block, Decl, SyntaxFile};
use grammar_lang::syntax::lexer::Token;

/// The syntax of `file`, if the analysis has such a file.
pub(crate) fn syntax(analysis: &Analysis, file: FileId) -> Option<&SyntaxFile> {
    analysis.syntax.get(file.0 as usize)
}

/// The text of `file` (empty for an unknown file).
pub(crate) fn text(analysis: &Analysis, file: FileId) -> &str {
    if (file.0 as usize) < analysis.sources.len() {
        &analysis.sources.get(file).text
    } else {
        ""
    }
}

/// Whether `offset` touches `span`: inside it or right at its end.
pub(crate) fn touches(span: Span, offset: usize) -> bool {
    span.contains(offset)
}

/// Of the spans in `spans` (sorted, non-overlapping), the index of the one
/// `offset` touches, preferring one that starts at `offset` over one that
/// ends there.
pub(crate) fn find_touching<T>(
    items: &[T],
    span_of: impl Fn(&T) -> Span,
    offset: usize,
) -> Option<usize> {
    let i = items.partition_point(|x| (span_of(x).end as usize) < offset);
    let first = items.get(i)?;
    if !touches(span_of(first), offset) {
        return None;
    }
    // `first` ends at or after offset; a following item may start exactly here.
    if span_of(first).end as usize == offset {
        if let Some(next) = items.get(i + 1) {
            if span_of(next).start as usize == offset {
                return Some(i + 1);
            }
        }
    }
    Some(i)
}

/// The declaration of `file` that `offset` touches.
pub(crate) fn decl_at(syntax: &SyntaxFile, offset: usize) -> Option<&Decl> {
    find_touching(&syntax.decls, Decl::span, offset).map(|i| &syntax.decls[i])
}

/// The declarations whose spans overlap `range` (touching counts).
pub(crate) fn decls_in(syntax: &SyntaxFile, range: Span) -> &[Decl] {
    let from = syntax.decls.partition_point(|d| d.span().end < range.start);
    let to = syntax
        .decls
        .partition_point(|d| d.span().start <= range.end);
    syntax.decls.get(from..to.max(from)).unwrap_or(&[])
}

/// The index of the token that `offset` touches, preferring a significant
/// (non-trivia, non-newline) token: the one starting at `offset`, else the
/// one ending there.
pub(crate) fn token_at(tokens: &[Token], offset: usize) -> Option<usize> {
    let i = tokens.partition_point(|t| (t.span.end as usize) <= offset);
    let significant = |t: &Token| {
        !t.kind.is_trivia() && t.kind != grammar_lang::syntax::lexer::TokenKind::Newline
    };
    if let Some(t) = tokens.get(i) {
        if t.span.start as usize <= offset && significant(t) {
            return Some(i);
        }
    }
    if i > 0 {
        let prev = &tokens[i - 1];
        if prev.span.end as usize == offset && significant(prev) {
            return Some(i - 1);
        }
    }
    tokens
        .get(i)
        .filter(|t| t.span.start as usize <= offset)
        .map(|_| i)
}

/// The non-terminal a block is for (its name is always interned by lowering).
pub(crate) fn block_nt(analysis: &Analysis, file: FileId, block: &Block) -> Option<NtId> {
    analysis
        .grammar
        .nt(block.name.span.text(text(analysis, file)))
}

/// Whether `block` is the block the model uses for its non-terminal (not a
/// second, ignored block of the same name).
pub(crate) fn is_model_block(analysis: &Analysis, file: FileId, block: &Block) -> Option<NtId> {
    let nt = block_nt(analysis, file, block)?;
    let info = analysis.grammar.nonterminal(nt).block.as_ref()?;
    (info.name.file == file && info.name.span == block.name.span).then_some(nt)
}

/// The rule an alternative became, if it became one.
pub(crate) fn rule_of(
    analysis: &Analysis,
    file: FileId,
    block: &Block,
    alt: &Alternative,
) -> Option<RuleId> {
    let nt = is_model_block(analysis, file, block)?;
    let grammar = &analysis.grammar;
    let rules = &grammar.nonterminal(nt).rules;
    let i = rules.partition_point(|&r| grammar.rule(r).location.span.start < alt.span.start);
    let &id = rules.get(i)?;
    (grammar.rule(id).location.span == alt.span).then_some(id)
}
/// The byte offset where the line containing `offset` starts (after an
/// LF, a CRLF or a lone CR).
pub(crate) fn line_start(text: &str, offset: usize) -> usize {
    let offset = offset.min(text.len());
    text.as_bytes()[..offset]
        .iter()
        .rposition(|&b| b == b'\n' || b == b'\r')
        .map_or(0, |i| i + 1)
}

/// The byte offset just after the newline ending the line containing
/// `offset` (the text length on the last line).
pub(crate) fn next_line_start(text: &str, offset: usize) -> usize {
    let offset = offset.min(text.len());
    let bytes = text.as_bytes();
    match bytes[offset..]
        .iter()
        .position(|&b| b == b'\n' || b == b'\r')
    {
        // LF, CRLF and a lone CR end a line alike.
        Some(i) if bytes[offset + i] == b'\r' && bytes.get(offset + i + 1) == Some(&b'\n') => {
            offset + i + 2
        }
        Some(i) => offset + i + 1,
        None => text.len(),
    }
}
