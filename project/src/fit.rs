//! Fitting the weights of a grammar on disk to treebank files written in
//! its own symbols: reading the trees (plain or gzip), checking each
//! against the grammar, counting, re-estimating
//! ([`trellis_treebank::fit`]), rewriting the weight tokens through the
//! façade ([`trellis_ide::Analysis::reweight`]) and analysing the result
//! again to say what the new weights change beyond themselves: findings the
//! grammar did not have and test cases that held and no longer do.

use crate::config::Resolver;
use crate::files::Overlay;
use crate::learn::{open_treebank, TreebankProblem};
use crate::test_run::{self, RunOptions, Selection};
use grammar_lang::diagnostic::{Code, Diagnostic, Location, Severity};
use grammar_lang::model::NtId;
use grammar_lang::source::normalize;
use grammar_lang::weight::NotExact;
use std::collections::HashSet;
use std::path::{Path, PathBuf};
use trellis_ide::{Analysis, PlacedError};
use trellis_treebank::fit::{Estimate, Fit, Smoothing};
use trellis_treebank::{clean_located, Cleaning, TreeReader};

/// How to fit.
#[derive(Clone, Debug)]
pub struct Fitting {
    pub smoothing: Smoothing,
    pub cleaning: Cleaning,
    /// Skip malformed trees and trees the grammar does not produce (and
    /// report them) instead of stopping at the first.
    pub keep_going: bool,
}

/// A tree that cannot be read or that the grammar does not produce, at
/// the node concerned, with what to do.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct TreeProblem {
    pub problem: TreebankProblem,
    pub help: Option<String>,
}

impl std::fmt::Display for TreeProblem {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{}", self.problem)?;
        if let Some(help) = &self.help {
            write!(f, "\n  help: {help}")?;
        }
        Ok(())
    }
}

/// Why nothing was fitted.
#[derive(Debug)]
pub enum FitError {
    /// The grammar has errors: the weights of a grammar that does not mean
    /// what it says cannot be fitted.
    Grammar(Vec<PlacedError>),
    /// A file that cannot be read (line 0), or a tree that is malformed or
    /// that the grammar does not produce (without `keep_going`).
    Tree(TreeProblem),
}

/// A file whose text the fit changes.
#[derive(Clone, Debug)]
pub struct Rewritten {
    /// The file as the analysis read it.
    pub path: PathBuf,
    pub original: String,
    pub text: String,
}

/// What fitting found and produced.
#[derive(Debug)]
pub struct Fitted {
    pub estimate: Estimate,
    /// Trees skipped (only with `keep_going`), in order.
    pub skipped: Vec<TreeProblem>,
    /// Trees that cleaning left empty (only empty elements).
    pub emptied: u64,
    /// The new text of the grammar's root file (its old text when nothing
    /// in it changes).
    pub root: Rewritten,
    /// Every file the fit changes (the root among them when it changes),
    /// in the order the analysis read them.
    pub changed: Vec<Rewritten>,
    /// Blocks that could not keep their notation, by name, with why.
    pub fallbacks: Vec<(String, NotExact)>,
    /// Findings of the fitted grammar that the original did not have (a
    /// rule of weight 0, a leak, …), placed in the new text.
    pub new_findings: Vec<PlacedError>,
    /// Test cases that held with the old weights and fail with the new:
    /// the test's name and the case as written.
    pub broken_cases: Vec<(String, String)>,
}

/// A rule as its block writes it: `Kind → "fresh water"` (the model
/// splits a terminal into its words; this keeps the source's spelling).
pub fn rule_as_written(analysis: &Analysis, rule: grammar_lang::model::RuleId) -> String {
    let grammar = &analysis.grammar;
    let r = grammar.rule(rule);
    let location = r.location;
    if (location.file.0 as usize) >= analysis.sources.len() {
        return grammar.rule_text(rule);
    }
    let text = &analysis.sources.get(location.file).text;
    let from = r
        .weight
        .as_ref()
        .map_or(location.span.start, |w| w.location.span.end) as usize;
    match text.get(from..location.span.end as usize) {
        Some(items) => format!("{} → {}", grammar.nt_name(r.lhs), items.trim()),
        None => grammar.rule_text(rule),
    }
}

/// Fits the weights of `analysis`'s grammar (its root file at `path`) to
/// the trees of `treebanks`. Nothing is written: the new texts are in the
/// answer.
pub fn fit_grammar(
    analysis: &Analysis,
    path: &Path,
    treebanks: &[PathBuf],
    how: &Fitting,
) -> Result<Fitted, FitError> {
    let errors: Vec<PlacedError> = analysis
        .diagnostics
        .iter()
        .filter(|d| d.severity == Severity::Error)
        .map(|d| analysis.placed(d))
        .collect();
    if !errors.is_empty() {
        return Err(FitError::Grammar(errors));
    }
    let grammar = &analysis.grammar;
    let mut fit = Fit::new(grammar);
    let mut skipped = Vec::new();
    let mut emptied = 0;
    for treebank in treebanks {
        let input = open_treebank(treebank).map_err(|message| {
            FitError::Tree(TreeProblem {
                problem: TreebankProblem {
                    path: treebank.clone(),
                    line: 0,
                    column: 0,
                    message: format!("cannot read it: {message}"),
                },
                help: None,
            })
        })?;
        let mut reader = TreeReader::new(input);
        while let Some(tree) = reader.next() {
            let problem = match tree {
                Err(e) => TreeProblem {
                    problem: TreebankProblem {
                        path: treebank.clone(),
                        line: e.line,
                        column: e.column,
                        message: e.message,
                    },
                    help: None,
                },
                Ok(tree) => {
                    let Some((tree, positions)) =
                        clean_located(tree, reader.positions(), &how.cleaning)
                    else {
                        emptied += 1;
                        continue;
                    };
                    match fit.add(&tree) {
                        Ok(()) => continue,
                        Err(mismatch) => {
                            let (line, column) = positions
                                .get(mismatch.node)
                                .copied()
                                .unwrap_or(reader.tree_start());
                            let help = match &mismatch.block {
                                Some((block, alternative)) => format!(
                                    "add the alternative `{alternative}` to the block `{}`{}, or correct the tree",
                                    grammar.nt_name(*block),
                                    block_place(analysis, *block)
                                ),
                                None => mismatch.help,
                            };
                            TreeProblem {
                                problem: TreebankProblem {
                                    path: treebank.clone(),
                                    line,
                                    column,
                                    message: mismatch.message,
                                },
                                help: Some(help),
                            }
                        }
                    }
                }
            };
            if !how.keep_going {
                return Err(FitError::Tree(problem));
            }
            skipped.push(problem);
        }
    }
    let estimate = fit.estimate(&how.smoothing);
    let blocks: Vec<(NtId, Vec<grammar_lang::model::Ratio>)> = estimate
        .seen()
        .filter_map(|b| Some((b.nt, b.weights()?)))
        .collect();
    let rewrites = analysis.reweight(&blocks);
    let fallbacks = rewrites
        .iter()
        .filter_map(|r| {
            let why = r.fallback.clone()?;
            (!r.edits.is_empty()).then(|| (grammar.nt_name(r.nt).to_string(), why))
        })
        .collect();
    let edits: Vec<_> = rewrites.iter().flat_map(|r| r.edits.iter()).collect();
    let changed: Vec<Rewritten> = analysis
        .edited_texts(&edits)
        .into_iter()
        .map(|(file, text)| {
            let source = analysis.sources.get(file);
            Rewritten {
                path: source.path.clone(),
                original: source.text.clone(),
                text,
            }
        })
        .filter(|r| r.text != r.original)
        .collect();
    let root_source = analysis.sources.get(grammar_lang::FileId(0));
    let root = changed
        .iter()
        .find(|r| r.path == root_source.path)
        .cloned()
        .unwrap_or_else(|| Rewritten {
            path: root_source.path.clone(),
            original: root_source.text.clone(),
            text: root_source.text.clone(),
        });
    let (new_findings, broken_cases) = if changed.is_empty() {
        (Vec::new(), Vec::new())
    } else {
        compare(analysis, path, &root, &changed)
    };
    Ok(Fitted {
        estimate,
        skipped,
        emptied,
        root,
        changed,
        fallbacks,
        new_findings,
        broken_cases,
    })
}

/// ` (grammar.trellis:12:1)`: where the block of `block` starts.
fn block_place(analysis: &Analysis, block: NtId) -> String {
    let Some(info) = &analysis.grammar.nonterminal(block).block else {
        return String::new();
    };
    let placed = analysis.placed(&Diagnostic::new(
        Code::Syntax,
        Location::new(info.name.file, info.name.span),
        "",
    ));
    format!(
        " ({}:{}:{})",
        placed.path.display(),
        placed.line,
        placed.column
    )
}

/// The findings of the fitted grammar that the original lacks, and the
/// test cases that held and now fail. The fitted grammar is analysed
/// with the same configuration, its changed files read from memory.
fn compare(
    analysis: &Analysis,
    path: &Path,
    root: &Rewritten,
    changed: &[Rewritten],
) -> (Vec<PlacedError>, Vec<(String, String)>) {
    let texts: Vec<(PathBuf, String)> = changed
        .iter()
        .map(|r| (normalize(&r.path), r.text.clone()))
        .collect();
    let mut resolver = Resolver::new();
    let policy = resolver.policy_for_grammar(path);
    let overlay = Overlay::new(move |p: &Path| {
        texts
            .iter()
            .find(|(q, _)| q.as_path() == p)
            .map(|(_, t)| t.clone())
    })
    .reading(policy);
    let fitted = trellis_ide::analyze(path, &root.text, &overlay, analysis.config());
    // Weights change only inside lines, so a finding keeps its line.
    let key = |a: &Analysis, d: &Diagnostic| {
        let placed = a.placed(d);
        (d.code, placed.path, placed.line)
    };
    let before: HashSet<_> = analysis
        .diagnostics
        .iter()
        .map(|d| key(analysis, d))
        .collect();
    let new_findings = fitted
        .diagnostics
        .iter()
        .filter(|d| !before.contains(&key(&fitted, d)))
        .map(|d| fitted.placed(d))
        .collect();
    let outcomes = |a: &Analysis| -> Option<Vec<(String, String, bool)>> {
        let tests = test_run::selected(a, Selection::All);
        if tests.is_empty() {
            return Some(Vec::new());
        }
        let ran = test_run::run(a, tests, RunOptions::default(), &|| false).ok()??;
        Some(
            ran.tests
                .iter()
                .flat_map(|t| {
                    t.test.cases.iter().zip(&t.cases).map(|(case, outcome)| {
                        (t.test.name.clone(), case.to_string(), outcome.passed())
                    })
                })
                .collect(),
        )
    };
    let broken = match (outcomes(analysis), outcomes(&fitted)) {
        (Some(old), Some(new)) => old
            .into_iter()
            .zip(new)
            .filter(|(o, n)| o.2 && !n.2)
            .map(|(o, _)| (o.0, o.1))
            .collect(),
        (Some(old), None) => old
            .into_iter()
            .filter(|o| o.2)
            .map(|o| (o.0, o.1))
            .collect(),
        (None, _) => Vec::new(),
    };
    (new_findings, broken)
}
