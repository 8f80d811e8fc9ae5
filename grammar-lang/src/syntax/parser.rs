//! The recovering parser: non-trivia tokens → [`SyntaxFile`].
//!
//! Built with chumsky over the logos token list. Recovery is line-based,
//! which suits a language whose alternatives end at newlines: an alternative
//! that cannot be read is skipped to the end of its line (or to the next `|`
//! or `}`), a declaration that cannot be read is skipped to the end of its
//! line, and a block whose `}` is missing ends where the next declaration
//! begins. Every error is reported; every intact declaration is kept.

use super::ast::*;
use super::lexer::{lex, unquote_small, Token, TokenKind};
use crate::span::Span;
use crate::tree::MAX_TREE_DEPTH;
use chumsky::error::EmptyErr;
use chumsky::prelude::*;

type Rich_<'a> = Rich<'a, TokenKind, SimpleSpan>;

/// The error types the parser is instantiated with: a free one for the fast
/// first pass over (usually correct) files, and `Rich` for reporting.
trait ParseError<'a>:
    chumsky::error::Error<'a, TokenSlice<'a>>
    + chumsky::error::LabelError<'a, TokenSlice<'a>, chumsky::DefaultExpected<'a, TokenKind>>
    + 'a
{
    fn custom(span: SimpleSpan, message: String) -> Self;
}

impl<'a> ParseError<'a> for Rich_<'a> {
    fn custom(span: SimpleSpan, message: String) -> Self {
        Rich::custom(span, message)
    }
}

impl<'a> ParseError<'a> for EmptyErr {
    fn custom(_: SimpleSpan, _: String) -> Self {
        EmptyErr::default()
    }
}

/// The parser's input: the kinds of the significant tokens, with their
/// byte spans alongside. Cursors are token indices; a span runs from the
/// start of its first token to the end of its last (as chumsky's mapped
/// slice input computes it), so chumsky never copies `(kind, span)` pairs.
#[derive(Clone, Copy)]
struct TokenSlice<'a> {
    kinds: &'a [TokenKind],
    spans: &'a [Span],
    /// The length of the text: the span of the end of input.
    eoi: usize,
}

impl<'a> chumsky::input::Input<'a> for TokenSlice<'a> {
    type Span = SimpleSpan;
    type Token = TokenKind;
    type MaybeToken = TokenKind;
    type Cursor = usize;
    type Cache = Self;

    #[inline]
    fn begin(self) -> (usize, Self) {
        (0, self)
    }

    #[inline]
    fn cursor_location(cursor: &usize) -> usize {
        *cursor
    }

    #[inline(always)]
    unsafe fn next_maybe(this: &mut Self, cursor: &mut usize) -> Option<TokenKind> {
        let kind = this.kinds.get(*cursor).copied()?;
        *cursor += 1;
        Some(kind)
    }

    #[inline]
    unsafe fn span(this: &mut Self, range: std::ops::Range<&usize>) -> SimpleSpan {
        match this.spans.get(*range.start) {
            Some(first) => {
                let end = match range.end.checked_sub(1).and_then(|i| this.spans.get(i)) {
                    Some(last) => last.end as usize,
                    None => this.eoi,
                };
                SimpleSpan::from(first.start as usize..end)
            }
            None => SimpleSpan::from(this.eoi..this.eoi),
        }
    }
}

impl<'a> chumsky::input::ValueInput<'a> for TokenSlice<'a> {
    #[inline(always)]
    unsafe fn next(this: &mut Self, cursor: &mut usize) -> Option<TokenKind> {
        let kind = this.kinds.get(*cursor).copied()?;
        *cursor += 1;
        Some(kind)
    }
}

impl<'a> chumsky::input::ExactSizeInput<'a> for TokenSlice<'a> {
    #[inline]
    unsafe fn span_from(this: &mut Self, range: std::ops::RangeFrom<&usize>) -> SimpleSpan {
        let start = this
            .spans
            .get(*range.start)
            .map_or(this.eoi, |first| first.start as usize);
        SimpleSpan::from(start..this.eoi)
    }
}

/// Separates a message from its help text inside a chumsky custom error.
const HELP_SEP: char = '\u{1f}';
/// Marks a custom error as an empty alternative.
const EMPTY_MARK: char = '\u{1e}';

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
    let input = TokenSlice {
        kinds: &kinds,
        spans: &spans,
        eoi: text.len(),
    };
    // Fast pass without error bookkeeping; most files being edited or checked
    // are correct. Only when it fails does the reporting pass run.
    let fast = file_parser::<EmptyErr>(text)
        .parse(input)
        .into_output_errors();
    let (decls, errs) = match fast {
        (Some(decls), errs) if errs.is_empty() => (Some(decls), Vec::new()),
        _ => file_parser::<Rich_>(text).parse(input).into_output_errors(),
    };
    let mut decls = decls.unwrap_or_default();
    let mut errors: Vec<SyntaxError> = errs.into_iter().map(|e| convert_error(e, text)).collect();
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
    SyntaxFile {
        tokens,
        decls,
        errors,
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

fn sp(s: SimpleSpan) -> Span {
    Span::new(s.start, s.end)
}

/// An error message, a help text, and whether it is an empty alternative.
fn custom<'a, Er: ParseError<'a>>(span: SimpleSpan, message: &str, help: &str) -> Er {
    Er::custom(span, format!("{message}{HELP_SEP}{help}"))
}

fn convert_error(err: Rich<'_, TokenKind, SimpleSpan>, src: &str) -> SyntaxError {
    let span = sp(*err.span());
    match err.reason() {
        chumsky::error::RichReason::Custom(msg) => {
            let (empty_rule, msg) = match msg.strip_prefix(EMPTY_MARK) {
                Some(rest) => (true, rest),
                None => (false, msg.as_str()),
            };
            let (message, help) = match msg.split_once(HELP_SEP) {
                Some((m, h)) => (m.to_string(), Some(h.to_string())),
                None => (msg.to_string(), None),
            };
            SyntaxError {
                span,
                message,
                help,
                empty_rule,
            }
        }
        _ => {
            let found = err.found().copied();
            let mut expected: Vec<String> = err
                .expected()
                .filter_map(|p| match p {
                    chumsky::error::RichPattern::Token(t)
                        if **t == TokenKind::UnterminatedString =>
                    {
                        None
                    }
                    chumsky::error::RichPattern::Token(t) => Some(t.describe().to_string()),
                    chumsky::error::RichPattern::Label(l) => Some(l.to_string()),
                    chumsky::error::RichPattern::EndOfInput => Some("end of file".to_string()),
                    _ => None,
                })
                .collect();
            expected.sort();
            expected.dedup();
            let found_text = match found {
                None => "end of file".to_string(),
                Some(kind) => describe_found(kind, span.text(src)),
            };
            let message = if expected.is_empty() {
                format!("unexpected {found_text}")
            } else {
                format!(
                    "unexpected {found_text}; expected {}",
                    one_of_list(&expected)
                )
            };
            SyntaxError {
                span,
                message,
                help: found.and_then(help_for_found),
                empty_rule: false,
            }
        }
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

fn one_of_list(items: &[String]) -> String {
    match items {
        [] => String::new(),
        [one] => one.clone(),
        [init @ .., last] => format!("{} or {}", init.join(", "), last),
    }
}

fn help_for_found(found: TokenKind) -> Option<String> {
    Some(match found {
        TokenKind::Unknown => {
            "terminals must be quoted (\"word\"); symbol names use letters, digits, `_ - . ' +`"
                .into()
        }
        TokenKind::UnterminatedString => "close the terminal with `\"` on the same line".into(),
        TokenKind::LBrace => {
            "a block is written `Name { alternatives }`; is a `}` missing above?".into()
        }
        TokenKind::RBrace => "this `}` closes no block".into(),
        TokenKind::LParen | TokenKind::RParen => {
            "brackets only appear in test trees: `accept \"words\" as (Start ...)`".into()
        }
        k if k.is_keyword() => format!(
            "{} is a keyword and cannot be used as a symbol name; rename the symbol",
            k.describe()
        ),
        _ => return None,
    })
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

fn file_parser<'a, Er: ParseError<'a>>(
    src: &'a str,
) -> impl Parser<'a, TokenSlice<'a>, Vec<Decl>, extra::Err<Er>> {
    use TokenKind as T;

    let newline = just(T::Newline).ignored();
    let name = just(T::Ident).map_with(|_, e| Name { span: sp(e.span()) });
    let string = just(T::String).map_with(move |_, e| {
        let span = sp(e.span());
        Str {
            span,
            value: unquote_small(span.text(src)),
        }
    });
    // A string missing its closing quote is reported and kept as a terminal.
    let unterminated = just(T::UnterminatedString).validate(move |_, e, emitter| {
        emitter.emit(custom(
            e.span(),
            "this terminal is missing its closing `\"`",
            "close the terminal with `\"` on the same line",
        ));
        let span = sp(e.span());
        Str {
            span,
            value: unquote_small(span.text(src)),
        }
    });
    let terminal = string.or(unterminated);

    // Lookaheads that end a block body: the start of another declaration.
    let block_header = name
        .then(just(T::KwRelative).or_not())
        .then(just(T::LBrace))
        .ignored();
    let decl_keyword = choice((
        one_of([T::KwGrammar, T::KwStart])
            .then(just(T::Ident))
            .ignored(),
        just(T::KwUse).then(just(T::String)).ignored(),
        just(T::KwTest)
            .then(just(T::String))
            .then(just(T::LBrace))
            .ignored(),
    ));
    let next_decl = block_header.or(decl_keyword).boxed();

    // ── blocks ──────────────────────────────────────────────────────────
    let weight = just(T::Weight).map_with(|_, e| sp(e.span()));
    let item = choice((name.map(Item::NonTerminal), terminal.map(Item::Terminal)));
    let items = item.repeated().collect::<Vec<_>>();
    let alternative = choice((
        weight.map(Some).then(items),
        item.repeated().at_least(1).collect::<Vec<_>>().map(|items| (None, items)),
    ))
    .map_with(|(weight, items), e| Alternative {
        weight,
        items,
        doc: None,
        span: sp(e.span()),
    })
    .validate(|alt, e, emitter| {
        if alt.items.is_empty() {
            emitter.emit(Er::custom(
                e.span(),
                format!(
                    "{EMPTY_MARK}this alternative has a weight but derives nothing: empty (epsilon) rules are not supported{HELP_SEP}{EPSILON_HELP}"
                ),
            ));
        }
        alt
    });
    let alt_end = choice((just(T::Newline), just(T::Pipe), just(T::RBrace)))
        .ignored()
        .or(end())
        .rewind();
    let rest_of_alt = none_of([T::Newline, T::Pipe, T::RBrace])
        .repeated()
        .at_least(1)
        .to(BodyElem::Junk);
    // A newline or `|` never starts a declaration: only look ahead for one
    // where an alternative could start.
    let body_elem = choice((
        just(T::Newline).to(BodyElem::Newline),
        just(T::Pipe).map_with(|_, e| BodyElem::Pipe(sp(e.span()))),
        next_decl.clone().not().ignore_then(
            alternative
                .then_ignore(alt_end)
                .map(BodyElem::Alt)
                .recover_with(via_parser(rest_of_alt)),
        ),
    ));
    let close = just(T::RBrace)
        .map_with(|_, e| Some(sp(e.span())))
        .or(empty().to(None));
    let block = name
        .then(just(T::KwRelative).map_with(|_, e| sp(e.span())).or_not())
        .then(just(T::LBrace).map_with(|_, e| sp(e.span())))
        .then(body_elem.repeated().collect::<Body>())
        .then(close)
        .map_with(|((((name, relative), open), body), close), e| {
            (name, relative, open, body, close, sp(e.span()))
        })
        .validate(
            move |(name, relative, open, body, close, span), _, emitter| {
                if close.is_none() {
                    emitter.emit(custom(
                        SimpleSpan::from(open.range()),
                        &format!("block `{}` is not closed", name.span.text(src)),
                        "add `}` after its last alternative",
                    ));
                }
                let alternatives = check_body(body, src, &mut |span, msg| {
                    emitter.emit(Er::custom(
                        SimpleSpan::from(span.range()),
                        format!("{EMPTY_MARK}{msg}{HELP_SEP}{EPSILON_HELP}"),
                    ))
                });
                Decl::Block(Block {
                    name,
                    relative,
                    open,
                    close,
                    alternatives,
                    doc: None,
                    span,
                })
            },
        );

    // ── tests ───────────────────────────────────────────────────────────
    // Inside a tree's brackets layout is free: newlines may come between
    // any two of its parts. A bracket left open where the next case, the
    // end of the block or the end of the file begins is reported once, at
    // the bracket, and the tree ends there (its trailing newlines are left
    // for the case to end on).
    let newlines = just(T::Newline).repeated();
    let case_follows = newlines
        .ignore_then(choice((
            just(T::KwAccept).ignored(),
            just(T::KwReject).ignored(),
            just(T::RBrace).ignored(),
            end(),
        )))
        .rewind();
    let tree = recursive(|tree| {
        let child = choice((tree.map(TreeChild::Node), terminal.map(TreeChild::Leaf)));
        let closing = choice((
            newlines.ignore_then(just(T::RParen)).to(true),
            case_follows.to(false),
        ));
        just(T::LParen)
            .map_with(|_, e| e.span())
            .then_ignore(newlines)
            .then(name)
            .then(newlines.ignore_then(child).repeated().collect::<Vec<_>>())
            .then(closing)
            .validate(|(((open, label), children), closed), e, emitter| {
                if !closed {
                    emitter.emit(custom(
                        open,
                        "this bracket of the expected tree is not closed",
                        "add `)` where the tree ends",
                    ));
                }
                TreeSyntax {
                    label,
                    children,
                    span: sp(e.span()),
                }
            })
    });
    let expectation = choice((
        just(T::KwAccept).to(Expectation::Accept),
        just(T::KwReject).to(Expectation::Reject),
    ));
    let case = expectation
        .then(terminal)
        .then(just(T::KwAs).ignore_then(tree).or_not())
        .map_with(|((expect, sentence), tree), e| TestCase {
            expect,
            sentence,
            tree,
            span: sp(e.span()),
        })
        .validate(|case, e, emitter| {
            if case.tree.is_some() && case.expect == Expectation::Reject {
                emitter.emit(custom(
                    e.span(),
                    "`reject` cannot have an expected tree",
                    "use `accept \"…\" as (…)` to check the best parse",
                ));
            }
            case
        });
    let case_end = choice((just(T::Newline), just(T::RBrace)))
        .ignored()
        .or(end())
        .rewind();
    // A case that cannot be read is skipped up to its end, taking along
    // the lines that continue it: every line up to the next case, the end
    // of the block or the next declaration.
    let continuation = just(T::Newline)
        .then(case_follows.not())
        .then(newlines.then(next_decl.clone()).not())
        .ignored();
    let rest_of_case = choice((none_of([T::Newline, T::RBrace]).ignored(), continuation))
        .repeated()
        .at_least(1)
        .to(None);
    let test_elem = next_decl.clone().not().ignore_then(choice((
        newline.to(None),
        case.then_ignore(case_end)
            .map(Some)
            .recover_with(via_parser(rest_of_case)),
    )));
    let test_block = just(T::KwTest)
        .map_with(|_, e| sp(e.span()))
        .then(terminal)
        .then(just(T::LBrace).map_with(|_, e| sp(e.span())))
        .then(test_elem.repeated().collect::<Vec<_>>())
        .then(close)
        .map_with(|((((keyword, name), open), cases), close), e| {
            (keyword, name, open, cases, close, sp(e.span()))
        })
        .validate(|(keyword, name, open, cases, close, span), _, emitter| {
            if close.is_none() {
                emitter.emit(custom(
                    SimpleSpan::from(open.range()),
                    "test block is not closed",
                    "add `}` after its last case",
                ));
            }
            Decl::Test(TestBlock {
                keyword,
                name,
                cases: cases.into_iter().flatten().collect(),
                doc: None,
                span,
            })
        });

    // ── simple declarations ─────────────────────────────────────────────
    let name_decl = |kw: TokenKind| {
        just(kw)
            .map_with(|_, e| sp(e.span()))
            .then(name)
            .map_with(|(keyword, name), e| NameDecl {
                keyword,
                name,
                span: sp(e.span()),
            })
    };
    let grammar_decl = name_decl(T::KwGrammar).map(Decl::Grammar);
    let start_decl = name_decl(T::KwStart).map(Decl::Start);
    let use_decl = just(T::KwUse)
        .map_with(|_, e| sp(e.span()))
        .then(terminal)
        .map_with(|(keyword, path), e| {
            Decl::Use(UseDecl {
                keyword,
                path,
                span: sp(e.span()),
            })
        });

    let decl = choice((grammar_decl, start_decl, use_decl, test_block, block));
    let rest_of_line = none_of([T::Newline]).repeated().at_least(1).to(None);
    let top = choice((newline.to(None), decl.map(Some))).recover_with(via_parser(rest_of_line));
    top.repeated()
        .collect::<Vec<_>>()
        .then_ignore(end())
        .map(|decls| decls.into_iter().flatten().collect())
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
    // Only spaces, tabs, carriage returns and byte-order marks may stand
    // before `offset` on its line, and the line above must be a `##` line.
    let before = src
        .get(..offset as usize)?
        .trim_end_matches([' ', '\t', '\r', '\u{FEFF}']);
    let previous_line = before.strip_suffix('\n')?;
    let previous_line =
        previous_line[previous_line.rfind('\n').map_or(0, |i| i + 1)..].trim_start();
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
