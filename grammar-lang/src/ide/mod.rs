//! Editor services over an [`Analysis`]: everything a language server
//! needs, as plain data. No I/O and no protocol types: the server only
//! translates between its protocol and these functions.
//!
//! # Conventions
//!
//! * Every position is a byte offset into one file of the analysis
//!   (`analysis.sources`, identified by a [`FileId`]); every range is a
//!   [`Span`] of byte offsets. Converting to editor positions (UTF-16 for
//!   LSP) is the caller's job, with the file's [`LineIndex`](crate::LineIndex)
//!   (`analysis.sources.get(file).lines`).
//! * A cursor touches a token when it is inside it or right after its last
//!   character (`Name|`). When two tokens touch the cursor, the one that
//!   starts at the cursor wins.
//! * Edits are [`TextEdit`]s: replace `span` of `file` with `new_text`. The
//!   edits of one answer never overlap; apply them from the end of a file to
//!   its start (or let the editor do it).
//! * Nothing here panics on any text: positions past the end, files with
//!   syntax errors and half-typed declarations give empty or partial answers.
//!
//! # Cost
//!
//! Build one [`IdeIndex`] per analysis (`IdeIndex::new(&analysis)`, linear
//! in the size of the grammar) and keep it next to the analysis. With it,
//! every request is a binary search in the syntax of one file plus work
//! proportional to the answer; the few requests that must look at every
//! file (references, rename, workspace symbols, completion lists) are one
//! linear scan, never a re-analysis.
//!
//! # The API
//!
//! | Request | Function | Needs the index |
//! |---|---|---|
//! | what is at an offset | [`lookup`] → [`Lookup`] | no |
//! | hover | [`hover`] → [`Hover`] (markdown + span) | yes |
//! | go to definition | [`definition`] → [`Location`] | no |
//! | find references | [`references`] → `Vec<Location>` | no |
//! | rename | [`prepare_rename`] → `Span`, [`rename`] → `Vec<TextEdit>` | no |
//! | outline | [`document_symbols`] → `Vec<DocumentSymbol>` | no |
//! | symbol search | [`workspace_symbols`] → `Vec<WorkspaceSymbol>` | no |
//! | completion | [`completions`] → [`CompletionList`] | no |
//! | highlighting | [`semantic_tokens`] → `Vec<SemanticToken>` | no |
//! | quick fixes | [`code_actions`] → `Vec<CodeAction>` | no |
//! | inlay hints | [`inlay_hints`] → `Vec<InlayHint>` | no |
//! | code lenses | [`code_lenses`] → `Vec<CodeLens>` | no |
//! | folding | [`folding_ranges`] → `Vec<FoldingRange>` | no |
//! | links on `use` paths | [`document_links`] → `Vec<DocumentLink>` | no |
//! | highlight occurrences | [`document_highlights`] → `Vec<Highlight>` | no |
//!
//! Numbers that only the probabilistic engine knows (termination
//! probabilities, expected rule uses) are handed to [`hover`] in an
//! optional [`EngineFacts`]; without them hover still answers.

mod actions;
mod completion;
mod hints;
mod hover;
mod locate;
mod lookup;
mod navigation;
mod numbers;
mod structure;
mod symbols;
mod tokens;
mod walk;

pub use actions::{code_actions, CodeAction, CodeActionKind};
pub use completion::{completions, CompletionItem, CompletionKind, CompletionList};
pub use hints::{code_lenses, inlay_hints, CodeLens, CodeLensKind, InlayHint};
pub use hover::{hover, EngineFacts, Hover};
pub use lookup::{lookup, Lookup, NtRole};
pub use navigation::{definition, prepare_rename, references, rename, RenameError};
pub use structure::{
    document_highlights, document_links, folding_ranges, DocumentLink, FoldKind, FoldingRange,
    Highlight,
};
pub use symbols::{
    document_symbols, workspace_symbols, DocumentSymbol, SymbolKind, WorkspaceSymbol,
};
pub use tokens::{semantic_tokens, SemanticToken, TokenClass, TokenModifiers};

use crate::analysis::Analysis;
pub use crate::diagnostic::Location;
use crate::model::{Grammar, RuleId, Sym};
use crate::source::FileId;
use crate::span::Span;

/// Replace `span` of `file` with `new_text`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TextEdit {
    pub file: FileId,
    pub span: Span,
    pub new_text: String,
}

/// Tables derived from one [`Analysis`] that several requests need. Build
/// it once per analysis (linear time) and pass it to the requests that take
/// it. It holds no reference to the analysis.
#[derive(Clone, Debug)]
pub struct IdeIndex {
    /// Per non-terminal: reachable from the start symbol. `None` when the
    /// grammar has no start symbol with a block.
    reachable: Option<Vec<bool>>,
    /// Per non-terminal: derives at least one string of words.
    productive: Vec<bool>,
    /// Rules whose right-hand side contains terminal `t` (each rule once):
    /// `term_rules[term_offsets[t]..term_offsets[t + 1]]`, in rule order.
    term_offsets: Vec<usize>,
    term_rules: Vec<RuleId>,
}

impl IdeIndex {
    pub fn new(analysis: &Analysis) -> Self {
        let grammar = &analysis.grammar;
        let reachable = grammar
            .start
            .filter(|&s| grammar.nonterminal(s).is_defined())
            .map(|s| crate::check::graph::reachable_from(grammar, s));
        let productive = crate::check::graph::productive(grammar);
        let (term_offsets, term_rules) = terminal_rules(grammar);
        IdeIndex {
            reachable,
            productive,
            term_offsets,
            term_rules,
        }
    }

    /// Whether `nt` is reachable from the start symbol (`None`: no usable start).
    pub fn is_reachable(&self, nt: crate::model::NtId) -> Option<bool> {
        self.reachable
            .as_ref()
            .and_then(|r| r.get(nt.index()).copied())
    }

    pub fn is_productive(&self, nt: crate::model::NtId) -> bool {
        self.productive.get(nt.index()).copied().unwrap_or(false)
    }

    /// The rules that produce terminal `t` directly, in rule order.
    pub fn rules_producing(&self, t: crate::model::TermId) -> &[RuleId] {
        match (
            self.term_offsets.get(t.index()),
            self.term_offsets.get(t.index() + 1),
        ) {
            (Some(&a), Some(&b)) => &self.term_rules[a..b],
            _ => &[],
        }
    }
}

/// Compressed terminal → rules table (counting sort, linear).
fn terminal_rules(grammar: &Grammar) -> (Vec<usize>, Vec<RuleId>) {
    let n = grammar.terminals.len();
    let mut offsets = vec![0usize; n + 1];
    let each_rule_terms = |rule: &crate::model::Rule, f: &mut dyn FnMut(usize)| {
        for (i, &sym) in rule.rhs.iter().enumerate() {
            if let Sym::T(t) = sym {
                // Count a terminal once per rule.
                if !rule.rhs[..i].contains(&sym) {
                    f(t.index());
                }
            }
        }
    };
    for rule in &grammar.rules {
        each_rule_terms(rule, &mut |t| offsets[t + 1] += 1);
    }
    for i in 0..n {
        offsets[i + 1] += offsets[i];
    }
    let mut fill = offsets.clone();
    let mut rules = vec![RuleId(0); offsets[n]];
    for id in grammar.rule_ids() {
        each_rule_terms(grammar.rule(id), &mut |t| {
            rules[fill[t]] = id;
            fill[t] += 1;
        });
    }
    (offsets, rules)
}
