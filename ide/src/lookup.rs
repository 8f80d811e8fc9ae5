//! What is at an offset.

use super::locate::{self, find_touching, token_at, touches};
use grammar_lang::analysis::Analysis;
use grammar_lang::model::{NtId, RuleId, TermId};
use grammar_lang::source::{resolve_use, FileId};
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::{Block, Decl, Item, TestBlock, TreeChild, TreeSyntax};
use grammar_lang::syntax::lexer::TokenKind;

/// How a non-terminal occurs where it was found.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum NtRole {
    /// The name at the head of a block (the model's block, or a second,
    /// ignored block of the same name).
    Definition,
    /// On a right-hand side, inside `rule` (`None` when the alternative
    /// became no rule, e.g. in an ignored second block).
    Use { rule: Option<RuleId> },
    /// In the `start` declaration.
    Start,
    /// As a label of an expected tree in a test.
    TestLabel,
}

/// What an offset of a file points at.
#[derive(Clone, Debug, PartialEq)]
pub enum Lookup {
    /// A non-terminal name; `span` is the name.
    NonTerminal { nt: NtId, role: NtRole, span: Span },
    /// A quoted terminal on a right-hand side or as a leaf of a test tree.
    /// `term` is `None` for a leaf word the grammar does not have.
    Terminal {
        term: Option<TermId>,
        value: String,
        span: Span,
    },
    /// The weight of an alternative; `span` is the weight.
    Weight { rule: RuleId, span: Span },
    /// Somewhere else on an alternative (between its items); `span` is the
    /// whole alternative.
    Alternative { rule: RuleId, span: Span },
    /// A keyword.
    Keyword { keyword: TokenKind, span: Span },
    /// The path of a `use` declaration and the file it loaded, if any.
    UsePath { target: Option<FileId>, span: Span },
    /// The name of a `test` block: its index in `grammar.tests`.
    Test { test: Option<usize>, span: Span },
}

impl Lookup {
    /// The span of the thing found.
    pub fn span(&self) -> Span {
        match self {
            Lookup::NonTerminal { span, .. }
            | Lookup::Terminal { span, .. }
            | Lookup::Weight { span, .. }
            | Lookup::Alternative { span, .. }
            | Lookup::Keyword { span, .. }
            | Lookup::UsePath { span, .. }
            | Lookup::Test { span, .. } => *span,
        }
    }
}

/// What `offset` of `file` points at; `None` for nothing of interest
/// (spaces between declarations, comments, punctuation, unknown files).
///
/// Cost: binary searches in the file's tokens and declarations.
pub fn lookup(analysis: &Analysis, file: FileId, offset: usize) -> Option<Lookup> {
    let syntax = locate::syntax(analysis, file)?;
    let text = locate::text(analysis, file);
    // The token decides what kind of thing this is; the tree decides its role.
    let token = syntax.tokens.get(token_at(&syntax.tokens, offset)?)?;
    if token.kind.is_keyword() {
        return Some(Lookup::Keyword {
            keyword: token.kind,
            span: token.span,
        });
    }
    if matches!(
        token.kind,
        TokenKind::Comment | TokenKind::DocComment | TokenKind::Unknown
    ) {
        return None;
    }
    // Word-like tokens are looked up by their own start, so a cursor right
    // after a name finds that name.
    let at = match token.kind {
        TokenKind::Ident
        | TokenKind::String
        | TokenKind::UnterminatedString
        | TokenKind::Weight => token.span.start as usize,
        _ => offset,
    };
    let grammar = &analysis.grammar;
    let decl = locate::decl_at(syntax, at)?;
    match decl {
        Decl::Grammar(_) => None,
        Decl::Start(d) => touches(d.name.span, at).then(|| {
            grammar
                .nt(d.name.span.text(text))
                .map(|nt| Lookup::NonTerminal {
                    nt,
                    role: NtRole::Start,
                    span: d.name.span,
                })
        })?,
        Decl::Use(d) => touches(d.path.span, at).then(|| {
            let from = &analysis.sources.get(file).path;
            Lookup::UsePath {
                target: analysis.sources.find(&resolve_use(from, &d.path.value)),
                span: d.path.span,
            }
        }),
        Decl::Block(b) => in_block(analysis, file, b, at),
        Decl::Test(t) => in_test(analysis, file, t, at),
    }
}

fn in_block(analysis: &Analysis, file: FileId, block: &Block, at: usize) -> Option<Lookup> {
    let grammar = &analysis.grammar;
    let text = locate::text(analysis, file);
    if touches(block.name.span, at) {
        return grammar
            .nt(block.name.span.text(text))
            .map(|nt| Lookup::NonTerminal {
                nt,
                role: NtRole::Definition,
                span: block.name.span,
            });
    }
    let i = find_touching(&block.alternatives, |a| a.span, at)?;
    let alt = &block.alternatives[i];
    let rule = locate::rule_of(analysis, file, block, alt);
    if let Some(j) = find_touching(&alt.items, Item::span, at) {
        return match &alt.items[j] {
            Item::NonTerminal(name) => {
                grammar
                    .nt(name.span.text(text))
                    .map(|nt| Lookup::NonTerminal {
                        nt,
                        role: NtRole::Use { rule },
                        span: name.span,
                    })
            }
            Item::Terminal(s) => Some(Lookup::Terminal {
                term: grammar.term(&s.value),
                value: s.value.to_string(),
                span: s.span,
            }),
        };
    }
    if let Some(w) = alt.weight {
        if touches(w, at) {
            return rule.map(|rule| Lookup::Weight { rule, span: w });
        }
    }
    rule.map(|rule| Lookup::Alternative {
        rule,
        span: alt.span,
    })
}

fn in_test(analysis: &Analysis, file: FileId, test: &TestBlock, at: usize) -> Option<Lookup> {
    if touches(test.name.span, at) {
        let index = analysis
            .grammar
            .tests
            .iter()
            .position(|t| t.location.file == file && t.location.span == test.span);
        return Some(Lookup::Test {
            test: index,
            span: test.name.span,
        });
    }
    let i = find_touching(&test.cases, |c| c.span, at)?;
    let tree = test.cases[i].tree.as_ref()?;
    in_tree(analysis, file, tree, at)
}

fn in_tree(analysis: &Analysis, file: FileId, tree: &TreeSyntax, at: usize) -> Option<Lookup> {
    let grammar = &analysis.grammar;
    // Iterative descent: trees can be deep.
    let mut node = tree;
    'descend: loop {
        if !touches(node.span, at) {
            return None;
        }
        if touches(node.label.span, at) {
            let name = node.label.span.text(locate::text(analysis, file));
            return grammar.nt(name).map(|nt| Lookup::NonTerminal {
                nt,
                role: NtRole::TestLabel,
                span: node.label.span,
            });
        }
        for child in &node.children {
            match child {
                TreeChild::Node(n) if touches(n.span, at) => {
                    node = n;
                    continue 'descend;
                }
                TreeChild::Leaf(s) if touches(s.span, at) => {
                    return Some(Lookup::Terminal {
                        term: grammar.term(&s.value),
                        value: s.value.to_string(),
                        span: s.span,
                    })
                }
                _ => {}
            }
        }
        return None;
    }
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn lookup(&self, file: FileId, offset: usize) -> Option<Lookup> {
        lookup(self.core(), file, offset)
    }
}
