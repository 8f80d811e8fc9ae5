//! Semantic tokens: a class for every meaningful token of a file.

use super::locate;
use super::walk::{walk, Node};
use grammar_lang::analysis::Analysis;
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::lexer::TokenKind;

/// What a token is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum TokenClass {
    NonTerminal,
    /// A quoted word on a right-hand side or as a leaf of a test tree.
    Terminal,
    Weight,
    Keyword,
    Comment,
    DocComment,
    /// Other quoted text: a `use` path, a test name, a test sentence.
    String,
    /// The name in `grammar NAME`.
    GrammarName,
}

/// Extra facts about a token (only meaningful for non-terminals).
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq, Hash)]
pub struct TokenModifiers {
    /// The name at the head of a block (its definition), not a use.
    pub definition: bool,
    /// A non-terminal that has no block anywhere in the grammar.
    pub undefined: bool,
}

/// One classified token. Tokens never span lines.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct SemanticToken {
    pub span: Span,
    pub class: TokenClass,
    pub modifiers: TokenModifiers,
}

/// Every classified token of `file` that overlaps `range` (the whole file
/// for `None`), in order. Spaces, newlines and punctuation are left out, as
/// are tokens the parser could not place (they carry a syntax error).
///
/// Cost: linear in the tokens of the range (binary searches to find it).
pub fn semantic_tokens(
    analysis: &Analysis,
    file: FileId,
    range: Option<Span>,
) -> Vec<SemanticToken> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let text = locate::text(analysis, file);
    let range = range.unwrap_or(Span::new(0, text.len()));
    let grammar = &analysis.grammar;
    // Classes from the tree, in source order.
    let mut placed: Vec<(Span, TokenClass, TokenModifiers)> = Vec::new();
    let nt = |span: Span, definition: bool| {
        let undefined = grammar
            .nt(span.text(text))
            .is_none_or(|nt| !grammar.nonterminal(nt).is_defined());
        (
            span,
            TokenClass::NonTerminal,
            TokenModifiers {
                definition,
                undefined,
            },
        )
    };
    let plain = TokenModifiers::default();
    walk(locate::decls_in(syntax, range), &mut |node| {
        placed.push(match node {
            Node::GrammarName(s) => (s, TokenClass::GrammarName, plain),
            Node::StartName(s) | Node::NtUse(s) | Node::TreeLabel(s) => nt(s, false),
            Node::BlockName(s) => nt(s, true),
            Node::UsePath(s) | Node::TestName(s) | Node::Sentence(s) => {
                (s.span, TokenClass::String, plain)
            }
            Node::Weight(s) => (s, TokenClass::Weight, plain),
            Node::Terminal(s) | Node::Leaf(s) => (s.span, TokenClass::Terminal, plain),
        })
    });
    let tokens = &syntax.tokens;
    let first = tokens.partition_point(|t| t.span.end <= range.start);
    let mut out = Vec::new();
    let mut next = 0;
    for token in tokens[first..]
        .iter()
        .take_while(|t| t.span.start < range.end.max(range.start + 1))
    {
        let class = match token.kind {
            TokenKind::Comment => TokenClass::Comment,
            TokenKind::DocComment => TokenClass::DocComment,
            k if k.is_keyword() => TokenClass::Keyword,
            TokenKind::Ident
            | TokenKind::String
            | TokenKind::UnterminatedString
            | TokenKind::Weight => {
                while placed
                    .get(next)
                    .is_some_and(|p| p.0.start < token.span.start)
                {
                    next += 1;
                }
                if let Some(&(span, class, modifiers)) = placed.get(next) {
                    if span == token.span {
                        out.push(SemanticToken {
                            span,
                            class,
                            modifiers,
                        });
                    }
                }
                continue;
            }
            _ => continue,
        };
        out.push(SemanticToken {
            span: token.span,
            class,
            modifiers: plain,
        });
    }
    out
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn semantic_tokens(&self, file: FileId, range: Option<Span>) -> Vec<SemanticToken> {
        semantic_tokens(self.core(), file, range)
    }
}
