//! Tokens of the trellis language, produced by a logos lexer.
//!
//! The lexer is total: every byte of the input ends up in exactly one token,
//! trivia (spaces, comments, doc comments) included, so the token list is a
//! lossless image of the file. Bytes that start no token become
//! [`TokenKind::Unknown`] and are reported by the parser.

use crate::span::Span;
use logos::Logos;
use smol_str::SmolStr;
use std::fmt;

#[derive(Logos, Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum TokenKind {
    #[regex(r"[ \t\f\u{FEFF}]+")]
    Whitespace,
    /// A line break: LF, CRLF or a lone CR, alike everywhere.
    #[regex(r"\r\n|\n|\r")]
    Newline,
    /// `# …` to the end of the line.
    #[regex(r"#[^\n\r]*", allow_greedy = true)]
    Comment,
    /// `## …`: documentation for the next declaration (`###…` is a plain comment).
    #[regex(r"##([^#\n\r][^\n\r]*)?", priority = 10, allow_greedy = true)]
    DocComment,

    #[token("grammar")]
    KwGrammar,
    #[token("start")]
    KwStart,
    #[token("use")]
    KwUse,
    #[token("relative")]
    KwRelative,
    #[token("test")]
    KwTest,
    #[token("accept")]
    KwAccept,
    #[token("reject")]
    KwReject,
    #[token("as")]
    KwAs,

    /// A non-terminal name: a letter or `_`, then letters, digits, `_ - . ' +`.
    #[regex(r"[\p{L}_][\p{L}\p{N}_\-.'+]*")]
    Ident,
    /// A quoted terminal with `\"` and `\\` escapes.
    #[regex(r#""([^"\\\n\r]|\\[^\n\r])*""#)]
    String,
    /// A string that runs to the end of the line without its closing quote.
    #[regex(r#""([^"\\\n\r]|\\[^\n\r])*\\?"#, priority = 1)]
    UnterminatedString,
    /// A weight: decimal `0.25`, fraction `1/4`, percent `25%`, optionally
    /// negative. Numbers a weight cannot be — with a decimal comma `0,5` or
    /// in scientific notation `1e-3` — are one token too, so that reading
    /// the weight reports them once, with what to write instead.
    #[regex(r"-?([0-9]+(\.[0-9]*)?|\.[0-9]+)(%|/-?([0-9]+(\.[0-9]*)?|\.[0-9]+))?")]
    #[regex(r"-?[0-9]+,[0-9]+%?")]
    #[regex(r"-?([0-9]+(\.[0-9]*)?|\.[0-9]+)[eE][+-]?[0-9]+%?")]
    Weight,

    #[token("{")]
    LBrace,
    #[token("}")]
    RBrace,
    #[token("(")]
    LParen,
    #[token(")")]
    RParen,
    #[token("|")]
    Pipe,

    /// Any character that starts no other token.
    Unknown,
}

impl TokenKind {
    /// Tokens the parser never sees.
    pub fn is_trivia(self) -> bool {
        matches!(
            self,
            TokenKind::Whitespace | TokenKind::Comment | TokenKind::DocComment
        )
    }

    pub fn is_keyword(self) -> bool {
        matches!(
            self,
            TokenKind::KwGrammar
                | TokenKind::KwStart
                | TokenKind::KwUse
                | TokenKind::KwRelative
                | TokenKind::KwTest
                | TokenKind::KwAccept
                | TokenKind::KwReject
                | TokenKind::KwAs
        )
    }

    /// How the token is named in error messages.
    pub fn describe(self) -> &'static str {
        match self {
            TokenKind::Whitespace => "whitespace",
            TokenKind::Newline => "end of line",
            TokenKind::Comment => "a comment",
            TokenKind::DocComment => "a doc comment",
            TokenKind::KwGrammar => "`grammar`",
            TokenKind::KwStart => "`start`",
            TokenKind::KwUse => "`use`",
            TokenKind::KwRelative => "`relative`",
            TokenKind::KwTest => "`test`",
            TokenKind::KwAccept => "`accept`",
            TokenKind::KwReject => "`reject`",
            TokenKind::KwAs => "`as`",
            TokenKind::Ident => "a symbol name",
            TokenKind::String => "a quoted terminal",
            TokenKind::UnterminatedString => "an unterminated string",
            TokenKind::Weight => "a weight",
            TokenKind::LBrace => "`{`",
            TokenKind::RBrace => "`}`",
            TokenKind::LParen => "`(`",
            TokenKind::RParen => "`)`",
            TokenKind::Pipe => "`|`",
            TokenKind::Unknown => "an unexpected character",
        }
    }

    /// Every keyword with its spelling.
    pub const KEYWORDS: &'static [(&'static str, TokenKind)] = &[
        ("grammar", TokenKind::KwGrammar),
        ("start", TokenKind::KwStart),
        ("use", TokenKind::KwUse),
        ("relative", TokenKind::KwRelative),
        ("test", TokenKind::KwTest),
        ("accept", TokenKind::KwAccept),
        ("reject", TokenKind::KwReject),
        ("as", TokenKind::KwAs),
    ];
}

impl fmt::Display for TokenKind {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.describe())
    }
}

/// One token with its byte span.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Token {
    pub kind: TokenKind,
    pub span: Span,
}

/// Splits `text` into tokens, trivia included. Never fails.
pub fn lex(text: &str) -> Vec<Token> {
    let mut tokens = Vec::with_capacity(text.len() / 3 + 1);
    let mut lexer = TokenKind::lexer(text);
    while let Some(result) = lexer.next() {
        let span = Span::from(lexer.span());
        let kind = result.unwrap_or(TokenKind::Unknown);
        // Merge runs of unknown characters into one token.
        if kind == TokenKind::Unknown {
            if let Some(last) = tokens.last_mut() {
                let last: &mut Token = last;
                if last.kind == TokenKind::Unknown && last.span.end == span.start {
                    last.span.end = span.end;
                    continue;
                }
            }
        }
        tokens.push(Token { kind, span });
    }
    tokens
}

/// Whether `name` is a valid non-terminal name (and not a keyword).
pub fn is_valid_symbol_name(name: &str) -> bool {
    let mut lexer = TokenKind::lexer(name);
    matches!(lexer.next(), Some(Ok(TokenKind::Ident))) && lexer.span().end == name.len()
}

/// Writes `text` as a quoted terminal, escaping `"` and `\`.
pub fn quote(text: &str) -> String {
    let mut out = String::with_capacity(text.len() + 2);
    out.push('"');
    for c in text.chars() {
        if c == '"' || c == '\\' {
            out.push('\\');
        }
        out.push(c);
    }
    out.push('"');
    out
}

/// The contents of a quoted string token, escapes resolved. Other escaped
/// characters stand for themselves.
pub fn unquote(token_text: &str) -> String {
    unescape(inner_text(token_text))
}

/// [`unquote`] into a string that keeps short values inline: no allocation
/// for the usual short terminal without escapes.
pub fn unquote_small(token_text: &str) -> SmolStr {
    let inner = inner_text(token_text);
    if inner.contains('\\') {
        SmolStr::from(unescape(inner))
    } else if inner.len() <= SmolStr::INLINE_CAP {
        SmolStr::new_inline(inner)
    } else {
        SmolStr::new(inner)
    }
}

/// A string token's text without its quotes.
fn inner_text(token_text: &str) -> &str {
    let inner = token_text.strip_prefix('"').unwrap_or(token_text);
    inner.strip_suffix('"').unwrap_or(inner)
}

/// Resolves `\\x` escapes to `x`.
fn unescape(inner: &str) -> String {
    let mut out = String::with_capacity(inner.len());
    let mut chars = inner.chars();
    while let Some(c) = chars.next() {
        if c == '\\' {
            if let Some(next) = chars.next() {
                out.push(next);
            }
        } else {
            out.push(c);
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    fn kinds(text: &str) -> Vec<TokenKind> {
        lex(text)
            .into_iter()
            .filter(|t| !t.kind.is_trivia())
            .map(|t| t.kind)
            .collect()
    }

    #[test]
    fn tokens_cover_every_byte() {
        let text = "## doc\nA relative { 0.5 \"x\\\"y\" B-2 | 25% C ### not doc\n} @@ \"open";
        let tokens = lex(text);
        let rebuilt: String = tokens.iter().map(|t| t.span.text(text)).collect();
        assert_eq!(rebuilt, text);
        assert!(tokens.windows(2).all(|w| w[0].span.end == w[1].span.start));
    }

    #[test]
    fn weights_in_all_three_notations() {
        use TokenKind::*;
        assert_eq!(kinds("0.125 1/8 12.5% -3 .5"), vec![Weight; 5]);
    }

    #[test]
    fn treebank_labels_are_identifiers_and_keywords_are_not() {
        use TokenKind::*;
        assert_eq!(
            kinds("NP-SBJ S' VP+ADJP x.1 start"),
            vec![Ident, Ident, Ident, Ident, KwStart]
        );
        assert_eq!(kinds("starting"), vec![Ident]);
        assert!(is_valid_symbol_name("Fähre_2"));
        assert!(!is_valid_symbol_name("use"));
        assert!(!is_valid_symbol_name("2A"));
    }

    #[test]
    fn comments_and_doc_comments_differ() {
        use TokenKind::*;
        let ks: Vec<_> = lex("## doc\n# plain\n### rule\n##")
            .into_iter()
            .map(|t| t.kind)
            .collect();
        assert_eq!(
            ks,
            vec![DocComment, Newline, Comment, Newline, Comment, Newline, DocComment]
        );
    }

    #[test]
    fn strings_unescape_and_quote_round_trip() {
        let raw = r#""say \"hi\" \\ now""#;
        assert_eq!(unquote(raw), r#"say "hi" \ now"#);
        assert_eq!(quote(&unquote(raw)), raw);
        assert_eq!(unquote_small(raw), unquote(raw));
        assert_eq!(unquote_small(r#""plain""#), "plain");
        assert_eq!(kinds(r#""open"#), vec![TokenKind::UnterminatedString]);
    }
}
