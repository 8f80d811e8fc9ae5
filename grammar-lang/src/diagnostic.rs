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
    ($( $(#[$doc:meta])* $variant:ident = $name:literal, $sev:ident; )*) => {
        /// The stable code of every check. The string form is what users
        /// write in `trellis.toml` and what JSON output carries.
        #[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
        pub enum Code {
            $( $(#[$doc])* $variant, )*
        }

        impl Code {
            pub const ALL: &'static [Code] = &[ $( Code::$variant, )* ];

            pub fn as_str(self) -> &'static str {
                match self { $( Code::$variant => $name, )* }
            }

            /// The severity used when `trellis.toml` says nothing.
            pub fn default_severity(self) -> Severity {
                match self { $( Code::$variant => Severity::$sev, )* }
            }

            pub fn parse(s: &str) -> Option<Code> {
                match s { $( $name => Some(Code::$variant), )* _ => None }
            }
        }
    };
}

codes! {
    /// A token or construct the parser could not accept.
    Syntax = "syntax", Error;
    /// A weight that is written wrongly (e.g. division by zero).
    BadWeight = "bad-weight", Error;
    /// A non-`relative` block whose probabilities do not add up to exactly 1.
    SumNotOne = "sum-not-one", Error;
    /// Unweighted alternatives in a block whose weighted ones use all the mass.
    NoMassLeft = "no-mass-left", Error;
    /// A rule with weight 0: it can never be used.
    ZeroWeight = "zero-weight", Warning;
    /// A rule with a negative weight.
    NegativeWeight = "negative-weight", Error;
    /// An empty alternative or an empty terminal: epsilon rules are not supported.
    EmptyRule = "empty-rule", Error;
    /// A non-terminal used but never given a block.
    Undefined = "undefined", Error;
    /// Two blocks for one non-terminal.
    DuplicateBlock = "duplicate-block", Error;
    /// The same right-hand side twice in one block.
    DuplicateRule = "duplicate-rule", Warning;
    /// `grammar` or `start` declared more than once.
    DuplicateDeclaration = "duplicate-declaration", Error;
    /// No `start` declaration anywhere in the grammar.
    NoStart = "no-start", Error;
    /// `start` names a symbol that has no block.
    UnknownStart = "unknown-start", Error;
    /// A block that cannot be reached from the start symbol.
    Unreachable = "unreachable", Warning;
    /// A non-terminal that derives no string of terminals.
    Unproductive = "unproductive", Error;
    /// A cycle of unary rules A → B → … → A.
    UnaryCycle = "unary-cycle", Warning;
    /// A rule longer than the configured maximum arity.
    Arity = "arity", Warning;
    /// `use` of a file that cannot be read.
    UseMissing = "use-missing", Error;
    /// `use` that leads back to a file already being used.
    UseCycle = "use-cycle", Error;
    /// An unknown key or value in `trellis.toml`.
    Config = "config", Error;
    /// The start symbol's derivations end with probability below 1.
    Leaky = "leaky", Warning;
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
}
