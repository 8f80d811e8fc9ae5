//! The façade: one analysis of a grammar that answers everything the
//! shells ask about it.
//!
//! [`analyze`] runs the front end (`grammar_lang::analyze`: syntax, model,
//! static checks) and then the engine-backed checks (`leaky`), each finding
//! at the level the configuration gives it, so the command line, the
//! language server and the test runner see the same findings. The tables
//! the editor features need ([`IdeIndex`]) and the engine's numbers for
//! hover ([`EngineFacts`]) are computed on first use and kept beside it.

use crate::run::NotRunnable;
use crate::{EngineFacts, IdeIndex};
use grammar_lang::diagnostic::{Code, Diagnostic};
use grammar_lang::model::NtId;
use grammar_lang::source::{FileId, FileLoader};
use grammar_lang::Config;
use std::ops::Deref;
use std::path::Path;
use std::sync::OnceLock;

/// Everything known about one grammar: the front end's analysis (sources,
/// syntax, model, findings; reached through `Deref`) with the engine-backed
/// findings already among its diagnostics, and the editor features as
/// methods.
///
/// Cheap to share between threads: the lazily built tables are behind
/// `OnceLock`s.
#[derive(Debug)]
pub struct Analysis {
    core: grammar_lang::Analysis,
    config: Config,
    index: OnceLock<IdeIndex>,
    facts: OnceLock<Option<EngineFacts>>,
}

/// Analyses the grammar whose root file is `root` with text `text`, reading
/// `use`d files through `loader`: every static check and every
/// engine-backed check, at the levels `config` sets.
pub fn analyze(root: &Path, text: &str, loader: &dyn FileLoader, config: &Config) -> Analysis {
    let mut core = grammar_lang::analyze(root, text, loader, config);
    add_leak_finding(&mut core, config);
    Analysis {
        config: config.clone(),
        ..Analysis::from_core(core)
    }
}

/// [`analyze`] on one self-contained text (a `use` fails as missing) with
/// the default configuration: for tests and tools.
pub fn analyze_text(text: &str) -> Analysis {
    analyze(
        Path::new("grammar.trellis"),
        text,
        &grammar_lang::MemoryLoader::new(),
        &Config::default(),
    )
}

/// Adds the engine's `leaky` finding to a finished static analysis, at the
/// level the configuration gives it. Only grammars without errors are
/// measured (the numbers of a broken grammar would describe a grammar other
/// than the one meant), and not at all when `leaky` is off.
fn add_leak_finding(analysis: &mut grammar_lang::Analysis, config: &Config) {
    let Some(severity) = config.level(Code::Leaky) else {
        return;
    };
    if analysis.has_errors() {
        return;
    }
    let Some(mut finding) = trellis_engine::consistency::leak_finding(&analysis.grammar) else {
        return;
    };
    finding.severity = severity;
    insert_in_order(&mut analysis.diagnostics, finding);
}

/// Inserts `finding` where the front end's order (file, start, end, code)
/// puts it, after any finding with the same key.
fn insert_in_order(diagnostics: &mut Vec<Diagnostic>, finding: Diagnostic) {
    let key = |d: &Diagnostic| {
        (
            d.location.file,
            d.location.span.start,
            d.location.span.end,
            d.code,
        )
    };
    let at = diagnostics.partition_point(|d| key(d) <= key(&finding));
    diagnostics.insert(at, finding);
}

impl Deref for Analysis {
    type Target = grammar_lang::Analysis;

    fn deref(&self) -> &grammar_lang::Analysis {
        &self.core
    }
}

impl Analysis {
    /// Wraps a front-end analysis as it is (no engine-backed findings are
    /// added; the default configuration is recorded): for callers that ran
    /// `grammar_lang::analyze` themselves.
    pub fn from_core(core: grammar_lang::Analysis) -> Self {
        Analysis {
            core,
            config: Config::default(),
            index: OnceLock::new(),
            facts: OnceLock::new(),
        }
    }

    /// The front end's analysis.
    pub fn core(&self) -> &grammar_lang::Analysis {
        &self.core
    }

    /// The configuration the grammar was analysed with.
    pub fn config(&self) -> &Config {
        &self.config
    }

    /// The engine's `leaky` finding for a consistency report of this
    /// grammar (from any symbol, not only `start`), at the level the
    /// configuration sets; `None` when nothing leaks or `leaky` is off.
    pub fn leak_finding(
        &self,
        report: &trellis_engine::consistency::ConsistencyReport,
    ) -> Option<Diagnostic> {
        let severity = self.config.level(Code::Leaky)?;
        let mut finding =
            trellis_engine::consistency::leaky_diagnostic(&self.core.grammar, report)?;
        finding.severity = severity;
        Some(finding)
    }

    /// The tables the editor features share, built on first use.
    pub fn index(&self) -> &IdeIndex {
        self.index.get_or_init(|| IdeIndex::new(&self.core))
    }

    /// The engine's numbers for hover (termination probabilities, expected
    /// rule uses) over the weights a run from `start` uses, computed on
    /// first use; `None` when the grammar has errors (the numbers of a
    /// broken block would describe a grammar other than the one meant) or
    /// no start symbol.
    pub fn facts(&self) -> Option<&EngineFacts> {
        self.facts
            .get_or_init(|| {
                if self.core.has_errors() {
                    return None;
                }
                EngineFacts::compute(&self.run(None).ok()?)
            })
            .as_ref()
    }

    /// The symbol a derivation starts from: `from` when given (it must have
    /// a block), else the grammar's `start`.
    pub fn start_symbol(&self, from: Option<&str>) -> Result<NtId, NotRunnable> {
        let g = &self.core.grammar;
        match from {
            Some(name) => g
                .nt(name)
                .filter(|&a| g.nonterminal(a).is_defined())
                .ok_or_else(|| NotRunnable::NoSuchSymbol(name.to_string())),
            None => g.start.ok_or(NotRunnable::NoStart),
        }
    }

    /// Adds findings that come from beyond the analysis — from running the
    /// grammar's tests (`uncovered`, computed by the project layer) — so
    /// that they are reported with the others, in the same order.
    pub fn add_findings(&mut self, findings: Vec<Diagnostic>) {
        for finding in findings {
            insert_in_order(&mut self.core.diagnostics, finding);
        }
    }

    /// The findings located in `file`, in order.
    pub fn diagnostics_in(&self, file: FileId) -> impl Iterator<Item = &Diagnostic> {
        self.core
            .diagnostics
            .iter()
            .filter(move |d| d.location.file == file)
    }
}

impl EngineFacts {
    /// The engine's consistency analysis of a run's grammar (the weights a
    /// run uses), as the numbers hover shows.
    pub fn compute(run: &crate::Run<'_>) -> Option<EngineFacts> {
        let report = trellis_engine::consistency::analyze_from(run.grammar(), run.start()).ok()?;
        Some(EngineFacts {
            termination: report
                .symbols
                .iter()
                .map(|s| s.termination_probability)
                .collect(),
            rule_expected_uses: report
                .rule_expected_uses
                .iter()
                .map(|u| u.unwrap_or(f64::INFINITY))
                .collect(),
        })
    }
}
