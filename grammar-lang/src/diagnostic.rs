//! Diagnostics: what the checks report, with stable codes and located spans.

use crate::source::FileId;
use crate::span::Span;
use std::fmt;

/// How serious a finding is.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum Severity {
    /// Shown as a hint; never fails a check run.
    Note,
    Warning,
    Error,
}

impl Severity {
    pub fn as_str(self) -> &'static str {
        match self {
            Severity::Note => "note",
            Severity::Warning => "warning",
            Severity::Error => "error",
        }
    }

    pub fn parse(s: &str) -> Option<Severity> {
        match s {
            "note" => Some(Severity::Note),
            "warning" => Some(Severity::Warning),
            "error" => Some(Severity::Error),
            _ => None,
        }
    }
}

impl fmt::Display for Severity {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

macro_rules! codes {
    ($( $variant:ident = $name:literal, $sev:ident, $desc:literal; )*) => {
        /// The stable code of every check. The string form is what users
        /// write in `trellis.toml` and what JSON output carries.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
        pub enum Code {
            $( #[doc = $desc] $variant, )*
        }

        impl Code {
            pub const ALL: &'static [Code] = &[ $( Code::$variant, )* ];

            pub fn as_str(self) -> &'static str {
                match self { $( Code::$variant => $name, )* }
            }

            /// The severity used when `trellis.toml` says nothing (for a
            /// code that is [off by default](Code::off_by_default), the
            /// severity it gets when turned on).
            pub fn default_severity(self) -> Severity {
                match self { $( Code::$variant => Severity::$sev, )* }
            }

            /// What the code finds, in one sentence: shown by
            /// `trellis check --help` and in reports that describe their
            /// rules (SARIF).
            pub fn description(self) -> &'static str {
                match self { $( Code::$variant => $desc, )* }
            }

            pub fn parse(s: &str) -> Option<Code> {
                match s { $( $name => Some(Code::$variant), )* _ => None }
            }
        }
    };
}

codes! {
    Syntax = "syntax", Error,
        "Text the parser cannot read.";
    BadWeight = "bad-weight", Error,
        "A weight that is not a number, e.g. a division by zero.";
    SumNotOne = "sum-not-one", Error,
        "A block (not `relative`) whose probabilities do not add up to exactly 1.";
    ApproximateSum = "approximate-sum", Note,
        "A block whose exact sum is too large to compute (more than 65,536 bits): its sum is checked, and its probabilities resolved, in floating point.";
    NoMassLeft = "no-mass-left", Error,
        "Unweighted alternatives in a block whose weighted ones already use all the mass.";
    AllZero = "all-zero", Error,
        "A `relative` block whose weights are all 0: there is nothing to divide by, so none of its rules can be used.";
    ZeroWeight = "zero-weight", Warning,
        "A rule with weight 0, which can never be used.";
    NegativeWeight = "negative-weight", Error,
        "A rule with a negative weight.";
    EmptyRule = "empty-rule", Error,
        "An empty alternative or an empty terminal (epsilon rules are not supported).";
    Undefined = "undefined", Error,
        "A symbol used but never given a block.";
    DuplicateBlock = "duplicate-block", Error,
        "Two blocks for one symbol.";
    DuplicateRule = "duplicate-rule", Warning,
        "The same right-hand side twice in one block.";
    DuplicateDeclaration = "duplicate-declaration", Error,
        "`grammar` or `start` declared more than once.";
    NoStart = "no-start", Error,
        "Test blocks but no `start` declaration to parse them from.";
    UnknownStart = "unknown-start", Error,
        "`start` names a symbol that has no block.";
    Unreachable = "unreachable", Warning,
        "A block that no derivation from the start symbol uses.";
    Unproductive = "unproductive", Error,
        "A symbol that derives no string of words.";
    UnaryCycle = "unary-cycle", Warning,
        "A cycle of unary rules A → B → … → A (an error when its probability product is 1).";
    Arity = "arity", Warning,
        "A right-hand side longer than the configured `max-arity`.";
    TerminalSpacing = "terminal-spacing", Warning,
        "A terminal with whitespace at its ends, doubled, or other than single spaces between its words.";
    UnknownWord = "unknown-word", Warning,
        "A word of a test sentence or expected tree that no terminal of the grammar contains (a note in `reject` cases).";
    UseMissing = "use-missing", Error,
        "A `use` of a file that cannot be read.";
    UseCycle = "use-cycle", Error,
        "Files that `use` each other in a circle.";
    Config = "config", Error,
        "An unknown key or value in `trellis.toml`.";
    Leaky = "leaky", Warning,
        "The start symbol's derivations end with probability below 1: mass leaks into derivations that never end.";
    Uncovered = "uncovered", Note,
        "A rule that the most probable tree of no passing test case uses (from running the tests; shown by the editor when `trellis.toml` turns it on).";
}

impl Code {
    /// Whether `trellis check` can report the code. `uncovered` comes from
    /// running a grammar's tests, not from checking it.
    pub fn is_check(self) -> bool {
        self != Code::Uncovered
    }

    /// Whether the code is silent unless `trellis.toml` turns it on.
    pub fn off_by_default(self) -> bool {
        self == Code::Uncovered
    }
}

impl fmt::Display for Code {
    fn fmt(&self, f: &mut fmt::Formatter<'_>) -> fmt::Result {
        f.write_str(self.as_str())
    }
}

/// A place in a file.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub struct Location {
    pub file: FileId,
    pub span: Span,
}

impl Location {
    pub fn new(file: FileId, span: Span) -> Self {
        Location { file, span }
    }
}

/// A secondary place that explains a diagnostic.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Related {
    pub location: Location,
    pub message: String,
}

/// One finding of a check.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct Diagnostic {
    pub code: Code,
    pub severity: Severity,
    pub location: Location,
    pub message: String,
    /// Short text for the label under the primary span.
    pub label: Option<String>,
    pub related: Vec<Related>,
    /// What the user can do about it.
    pub help: Option<String>,
    /// Text that likely fixes the finding when it replaces the text at
    /// `location` (the known name a misspelt one is closest to).
    pub suggestion: Option<String>,
}

impl Diagnostic {
    /// A diagnostic with the code's default severity.
    pub fn new(code: Code, location: Location, message: impl Into<String>) -> Self {
        Diagnostic {
            code,
            severity: code.default_severity(),
            location,
            message: message.into(),
            label: None,
            related: Vec::new(),
            help: None,
            suggestion: None,
        }
    }

    pub fn with_label(mut self, label: impl Into<String>) -> Self {
        self.label = Some(label.into());
        self
    }

    pub fn with_related(mut self, location: Location, message: impl Into<String>) -> Self {
        self.related.push(Related {
            location,
            message: message.into(),
        });
        self
    }

    pub fn with_help(mut self, help: impl Into<String>) -> Self {
        self.help = Some(help.into());
        self
    }

    /// Sets [`Diagnostic::suggestion`].
    pub fn with_suggestion(mut self, suggestion: Option<impl Into<String>>) -> Self {
        self.suggestion = suggestion.map(Into::into);
        self
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn code_names_round_trip() {
        for &code in Code::ALL {
            assert_eq!(Code::parse(code.as_str()), Some(code));
        }
        assert_eq!(Code::parse("no-such-check"), None);
    }

    #[test]
    fn every_code_has_a_one_line_description() {
        for &code in Code::ALL {
            let d = code.description();
            assert!(!d.is_empty() && !d.contains('\n'), "{code}: {d:?}");
            assert!(d.ends_with('.'), "{code}: {d:?}");
        }
    }
}
