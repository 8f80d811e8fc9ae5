//! Completion: names and keywords that fit where the cursor is.

use super::locate;
use grammar_lang::analysis::Analysis;
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::Decl;
use grammar_lang::syntax::lexer::{quote, unquote, Token, TokenKind};

/// What a completion inserts.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum CompletionKind {
    NonTerminal,
    Keyword,
    /// A known word (a terminal of the grammar), inside quotes.
    Word,
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompletionItem {
    /// The text shown and inserted.
    pub label: String,
    pub kind: CompletionKind,
    /// A short description (a symbol's rule count or first doc line).
    pub detail: Option<String>,
}

/// The answer to a completion request.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct CompletionList {
    /// Best first.
    pub items: Vec<CompletionItem>,
    /// What a chosen item replaces: the word being typed (empty at a space).
    pub replace: Span,
    /// More items matched than were returned: ask again as the user types.
    pub incomplete: bool,
}

/// Most items in one answer.
const MAX_ITEMS: usize = 200;
/// How far back on the current line the context is read.
const LINE_TOKENS: usize = 64;

/// Where the cursor is, as far as completion cares.
#[derive(Debug, PartialEq)]
enum Context {
    /// Where a declaration can start: keywords, and undefined names (to
    /// give them a block).
    DeclStart,
    /// After `start`: the defined names.
    StartName,
    /// After a block's name, before `{`.
    AfterBlockName,
    /// Inside a block body: the defined names.
    Rhs,
    /// At the start of a test case.
    CaseStart,
    /// After a case's sentence.
    AfterSentence,
    /// After `(` in an expected tree: a label.
    TreeLabel,
    /// After `accept`/`reject`: the sentence.
    Sentence,
    Nothing,
}

/// Completions at `offset` of `file`: non-terminal names on right-hand
/// sides, after `start` and as test-tree labels; declaration keywords at
/// the start of a top-level line (plus undefined names, to start their
/// block); `relative` after a block name; `accept`/`reject` and `as` in
/// tests. Names are filtered by the word being typed (its characters in
/// order, ignoring case) and ranked like [`super::workspace_symbols`].
///
/// Inside quotes — a terminal on a right-hand side, or an `accept` or
/// `reject` sentence — the grammar's known words (its terminals), filtered
/// and ranked the same way by the partial word at the cursor; the answer
/// replaces that word only (from the space or quote before it to the
/// space or quote after it), never the quotes. A word with `"` or `\` is
/// offered escaped, as it is written between quotes.
///
/// Cost: binary searches, a look at the current line, and one pass over
/// the non-terminals when names are offered.
pub fn completions(analysis: &Analysis, file: FileId, offset: usize) -> CompletionList {
    let empty = |replace| CompletionList {
        items: Vec::new(),
        replace,
        incomplete: false,
    };
    let Some(syntax) = locate::syntax(analysis, file) else {
        return empty(Span::point(offset));
    };
    let text = locate::text(analysis, file);
    let mut offset = offset.min(text.len());
    while !text.is_char_boundary(offset) {
        offset -= 1;
    }
    let tokens = &syntax.tokens;
    // The token the cursor is in, or right after.
    let i = tokens.partition_point(|t| (t.span.end as usize) < offset);
    if let Some(t) = tokens.get(i) {
        if let Some((replace, prefix)) = in_quotes(text, t, offset) {
            let at = t.span.start as usize;
            return match context(analysis, file, tokens, at) {
                Context::Rhs => {
                    // The terminal being typed is a known word only if it
                    // is written somewhere else too.
                    let typing = unquote(t.span.text(text).trim_end_matches('"'));
                    let elsewhere = analysis.syntax.iter().enumerate().any(|(f, s)| {
                        let f = FileId(f as u32);
                        let source = locate::text(analysis, f);
                        s.tokens.iter().any(|u| {
                            u.kind == TokenKind::String
                                && (f, u.span) != (file, t.span)
                                && unquote(u.span.text(source)) == typing
                        })
                    });
                    let skip = (!elsewhere).then_some(typing.as_str());
                    words(analysis, replace, prefix, skip)
                }
                Context::Sentence => words(analysis, replace, prefix, None),
                _ => empty(Span::point(offset)),
            };
        }
    }
    let (replace, prefix) = match tokens.get(i) {
        Some(t) if (t.span.start as usize) < offset && is_word(t.kind) => (
            t.span,
            text.get(t.span.start as usize..offset).unwrap_or(""),
        ),
        Some(t)
            if (t.span.start as usize) < offset
                && (t.span.end as usize) > offset
                && !matches!(t.kind, TokenKind::Whitespace | TokenKind::Newline) =>
        {
            // Inside a string, a comment or a weight: nothing to complete.
            return empty(Span::point(offset));
        }
        Some(t) if t.kind == TokenKind::Comment || t.kind == TokenKind::DocComment => {
            if (t.span.start as usize) < offset {
                return empty(Span::point(offset));
            }
            (Span::point(offset), "")
        }
        _ => (Span::point(offset), ""),
    };
    let before = replace.start as usize;
    let context = context(analysis, file, tokens, before);
    let mut items = Vec::new();
    let grammar = &analysis.grammar;
    let keyword = |k: &str| CompletionItem {
        label: k.to_string(),
        kind: CompletionKind::Keyword,
        detail: None,
    };
    let names = |defined: bool, items: &mut Vec<CompletionItem>| -> bool {
        let query: Vec<char> = prefix.chars().flat_map(char::to_lowercase).collect();
        let mut found: Vec<(u8, usize, &str, grammar_lang::model::NtId)> = grammar
            .nt_ids()
            .filter(|&nt| grammar.nonterminal(nt).is_defined() == defined)
            .filter_map(|nt| {
                let name = grammar.nt_name(nt);
                let rank = super::symbols::rank(name, &query)?;
                Some((rank, name.chars().count(), name, nt))
            })
            .collect();
        found.sort_unstable();
        let incomplete = found.len() > MAX_ITEMS;
        items.extend(found.into_iter().take(MAX_ITEMS).map(|(_, _, name, nt)| {
            let symbol = grammar.nonterminal(nt);
            let detail = match &symbol.block {
                None => "used but not defined: give it a block".to_string(),
                Some(b) => {
                    let n = symbol.rules.len();
                    let rules = format!("{n} {}", if n == 1 { "rule" } else { "rules" });
                    match b.doc.as_deref().and_then(|d| d.lines().next()) {
                        Some(line) => format!("{rules} · {line}"),
                        None => rules,
                    }
                }
            };
            CompletionItem {
                label: name.to_string(),
                kind: CompletionKind::NonTerminal,
                detail: Some(detail),
            }
        }));
        incomplete
    };
    let mut incomplete = false;
    match context {
        Context::DeclStart => {
            let declared = |kind: TokenKind| {
                analysis.syntax.iter().any(|s| {
                    s.decls.iter().any(|d| {
                        matches!(
                            (d, kind),
                            (Decl::Grammar(_), TokenKind::KwGrammar)
                                | (Decl::Start(_), TokenKind::KwStart)
                        )
                    })
                })
            };
            for (k, kind) in [
                ("start", TokenKind::KwStart),
                ("use", TokenKind::KwUse),
                ("test", TokenKind::KwTest),
                ("grammar", TokenKind::KwGrammar),
            ] {
                if !declared(kind) && k.starts_with(prefix) {
                    items.push(keyword(k));
                }
            }
            incomplete = names(false, &mut items);
        }
        Context::StartName | Context::Rhs | Context::TreeLabel => {
            incomplete = names(true, &mut items);
        }
        Context::AfterBlockName => {
            if "relative".starts_with(prefix) {
                items.push(keyword("relative"));
            }
        }
        Context::CaseStart => {
            for k in ["accept", "reject"] {
                if k.starts_with(prefix) {
                    items.push(keyword(k));
                }
            }
        }
        Context::AfterSentence => {
            if "as".starts_with(prefix) {
                items.push(keyword("as"));
            }
        }
        Context::Sentence | Context::Nothing => {}
    }
    CompletionList {
        items,
        replace,
        incomplete,
    }
}

/// When `offset` is between the quotes of string token `t`: the partial
/// word around it (up to the whitespace or quote on either side) and its
/// text before the cursor.
fn in_quotes<'t>(text: &'t str, t: &Token, offset: usize) -> Option<(Span, &'t str)> {
    let (start, end) = (t.span.start as usize, t.span.end as usize);
    let inner_end = match t.kind {
        TokenKind::String => end - 1,
        TokenKind::UnterminatedString => end,
        _ => return None,
    };
    if !(start < offset && offset <= inner_end) {
        return None;
    }
    let inner = start + 1;
    let from = text[inner..offset]
        .rfind(char::is_whitespace)
        .map_or(inner, |i| {
            inner + i + text[inner + i..].chars().next().map_or(1, char::len_utf8)
        });
    let to = text[offset..inner_end]
        .find(char::is_whitespace)
        .map_or(inner_end, |i| offset + i);
    Some((Span::new(from, to), &text[from..offset]))
}

/// The grammar's known words that match `prefix`, best first.
fn words(analysis: &Analysis, replace: Span, prefix: &str, skip: Option<&str>) -> CompletionList {
    let query: Vec<char> = prefix.chars().flat_map(char::to_lowercase).collect();
    let mut found: Vec<(u8, usize, &str)> = analysis
        .grammar
        .terminals
        .iter()
        .filter(|w| Some(w.as_str()) != skip)
        .filter_map(|w| {
            let rank = super::symbols::rank(w, &query)?;
            Some((rank, w.chars().count(), w.as_str()))
        })
        .collect();
    found.sort_unstable();
    found.dedup();
    let incomplete = found.len() > MAX_ITEMS;
    let items = found
        .into_iter()
        .take(MAX_ITEMS)
        .map(|(_, _, w)| {
            let quoted = quote(w);
            CompletionItem {
                label: quoted[1..quoted.len() - 1].to_string(),
                kind: CompletionKind::Word,
                detail: Some("known word".to_string()),
            }
        })
        .collect();
    CompletionList {
        items,
        replace,
        incomplete,
    }
}

fn is_word(kind: TokenKind) -> bool {
    kind == TokenKind::Ident || kind.is_keyword()
}

/// Decides the context from the enclosing declaration and the significant
/// tokens before `before` on its line.
fn context(analysis: &Analysis, file: FileId, tokens: &[Token], before: usize) -> Context {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Context::Nothing;
    };
    // The last declaration starting before the cursor, and whether the
    // cursor is inside its braces (an unclosed one reaches to the next
    // declaration).
    let d = syntax
        .decls
        .partition_point(|d| (d.span().start as usize) < before);
    let enclosing = d.checked_sub(1).and_then(|d| syntax.decls.get(d));
    let inside = |open: Span, close: Option<Span>| {
        open.end as usize <= before && close.is_none_or(|c| before <= c.start as usize)
    };
    let (body_start, kind) = match enclosing {
        Some(Decl::Block(b)) if inside(b.open, b.close) => (b.open.end as usize, Some(true)),
        Some(Decl::Block(b))
            if (b.name.span.end as usize) < before && before <= b.open.start as usize =>
        {
            return if b.relative.is_none() {
                Context::AfterBlockName
            } else {
                Context::Nothing
            };
        }
        Some(Decl::Test(t))
            if body_open(t, tokens).is_some_and(|o| inside(o, close_of(t, tokens))) =>
        {
            (
                body_open(t, tokens).map_or(0, |o| o.end as usize),
                Some(false),
            )
        }
        _ => (0, None),
    };
    // Significant tokens on the cursor's line, after the body's `{`.
    let end = tokens.partition_point(|t| (t.span.end as usize) <= before);
    let mut line: Vec<TokenKind> = tokens[..end]
        .iter()
        .rev()
        .take_while(|t| t.kind != TokenKind::Newline && t.span.start as usize >= body_start)
        .filter(|t| !t.kind.is_trivia())
        .take(LINE_TOKENS)
        .map(|t| t.kind)
        .collect();
    line.reverse();
    match kind {
        Some(true) => {
            if line.last() == Some(&TokenKind::Weight)
                || line.is_empty()
                || matches!(
                    line.last(),
                    Some(TokenKind::Ident | TokenKind::String | TokenKind::Pipe)
                )
            {
                Context::Rhs
            } else {
                Context::Nothing
            }
        }
        Some(false) => match line.as_slice() {
            [] => Context::CaseStart,
            [TokenKind::KwAccept, TokenKind::String] => Context::AfterSentence,
            [TokenKind::KwAccept | TokenKind::KwReject] => Context::Sentence,
            [.., TokenKind::LParen] => Context::TreeLabel,
            _ => Context::Nothing,
        },
        None => match line.as_slice() {
            [] => Context::DeclStart,
            [TokenKind::KwStart] => Context::StartName,
            [TokenKind::Ident] => Context::AfterBlockName,
            _ => Context::Nothing,
        },
    }
}

/// The `{` of a test block (the AST keeps only the whole span).
fn body_open(test: &grammar_lang::syntax::ast::TestBlock, tokens: &[Token]) -> Option<Span> {
    let i = tokens.partition_point(|t| t.span.start < test.name.span.end);
    tokens[i..]
        .iter()
        .find(|t| !t.kind.is_trivia() && t.kind != TokenKind::Newline)
        .filter(|t| t.kind == TokenKind::LBrace)
        .map(|t| t.span)
}

/// The `}` closing a test block, if its span ends with one.
fn close_of(test: &grammar_lang::syntax::ast::TestBlock, tokens: &[Token]) -> Option<Span> {
    let i = tokens.partition_point(|t| t.span.end < test.span.end);
    tokens
        .get(i)
        .filter(|t| t.kind == TokenKind::RBrace && t.span.end == test.span.end)
        .map(|t| t.span)
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn completions(&self, file: FileId, offset: usize) -> CompletionList {
        completions(self.core(), file, offset)
    }
}
