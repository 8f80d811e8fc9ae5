//! Lowering: syntax trees of the root file and its `use`d files → [`Grammar`].
//!
//! Lowering happens in two steps:
//!
//! 1. **Loading.** The root file is parsed, then every `use "path"` is
//!    followed (depth first, in source order) through the [`FileLoader`].
//!    A file reached twice without a cycle (a diamond) is loaded once; a
//!    `use` that leads back to a file still being loaded is a `use-cycle`;
//!    a file that cannot be read is a `use-missing`.
//! 2. **Building the model.** Every file, in load order, contributes its
//!    declarations: `grammar`, `start`, blocks and tests. Names are interned
//!    (also names that are only used, so that later checks can report them),
//!    weights are read exactly and each block's probabilities are resolved
//!    (see [`resolve_block`]).
//!
//! Findings that only lowering can see are reported here: syntax errors,
//! `use` problems, `duplicate-declaration`, `duplicate-block`, `bad-weight`.
//! Everything else is left to [`crate::check`].

use crate::diagnostic::{Code, Diagnostic, Location};
use crate::model::{
    self, BlockInfo, Expectation, Grammar, GrammarTest, Ratio, Rule, Sym, TermId, TestCase, Weight,
};
use crate::source::{normalize, resolve_use, FileId, FileLoader, SourceMap};
use crate::span::Span;
use crate::syntax::ast::{self, Decl, Item, SyntaxFile, TreeChild, TreeSyntax};
use crate::tree::Tree;
use num_traits::{One, Signed, Zero};
use smol_str::SmolStr;
use std::collections::HashMap;
use std::path::{Path, PathBuf};

/// The result of lowering: files, their syntax, the model and the findings so far.
pub struct Lowered {
    pub sources: SourceMap,
    pub syntax: Vec<SyntaxFile>,
    pub grammar: Grammar,
    pub diagnostics: Vec<Diagnostic>,
}

/// Loads `root` (whose text is `text`) and every file it uses, and builds
/// the semantic model of the whole grammar.
pub fn lower(root: &Path, text: &str, loader: &dyn FileLoader) -> Lowered {
    lower_using(root, text, loader, &crate::syntax::parse)
}

/// [`lower`] with the parser supplied by the caller.
fn lower_using(
    root: &Path,
    text: &str,
    loader: &dyn FileLoader,
    parse: &dyn Fn(&str) -> SyntaxFile,
) -> Lowered {
    let mut lowerer = Lowerer {
        parse,
        sources: SourceMap::new(),
        syntax: Vec::new(),
        grammar: Grammar::new(),
        diagnostics: Vec::new(),
        grammar_name: None,
        weights: HashMap::default(),
        broken: Vec::new(),
    };
    lowerer.load(root, text, loader);
    let alternatives: usize = lowerer
        .syntax
        .iter()
        .flat_map(|file| &file.decls)
        .map(|decl| match decl {
            Decl::Block(b) => b.alternatives.len(),
            _ => 0,
        })
        .sum();
    lowerer.grammar.rules.reserve(alternatives);
    for index in 0..lowerer.syntax.len() {
        lowerer.lower_file(FileId(index as u32));
    }
    for index in 0..lowerer.syntax.len() {
        lowerer.note_damage(FileId(index as u32));
    }
    Lowered {
        sources: lowerer.sources,
        syntax: lowerer.syntax,
        grammar: lowerer.grammar,
        diagnostics: lowerer.diagnostics,
    }
}

/// How one alternative's weight takes part in resolving its block.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Share<'a> {
    /// A weight as written (may be zero or negative).
    Weighted(&'a Ratio),
    /// No weight: the alternative shares what the weighted ones leave.
    Unweighted,
    /// The weight could not be read; the alternative gets probability 0.
    Broken,
}

/// Resolves the probabilities of one block's alternatives, exactly.
///
/// * A plain block: a weighted alternative keeps its weight. The `k`
///   unweighted alternatives each get `(1 − W)/k`, where `W` is the sum of
///   the weights, when that remainder is positive, and 0 otherwise (the
///   `no-mass-left` check reports that case).
/// * A `relative` block: every weight is divided by the sum of all weights,
///   an unweighted alternative counting as weight 1. If the sum is 0 every
///   alternative gets 0.
///
/// In both kinds a negative weight (an error of its own, `negative-weight`)
/// counts as 0 so that the other numbers stay probabilities, and a
/// [`Share::Broken`] weight counts as 0 as well.
///
/// A block whose exact sum would need more than
/// [`model::EXACT_SUM_BITS`] is resolved the same way in floating point
/// (see [`Resolved::approximate`]).
pub fn resolve_block(relative: bool, shares: &[Share<'_>]) -> Resolved {
    resolve_shares(relative, shares.iter().copied())
}

/// A block's resolved probabilities.
#[derive(Clone, Debug, PartialEq)]
pub struct Resolved {
    /// One per alternative, in order.
    pub probabilities: Vec<Ratio>,
    /// Their sum.
    pub mass: Ratio,
    /// Set when the exact sum was past the limit: the probabilities and
    /// the mass are then exact values of floating-point numbers.
    pub approximate: Option<model::Approximation>,
}

/// The weight an alternative counts with (`None`: a share of the rest).
fn counted<'a>(s: Share<'a>, relative: bool, zero: &'a Ratio, one: &'a Ratio) -> Option<&'a Ratio> {
    match s {
        Share::Weighted(w) if w.is_negative() => Some(zero),
        Share::Weighted(w) => Some(w),
        Share::Unweighted if relative => Some(one),
        Share::Unweighted => None,
        Share::Broken => Some(zero),
    }
}

/// [`resolve_block`] over any list of shares that can be read more than once.
fn resolve_shares<'a>(relative: bool, shares: impl Iterator<Item = Share<'a>> + Clone) -> Resolved {
    let zero = Ratio::zero();
    let one = Ratio::one();
    let Some(sum) = capped_sum(
        shares
            .clone()
            .filter_map(|s| counted(s, relative, &zero, &one)),
    ) else {
        return resolve_approximately(relative, shares);
    };
    if relative {
        if sum.is_zero() {
            return Resolved {
                probabilities: shares.map(|_| Ratio::zero()).collect(),
                mass: Ratio::zero(),
                approximate: None,
            };
        }
        return Resolved {
            probabilities: shares
                .map(|s| match counted(s, relative, &zero, &one) {
                    Some(w) if sum.is_one() => w.clone(),
                    Some(w) => exact_div(w, &sum),
                    None => Ratio::zero(),
                })
                .collect(),
            mass: Ratio::one(),
            approximate: None,
        };
    }
    let unweighted = shares
        .clone()
        .filter(|s| matches!(s, Share::Unweighted))
        .count();
    let remainder = Ratio::one() - &sum;
    let (each, mass) = if unweighted > 0 && remainder.is_positive() {
        (
            exact_div(&remainder, &Ratio::from(unweighted as i64)),
            Ratio::one(),
        )
    } else {
        (Ratio::zero(), sum)
    };
    Resolved {
        probabilities: shares
            .map(|s| counted(s, relative, &zero, &one).unwrap_or(&each).clone())
            .collect(),
        mass,
        approximate: None,
    }
}

/// [`resolve_shares`] in floating point, for a block whose exact sum is
/// past the limit. The sum of `n` counted weights, each rounded to the
/// nearest float and added one after the other, is within
/// `γ_n · Σ|w_i|` of the exact sum, `γ_n = n·u / (1 − n·u)` with the unit
/// roundoff `u = 2^-53` (Higham, *Accuracy and Stability of Numerical
/// Algorithms*, 2nd ed., §4.2 and Lemma 3.1: one rounding per conversion
/// and at most `n − 1` per addition give each term at most `n` factors
/// `1 + δ`, `|δ| ≤ u`).
fn resolve_approximately<'a>(
    relative: bool,
    shares: impl Iterator<Item = Share<'a>> + Clone,
) -> Resolved {
    let zero = Ratio::zero();
    let one = Ratio::one();
    let floats: Vec<Option<f64>> = shares
        .clone()
        .map(|s| counted(s, relative, &zero, &one).map(model::to_f64))
        .collect();
    let n = floats.iter().flatten().count() as f64;
    let weighted: f64 = floats.iter().flatten().sum();
    let u = f64::EPSILON / 2.0;
    let gamma = n * u / (1.0 - n * u);
    let tolerance = gamma * floats.iter().flatten().map(|w| w.abs()).sum::<f64>();
    let unweighted = floats.iter().filter(|f| f.is_none()).count();
    let probabilities: Vec<f64> = if relative {
        floats
            .iter()
            .map(|w| match w {
                Some(w) if weighted > 0.0 => w / weighted,
                _ => 0.0,
            })
            .collect()
    } else {
        let each = if unweighted > 0 && weighted < 1.0 {
            (1.0 - weighted) / unweighted as f64
        } else {
            0.0
        };
        floats.iter().map(|w| w.unwrap_or(each)).collect()
    };
    // A float too large for the range (a weight of 400 digits) is kept as
    // the largest float: such a block is far from summing to 1 either way.
    let exact = |x: f64| Ratio::from_f64(x.min(f64::MAX)).unwrap_or_else(Ratio::zero);
    // The mass the exact resolution would give where it is known to be 1
    // (a relative block with something to divide by; a plain block whose
    // unweighted alternatives share what is left), so that runs do not
    // divide again by a sum that differs from 1 only by rounding.
    let normalised = if relative {
        weighted > 0.0
    } else {
        unweighted > 0 && weighted < 1.0
    };
    let mass = if normalised {
        Ratio::one()
    } else {
        exact(probabilities.iter().sum())
    };
    Resolved {
        probabilities: probabilities.into_iter().map(exact).collect(),
        mass,
        approximate: Some(model::Approximation {
            weighted,
            tolerance,
            unweighted: !relative && unweighted > 0,
        }),
    }
}

/// The exact sum of `terms` (inline arithmetic while the values fit in
/// 64 bits, big rationals summed by a balanced tree beyond; see [`Ratio`]).
pub fn exact_sum<'a>(terms: impl IntoIterator<Item = &'a Ratio>) -> Ratio {
    terms.into_iter().sum()
}

/// The exact sum of `terms`, or `None` when a term or a partial sum needs
/// more than [`model::EXACT_SUM_BITS`].
pub fn capped_sum<'a>(terms: impl IntoIterator<Item = &'a Ratio>) -> Option<Ratio> {
    crate::ratio::capped_sum(terms.into_iter(), model::EXACT_SUM_BITS)
}

/// `a / b` for `b ≠ 0`, exactly.
pub fn exact_div(a: &Ratio, b: &Ratio) -> Ratio {
    a / b
}

struct Lowerer<'p> {
    parse: &'p dyn Fn(&str) -> SyntaxFile,
    sources: SourceMap,
    syntax: Vec<SyntaxFile>,
    grammar: Grammar,
    diagnostics: Vec<Diagnostic>,
    /// The first `grammar NAME` declaration.
    grammar_name: Option<Location>,
    /// Per alternative of the block being lowered: whether its weight is
    /// unreadable (kept between blocks to save allocations).
    broken: Vec<bool>,
    /// Weights already read, by spelling.
    weights: HashMap<SmolStr, (Ratio, model::Notation), model::FastHash>,
}

/// A file whose `use` declarations are being followed.
struct Frame {
    file: FileId,
    /// Resolved path, the span of the path string and the target as written.
    uses: Vec<(PathBuf, Span, String)>,
    next: usize,
}

impl Lowerer<'_> {
    fn add_file(&mut self, path: PathBuf, text: String, loader: &dyn FileLoader) -> FileId {
        let syntax = loader.syntax(&path, &text, self.parse);
        let id = self.sources.add(path, text);
        self.syntax.push(syntax);
        id
    }

    fn frame(&self, file: FileId) -> Frame {
        let from = &self.sources.get(file).path;
        let uses = self.syntax[file.0 as usize]
            .decls
            .iter()
            .filter_map(|d| match d {
                Decl::Use(u) => Some((
                    resolve_use(from, &u.path.value),
                    u.path.span,
                    u.path.value.to_string(),
                )),
                _ => None,
            })
            .collect();
        Frame {
            file,
            uses,
            next: 0,
        }
    }

    /// Loads the root file and, depth first, every file it uses. Iterative,
    /// so long `use` chains cannot exhaust the call stack.
    fn load(&mut self, root: &Path, text: &str, loader: &dyn FileLoader) {
        let root_id = self.add_file(root.to_path_buf(), text.to_string(), loader);
        // Files by normalised path, and whether each is still being loaded.
        let mut by_path: HashMap<PathBuf, FileId> = HashMap::new();
        by_path.insert(normalize(root), root_id);
        let mut in_progress = vec![true];
        let mut stack = vec![self.frame(root_id)];
        while let Some(top) = stack.last_mut() {
            let Some((path, span, target)) = top.uses.get(top.next).cloned() else {
                in_progress[top.file.0 as usize] = false;
                stack.pop();
                continue;
            };
            top.next += 1;
            let from = top.file;
            let at = Location::new(from, span);
            if let Some(&seen) = by_path.get(&path) {
                if in_progress[seen.0 as usize] {
                    let first = stack.iter().position(|f| f.file == seen).unwrap_or(0);
                    let mut cycle: Vec<String> = stack[first..]
                        .iter()
                        .map(|f| self.sources.get(f.file).path.display().to_string())
                        .collect();
                    cycle.push(self.sources.get(seen).path.display().to_string());
                    self.diagnostics.push(
                        Diagnostic::new(
                            Code::UseCycle,
                            at,
                            format!("`use` cycle: {}", cycle.join(" → ")),
                        )
                        .with_label("leads back to a file that is being used")
                        .with_help(
                            "files may not use each other in a circle; move the shared blocks \
                             into a file that both use",
                        ),
                    );
                }
                // Otherwise the file is already loaded (a diamond): nothing to do.
                continue;
            }
            match loader.load(&path) {
                Ok(text) => {
                    let id = self.add_file(path.clone(), text, loader);
                    by_path.insert(path, id);
                    in_progress.push(true);
                    let frame = self.frame(id);
                    stack.push(frame);
                }
                Err(failure) => {
                    let using = self.sources.get(from).path.display().to_string();
                    let help = if failure.missing {
                        format!(
                            "{}; a relative path is relative to the directory of `{using}`",
                            failure.help
                        )
                    } else {
                        failure.help
                    };
                    self.diagnostics.push(
                        Diagnostic::new(
                            Code::UseMissing,
                            at,
                            format!(
                                "cannot read `{}` (used as \"{target}\"): {}",
                                path.display(),
                                failure.reason
                            ),
                        )
                        .with_label(if failure.missing {
                            "no file at this path"
                        } else {
                            "this file cannot be used"
                        })
                        .with_help(help),
                    );
                }
            }
        }
    }

    fn text(&self, file: FileId, span: Span) -> &str {
        span.text(&self.sources.get(file).text)
    }

    fn lower_file(&mut self, file: FileId) {
        let syntax = std::mem::take(&mut self.syntax[file.0 as usize]);
        for error in &syntax.errors {
            self.diagnostics.push(error.to_diagnostic(file));
        }
        for decl in &syntax.decls {
            match decl {
                Decl::Grammar(d) => self.grammar_decl(file, d),
                Decl::Start(d) => self.start_decl(file, d),
                Decl::Use(_) => {}
                Decl::Block(b) => {
                    self.block(file, b);
                    if syntax.is_damaged(b.span) {
                        let name = self.text(file, b.name.span).to_string();
                        let nt = self.grammar.intern_nt(&name);
                        self.grammar.mark_damaged(nt);
                    }
                }
                Decl::Test(t) => self.test(file, t),
            }
        }
        self.syntax[file.0 as usize] = syntax;
    }

    /// Once every file is lowered: the symbols the parser's damaged
    /// stretches touch. A block whose head could not be read may be
    /// missing, so its name is not reported as undefined; the names inside
    /// a skipped stretch count as used. Only symbols the grammar knows are
    /// marked: damage adds no names.
    fn note_damage(&mut self, file: FileId) {
        let syntax = &self.syntax[file.0 as usize];
        let text = &self.sources.get(file).text;
        for damage in &syntax.damaged {
            if let Some(nt) = damage
                .block
                .and_then(|name| self.grammar.nt(name.span.text(text)))
            {
                self.grammar.mark_damaged(nt);
            }
            let first = syntax
                .tokens
                .partition_point(|t| t.span.start < damage.span.start);
            for token in syntax.tokens[first..]
                .iter()
                .take_while(|t| t.span.end <= damage.span.end)
            {
                if token.kind == crate::syntax::lexer::TokenKind::Ident {
                    if let Some(nt) = self.grammar.nt(token.span.text(text)) {
                        self.grammar.mark_mentioned_in_damage(nt);
                    }
                }
            }
        }
    }

    fn grammar_decl(&mut self, file: FileId, decl: &ast::NameDecl) {
        let at = Location::new(file, decl.name.span);
        let name = self.text(file, decl.name.span).to_string();
        match self.grammar_name {
            None => {
                self.grammar_name = Some(at);
                self.grammar.name = Some(name);
            }
            Some(first) => {
                let first_name = self.grammar.name.clone().unwrap_or_default();
                self.diagnostics.push(
                    Diagnostic::new(
                        Code::DuplicateDeclaration,
                        at,
                        format!("the grammar is named twice: `{first_name}` and then `{name}`"),
                    )
                    .with_label("second `grammar` declaration")
                    .with_related(first, "first named here")
                    .with_help("keep one `grammar` declaration for the whole grammar"),
                );
            }
        }
    }

    fn start_decl(&mut self, file: FileId, decl: &ast::NameDecl) {
        let at = Location::new(file, decl.name.span);
        let name = self.text(file, decl.name.span).to_string();
        let nt = self.grammar.intern_nt(&name);
        self.grammar.nonterminals[nt.index()].references.push(at);
        match self.grammar.start_location {
            None => {
                self.grammar.start = Some(nt);
                self.grammar.start_location = Some(at);
            }
            Some(first) => {
                let first_name = self
                    .grammar
                    .start
                    .map(|s| self.grammar.nt_name(s).to_string())
                    .unwrap_or_default();
                self.diagnostics.push(
                    Diagnostic::new(
                        Code::DuplicateDeclaration,
                        at,
                        format!(
                            "a second `start` declaration (`{name}`); the start symbol is already `{first_name}`"
                        ),
                    )
                    .with_label("second `start` declaration")
                    .with_related(first, "start symbol first declared here")
                    .with_help(
                        "a grammar has exactly one start symbol across all its files; remove one \
                         of the declarations",
                    ),
                );
            }
        }
    }

    /// The right-hand side of an alternative, recording every reference.
    fn rhs(&mut self, file: FileId, alt: &ast::Alternative) -> Vec<Sym> {
        let mut rhs = Vec::with_capacity(alt.items.len());
        for item in &alt.items {
            let sym = match item {
                Item::NonTerminal(name) => {
                    let text = name.span.text(&self.sources.get(file).text);
                    let nt = self.grammar.intern_nt(text);
                    self.grammar.nonterminals[nt.index()]
                        .references
                        .push(Location::new(file, name.span));
                    Sym::N(nt)
                }
                Item::Terminal(s) => {
                    self.terminal(file, s, |word| {
                        rhs.push(Sym::T(word));
                    });
                    continue;
                }
            };
            rhs.push(sym);
        }
        rhs
    }

    /// A quoted terminal of a rule: the sequence of its words
    /// ([`model::words`]), each interned and handed to `push` in order, so
    /// `"fresh water"` stands for the two items `"fresh" "water"`. A
    /// terminal with no word at all (`""`, `" "`; the parser reported it as
    /// `empty-rule`) is kept as it is written. Spacing other than single
    /// spaces between words is reported as `terminal-spacing`.
    fn terminal(&mut self, file: FileId, s: &ast::Str, mut push: impl FnMut(TermId)) {
        let mut any = false;
        for word in model::words(&s.value) {
            any = true;
            push(self.grammar.intern_term(word));
        }
        if !any {
            push(self.grammar.intern_term(&s.value));
            return;
        }
        self.check_spacing(file, s, "terminal");
    }

    /// `terminal-spacing` for a quoted word (or words) whose whitespace is
    /// not single spaces between words; `what` names it in the message.
    fn check_spacing(&mut self, file: FileId, s: &ast::Str, what: &str) {
        let normalized = model::normalized_words(&s.value);
        if normalized == s.value.as_str() || !self.text(file, s.span).ends_with('"') {
            return;
        }
        let count = model::words(&s.value).count();
        let words = if count == 1 {
            String::new()
        } else {
            format!(", the sequence of {count} words")
        };
        let replacement = crate::syntax::lexer::quote(&normalized);
        self.diagnostics.push(
            Diagnostic::new(
                Code::TerminalSpacing,
                Location::new(file, s.span),
                format!(
                    "{what} {} has whitespace {}; it means {replacement}{words}",
                    self.text(file, s.span),
                    spacing_fault(&s.value),
                ),
            )
            .with_label("irregular spacing")
            .with_help(format!(
                "sentences are split at whitespace, so only the words count: write it as \
                 {replacement}"
            ))
            .with_suggestion(Some(replacement)),
        );
    }

    fn block(&mut self, file: FileId, block: &ast::Block) {
        let name_at = Location::new(file, block.name.span);
        let nt = self
            .grammar
            .intern_nt(block.name.span.text(&self.sources.get(file).text));
        if let Some(first) = &self.grammar.nonterminals[nt.index()].block {
            let first = first.name;
            let name = self.grammar.nt_name(nt);
            self.diagnostics.push(
                Diagnostic::new(
                    Code::DuplicateBlock,
                    name_at,
                    format!("`{name}` has a second block"),
                )
                .with_label("second block")
                .with_related(first, "first block")
                .with_help(format!(
                    "all rules of `{name}` belong in one block: move these alternatives into the \
                     first block and delete this one (only the first block is used)"
                )),
            );
            // Its rules are not added, but its references are still recorded
            // so that names used only here are known.
            for alt in &block.alternatives {
                self.rhs(file, alt);
            }
            return;
        }
        let relative = block.relative.is_some();
        self.grammar.nonterminals[nt.index()].block = Some(BlockInfo {
            name: name_at,
            location: Location::new(file, block.span),
            relative,
            doc: block.doc.as_ref().map(|d| d.text()),
            mass: Ratio::zero(),
            approximate: None,
        });
        // The rules go straight into the grammar (in order, as ids are
        // given); their probabilities are filled in once the block is read.
        let first = self.grammar.rules.len();
        self.grammar.nonterminals[nt.index()]
            .rules
            .reserve_exact(block.alternatives.len());
        let mut broken = std::mem::take(&mut self.broken);
        broken.clear();
        for alt in &block.alternatives {
            if alt.items.is_empty() {
                // The parser reported the empty alternative (`empty-rule`).
                self.grammar.mark_damaged(nt);
                continue;
            }
            let mut weight = None;
            let mut is_broken = false;
            if let Some(span) = alt.weight {
                let at = Location::new(file, span);
                match self.read_weight(file, span) {
                    Ok((text, value, notation)) => {
                        weight = Some(Weight {
                            text,
                            value,
                            notation,
                            location: at,
                        })
                    }
                    Err(reason) => {
                        self.diagnostics.push(
                            Diagnostic::new(Code::BadWeight, at, format!("bad weight: {reason}"))
                                .with_label("not a usable weight")
                                .with_help(crate::weight::weight_help(self.text(file, span))),
                        );
                        self.grammar.mark_damaged(nt);
                        is_broken = true;
                    }
                }
            }
            let rhs = self.rhs(file, alt);
            self.grammar.push_rule(Rule {
                lhs: nt,
                rhs,
                weight,
                probability: Ratio::zero(),
                p: 0.0,
                location: Location::new(file, alt.span),
                doc: alt.doc.as_ref().map(|d| d.text()),
            });
            broken.push(is_broken);
        }
        let shares = self.grammar.rules[first..]
            .iter()
            .zip(&broken)
            .map(|(rule, &broken)| match &rule.weight {
                Some(w) => Share::Weighted(&w.value),
                None if broken => Share::Broken,
                None => Share::Unweighted,
            });
        let resolved = resolve_shares(relative, shares);
        self.broken = broken;
        for (rule, probability) in self.grammar.rules[first..]
            .iter_mut()
            .zip(resolved.probabilities)
        {
            rule.p = model::to_f64(&probability);
            rule.probability = probability;
        }
        if let Some(info) = &mut self.grammar.nonterminals[nt.index()].block {
            info.mass = resolved.mass;
            info.approximate = resolved.approximate;
        }
    }

    /// Reads a weight, remembering each distinct spelling: grammars repeat
    /// the same few weights many times.
    fn read_weight(
        &mut self,
        file: FileId,
        span: Span,
    ) -> Result<(SmolStr, Ratio, model::Notation), String> {
        let text = span.text(&self.sources.get(file).text);
        if let Some((spelling, (value, notation))) = self.weights.get_key_value(text) {
            return Ok((spelling.clone(), value.clone(), *notation));
        }
        let (value, notation) = crate::weight::parse_weight(text)?;
        self.weights
            .insert(SmolStr::new(text), (value.clone(), notation));
        Ok((SmolStr::new(text), value, notation))
    }

    fn test(&mut self, file: FileId, test: &ast::TestBlock) {
        let cases = test
            .cases
            .iter()
            .map(|case| TestCase {
                expect: match case.expect {
                    ast::Expectation::Accept => Expectation::Accept,
                    ast::Expectation::Reject => Expectation::Reject,
                },
                sentence: case.sentence.value.to_string(),
                tree: case.tree.as_ref().map(|t| self.tree(file, t)),
                location: Location::new(file, case.span),
            })
            .collect();
        self.grammar.tests.push(GrammarTest {
            name: test.name.value.to_string(),
            location: Location::new(file, test.span),
            doc: test.doc.as_ref().map(|d| d.text()),
            cases,
        });
    }

    /// An expected tree. A leaf of several words (`"fresh water"`) stands
    /// for those words as leaves of its node, as a terminal of several
    /// words stands for them in a rule.
    fn tree(&mut self, file: FileId, tree: &TreeSyntax) -> Tree {
        let mut children = Vec::with_capacity(tree.children.len());
        for child in &tree.children {
            match child {
                TreeChild::Node(n) => children.push(self.tree(file, n)),
                TreeChild::Leaf(s) => {
                    let before = children.len();
                    children.extend(model::words(&s.value).map(Tree::leaf));
                    if children.len() == before {
                        if self.text(file, s.span).ends_with('"') {
                            self.diagnostics.push(
                                Diagnostic::new(
                                    Code::EmptyRule,
                                    Location::new(file, s.span),
                                    "a leaf without a word: no word of a sentence can match it",
                                )
                                .with_label("no word")
                                .with_help(
                                    "write the word the node covers inside the quotes, or \
                                     remove the leaf",
                                ),
                            );
                        }
                        children.push(Tree::leaf(s.value.to_string()));
                    } else {
                        self.check_spacing(file, s, "leaf");
                    }
                }
            }
        }
        Tree::node(self.text(file, tree.label.span), children)
    }
}

/// What is irregular about the whitespace of `value` (which holds at least
/// one word): for the `terminal-spacing` message.
fn spacing_fault(value: &str) -> &'static str {
    let trimmed = value.trim();
    if trimmed.len() != value.len() {
        if value.starts_with(char::is_whitespace) && value.ends_with(char::is_whitespace) {
            "at both ends"
        } else if value.starts_with(char::is_whitespace) {
            "at its start"
        } else {
            "at its end"
        }
    } else if trimmed.chars().any(|c| c.is_whitespace() && c != ' ') {
        "other than single spaces between its words (a tab or a line break)"
    } else {
        "doubled between its words"
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::source::MemoryLoader;
    use crate::syntax::ast::{Alternative, Block, Name, NameDecl, Str};
    use num_bigint::BigInt;

    fn r(n: i64, d: i64) -> Ratio {
        Ratio::new(BigInt::from(n), BigInt::from(d))
    }

    /// The weights of a block written as (numerator, denominator) pairs;
    /// `None` is an unweighted alternative.
    fn resolve(relative: bool, weights: &[Option<(i64, i64)>]) -> Vec<Ratio> {
        let values: Vec<Option<Ratio>> = weights.iter().map(|w| w.map(|(n, d)| r(n, d))).collect();
        let shares: Vec<Share<'_>> = values
            .iter()
            .map(|v| v.as_ref().map_or(Share::Unweighted, Share::Weighted))
            .collect();
        resolve_block(relative, &shares).probabilities
    }

    const U: Option<(i64, i64)> = None;

    fn w(n: i64, d: i64) -> Option<(i64, i64)> {
        Some((n, d))
    }

    #[test]
    fn unweighted_alternatives_share_the_whole_block_equally() {
        // README, "The grammar language", `Kind { "return" | "single" | "day" }`:
        // 1/3 each.
        assert_eq!(resolve(false, &[U, U, U]), vec![r(1, 3); 3]);
    }

    #[test]
    fn unweighted_alternatives_share_what_the_weighted_ones_leave() {
        // 0.30 + 0.20 + 0.20 + 0.15 + 0.10 leaves 0.05 for the one unweighted.
        let p = resolve(false, &[w(3, 10), w(1, 5), w(1, 5), w(3, 20), w(1, 10), U]);
        assert_eq!(p[5], r(1, 20));
        assert_eq!(p.iter().sum::<Ratio>(), r(1, 1));
        // Two unweighted split the rest in halves.
        let p = resolve(false, &[w(9, 10), U, U]);
        assert_eq!(p, vec![r(9, 10), r(1, 20), r(1, 20)]);
    }

    #[test]
    fn nothing_left_means_unweighted_alternatives_get_zero() {
        let p = resolve(false, &[w(7, 10), w(3, 10), U]);
        assert_eq!(p, vec![r(7, 10), r(3, 10), r(0, 1)]);
        let p = resolve(false, &[w(6, 5), U]);
        assert_eq!(p, vec![r(6, 5), r(0, 1)]);
    }

    #[test]
    fn relative_blocks_divide_by_the_sum() {
        // README, "The grammar language", `Count relative { 6 "one" 3 "two" 1 "three" }`:
        // 6/10, 3/10, 1/10.
        let p = resolve(true, &[w(6, 1), w(3, 1), w(1, 1)]);
        assert_eq!(p, vec![r(6, 10), r(3, 10), r(1, 10)]);
        // An unweighted alternative counts as weight 1.
        let p = resolve(true, &[w(3, 1), U]);
        assert_eq!(p, vec![r(3, 4), r(1, 4)]);
        // A sum of 0 gives 0 everywhere instead of dividing by zero.
        let p = resolve(true, &[w(0, 1), w(0, 1)]);
        assert_eq!(p, vec![r(0, 1), r(0, 1)]);
    }

    #[test]
    fn negative_and_unreadable_weights_count_as_zero() {
        let p = resolve(false, &[w(5, 4), w(-1, 4)]);
        assert_eq!(p, vec![r(5, 4), r(0, 1)]);
        let p = resolve_block(false, &[Share::Broken, Share::Unweighted]).probabilities;
        assert_eq!(p, vec![r(0, 1), r(1, 1)]);
        let two = r(-2, 1);
        let one = r(1, 1);
        let p = resolve_block(
            true,
            &[Share::Weighted(&two), Share::Weighted(&one), Share::Broken],
        )
        .probabilities;
        assert_eq!(p, vec![r(0, 1), r(1, 1), r(0, 1)]);
    }

    #[test]
    fn exact_sums_agree_with_big_rationals_small_and_large() {
        // The inline fast path and the big-rational fallback must agree with
        // plain big-rational addition (num-rational is the reference).
        use num_rational::BigRational;
        let terms = [
            r(1, 3),
            r(1, 7),
            r(-5, 11),
            r(i64::MAX, 3),
            r(1, i64::MAX),
            r(2, 9),
            r(i64::MAX, i64::MAX - 1),
        ];
        for len in 0..=terms.len() {
            let expected: BigRational = terms[..len].iter().map(Ratio::to_big).sum();
            let got = exact_sum(&terms[..len]);
            assert_eq!(got.to_big(), expected);
            // Reduced exactly like `BigRational::new` would.
            assert_eq!(&got.numer(), expected.numer());
            assert_eq!(&got.denom(), expected.denom());
        }
        let huge = Ratio::new(BigInt::from(1), BigInt::from(1) << 100);
        assert_eq!(
            exact_sum([&r(1, 2), &huge, &r(1, 2)]).to_big(),
            BigRational::from_integer(1.into()) + huge.to_big()
        );
    }

    #[test]
    fn exact_division_agrees_with_big_rationals() {
        let values = [
            r(6, 1),
            r(-3, 10),
            r(1, 3),
            r(i64::MAX, 7),
            r(-5, i64::MAX),
            r(0, 1),
        ];
        for a in &values {
            for b in values.iter().filter(|b| !b.is_zero()) {
                let got = exact_div(a, b);
                let expected = a.to_big() / b.to_big();
                assert_eq!(
                    (&got.numer(), &got.denom()),
                    (expected.numer(), expected.denom()),
                    "{a} / {b}"
                );
            }
        }
    }

    // A hand-written syntax tree, so lowering is tested on its own.

    fn at(text: &str, needle: &str) -> Span {
        let start = text.find(needle).expect("needle in test text");
        Span::new(start, start + needle.len())
    }

    fn name(text: &str, needle: &str) -> Name {
        Name {
            span: at(text, needle),
        }
    }

    fn terminal(text: &str, quoted: &str) -> Item {
        Item::Terminal(Str {
            span: at(text, quoted),
            value: crate::syntax::lexer::unquote_small(quoted),
        })
    }

    const KIOSK: &str = "start Kind\nKind {\n  \"return\" | 1/4 \"single\" | Day\n}\n";

    fn kiosk_syntax(text: &str) -> SyntaxFile {
        let alt = |weight: Option<&str>, items: Vec<Item>, whole: &str| Alternative {
            weight: weight.map(|w| at(text, w)),
            items,
            doc: None,
            span: at(text, whole),
        };
        SyntaxFile {
            tokens: Vec::new(),
            decls: vec![
                Decl::Start(NameDecl {
                    keyword: at(text, "start"),
                    name: name(text, "Kind"),
                    span: at(text, "start Kind"),
                }),
                Decl::Block(Block {
                    name: Name {
                        span: Span::new(11, 15),
                    },
                    relative: None,
                    open: at(text, "{"),
                    close: Some(at(text, "}")),
                    alternatives: vec![
                        alt(None, vec![terminal(text, "\"return\"")], "\"return\""),
                        alt(
                            Some("1/4"),
                            vec![terminal(text, "\"single\"")],
                            "1/4 \"single\"",
                        ),
                        alt(None, vec![Item::NonTerminal(name(text, "Day"))], "Day"),
                    ],
                    doc: None,
                    span: Span::new(11, text.len() - 1),
                }),
            ],
            errors: Vec::new(),
            damaged: Vec::new(),
        }
    }

    #[test]
    fn a_block_becomes_rules_with_resolved_probabilities_and_references() {
        let lowered = lower_using(
            Path::new("kiosk.trellis"),
            KIOSK,
            &MemoryLoader::new(),
            &kiosk_syntax,
        );
        let g = &lowered.grammar;
        assert!(lowered.diagnostics.is_empty(), "{:?}", lowered.diagnostics);
        let kind = g.nt("Kind").unwrap();
        assert_eq!(g.start, Some(kind));
        assert_eq!(g.start_location.unwrap().span, at(KIOSK, "Kind"));
        assert_eq!(g.rules.len(), 3);
        let probs: Vec<Ratio> = g.rules.iter().map(|r| r.probability.clone()).collect();
        assert_eq!(probs, vec![r(3, 8), r(1, 4), r(3, 8)]);
        assert_eq!(g.rules[1].p, 0.25);
        assert_eq!(g.rules[1].weight.as_ref().unwrap().text, "1/4");
        let block = g.nonterminal(kind).block.as_ref().unwrap();
        assert_eq!(block.mass, r(1, 1));
        assert_eq!(block.name.span, Span::new(11, 15));
        // `Day` is used but not defined: interned, with its reference.
        let day = g.nt("Day").unwrap();
        assert!(!g.nonterminal(day).is_defined());
        assert_eq!(g.nonterminal(day).references[0].span, at(KIOSK, "Day"));
        assert_eq!(g.rules[2].rhs, vec![Sym::N(day)]);
        assert_eq!(g.rule_text(crate::model::RuleId(2)), "Kind → Day");
    }
}
