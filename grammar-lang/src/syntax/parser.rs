//! The recovering parser: significant tokens → [`SyntaxFile`].
//!
//! A hand-written recursive-descent parser over the logos token list, with
//! **one recovery mechanism**: wherever the text departs from the grammar
//! the parser calls [`Parser::recover`] with the [`Mistake`] it sees and the
//! place reading resumes ([`Resume`]). `recover` reports exactly one error
//! (its message and help come from one table, [`diagnose`]), skips what
//! cannot be read — or, for a mistake whose repair is clear (a missing `{`,
//! an unquoted test name, a weight written after its alternative), skips
//! nothing and reads on as if the text were right — and records the
//! stretch in [`SyntaxFile::damaged`]. Lowering marks the blocks a damaged
//! stretch touches, and the later checks stay quiet about them, so one
//! mistake gives one error.
//!
//! Resumption points are line-based, which suits a language whose
//! alternatives end at newlines: an unreadable alternative resumes at the
//! next newline, `|` or `}`; an unreadable test case at the next line that
//! starts a case; an unreadable declaration at the next line; and a block
//! whose `}` is missing ends where the next declaration starts. Nothing
//! recurses on the input's nesting (expected trees are read with an
//! explicit stack), and every token is looked at a bounded number of times,
//! so the parser is linear in the file.

use super::ast::*;
use super::lexer::{lex, unquote_small, Token, TokenKind};
use crate::span::Span;
use crate::tree::MAX_TREE_DEPTH;
use smol_str::SmolStr;

use TokenKind as T;

/// Parses `text` into its lossless syntax. Never fails: errors are collected.
pub fn parse(text: &str) -> SyntaxFile {
    let tokens = lex(text);
    let mut kinds = Vec::with_capacity(tokens.len() / 2);
    let mut spans = Vec::with_capacity(tokens.len() / 2);
    let mut doc_comments = Vec::new();
    let mut depth = TreeDepth::default();
    let mut too_deep = Vec::new();
    for (i, t) in tokens.iter().enumerate() {
        if !t.kind.is_trivia() {
            match depth.step(t.kind) {
                Keep::Token => {
                    kinds.push(t.kind);
                    spans.push(t.span);
                }
                Keep::TooDeep => too_deep.push(t.span),
                Keep::Skipped => {}
            }
        } else if t.kind == TokenKind::DocComment {
            doc_comments.push(i);
        }
    }
    let mut parser = Parser::new(text, &kinds, &spans);
    let mut decls = parser.file();
    let Parser {
        mut errors,
        mut damaged,
        ..
    } = parser;
    errors.extend(too_deep.into_iter().map(|span| SyntaxError {
        span,
        message: format!(
            "this expected tree nests deeper than {MAX_TREE_DEPTH} levels; the brackets from here to their `)` are not read"
        ),
        help: Some(format!(
            "an expected tree may nest at most {MAX_TREE_DEPTH} brackets deep: test a shorter sentence, or leave out `as (…)` to check only that the sentence is accepted"
        )),
        empty_rule: false,
    }));
    attach_docs(&mut decls, &tokens, &doc_comments, text);
    errors.sort_by_key(|e| (e.span.start, e.span.end));
    errors.dedup();
    damaged.sort_by_key(|d| (d.span.start, d.span.end));
    SyntaxFile {
        tokens,
        decls,
        errors,
        damaged,
    }
}

/// What the parser does with one significant token.
enum Keep {
    Token,
    /// The `(` that opens a bracket deeper than [`MAX_TREE_DEPTH`]: left
    /// out, and reported.
    TooDeep,
    /// Inside a bracket deeper than [`MAX_TREE_DEPTH`]: left out.
    Skipped,
}

/// Tracks how deep the brackets of expected trees nest, so that the
/// parser (which descends once per bracket) and every later walk over a
/// tree stay within [`MAX_TREE_DEPTH`] levels whatever the input. A
/// bracket that would open one level deeper is left out of the parser's
/// input together with everything up to its `)`; a token that cannot be
/// part of a tree (a keyword, a brace, a weight) ends every open bracket,
/// as the parser's own recovery does.
#[derive(Default)]
struct TreeDepth {
    open: usize,
    /// How many brackets are open inside the one being left out (0 when
    /// none is).
    skipping: usize,
}

impl TreeDepth {
    fn step(&mut self, kind: TokenKind) -> Keep {
        use TokenKind as T;
        match kind {
            T::LParen if self.skipping > 0 => {
                self.skipping += 1;
                Keep::Skipped
            }
            T::LParen if self.open >= MAX_TREE_DEPTH => {
                self.skipping = 1;
                Keep::TooDeep
            }
            T::LParen => {
                self.open += 1;
                Keep::Token
            }
            T::RParen if self.skipping > 0 => {
                self.skipping -= 1;
                Keep::Skipped
            }
            T::RParen => {
                self.open = self.open.saturating_sub(1);
                Keep::Token
            }
            // Newlines stay: a tree's layout is free, and a case ends at one.
            T::Ident | T::String | T::UnterminatedString if self.skipping > 0 => Keep::Skipped,
            T::Ident | T::String | T::UnterminatedString | T::Newline => Keep::Token,
            _ => {
                self.open = 0;
                self.skipping = 0;
                Keep::Token
            }
        }
    }
}

/// What the parser found wrong, in the context it was found in. Each
/// variant is turned into one message and one help by [`diagnose`].
#[derive(Clone, Copy, Debug)]
enum Mistake {
    /// A token that starts no declaration, at the top level.
    Declaration,
    /// `Name` not followed by `{` (or `relative {`), with junk before a
    /// `{` later on the line.
    BeforeBrace { name: Span },
    /// `Name` whose `{` is missing, before what reads as its body.
    MissingBrace { name: Span },
    /// `Name` followed by something that makes no block.
    BlockHeader { name: Span },
    /// An alternative cannot start with (or continue with) this token.
    Item,
    /// A weight after the items of an alternative, at its end.
    WeightAfterItems,
    /// A weight inside an alternative: a `|` or a line break is missing.
    MissingSeparator,
    /// `grammar` or `start` without a symbol name.
    DeclName { keyword: TokenKind },
    /// `use` without a quoted path.
    UsePath,
    /// More on the line of a `grammar`, `start` or `use` declaration.
    AfterDeclaration,
    /// A test's name, unquoted.
    UnquotedTestName,
    /// `test` without a name.
    TestName,
    /// A line in a test block that is no case.
    Case,
    /// A case's sentence, unquoted.
    UnquotedSentence,
    /// A case without a sentence.
    Sentence,
    /// More after a case's sentence or tree.
    AfterCase,
    /// A tree bracket without a label.
    TreeLabel,
    /// Something inside a tree that is no subtree or word.
    TreeChild,
}

/// Where reading resumes after a mistake.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
enum Resume {
    /// Nothing is skipped: the parser repairs the text in its mind and
    /// reads on.
    Here,
    /// The offending token only.
    Token,
    /// The end of the line (before its newline).
    Line,
    /// The next newline, `|` or `}`: the end of an alternative.
    Alternative,
    /// The end of a test case, with the lines that continue it: up to the
    /// line that starts the next case, the `}` or the next declaration.
    Case,
}

/// Turns a mistake and the token found into the error's message and help.
/// The one table of the parser's wording.
fn diagnose(
    mistake: Mistake,
    found: Option<TokenKind>,
    found_text: &str,
    src: &str,
) -> (String, String) {
    let what = match found {
        None => "the end of the file".to_string(),
        Some(kind) => describe_found(kind, found_text),
    };
    let quote_it = |text: &str| super::lexer::quote(text.trim());
    match mistake {
        Mistake::Declaration => match found {
            Some(T::RBrace) => (
                "this `}` closes no block".into(),
                "remove it, or look above for a block that was closed too early".into(),
            ),
            Some(T::Weight | T::String | T::UnterminatedString | T::Pipe) => (
                format!("{what} stands outside any block"),
                "alternatives belong inside a block `Name { … }`; is a `}` above closing its block too early?".into(),
            ),
            Some(T::KwAccept | T::KwReject) => (
                format!("a test case ({what}) outside a test block"),
                "put cases inside `test \"name\" { … }`".into(),
            ),
            Some(T::LBrace) => (
                "a `{` without a block name".into(),
                "write the block's name before it: `Name { … }`".into(),
            ),
            Some(T::LParen | T::RParen) => (
                format!("unexpected {what}"),
                "brackets only appear in the expected trees of tests: `accept \"words\" as (Start …)`".into(),
            ),
            Some(T::Unknown) => (format!("unexpected {what}"), character_help(found_text)),
            _ => (
                format!("unexpected {what}; a declaration starts with a block name, `grammar`, `start`, `use` or `test`"),
                "a block is written `Name { alternatives }`".into(),
            ),
        },
        Mistake::BeforeBrace { name } => (
            format!("unexpected {what} between the block name `{}` and its `{{`", name.text(src)),
            format!("a block is written `{} {{ alternatives }}` (or `{} relative {{ … }}`)", name.text(src), name.text(src)),
        ),
        Mistake::MissingBrace { name } if name.text(src).starts_with('"') => (
            format!("test {} is missing its `{{`", name.text(src)),
            format!("write `test {} {{` on the line of its name; its cases follow, up to `}}`", name.text(src)),
        ),
        Mistake::MissingBrace { name } => (
            format!("block `{}` is missing its `{{`", name.text(src)),
            format!("write `{} {{` on the line of its name; its alternatives follow, up to `}}`", name.text(src)),
        ),
        Mistake::BlockHeader { name } => {
            let name = name.text(src);
            match found {
                Some(T::String | T::UnterminatedString | T::Weight) => (
                    format!("{what} after `{name}`; expected `{{` to open its block"),
                    format!("a block is written `{name} {{ alternatives }}`; alternatives outside a block are not read"),
                ),
                _ => (
                    format!("unexpected {what} after `{name}`; expected `relative` or `{{`"),
                    format!("a block is written `{name} {{ alternatives }}`"),
                ),
            }
        }
        Mistake::Item => match found {
            Some(T::Unknown) => (
                format!("unexpected {what} in an alternative"),
                character_help(found_text),
            ),
            Some(T::LParen | T::RParen) => (
                format!("unexpected {what} in an alternative"),
                "brackets only appear in the expected trees of tests; an alternative is a list of names and quoted words".into(),
            ),
            Some(T::LBrace) => (
                "unexpected `{` in an alternative".into(),
                "blocks do not nest; is a `}` missing above?".into(),
            ),
            Some(k) if k.is_keyword() => (
                format!("{} is a keyword and cannot be used as a symbol name", k.describe()),
                format!(
                    "{} is a keyword: rename the symbol, or quote it if it is a word: {}",
                    k.describe(),
                    quote_it(found_text)
                ),
            ),
            _ => (format!("unexpected {what} in an alternative"), "an alternative is `[weight] item item …`".into()),
        },
        Mistake::WeightAfterItems => (
            format!("{what} after the alternative's items; a weight comes first"),
            format!("move it to the front: `{found_text} …`"),
        ),
        Mistake::MissingSeparator => (
            format!("{what} inside an alternative: a `|` or a line break is missing before it"),
            "each alternative starts with its weight; separate alternatives with `|` or put each on its own line".into(),
        ),
        Mistake::DeclName { keyword } => {
            let kw = keyword.describe();
            match found {
                Some(T::String) => (
                    format!("{kw} takes a symbol name, not a quoted terminal"),
                    format!(
                        "remove the quotes: `{} {}`",
                        kw.trim_matches('`'),
                        found_text.trim_matches('"')
                    ),
                ),
                _ => (
                    format!("{kw} needs a symbol name; found {what}"),
                    match keyword {
                        T::KwGrammar => "write `grammar name`, e.g. `grammar lighthouse_log`".into(),
                        _ => "write `start Name` with the name of the start symbol's block".into(),
                    },
                ),
            }
        }
        Mistake::UsePath => (
            format!("`use` needs a quoted file path; found {what}"),
            format!("quote the path: `use {}`", quote_it(if found == Some(T::Ident) { found_text } else { "other.trellis" })),
        ),
        Mistake::AfterDeclaration => (
            format!("unexpected {what} after the declaration"),
            "a `grammar`, `start` or `use` declaration takes one line of its own".into(),
        ),
        Mistake::UnquotedTestName => (
            "a test's name must be quoted".into(),
            format!("write `test {} {{`", quote_it(found_text)),
        ),
        Mistake::TestName => (
            format!("a test needs a quoted name; found {what}"),
            "write `test \"name\" { … }`".into(),
        ),
        Mistake::Case => (
            format!("unexpected {what}; a test case starts with `accept` or `reject`"),
            "write each case on its own line: `accept \"words\"` or `reject \"words\"`".into(),
        ),
        Mistake::UnquotedSentence => (
            "a test sentence must be quoted".into(),
            format!("write it as {}", quote_it(found_text)),
        ),
        Mistake::Sentence => (
            format!("expected a quoted sentence; found {what}"),
            "write the sentence in quotes: `accept \"one return ticket\"`".into(),
        ),
        Mistake::AfterCase => match found {
            Some(T::String | T::UnterminatedString) => (
                format!("a second sentence ({what}) in one case"),
                "put all the words of a sentence in one pair of quotes, or write a case per sentence".into(),
            ),
            _ => (
                format!("unexpected {what} after the case"),
                "a case is `accept \"words\"`, `accept \"words\" as (Tree …)` or `reject \"words\"`".into(),
            ),
        },
        Mistake::TreeLabel => (
            format!("expected the label of a tree node after `(`; found {what}"),
            "a tree is written `(Label child …)` with words quoted: `(Kind \"day\")`".into(),
        ),
        Mistake::TreeChild => (
            format!("unexpected {what} in an expected tree"),
            "a tree's children are trees `(Label …)` and quoted words, and each `(` is closed by `)`".into(),
        ),
    }
}

/// The help for characters that start no token.
fn character_help(text: &str) -> String {
    if text.starts_with(['“', '”', '„', '‘', '’', '«', '»']) {
        "terminals are quoted with straight quotes: \"word\"".into()
    } else {
        "terminals must be quoted (\"word\"); symbol names use letters, digits, `_ - . ' +`".into()
    }
}

/// Names a found token with its text: "symbol name `Foo`".
fn describe_found(kind: TokenKind, text: &str) -> String {
    let text: String = text.chars().take(40).collect();
    match kind {
        TokenKind::Ident => format!("symbol name `{text}`"),
        TokenKind::String | TokenKind::UnterminatedString => format!("terminal {text}"),
        TokenKind::Weight => format!("weight `{text}`"),
        TokenKind::Unknown => format!("character `{text}`"),
        other => other.describe().to_string(),
    }
}

/// One element of a block body, before empty alternatives are sorted out.
#[derive(Clone)]
enum BodyElem {
    Alt(Alternative),
    Pipe(Span),
    Newline,
    /// An unreadable stretch (already reported).
    Junk,
}

struct Parser<'a> {
    src: &'a str,
    kinds: &'a [TokenKind],
    spans: &'a [Span],
    pos: usize,
    errors: Vec<SyntaxError>,
    damaged: Vec<Damage>,
    /// For each token index, the index of the first `}` at or after it.
    next_close: Vec<u32>,
    /// For each token index, the index of the first token at or after it
    /// that opens something: a `{`, or a keyword of a declaration.
    next_open: Vec<u32>,
}

impl<'a> Parser<'a> {
    fn new(src: &'a str, kinds: &'a [TokenKind], spans: &'a [Span]) -> Self {
        let n = kinds.len();
        let mut next_close = vec![n as u32; n + 1];
        let mut next_open = vec![n as u32; n + 1];
        for i in (0..n).rev() {
            next_close[i] = if kinds[i] == T::RBrace {
                i as u32
            } else {
                next_close[i + 1]
            };
            let opens = matches!(
                kinds[i],
                T::LBrace | T::KwGrammar | T::KwStart | T::KwUse | T::KwTest
            );
            next_open[i] = if opens { i as u32 } else { next_open[i + 1] };
        }
        Parser {
            src,
            kinds,
            spans,
            pos: 0,
            errors: Vec::new(),
            damaged: Vec::new(),
            next_close,
            next_open,
        }
    }

    // ── cursor ──────────────────────────────────────────────────────────

    fn kind_at(&self, i: usize) -> Option<TokenKind> {
        self.kinds.get(i).copied()
    }

    fn peek(&self) -> Option<TokenKind> {
        self.kind_at(self.pos)
    }

    fn at(&self, kind: TokenKind) -> bool {
        self.peek() == Some(kind)
    }

    /// The span of token `i`, or the empty span at the end of the file.
    fn span_at(&self, i: usize) -> Span {
        self.spans
            .get(i)
            .copied()
            .unwrap_or_else(|| Span::point(self.src.len()))
    }

    fn bump(&mut self) -> Span {
        let span = self.span_at(self.pos);
        self.pos = (self.pos + 1).min(self.kinds.len());
        span
    }

    fn eat(&mut self, kind: TokenKind) -> Option<Span> {
        self.at(kind).then(|| self.bump())
    }

    /// The end of the last token read (the start of the file before any).
    fn last_end(&self) -> usize {
        self.pos
            .checked_sub(1)
            .map_or(0, |i| self.span_at(i).end as usize)
    }

    fn at_line_end(&self) -> bool {
        matches!(self.peek(), None | Some(T::Newline))
    }

    fn skip_newlines(&mut self) {
        while self.at(T::Newline) {
            self.pos += 1;
        }
    }

    /// Whether a declaration starts at token `i`: `Name [relative] {`,
    /// `grammar Name`, `start Name`, `use "path"` or `test "name" {`.
    fn starts_decl(&self, i: usize) -> bool {
        match self.kind_at(i) {
            Some(T::Ident) => match self.kind_at(i + 1) {
                Some(T::LBrace) => true,
                Some(T::KwRelative) => self.kind_at(i + 2) == Some(T::LBrace),
                _ => false,
            },
            Some(T::KwGrammar | T::KwStart) => self.kind_at(i + 1) == Some(T::Ident),
            Some(T::KwUse) => self.kind_at(i + 1) == Some(T::String),
            Some(T::KwTest) => matches!(
                (self.kind_at(i + 1), self.kind_at(i + 2)),
                (Some(T::String | T::Ident), Some(T::LBrace))
            ),
            _ => false,
        }
    }

    /// Whether, after the newlines from token `i` on, a case, the end of a
    /// block or the end of the file follows.
    fn case_follows(&self, mut i: usize) -> bool {
        while self.kind_at(i) == Some(T::Newline) {
            i += 1;
        }
        matches!(
            self.kind_at(i),
            None | Some(T::KwAccept | T::KwReject | T::RBrace)
        )
    }

    /// Whether what follows token `i` reads as a block's body missing its
    /// `{`: a `}` comes before any `{` or declaration keyword.
    fn body_follows(&self, i: usize) -> bool {
        let i = i.min(self.kinds.len());
        let close = self.next_close[i];
        (close as usize) < self.kinds.len() && close < self.next_open[i]
    }

    // ── the recovery mechanism ──────────────────────────────────────────

    /// Reports `mistake` at the current token, skips to where `resume`
    /// says reading goes on, and records the stretch as damaged (with the
    /// name of the block it belongs to, when the block itself could not be
    /// read). The one way the parser handles text it cannot read.
    fn recover(&mut self, mistake: Mistake, resume: Resume, block: Option<Name>) {
        let found = self.peek();
        let at = self.span_at(self.pos);
        let (message, help) = diagnose(mistake, found, at.text(self.src), self.src);
        let span = match found {
            // An error at the end of a line points just after what is on it.
            None | Some(T::Newline) => Span::point(self.last_end()),
            Some(_) => at,
        };
        self.errors.push(SyntaxError {
            span,
            message,
            help: Some(help),
            empty_rule: false,
        });
        let start = self.pos;
        match resume {
            Resume::Here => {}
            Resume::Token => {
                if found.is_some() {
                    self.pos += 1;
                }
            }
            Resume::Line => {
                while !self.at_line_end() {
                    self.pos += 1;
                }
            }
            Resume::Alternative => {
                while !matches!(self.peek(), None | Some(T::Newline | T::Pipe | T::RBrace)) {
                    self.pos += 1;
                }
            }
            Resume::Case => loop {
                match self.peek() {
                    None | Some(T::RBrace) => break,
                    Some(T::Newline) => {
                        let mut j = self.pos;
                        while self.kind_at(j) == Some(T::Newline) {
                            j += 1;
                        }
                        if self.case_follows(j) || self.starts_decl(j) {
                            break;
                        }
                        self.pos = j;
                    }
                    Some(_) => self.pos += 1,
                }
            },
        }
        let end = if self.pos > start {
            self.span_at(self.pos - 1).end as usize
        } else {
            span.end as usize
        };
        self.damaged.push(Damage {
            span: Span::new(span.start as usize, end.max(span.start as usize)),
            block,
        });
    }

    /// Sets the stretch of the damage just recorded, for a repair that
    /// skips more (or other) than its [`Resume`] says.
    fn reshape_damage(&mut self, span: Span) {
        if let Some(d) = self.damaged.last_mut() {
            d.span = span;
        }
    }

    /// A plain error that needs no recovery (the text around it reads on
    /// as written): an unterminated string, an unknown escape.
    fn error(&mut self, span: Span, message: String, help: &str) {
        self.errors.push(SyntaxError {
            span,
            message,
            help: Some(help.to_string()),
            empty_rule: false,
        });
    }

    fn empty_rule(&mut self, span: Span, message: &str) {
        self.errors.push(SyntaxError {
            span,
            message: message.to_string(),
            help: Some(EPSILON_HELP.to_string()),
            empty_rule: true,
        });
    }

    // ── strings ─────────────────────────────────────────────────────────

    /// A quoted string at the current token (closed or not), its escapes
    /// checked.
    fn string(&mut self) -> Option<Str> {
        let kind = self.peek()?;
        if !matches!(kind, T::String | T::UnterminatedString) {
            return None;
        }
        let span = self.bump();
        let text = span.text(self.src);
        if kind == T::UnterminatedString {
            self.error(
                span,
                "this terminal is missing its closing `\"`".into(),
                "close the terminal with `\"` on the same line",
            );
        }
        if text.contains('\\') {
            self.check_escapes(span, text);
        }
        Some(Str {
            span,
            value: unquote_small(text),
        })
    }

    /// Reports each escape other than `\"` and `\\`.
    fn check_escapes(&mut self, span: Span, text: &str) {
        let mut chars = text.char_indices();
        while let Some((i, c)) = chars.next() {
            if c != '\\' {
                continue;
            }
            let Some((j, next)) = chars.next() else {
                break;
            };
            if next == '"' || next == '\\' {
                continue;
            }
            let start = span.start as usize + i;
            let end = span.start as usize + j + next.len_utf8();
            self.error(
                Span::new(start, end),
                format!("unknown escape `\\{next}` in a quoted string"),
                "the only escapes are `\\\"` (a quote) and `\\\\` (a backslash); write `\\\\` for a backslash itself",
            );
        }
    }

    /// A string made of the tokens from the current one to the end of the
    /// line (or `stop`), for a repaired unquoted name or sentence.
    fn unquoted_run(&mut self, stop: &[TokenKind]) -> Option<Str> {
        let first = self.pos;
        while let Some(kind) = self.peek() {
            if kind == T::Newline || stop.contains(&kind) {
                break;
            }
            self.pos += 1;
        }
        if self.pos == first {
            return None;
        }
        let span = self.span_at(first).cover(self.span_at(self.pos - 1));
        Some(Str {
            span,
            value: SmolStr::new(span.text(self.src)),
        })
    }

    // ── declarations ────────────────────────────────────────────────────

    fn file(&mut self) -> Vec<Decl> {
        let mut decls = Vec::new();
        while let Some(kind) = self.peek() {
            let decl = match kind {
                T::Newline => {
                    self.pos += 1;
                    continue;
                }
                T::KwGrammar | T::KwStart => self.name_decl(kind),
                T::KwUse => self.use_decl(),
                T::KwTest => self.test_block().map(Decl::Test),
                T::Ident => self.block().map(Decl::Block),
                T::RBrace => {
                    self.recover(Mistake::Declaration, Resume::Token, None);
                    None
                }
                T::Weight | T::String | T::UnterminatedString | T::Pipe
                    if self.body_follows(self.pos) =>
                {
                    // Alternatives after a block closed too early: one
                    // error, and the stretch up to its `}` is skipped. It
                    // belongs to the block above, if there is one.
                    let above = match decls.last() {
                        Some(Decl::Block(b)) => Some(b.name),
                        _ => None,
                    };
                    self.recover(Mistake::Declaration, Resume::Here, above);
                    let close = self.next_close[self.pos] as usize;
                    let start = self.span_at(self.pos).start as usize;
                    self.pos = close + 1;
                    let end = self.span_at(close).end as usize;
                    self.reshape_damage(Span::new(start, end));
                    None
                }
                _ => {
                    self.recover(Mistake::Declaration, Resume::Line, None);
                    None
                }
            };
            decls.extend(decl);
        }
        decls
    }

    /// After a one-line declaration: the end of the line, or another declaration.
    fn end_of_declaration(&mut self) {
        if !self.at_line_end() && !self.starts_decl(self.pos) {
            self.recover(Mistake::AfterDeclaration, Resume::Line, None);
        }
    }

    fn name_decl(&mut self, keyword_kind: TokenKind) -> Option<Decl> {
        let keyword = self.bump();
        let Some(name) = self.eat(T::Ident) else {
            self.recover(
                Mistake::DeclName {
                    keyword: keyword_kind,
                },
                Resume::Line,
                None,
            );
            return None;
        };
        let decl = NameDecl {
            keyword,
            name: Name { span: name },
            span: keyword.cover(name),
        };
        self.end_of_declaration();
        Some(match keyword_kind {
            T::KwGrammar => Decl::Grammar(decl),
            _ => Decl::Start(decl),
        })
    }

    fn use_decl(&mut self) -> Option<Decl> {
        let keyword = self.bump();
        let Some(path) = self.string() else {
            self.recover(Mistake::UsePath, Resume::Line, None);
            return None;
        };
        let span = keyword.cover(path.span);
        self.end_of_declaration();
        Some(Decl::Use(UseDecl {
            keyword,
            path,
            span,
        }))
    }

    /// The `{` of a block or test whose head is read. Missing, it is
    /// repaired when a body follows, or the line is skipped (`None`).
    fn open_brace(&mut self, name: Span, block: Option<Name>) -> Option<Span> {
        if let Some(open) = self.eat(T::LBrace) {
            return Some(open);
        }
        // Something between the name and a `{` later on the line.
        let mut j = self.pos;
        while !matches!(
            self.kind_at(j),
            None | Some(T::Newline | T::LBrace | T::RBrace)
        ) {
            j += 1;
        }
        if self.kind_at(j) == Some(T::LBrace) {
            self.recover(Mistake::BeforeBrace { name }, Resume::Here, block);
            let start = self.span_at(self.pos).start as usize;
            self.pos = j;
            let end = self.span_at(j - 1).end as usize;
            self.reshape_damage(Span::new(start, end));
            return Some(self.bump());
        }
        if self.body_follows(self.pos) {
            self.recover(Mistake::MissingBrace { name }, Resume::Here, block);
            self.reshape_damage(name);
            return Some(Span::point(name.end as usize));
        }
        self.recover(Mistake::BlockHeader { name }, Resume::Line, block);
        None
    }

    fn block(&mut self) -> Option<Block> {
        let name = Name { span: self.bump() };
        let relative = self.eat(T::KwRelative);
        let head_end = relative.unwrap_or(name.span);
        let open = self.open_brace(head_end, Some(name))?;
        let mut elems = Vec::new();
        let close = loop {
            match self.peek() {
                None => break None,
                Some(T::RBrace) => break Some(self.bump()),
                Some(T::Newline) => {
                    self.pos += 1;
                    elems.push(BodyElem::Newline);
                }
                Some(T::Pipe) => elems.push(BodyElem::Pipe(self.bump())),
                Some(_) if self.starts_decl(self.pos) => break None,
                Some(_) => elems.push(self.alternative()),
            }
        };
        if close.is_none() {
            let text = name.span.text(self.src);
            self.error(
                open,
                format!("block `{text}` is not closed"),
                "add `}` after its last alternative",
            );
            self.damaged.push(Damage {
                span: open,
                block: Some(name),
            });
        }
        let span = name.span.cover(Span::point(self.last_end()));
        let alternatives = check_body(elems.into_iter().collect(), self.src, &mut |span, msg| {
            self.empty_rule(span, msg)
        });
        Some(Block {
            name,
            relative,
            open,
            close,
            alternatives,
            doc: None,
            span,
        })
    }

    /// One alternative, at a token that is not a newline, `|` or `}`.
    fn alternative(&mut self) -> BodyElem {
        let first = self.pos;
        let mut weight = self.eat(T::Weight);
        let mut items = Vec::new();
        loop {
            match self.peek() {
                Some(T::Ident) => items.push(Item::NonTerminal(Name { span: self.bump() })),
                Some(T::String | T::UnterminatedString) => {
                    if let Some(s) = self.string() {
                        items.push(Item::Terminal(s));
                    }
                }
                None | Some(T::Newline | T::Pipe | T::RBrace) => break,
                Some(T::Weight) if !items.is_empty() => {
                    let ends = matches!(
                        self.kind_at(self.pos + 1),
                        None | Some(T::Newline | T::Pipe | T::RBrace)
                    );
                    if ends && weight.is_none() {
                        self.recover(Mistake::WeightAfterItems, Resume::Here, None);
                        weight = Some(self.bump());
                    } else {
                        // The weight starts the next alternative.
                        self.recover(Mistake::MissingSeparator, Resume::Here, None);
                    }
                    break;
                }
                Some(_) => {
                    self.recover(Mistake::Item, Resume::Alternative, None);
                    // The whole alternative is dropped: the damage covers it
                    // from its start, so the names read so far count as
                    // mentioned.
                    let start = self.span_at(first).start as usize;
                    let end = self.last_end().max(start);
                    self.reshape_damage(Span::new(start, end));
                    return BodyElem::Junk;
                }
            }
        }
        let span = self.span_at(first).cover(Span::point(self.last_end()));
        if items.is_empty() {
            self.empty_rule(
                span,
                "this alternative has a weight but derives nothing: empty (epsilon) rules are not supported",
            );
        }
        BodyElem::Alt(Alternative {
            weight,
            items,
            doc: None,
            span,
        })
    }

    // ── tests ───────────────────────────────────────────────────────────

    fn test_block(&mut self) -> Option<TestBlock> {
        let keyword = self.bump();
        let name = match self.peek() {
            Some(T::String | T::UnterminatedString) => self.string()?,
            Some(T::Ident | T::Weight | T::Unknown) => {
                let first = self.pos;
                let run = self.unquoted_run(&[T::LBrace])?;
                let end = self.pos;
                self.pos = first;
                self.recover(Mistake::UnquotedTestName, Resume::Here, None);
                if let Some(e) = self.errors.last_mut() {
                    e.span = run.span;
                    e.help = Some(format!(
                        "write `test {} {{`",
                        super::lexer::quote(run.span.text(self.src))
                    ));
                }
                self.reshape_damage(run.span);
                self.pos = end;
                run
            }
            Some(T::LBrace) => {
                self.recover(Mistake::TestName, Resume::Here, None);
                Str {
                    span: Span::point(keyword.end as usize),
                    value: SmolStr::default(),
                }
            }
            _ => {
                self.recover(Mistake::TestName, Resume::Line, None);
                return None;
            }
        };
        let open = self.open_brace(name.span, None)?;
        let mut cases = Vec::new();
        let close = loop {
            match self.peek() {
                None => break None,
                Some(T::RBrace) => break Some(self.bump()),
                Some(T::Newline) => self.pos += 1,
                Some(_) if self.starts_decl(self.pos) => break None,
                Some(T::KwAccept | T::KwReject) => cases.extend(self.case()),
                Some(_) => self.recover(Mistake::Case, Resume::Case, None),
            }
        };
        if close.is_none() {
            self.error(
                open,
                "test block is not closed".into(),
                "add `}` after its last case",
            );
            self.damaged.push(Damage {
                span: open,
                block: None,
            });
        }
        Some(TestBlock {
            keyword,
            name,
            cases,
            doc: None,
            span: keyword.cover(Span::point(self.last_end())),
        })
    }

    fn case(&mut self) -> Option<TestCase> {
        let expect_span = self.span_at(self.pos);
        let expect = match self.bump_kind() {
            Some(T::KwReject) => Expectation::Reject,
            _ => Expectation::Accept,
        };
        let sentence = match self.peek() {
            Some(T::String | T::UnterminatedString) => self.string()?,
            Some(T::Ident | T::Weight | T::Unknown) => {
                let first = self.pos;
                let run = self.unquoted_run(&[T::KwAs, T::RBrace])?;
                let end = self.pos;
                self.pos = first;
                self.recover(Mistake::UnquotedSentence, Resume::Here, None);
                if let Some(e) = self.errors.last_mut() {
                    e.span = run.span;
                    e.help = Some(format!(
                        "write it as {}",
                        super::lexer::quote(run.span.text(self.src))
                    ));
                }
                self.reshape_damage(run.span);
                self.pos = end;
                run
            }
            _ => {
                self.recover(Mistake::Sentence, Resume::Case, None);
                return None;
            }
        };
        let tree = if self.eat(T::KwAs).is_some() {
            if !self.at(T::LParen) {
                self.recover(Mistake::TreeChild, Resume::Case, None);
                return None;
            }
            Some(self.tree()?)
        } else {
            None
        };
        let span = expect_span.cover(Span::point(self.last_end()));
        if !matches!(self.peek(), None | Some(T::Newline | T::RBrace)) {
            self.recover(Mistake::AfterCase, Resume::Case, None);
            return None;
        }
        if tree.is_some() && expect == Expectation::Reject {
            self.error(
                span,
                "`reject` cannot have an expected tree".into(),
                "use `accept \"…\" as (…)` to check the best parse",
            );
        }
        Some(TestCase {
            expect,
            sentence,
            tree,
            span,
        })
    }

    fn bump_kind(&mut self) -> Option<TokenKind> {
        let kind = self.peek();
        self.bump();
        kind
    }

    /// An expected tree at its `(`. Layout inside the brackets is free.
    /// Read with an explicit stack of open brackets, so any depth reads
    /// without recursion. A bracket left open where the next case, the
    /// end of the block or the end of the file begins is reported once
    /// and the tree ends there (its trailing newlines are left for the
    /// case to end on).
    fn tree(&mut self) -> Option<TreeSyntax> {
        // Open brackets: the `(`, the label, the children so far.
        let mut stack: Vec<(Span, Name, Vec<TreeChild>)> = Vec::new();
        loop {
            // At a `(`.
            let open = self.bump();
            self.skip_newlines();
            let Some(label) = self.eat(T::Ident) else {
                self.recover(Mistake::TreeLabel, Resume::Case, None);
                return None;
            };
            stack.push((open, Name { span: label }, Vec::new()));
            // Children and closing brackets, until the next `(`.
            loop {
                let before_newlines = self.pos;
                self.skip_newlines();
                match self.peek() {
                    Some(T::LParen) => break,
                    Some(T::String | T::UnterminatedString) => {
                        if let (Some(s), Some(top)) = (self.string(), stack.last_mut()) {
                            top.2.push(TreeChild::Leaf(s));
                        }
                    }
                    Some(T::RParen) => {
                        let close = self.bump();
                        let (open, label, children) = stack.pop()?;
                        let node = TreeSyntax {
                            label,
                            children,
                            span: open.cover(close),
                        };
                        match stack.last_mut() {
                            Some(parent) => parent.2.push(TreeChild::Node(node)),
                            None => return Some(node),
                        }
                    }
                    _ if self.case_follows(before_newlines) => {
                        self.pos = before_newlines;
                        let innermost = stack.last().map(|s| s.0)?;
                        let open_count = stack.len();
                        let help = if open_count > 1 {
                            format!(
                                "add `)` where the tree ends ({open_count} brackets are open here)"
                            )
                        } else {
                            "add `)` where the tree ends".to_string()
                        };
                        self.error(
                            innermost,
                            "this bracket of the expected tree is not closed".into(),
                            &help,
                        );
                        self.damaged.push(Damage {
                            span: innermost,
                            block: None,
                        });
                        let end = Span::point(self.last_end());
                        let mut node = None;
                        while let Some((open, label, mut children)) = stack.pop() {
                            children.extend(node.take().map(TreeChild::Node));
                            node = Some(TreeSyntax {
                                label,
                                children,
                                span: open.cover(end),
                            });
                        }
                        return node;
                    }
                    _ => {
                        self.recover(Mistake::TreeChild, Resume::Case, None);
                        return None;
                    }
                }
            }
        }
    }
}

const EPSILON_HELP: &str = "factor the optional part out: instead of `A { B | <nothing> }` write the rules that use `A` twice, once with `B` and once without";

/// A block body as read: its alternatives, and every `|` that separates
/// nothing (an empty alternative). Collected element by element, so the
/// body's elements never make a list of their own.
#[derive(Default)]
struct Body {
    alternatives: Vec<Alternative>,
    /// Each `|` directly followed by another `|`, or with no alternative on
    /// either side.
    empty_pipes: Vec<Span>,
}

impl FromIterator<BodyElem> for Body {
    fn from_iter<I: IntoIterator<Item = BodyElem>>(elems: I) -> Self {
        let mut body = Body::default();
        // Whether the element before the current one is an alternative (or
        // an unreadable stretch, which stands for one).
        let mut before_is_alt = false;
        // The last `|`, whose next element is not known yet, and whether an
        // alternative precedes it.
        let mut pending: Option<(Span, bool)> = None;
        for elem in elems {
            let is_alt = matches!(elem, BodyElem::Alt(_) | BodyElem::Junk);
            if let Some((span, after_alt)) = pending.take() {
                let doubled = matches!(elem, BodyElem::Pipe(_));
                if doubled || (!after_alt && !is_alt) {
                    body.empty_pipes.push(span);
                }
            }
            match elem {
                BodyElem::Alt(alt) => body.alternatives.push(alt),
                BodyElem::Pipe(span) => pending = Some((span, before_is_alt)),
                BodyElem::Newline | BodyElem::Junk => {}
            }
            before_is_alt = is_alt;
        }
        if let Some((span, false)) = pending {
            body.empty_pipes.push(span);
        }
        body
    }
}

/// Reports the empty alternatives of a body: two `|` with nothing between
/// them, a `|` with no alternative on either side, and empty terminals `""`
/// (or terminals of whitespace only, which hold no word either).
fn check_body(body: Body, src: &str, report: &mut dyn FnMut(Span, &str)) -> Vec<Alternative> {
    for &span in &body.empty_pipes {
        report(span, "empty alternative: epsilon rules are not supported");
    }
    for alt in &body.alternatives {
        for item in &alt.items {
            if let Item::Terminal(s) = item {
                if !s.span.text(src).ends_with('"') {
                    continue;
                }
                if s.value.is_empty() {
                    report(s.span, "empty terminal `\"\"`: it matches no word, and epsilon rules are not supported");
                } else if crate::model::words(&s.value).next().is_none() {
                    report(s.span, "terminal of whitespace only: it matches no word (sentences are split at whitespace), and epsilon rules are not supported");
                }
            }
        }
    }
    body.alternatives
}

/// Attaches `##` lines directly above each block, test and alternative.
/// Only the places right below a doc comment (`doc_comments` holds their
/// token indices) can have one, so only those are looked up.
fn attach_docs(decls: &mut [Decl], tokens: &[Token], doc_comments: &[usize], src: &str) {
    for &doc in doc_comments {
        // The token that starts the line below: (whitespace) newline
        // (whitespace) token.
        let mut j = doc + 1;
        while tokens
            .get(j)
            .is_some_and(|t| t.kind == TokenKind::Whitespace)
        {
            j += 1;
        }
        if tokens.get(j).is_none_or(|t| t.kind != TokenKind::Newline) {
            continue;
        }
        j += 1;
        while tokens
            .get(j)
            .is_some_and(|t| t.kind == TokenKind::Whitespace)
        {
            j += 1;
        }
        let Some(target) = tokens.get(j) else {
            continue;
        };
        let offset = target.span.start;
        // Declarations and the alternatives of a block are in source order.
        let at = decls.partition_point(|d| d.span().start <= offset);
        let Some(decl) = at.checked_sub(1).and_then(|i| decls.get_mut(i)) else {
            continue;
        };
        match decl {
            Decl::Block(block) if block.span.start == offset => {
                block.doc = doc_before(tokens, src, offset, j);
            }
            Decl::Block(block) => {
                let k = block
                    .alternatives
                    .partition_point(|a| a.span.start < offset);
                if let Some(alt) = block
                    .alternatives
                    .get_mut(k)
                    .filter(|a| a.span.start == offset)
                {
                    alt.doc = doc_before(tokens, src, offset, j);
                }
            }
            Decl::Test(test) if test.span.start == offset => {
                test.doc = doc_before(tokens, src, offset, j);
            }
            _ => {}
        }
    }
}

/// The doc comment lines that end on the line just before `offset`'s line;
/// `first` is the index of the first token at or after `offset`.
fn doc_before(tokens: &[Token], src: &str, offset: u32, first: usize) -> Option<Doc> {
    let mut i = first;
    let mut lines: Vec<Span> = Vec::new();
    loop {
        // Expect (whitespace) newline (whitespace) doc-comment, walking back.
        let mut j = i;
        while j > 0 && tokens[j - 1].kind == TokenKind::Whitespace {
            j -= 1;
        }
        if j == 0 || tokens[j - 1].kind != TokenKind::Newline {
            break;
        }
        j -= 1;
        while j > 0 && tokens[j - 1].kind == TokenKind::Whitespace {
            j -= 1;
        }
        if j == 0 || tokens[j - 1].kind != TokenKind::DocComment {
            break;
        }
        lines.push(tokens[j - 1].span);
        i = j - 1;
        // A doc line must start its line.
        let mut k = i;
        while k > 0 && tokens[k - 1].kind == TokenKind::Whitespace {
            k -= 1;
        }
        if k > 0 && tokens[k - 1].kind != TokenKind::Newline {
            lines.pop();
            break;
        }
    }
    if lines.is_empty() {
        return None;
    }
    // Only spaces, tabs and byte-order marks may stand
    // before `offset` on its line, and the line above must be a `##` line.
    let before = src
        .get(..offset as usize)?
        .trim_end_matches([' ', '\t', '\u{FEFF}']);
    let previous_line = before
        .strip_suffix("\r\n")
        .or_else(|| before.strip_suffix('\n'))
        .or_else(|| before.strip_suffix('\r'))?;
    let previous_line =
        previous_line[previous_line.rfind(['\n', '\r']).map_or(0, |i| i + 1)..].trim_start();
    if !previous_line.starts_with("##") || previous_line.starts_with("###") {
        return None;
    }
    lines.reverse();
    let span = lines[0].cover(lines[lines.len() - 1]);
    let lines = lines
        .iter()
        .map(|s| {
            let text = s.text(src).trim_start_matches("##");
            text.strip_prefix(' ')
                .unwrap_or(text)
                .trim_end()
                .to_string()
        })
        .collect();
    Some(Doc { lines, span })
}
