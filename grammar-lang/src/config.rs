//! Configuration: the level of each check, the arity limit and the
//! formatter's line width.
//!
//! Reading it from a `trellis.toml` file (and finding that file) is the
//! project layer's job (`trellis-project`); the core only applies it.

use crate::diagnostic::{Code, Severity};
use std::collections::BTreeMap;

/// The default longest right-hand side accepted without an `arity` finding.
pub const DEFAULT_MAX_ARITY: usize = 8;

/// What a check should do: report at a severity, or stay silent.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    Off,
    At(Severity),
}

#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Config {
    pub levels: BTreeMap<Code, Level>,
    pub max_arity: usize,
    /// How the formatter lays out files (`[format]` in `trellis.toml`).
    pub format: crate::format::FormatOptions,
}

impl Default for Config {
    fn default() -> Self {
        Config {
            levels: BTreeMap::new(),
            max_arity: DEFAULT_MAX_ARITY,
            format: crate::format::FormatOptions::default(),
        }
    }
}

impl Config {
    /// The severity a diagnostic of `code` should get, or `None` if disabled
    /// (a code [off by default](Code::off_by_default) is disabled unless a
    /// level is set).
    pub fn level(&self, code: Code) -> Option<Severity> {
        match self.levels.get(&code) {
            Some(Level::Off) => None,
            Some(Level::At(sev)) => Some(*sev),
            None if code.off_by_default() => None,
            None => Some(code.default_severity()),
        }
    }

    /// The severity for a finding of `code` that a check emitted at
    /// `emitted`, or `None` if the check is off. A level set in
    /// `trellis.toml` wins; otherwise the check's own choice stands (some
    /// checks pick the severity per finding, e.g. `unary-cycle`).
    pub fn severity(&self, code: Code, emitted: Severity) -> Option<Severity> {
        match self.levels.get(&code) {
            Some(Level::Off) => None,
            Some(Level::At(sev)) => Some(*sev),
            None if code.off_by_default() => None,
            None => Some(emitted),
        }
    }
}
