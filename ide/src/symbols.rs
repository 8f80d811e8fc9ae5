//! The outline of a file and symbol search over the whole grammar.

use super::locate;
use super::numbers::exact;
use grammar_lang::analysis::Analysis;
use grammar_lang::diagnostic::Location;
use grammar_lang::source::FileId;
use grammar_lang::span::Span;
use grammar_lang::syntax::ast::{Decl, Expectation};

/// What an outline entry is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub enum SymbolKind {
    Grammar,
    Start,
    Use,
    /// A block; its children are its rules.
    Block,
    Rule,
    /// A test block; its children are its cases.
    Test,
    TestCase,
}

/// One entry of a file's outline.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct DocumentSymbol {
    pub name: String,
    /// A short second text, e.g. a block's rule count or a rule's probability.
    pub detail: Option<String>,
    pub kind: SymbolKind,
    /// The whole declaration (or alternative, or case).
    pub span: Span,
    /// The part to select when the entry is chosen (a name).
    pub selection_span: Span,
    pub children: Vec<DocumentSymbol>,
}

/// Most children one outline entry lists: a block's rules or a test's
/// cases past this are summed up in one last entry, "… 1,234 more rules".
/// Learned grammars have blocks of hundreds of thousands of alternatives,
/// and editors ask for the outline on every edit.
pub const MAX_CHILDREN: usize = 2000;

/// Most children the whole outline lists, over all blocks and tests: a
/// learned grammar of a few hundred blocks of hundreds of alternatives
/// would otherwise answer every edit with tens of megabytes. When the
/// blocks ask for more, each gets the same share (its own count if
/// smaller), so every block keeps its first rules and its "… N more"
/// entry; the blocks themselves are always listed.
pub const MAX_OUTLINE_CHILDREN: usize = 5000;

/// The most children each entry may list so that the outline stays within
/// [`MAX_OUTLINE_CHILDREN`]: the largest share `c` with
/// `Σ min(wanted_i, c) ≤ MAX_OUTLINE_CHILDREN`, where `wanted_i` is an
/// entry's count capped at [`MAX_CHILDREN`].
fn fair_share(wanted: &[usize]) -> usize {
    let listed = |c: usize| wanted.iter().map(|&w| w.min(c)).sum::<usize>();
    if listed(MAX_CHILDREN) <= MAX_OUTLINE_CHILDREN {
        return MAX_CHILDREN;
    }
    // `listed` grows with `c`; the largest `c` that fits, by bisection.
    let (mut lo, mut hi) = (0, MAX_CHILDREN);
    while lo < hi {
        let mid = (lo + hi).div_ceil(2);
        if listed(mid) <= MAX_OUTLINE_CHILDREN {
            lo = mid;
        } else {
            hi = mid - 1;
        }
    }
    lo
}

/// The entry that stands for the children past those listed (spans in
/// order); `None` when there are none.
fn more(
    mut spans: impl Iterator<Item = Span>,
    kind: SymbolKind,
    one: &str,
    many: &str,
) -> Option<DocumentSymbol> {
    let first = spans.next()?;
    let (count, last) = spans.fold((1usize, first), |(n, _), s| (n + 1, s));
    Some(DocumentSymbol {
        name: format!(
            "… {} more {}",
            thousands(count),
            if count == 1 { one } else { many }
        ),
        detail: None,
        kind,
        span: first.cover(last),
        selection_span: first,
        children: Vec::new(),
    })
}

/// `1234567` as `1,234,567`.
fn thousands(n: usize) -> String {
    let digits = n.to_string();
    let mut out = String::new();
    for (i, c) in digits.chars().enumerate() {
        if i > 0 && (digits.len() - i).is_multiple_of(3) {
            out.push(',');
        }
        out.push(c);
    }
    out
}

/// The outline of `file`: its declarations in order, blocks with their
/// rules as children and tests with their cases, at most
/// [`MAX_CHILDREN`] of each and [`MAX_OUTLINE_CHILDREN`] in all.
///
/// Cost: linear in the number of declarations and alternatives, and the
/// answer's size in the number of declarations plus at most
/// `MAX_OUTLINE_CHILDREN` children.
pub fn document_symbols(analysis: &Analysis, file: FileId) -> Vec<DocumentSymbol> {
    let Some(syntax) = locate::syntax(analysis, file) else {
        return Vec::new();
    };
    let wanted: Vec<usize> = syntax
        .decls
        .iter()
        .filter_map(|decl| match decl {
            Decl::Block(b) => Some(
                b.alternatives
                    .iter()
                    .filter(|a| !a.items.is_empty())
                    .count(),
            ),
            Decl::Test(t) => Some(t.cases.len()),
            _ => None,
        })
        .map(|n| n.min(MAX_CHILDREN))
        .collect();
    let share = fair_share(&wanted);
    let text = locate::text(analysis, file);
    let leaf = |name: String, detail, kind, span, selection_span| DocumentSymbol {
        name,
        detail,
        kind,
        span,
        selection_span,
        children: Vec::new(),
    };
    syntax
        .decls
        .iter()
        .map(|decl| match decl {
            Decl::Grammar(d) => leaf(
                d.name.span.text(text).to_string(),
                Some("grammar".to_string()),
                SymbolKind::Grammar,
                d.span,
                d.name.span,
            ),
            Decl::Start(d) => leaf(
                d.name.span.text(text).to_string(),
                Some("start".to_string()),
                SymbolKind::Start,
                d.span,
                d.name.span,
            ),
            Decl::Use(d) => leaf(
                d.path.value.to_string(),
                Some("use".to_string()),
                SymbolKind::Use,
                d.span,
                d.path.span,
            ),
            Decl::Block(b) => {
                let rules: Vec<_> = b
                    .alternatives
                    .iter()
                    .filter(|alt| !alt.items.is_empty())
                    .collect();
                let count = rules.len();
                let mut children: Vec<DocumentSymbol> = rules
                    .iter()
                    .take(share)
                    .map(|alt| {
                        let first = alt.items[0].span();
                        let last = alt.items[alt.items.len() - 1].span();
                        let rule = locate::rule_of(analysis, file, b, alt)
                            .map(|id| analysis.grammar.rule(id));
                        let detail = rule.map(|r| match &r.weight {
                            Some(w) => format!("{} · p = {}", w.text, exact(&r.probability)),
                            None => format!("p = {}", exact(&r.probability)),
                        });
                        leaf(
                            first.cover(last).text(text).to_string(),
                            detail,
                            SymbolKind::Rule,
                            alt.span,
                            first.cover(last),
                        )
                    })
                    .collect();
                if let Some(more) = more(
                    rules[share.min(count)..].iter().map(|a| a.span),
                    SymbolKind::Rule,
                    "rule",
                    "rules",
                ) {
                    children.push(more);
                }
                let mut detail = format!("{count} {}", if count == 1 { "rule" } else { "rules" });
                if b.relative.is_some() {
                    detail.push_str(" · relative");
                }
                DocumentSymbol {
                    name: b.name.span.text(text).to_string(),
                    detail: Some(detail),
                    kind: SymbolKind::Block,
                    span: b.span,
                    selection_span: b.name.span,
                    children,
                }
            }
            Decl::Test(t) => DocumentSymbol {
                name: t.name.value.to_string(),
                detail: Some(format!(
                    "test · {} {}",
                    t.cases.len(),
                    if t.cases.len() == 1 { "case" } else { "cases" }
                )),
                kind: SymbolKind::Test,
                span: t.span,
                selection_span: t.name.span,
                children: t
                    .cases
                    .iter()
                    .take(share)
                    .map(|c| {
                        leaf(
                            c.sentence.value.to_string(),
                            Some(
                                match (c.expect, c.tree.is_some()) {
                                    (Expectation::Accept, false) => "accept",
                                    (Expectation::Accept, true) => "accept as tree",
                                    (Expectation::Reject, _) => "reject",
                                }
                                .to_string(),
                            ),
                            SymbolKind::TestCase,
                            c.span,
                            c.sentence.span,
                        )
                    })
                    .chain(more(
                        t.cases.iter().skip(share).map(|c| c.span),
                        SymbolKind::TestCase,
                        "case",
                        "cases",
                    ))
                    .collect(),
            },
        })
        .collect()
}

/// A non-terminal found by [`workspace_symbols`].
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct WorkspaceSymbol {
    pub name: String,
    /// The name at the head of its block.
    pub location: Location,
    /// A short description: rule count, `relative`, start symbol.
    pub detail: String,
}

/// The defined non-terminals whose names match `query`, best first, at most
/// `limit` of them. Matching ignores case; an exact match ranks first, then
/// names starting with the query, then names containing it, then names
/// containing its characters in order (fuzzy). Ties go to shorter names,
/// then alphabetical order. An empty query matches every name.
///
/// Cost: one pass over the non-terminals, plus sorting the matches.
pub fn workspace_symbols(analysis: &Analysis, query: &str, limit: usize) -> Vec<WorkspaceSymbol> {
    let grammar = &analysis.grammar;
    let query: Vec<char> = query.chars().flat_map(char::to_lowercase).collect();
    let mut matches: Vec<(u8, usize, &str, grammar_lang::model::NtId)> = Vec::new();
    for nt in grammar.nt_ids() {
        let symbol = grammar.nonterminal(nt);
        if symbol.block.is_none() {
            continue;
        }
        if let Some(rank) = rank(&symbol.name, &query) {
            matches.push((rank, symbol.name.chars().count(), &symbol.name, nt));
        }
    }
    matches.sort_unstable();
    matches
        .into_iter()
        .take(limit)
        .filter_map(|(_, _, name, nt)| {
            let symbol = grammar.nonterminal(nt);
            let block = symbol.block.as_ref()?;
            let count = symbol.rules.len();
            let mut detail = format!("{count} {}", if count == 1 { "rule" } else { "rules" });
            if block.relative {
                detail.push_str(" · relative");
            }
            if grammar.start == Some(nt) {
                detail.push_str(" · start");
            }
            Some(WorkspaceSymbol {
                name: name.to_string(),
                location: block.name,
                detail,
            })
        })
        .collect()
}

/// 0 exact, 1 prefix, 2 substring, 3 subsequence; `None`: no match.
pub(crate) fn rank(name: &str, query: &[char]) -> Option<u8> {
    let name: Vec<char> = name.chars().flat_map(char::to_lowercase).collect();
    if query.is_empty() {
        return Some(1);
    }
    if name == query {
        return Some(0);
    }
    if name.starts_with(query) {
        return Some(1);
    }
    if name.windows(query.len()).any(|w| w == query) {
        return Some(2);
    }
    let mut rest = query.iter().peekable();
    for c in &name {
        if rest.peek() == Some(&c) {
            rest.next();
        }
    }
    rest.peek().is_none().then_some(3)
}

/// The façade's methods for this feature (see the crate documentation).
impl crate::Analysis {
    pub fn document_symbols(&self, file: FileId) -> Vec<DocumentSymbol> {
        document_symbols(self.core(), file)
    }

    pub fn workspace_symbols(&self, query: &str, limit: usize) -> Vec<WorkspaceSymbol> {
        workspace_symbols(self.core(), query, limit)
    }
}
