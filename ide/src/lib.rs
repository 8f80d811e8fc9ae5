//! # trellis-ide — the analysis façade
//!
//! The one place the shells (`trellis-cli`, `trellis-lsp`) ask about a
//! grammar. [`analyze`] gives an [`Analysis`]: the front end's findings
//! *and* the engine-backed ones (`leaky`), at the levels `trellis.toml`
//! sets, with every editor feature as a method. Pure: no I/O (files come
//! through a [`FileLoader`](grammar_lang::FileLoader)), no threads, no
//! protocol or terminal types; the shells translate.
//!
//! # Conventions
//!
//! * Every position is a byte offset into one file of the analysis
//!   (`analysis.sources`, identified by a [`FileId`]); every range is a
//!   [`Span`] of byte offsets. Converting to editor positions (UTF-16 for
//!   LSP) is the caller's job, with the file's
//!   [`LineIndex`](grammar_lang::LineIndex) (`analysis.sources.get(file).lines`).
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
//! [`Analysis`] builds one [`IdeIndex`] on first use (linear in the size of
//! the grammar) and keeps it. With it, every request is a binary search in
//! the syntax of one file plus work proportional to the answer; the few
//! requests that must look at every file (references, rename, workspace
//! symbols, completion lists) are one linear scan, never a re-analysis.
//!
//! # The API
//!
//! | Request | [`Analysis`] method | answer |
//! |---|---|---|
//! | what is at an offset | `lookup` | [`Lookup`] |
//! | hover | `hover` | [`Hover`] (markdown + span), with the engine's numbers |
//! | go to definition | `definition` | [`Location`] |
//! | find references | `references` | `Vec<Location>` |
//! | rename | `prepare_rename`, `rename` | `Span`, `Vec<TextEdit>` |
//! | outline | `document_symbols` | `Vec<DocumentSymbol>` |
//! | symbol search | `workspace_symbols` | `Vec<WorkspaceSymbol>` |
//! | completion | `completions` | [`CompletionList`] |
//! | highlighting | `semantic_tokens` | `Vec<SemanticToken>` |
//! | quick fixes | `code_actions` | `Vec<CodeAction>` |
//! | inlay hints | `inlay_hints` | `Vec<InlayHint>` |
//! | code lenses | `code_lenses` | `Vec<CodeLens>` |
//! | folding | `folding_ranges` | `Vec<FoldingRange>` |
//! | links on `use` paths | `document_links` | `Vec<DocumentLink>` |
//! | highlight occurrences | `document_highlights` | `Vec<Highlight>` |
//! | formatting (whole file or a range) | `formatting` | `Vec<TextEdit>`, or the syntax errors |
//! | new weights for blocks, as edits of their weight tokens | `reweight`, `edited_texts` | `Vec<Reweighted>`, the edited texts |
//! | a grammar the engine may run | `run`, `run_tests` | [`Run`] (weights divided by their block sums, ignored errors), or [`NotRunnable`] naming the stopping errors |
//!
//! Each method calls the function of the same name in this crate, which
//! takes the front end's `grammar_lang::Analysis` (and the index or the
//! engine's numbers explicitly): the feature tests call those directly.

mod actions;
mod analysis;
mod completion;
mod formatting;
mod hints;
mod hover;
mod locate;
mod lookup;
mod navigation;
mod numbers;
pub mod picture;
mod reweight;
mod run;
mod structure;
mod symbols;
mod tokens;
mod walk;

pub use actions::{code_actions, CodeAction, CodeActionKind};
pub use analysis::{analyze, analyze_text, Analysis};
pub use completion::{completions, CompletionItem, CompletionKind, CompletionList};
pub use formatting::formatting;
pub use hints::{code_lenses, inlay_hints, CodeLens, CodeLensKind, InlayHint};
pub use hover::{hover, EngineFacts, Hover};
pub use lookup::{lookup, Lookup, NtRole};
pub use navigation::{definition, prepare_rename, references, rename, RenameError};
pub use reweight::{apply_edits, reweight, Reweighted};
pub use run::{run_probability, NotRunnable, PlacedError, Run};
pub use structure::{
    document_highlights, document_links, folding_ranges, DocumentLink, FoldKind, FoldingRange,
    Highlight,
};
pub use symbols::{
    document_symbols, workspace_symbols, DocumentSymbol, SymbolKind, WorkspaceSymbol, MAX_CHILDREN,
    MAX_OUTLINE_CHILDREN,
};
pub use tokens::{semantic_tokens, SemanticToken, TokenClass, TokenModifiers};

pub use grammar_lang::diagnostic::Location;
use grammar_lang::model::{Grammar, RuleId, Sym};
use grammar_lang::source::FileId;
use grammar_lang::span::Span;

/// Replace `span` of `file` with `new_text`.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TextEdit {
    pub file: FileId,
    pub span: Span,
    pub new_text: String,
}

/// Tables derived from one analysis that several requests need. Build
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
    pub fn new(analysis: &grammar_lang::Analysis) -> Self {
        let grammar = &analysis.grammar;
        let reachable = grammar
            .start
            .filter(|&s| grammar.nonterminal(s).is_defined())
            .map(|s| grammar_lang::check::graph::reachable_from(grammar, s));
        let productive = grammar_lang::check::graph::productive(grammar);
        let (term_offsets, term_rules) = terminal_rules(grammar);
        IdeIndex {
            reachable,
            productive,
            term_offsets,
            term_rules,
        }
    }

    /// Whether `nt` is reachable from the start symbol (`None`: no usable start).
    pub fn is_reachable(&self, nt: grammar_lang::model::NtId) -> Option<bool> {
        self.reachable
            .as_ref()
            .and_then(|r| r.get(nt.index()).copied())
    }

    pub fn is_productive(&self, nt: grammar_lang::model::NtId) -> bool {
        self.productive.get(nt.index()).copied().unwrap_or(false)
    }

    /// The rules that produce terminal `t` directly, in rule order.
    pub fn rules_producing(&self, t: grammar_lang::model::TermId) -> &[RuleId] {
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
    let each_rule_terms = |rule: &grammar_lang::model::Rule, f: &mut dyn FnMut(usize)| {
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
