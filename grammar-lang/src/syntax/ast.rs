//! The syntax tree: declarations with spans into the file.
//!
//! Together with the file's token list (which holds every comment and every
//! space) the tree is lossless: any node's exact source text is
//! `node.span.text(source)`, and edits can be expressed as span
//! replacements that leave everything else untouched.

use crate::span::Span;
use smol_str::SmolStr;

/// A parsed file: its full token list, its declarations and its syntax errors.
#[derive(Clone, Debug, Default)]
pub struct SyntaxFile {
    /// Every token, trivia included, in order; their texts concatenate to the file.
    pub tokens: Vec<super::lexer::Token>,
    pub decls: Vec<Decl>,
    pub errors: Vec<SyntaxError>,
    /// The stretches the parser could not read as written, in file order:
    /// skipped, or repaired by assuming what was missing. An error was
    /// reported for each; the later checks stay quiet about the blocks they
    /// touch, so that one mistake gives one error.
    pub damaged: Vec<Damage>,
}

/// A stretch the parser skipped or repaired (see [`SyntaxFile::damaged`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Damage {
    pub span: Span,
    /// The block whose head or end could not be read, when its name is known:
    /// its block may be missing or incomplete, so its name is not reported
    /// as undefined.
    pub block: Option<Name>,
}

impl SyntaxFile {
    /// Whether a damaged stretch overlaps `span` (or touches it, for an
    /// empty stretch).
    pub fn is_damaged(&self, span: Span) -> bool {
        let at = self.damaged.partition_point(|d| d.span.end < span.start);
        self.damaged[at..]
            .first()
            .is_some_and(|d| d.span.start <= span.end)
    }
}

/// A syntax error with its location and, where there is one, a fix to suggest.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct SyntaxError {
    pub span: Span,
    pub message: String,
    pub help: Option<String>,
    /// Whether this is an empty alternative (reported as `empty-rule`).
    pub empty_rule: bool,
}

#[derive(Clone, Debug, PartialEq)]
pub enum Decl {
    /// `grammar name`
    Grammar(NameDecl),
    /// `start Symbol`
    Start(NameDecl),
    /// `use "path"`
    Use(UseDecl),
    /// `Name [relative] { alternatives }`
    Block(Block),
    /// `test "name" { cases }`
    Test(TestBlock),
}

impl Decl {
    pub fn span(&self) -> Span {
        match self {
            Decl::Grammar(d) | Decl::Start(d) => d.span,
            Decl::Use(d) => d.span,
            Decl::Block(b) => b.span,
            Decl::Test(t) => t.span,
        }
    }
}

impl SyntaxError {
    /// The error as the diagnostic the analysis reports: `empty-rule` for
    /// an empty alternative, `syntax` otherwise.
    pub fn to_diagnostic(&self, file: crate::source::FileId) -> crate::diagnostic::Diagnostic {
        use crate::diagnostic::{Code, Diagnostic, Location};
        let code = if self.empty_rule {
            Code::EmptyRule
        } else {
            Code::Syntax
        };
        let mut d = Diagnostic::new(code, Location::new(file, self.span), &self.message);
        if let Some(help) = &self.help {
            d = d.with_help(help);
        }
        d
    }
}

/// A name as written.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Name {
    pub span: Span,
}

/// A quoted string: its token span and its value with escapes resolved.
/// Short values (most terminals) are stored inline, without an allocation.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Str {
    pub span: Span,
    pub value: SmolStr,
}

#[derive(Clone, Debug, PartialEq)]
pub struct NameDecl {
    pub keyword: Span,
    pub name: Name,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub struct UseDecl {
    pub keyword: Span,
    pub path: Str,
    pub span: Span,
}

/// Documentation from `##` lines right above a declaration or alternative.
#[derive(Clone, Debug, PartialEq, Eq, Default)]
pub struct Doc {
    /// The text of each line, `##` and one following space removed.
    pub lines: Vec<String>,
    pub span: Span,
}

impl Doc {
    pub fn text(&self) -> String {
        self.lines.join("\n")
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct Block {
    pub name: Name,
    pub relative: Option<Span>,
    pub open: Span,
    /// `None` when the closing brace is missing (a syntax error was reported).
    pub close: Option<Span>,
    pub alternatives: Vec<Alternative>,
    pub doc: Option<Doc>,
    pub span: Span,
}

/// One right-hand side: `[weight] item item ...`.
#[derive(Clone, Debug, PartialEq)]
pub struct Alternative {
    pub weight: Option<Span>,
    pub items: Vec<Item>,
    pub doc: Option<Doc>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum Item {
    NonTerminal(Name),
    Terminal(Str),
}

impl Item {
    pub fn span(&self) -> Span {
        match self {
            Item::NonTerminal(n) => n.span,
            Item::Terminal(s) => s.span,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct TestBlock {
    pub keyword: Span,
    pub name: Str,
    pub cases: Vec<TestCase>,
    pub doc: Option<Doc>,
    pub span: Span,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Expectation {
    Accept,
    Reject,
}

#[derive(Clone, Debug, PartialEq)]
pub struct TestCase {
    pub expect: Expectation,
    pub sentence: Str,
    /// `as TREE`: the expected most probable parse.
    pub tree: Option<TreeSyntax>,
    pub span: Span,
}

/// A labelled-bracket tree as written in a test: `(Label child ...)`.
#[derive(Clone, Debug, PartialEq)]
pub struct TreeSyntax {
    pub label: Name,
    pub children: Vec<TreeChild>,
    pub span: Span,
}

#[derive(Clone, Debug, PartialEq)]
pub enum TreeChild {
    Node(TreeSyntax),
    Leaf(Str),
}
