//! Visiting the named things of a file's syntax in source order.

use grammar_lang::span::Span;
use grammar_lang::syntax::ast::{Decl, Item, Str, TreeChild, TreeSyntax};

/// One leaf of the syntax worth naming, in source order.
#[derive(Clone, Copy, Debug)]
pub(crate) enum Node<'a> {
    GrammarName(Span),
    StartName(Span),
    UsePath(&'a Str),
    /// The name at the head of a block.
    BlockName(Span),
    Weight(Span),
    NtUse(Span),
    Terminal(&'a Str),
    TestName(&'a Str),
    Sentence(&'a Str),
    TreeLabel(Span),
    Leaf(&'a Str),
}

/// Calls `f` on every [`Node`] of `decls`, in source order.
pub(crate) fn walk<'a>(decls: &'a [Decl], f: &mut impl FnMut(Node<'a>)) {
    for decl in decls {
        walk_decl(decl, f);
    }
}

pub(crate) fn walk_decl<'a>(decl: &'a Decl, f: &mut impl FnMut(Node<'a>)) {
    match decl {
        Decl::Grammar(d) => f(Node::GrammarName(d.name.span)),
        Decl::Start(d) => f(Node::StartName(d.name.span)),
        Decl::Use(d) => f(Node::UsePath(&d.path)),
        Decl::Block(b) => {
            f(Node::BlockName(b.name.span));
            for alt in &b.alternatives {
                if let Some(w) = alt.weight {
                    f(Node::Weight(w));
                }
                for item in &alt.items {
                    match item {
                        Item::NonTerminal(n) => f(Node::NtUse(n.span)),
                        Item::Terminal(s) => f(Node::Terminal(s)),
                    }
                }
            }
        }
        Decl::Test(t) => {
            f(Node::TestName(&t.name));
            for case in &t.cases {
                f(Node::Sentence(&case.sentence));
                if let Some(tree) = &case.tree {
                    walk_tree(tree, f);
                }
            }
        }
    }
}

/// Depth first, children in order, with an explicit stack (trees can be deep).
fn walk_tree<'a>(tree: &'a TreeSyntax, f: &mut impl FnMut(Node<'a>)) {
    let mut stack: Vec<&'a TreeChild> = Vec::new();
    f(Node::TreeLabel(tree.label.span));
    stack.extend(tree.children.iter().rev());
    while let Some(child) = stack.pop() {
        match child {
            TreeChild::Leaf(s) => f(Node::Leaf(s)),
            TreeChild::Node(n) => {
                f(Node::TreeLabel(n.label.span));
                stack.extend(n.children.iter().rev());
            }
        }
    }
}
