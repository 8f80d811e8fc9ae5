//! What a run uses: the one way `parse`, `sample`, `stats`, `test` and the
//! language server's commands get a grammar the engine may run.
//!
//! [`Analysis::run`] (and [`Analysis::run_tests`] for the test runner)
//! decides two things once, for every caller:
//!
//! * **Which errors stop the run.** An error stops a run when it lies in
//!   what the run uses: a block reachable from the symbol the run starts
//!   from, the `start` declaration (when the run starts there), a `use`
//!   declaration, text outside any declaration, or — for the test runner —
//!   one of the selected `test` blocks. Every other error (in a block the
//!   run cannot reach, in a `test` block of a run that parses or samples,
//!   in a second `grammar` name, or at `start` when the run names its own
//!   symbol) is *ignored*: the run goes ahead, the ignored errors are
//!   listed with it, and the blocks that hold them take no part (their
//!   rules count as weight 0; they are unreachable, so no tree or sentence
//!   of the run changes). Errors the engine itself measured (`leaky`)
//!   never stop a run. A stopped run is [`NotRunnable::Errors`], naming
//!   each stopping error with its place, code and help.
//! * **What the weights mean.** When `trellis.toml` lets a block's
//!   probabilities add up to something other than 1 (`sum-not-one` or
//!   `no-mass-left` below error), a run uses the weights *as written,
//!   divided by their sum*, block by block, exactly (rational arithmetic):
//!   a block `0.45 "a" | 0.45 "b"` runs as `1/2`, `1/2`. Parsing, sampling,
//!   the consistency numbers and the test runner all see these numbers;
//!   [`Run::rescaled`] lists the blocks so the shells can say so, and
//!   hover shows both numbers ([`run_probability`]).

use crate::Analysis;
use grammar_lang::diagnostic::{Code, Diagnostic};
use grammar_lang::model::{to_f64, Grammar, GrammarTest, NtId, Ratio, RuleId};
use grammar_lang::syntax::ast::Decl;
use grammar_lang::syntax::lexer::quote;
use grammar_lang::Severity;
use num_traits::{One, Zero};
use std::borrow::Cow;
use std::fmt;
use std::path::PathBuf;

/// A grammar ready for the engine, with what was done to get it.
#[derive(Debug)]
pub struct Run<'a> {
    grammar: Cow<'a, Grammar>,
    start: NtId,
    ignored: Vec<&'a Diagnostic>,
    rescaled: Vec<NtId>,
}

impl<'a> Run<'a> {
    /// The grammar the engine runs: the analysed grammar with every block's
    /// probabilities divided by their sum and the blocks holding ignored
    /// errors left out. Its ids (symbols, rules, tests) are the analysis's;
    /// its `start` is the symbol the run starts from.
    pub fn grammar(&self) -> &Grammar {
        &self.grammar
    }

    /// The symbol the run starts from.
    pub fn start(&self) -> NtId {
        self.start
    }

    /// The errors that did not stop the run, in file order.
    pub fn ignored_errors(&self) -> &[&'a Diagnostic] {
        &self.ignored
    }

    /// The blocks whose probabilities did not add up to 1 and were divided
    /// by their sum, in symbol order.
    pub fn rescaled(&self) -> &[NtId] {
        &self.rescaled
    }

    /// The names of [`Run::rescaled`].
    pub fn rescaled_names(&self) -> Vec<&str> {
        self.rescaled
            .iter()
            .map(|&nt| self.grammar.nt_name(nt))
            .collect()
    }

    /// The engine's parser for the run's grammar (from its start symbol).
    pub fn parser(&self) -> Result<trellis_engine::Parser, NotRunnable> {
        trellis_engine::Parser::new(&self.grammar).map_err(|e| NotRunnable::Engine(e.to_string()))
    }

    /// The blocks of the run's grammar whose probabilities were resolved in
    /// floating point (their exact sums are past
    /// [`grammar_lang::model::EXACT_SUM_BITS`]), in symbol order.
    pub fn approximate(&self) -> Vec<NtId> {
        self.grammar
            .nt_ids()
            .filter(|&nt| {
                self.grammar
                    .nonterminal(nt)
                    .block
                    .as_ref()
                    .is_some_and(|b| b.approximate.is_some())
            })
            .collect()
    }

    /// One sentence for people saying which blocks the run uses in floating
    /// point, or `None`.
    pub fn approximate_note(&self) -> Option<String> {
        let listed: Vec<String> = self
            .approximate()
            .into_iter()
            .map(|nt| format!("`{}`", self.grammar.nt_name(nt)))
            .collect();
        if listed.is_empty() {
            return None;
        }
        Some(format!(
            "the probabilities of {} {} were computed in floating point: {} exact sum{} more \
             than {} bits (see the `approximate-sum` note)",
            if listed.len() == 1 { "block" } else { "blocks" },
            listed.join(", "),
            if listed.len() == 1 { "its" } else { "their" },
            if listed.len() == 1 {
                " needs"
            } else {
                "s need"
            },
            grammar_lang::model::EXACT_SUM_BITS
        ))
    }

    /// One sentence for people saying which blocks were rescaled, or `None`.
    pub fn rescaled_note(&self) -> Option<String> {
        let names = self.rescaled_names();
        let listed: Vec<String> = names.iter().map(|n| format!("`{n}`")).collect();
        match listed.as_slice() {
            [] => None,
            [one] => Some(format!(
                "the weights of block {one} do not sum to one and were rescaled to sum to one \
                 (each divided by their sum)"
            )),
            many => Some(format!(
                "the weights of blocks {} do not sum to one and were rescaled to sum to one \
                 (each divided by their sum)",
                many.join(", ")
            )),
        }
    }
}

/// The probability a run uses for rule `id`: its probability as written
/// divided by its block's sum when that sum is positive and not 1, else as
/// written. The one rule [`Analysis::run`] applies and hover shows.
pub fn run_probability(grammar: &Grammar, id: RuleId) -> Cow<'_, Ratio> {
    let rule = grammar.rule(id);
    match grammar.nonterminal(rule.lhs).block.as_ref() {
        Some(block) if needs_rescaling(&block.mass) => Cow::Owned(&rule.probability / &block.mass),
        _ => Cow::Borrowed(&rule.probability),
    }
}

fn needs_rescaling(mass: &Ratio) -> bool {
    mass > &Ratio::zero() && !mass.is_one()
}

/// Why the engine cannot run a grammar (parse with it, sample from it,
/// measure it, test it).
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum NotRunnable {
    /// These errors lie in what the run uses, in file order.
    Errors(Vec<PlacedError>),
    /// No `start` declaration and no symbol named instead.
    NoStart,
    /// The symbol asked for has no block.
    NoSuchSymbol(String),
    /// The engine cannot compile the grammar for parsing.
    Engine(String),
}

/// An error with its place written out: one that stops a run, or one a run
/// ignored.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct PlacedError {
    pub diagnostic: Diagnostic,
    /// The file as the analysis read it.
    pub path: PathBuf,
    /// 1-based line and column (in characters) of the error's start.
    pub line: u32,
    pub column: u32,
}

impl fmt::Display for PlacedError {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        let d = &self.diagnostic;
        write!(
            f,
            "{}:{}:{}: {} {}",
            self.path.display(),
            self.line,
            self.column,
            d.code,
            d.message
        )?;
        if let Some(help) = &d.help {
            write!(f, " (help: {help})")?;
        }
        Ok(())
    }
}

impl NotRunnable {
    /// The first line of the message: why, without the list of errors.
    pub fn headline(&self) -> String {
        match self {
            NotRunnable::Errors(errors) => {
                let n = errors.len();
                format!(
                    "the grammar has {n} error{s} in what this run uses, so it cannot run; \
                     fix {them} first (errors in blocks the run cannot reach do not stop it)",
                    s = if n == 1 { "" } else { "s" },
                    them = if n == 1 { "it" } else { "them" },
                )
            }
            NotRunnable::NoStart => {
                "the grammar has no `start` declaration; name a symbol to start from".to_string()
            }
            NotRunnable::Engine(why) => format!("the grammar cannot be parsed with: {why}"),
            NotRunnable::NoSuchSymbol(name) => format!(
                "the grammar has no block named {}",
                if grammar_lang::syntax::lexer::is_valid_symbol_name(name) {
                    format!("`{name}`")
                } else {
                    quote(name)
                }
            ),
        }
    }

    /// The errors that stop the run (empty for the other reasons).
    pub fn errors(&self) -> &[PlacedError] {
        match self {
            NotRunnable::Errors(errors) => errors,
            _ => &[],
        }
    }
}

/// The headline, then each stopping error on a line of its own.
impl fmt::Display for NotRunnable {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(&self.headline())?;
        for error in self.errors() {
            write!(f, "\n  {error}")?;
        }
        Ok(())
    }
}

impl std::error::Error for NotRunnable {}

/// Where an error lies, as far as a run is concerned.
enum Part {
    /// The block of this symbol.
    Block(NtId),
    /// A test block (its span in its file).
    Test(grammar_lang::Span),
    /// The `start` declaration.
    Start,
    /// A `grammar NAME` declaration.
    Name,
    /// Anything else: a `use`, text outside any declaration.
    Other,
}

impl Analysis {
    /// The grammar as a run from `from` (a symbol with a block; the
    /// grammar's `start` when `None`) uses it, or why it cannot run. See the
    /// module documentation for which errors stop a run and what the
    /// weights mean. Errors in `test` blocks never stop it.
    pub fn run(&self, from: Option<&str>) -> Result<Run<'_>, NotRunnable> {
        self.prepare(from, &[])
    }

    /// [`Analysis::run`] from the grammar's `start` for running `tests`:
    /// errors inside those test blocks stop it too.
    pub fn run_tests(&self, tests: &[&GrammarTest]) -> Result<Run<'_>, NotRunnable> {
        self.prepare(None, tests)
    }

    fn prepare(&self, from: Option<&str>, tests: &[&GrammarTest]) -> Result<Run<'_>, NotRunnable> {
        let core = self.core();
        let start = match self.start_symbol(from) {
            Ok(start) => start,
            // Without a start nothing is reachable: the errors that say so
            // (`no-start` in a selected test, `unknown-start`) name the cause.
            Err(NotRunnable::NoStart) => {
                let stopping: Vec<PlacedError> = core
                    .diagnostics
                    .iter()
                    .filter(|d| d.severity == Severity::Error && !is_engine_finding(d.code))
                    .filter(|d| match part_of(self, d) {
                        Part::Test(span) => is_selected(tests, d, span),
                        Part::Start | Part::Other => true,
                        Part::Block(_) | Part::Name => false,
                    })
                    .map(|d| self.placed(d))
                    .collect();
                return Err(if stopping.is_empty() {
                    NotRunnable::NoStart
                } else {
                    NotRunnable::Errors(stopping)
                });
            }
            Err(other) => return Err(other),
        };
        let grammar = &core.grammar;
        let reachable = grammar_lang::check::graph::reachable_from(grammar, start);
        let mut stopping = Vec::new();
        let mut ignored = Vec::new();
        let mut set_aside = Vec::new();
        for d in &core.diagnostics {
            if d.severity != Severity::Error || is_engine_finding(d.code) {
                continue;
            }
            let stops = match part_of(self, d) {
                Part::Block(nt) if !reachable[nt.index()] => {
                    set_aside.push(nt);
                    false
                }
                Part::Block(_) | Part::Other => true,
                Part::Test(span) => is_selected(tests, d, span),
                Part::Start => from.is_none(),
                Part::Name => false,
            };
            if stops {
                stopping.push(self.placed(d));
            } else {
                ignored.push(d);
            }
        }
        if !stopping.is_empty() {
            return Err(NotRunnable::Errors(stopping));
        }
        set_aside.sort_unstable();
        set_aside.dedup();
        let rescaled: Vec<NtId> = grammar
            .nt_ids()
            .filter(|nt| set_aside.binary_search(nt).is_err())
            .filter(|&nt| {
                grammar
                    .nonterminal(nt)
                    .block
                    .as_ref()
                    .is_some_and(|b| needs_rescaling(&b.mass))
            })
            .collect();
        let grammar = if rescaled.is_empty() && set_aside.is_empty() && grammar.start == Some(start)
        {
            Cow::Borrowed(grammar)
        } else {
            let mut owned = grammar.clone();
            owned.start = Some(start);
            for &nt in &rescaled {
                for &id in &grammar.nonterminal(nt).rules {
                    let p = run_probability(grammar, id).into_owned();
                    let rule = &mut owned.rules[id.index()];
                    rule.p = to_f64(&p);
                    rule.probability = p;
                }
                if let Some(block) = &mut owned.nonterminals[nt.index()].block {
                    block.mass = Ratio::one();
                }
            }
            for &nt in &set_aside {
                for &id in &grammar.nonterminal(nt).rules {
                    let rule = &mut owned.rules[id.index()];
                    rule.p = 0.0;
                    rule.probability = Ratio::zero();
                }
                if let Some(block) = &mut owned.nonterminals[nt.index()].block {
                    block.mass = Ratio::zero();
                }
            }
            Cow::Owned(owned)
        };
        Ok(Run {
            grammar,
            start,
            ignored,
            rescaled,
        })
    }
}

/// Whether findings of `code` come from the engine's measurements rather
/// than from the model's static checks (such errors never stop a run: a
/// leaking grammar is a well-formed model, and `stats` is where the leak is
/// studied).
pub(crate) fn is_engine_finding(code: Code) -> bool {
    code == Code::Leaky
}

/// Whether the test block at `span` of `d`'s file is one of `tests`.
fn is_selected(tests: &[&GrammarTest], d: &Diagnostic, span: grammar_lang::Span) -> bool {
    tests
        .iter()
        .any(|t| t.location.file == d.location.file && t.location.span == span)
}

/// The declaration `d` lies in.
fn part_of(analysis: &Analysis, d: &Diagnostic) -> Part {
    let Some(syntax) = crate::locate::syntax(analysis.core(), d.location.file) else {
        return Part::Other;
    };
    let span = d.location.span;
    let i = syntax.decls.partition_point(|x| x.span().end < span.end);
    let Some(decl) = syntax.decls[i..]
        .iter()
        .take_while(|x| x.span().start <= span.start)
        .find(|x| x.span().start <= span.start && span.end <= x.span().end)
    else {
        return Part::Other;
    };
    match decl {
        Decl::Block(b) => {
            let text = crate::locate::text(analysis.core(), d.location.file);
            analysis
                .grammar
                .nt(b.name.span.text(text))
                .map_or(Part::Other, Part::Block)
        }
        Decl::Test(t) => Part::Test(t.span),
        Decl::Start(_) => Part::Start,
        Decl::Grammar(_) => Part::Name,
        Decl::Use(_) => Part::Other,
    }
}

impl Analysis {
    /// `d` (a finding of this analysis) with its file, line and column.
    pub fn placed(&self, d: &Diagnostic) -> PlacedError {
        let sources = &self.core().sources;
        let (path, line, column) = if (d.location.file.0 as usize) < sources.len() {
            let file = sources.get(d.location.file);
            let lc = file.lines.chars(
                &file.text,
                (d.location.span.start as usize).min(file.text.len()),
            );
            (file.path.clone(), lc.line + 1, lc.col + 1)
        } else {
            (PathBuf::new(), 1, 1)
        };
        PlacedError {
            diagnostic: d.clone(),
            path,
            line,
            column,
        }
    }
}
