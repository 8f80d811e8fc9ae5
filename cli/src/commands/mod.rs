//! The subcommands, one module each, and what they share: how a run ends
//! and how output is shaped.

pub mod check;
pub mod lsp;
pub mod parse;
pub mod sample;
pub mod stats;
pub mod test;

use std::io::IsTerminal;
use std::process::ExitCode;

/// How a command ended. The numeric values are the process exit status and
/// are part of the command line's contract.
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord)]
pub enum Outcome {
    /// Everything that was asked for was done and nothing is wrong.
    Clean = 0,
    /// The work was done and found problems in the user's grammars.
    Findings = 1,
    /// The work could not be done: bad arguments, unreadable input, bad config.
    Failure = 2,
}

impl Outcome {
    pub fn code(self) -> u8 {
        self as u8
    }
}

impl From<Outcome> for ExitCode {
    fn from(outcome: Outcome) -> ExitCode {
        ExitCode::from(outcome.code())
    }
}

/// How diagnostics are written.
#[derive(Clone, Copy, Debug, PartialEq, Eq, clap::ValueEnum)]
pub enum OutputFormat {
    /// Source snippets with underlined spans, for people.
    Human,
    /// One JSON object on stdout, for editors and scripts.
    Json,
}

/// Where output goes, which decides whether it may be coloured.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Stream {
    Stdout,
    Stderr,
}

/// Whether to colour output written to `stream`: only for a terminal, and
/// never when `NO_COLOR` is set to a non-empty value (the convention
/// published at https://no-color.org).
pub fn use_color(stream: Stream) -> bool {
    let terminal = match stream {
        Stream::Stdout => std::io::stdout().is_terminal(),
        Stream::Stderr => std::io::stderr().is_terminal(),
    };
    color_allowed(terminal, std::env::var_os("NO_COLOR").as_deref())
}

fn color_allowed(terminal: bool, no_color: Option<&std::ffi::OsStr>) -> bool {
    terminal && no_color.is_none_or(|v| v.is_empty())
}

/// Writes `text` to `stream`. A closed pipe (`trellis check | head`) is not
/// an error worth reporting, so write failures are ignored.
pub fn emit(stream: Stream, text: &str) {
    use std::io::Write;
    let _ = match stream {
        Stream::Stdout => {
            let mut out = std::io::stdout().lock();
            out.write_all(text.as_bytes()).and_then(|()| out.flush())
        }
        Stream::Stderr => {
            let mut err = std::io::stderr().lock();
            err.write_all(text.as_bytes()).and_then(|()| err.flush())
        }
    };
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::ffi::OsStr;

    #[test]
    fn exit_statuses_are_zero_one_two() {
        assert_eq!(Outcome::Clean.code(), 0);
        assert_eq!(Outcome::Findings.code(), 1);
        assert_eq!(Outcome::Failure.code(), 2);
        assert!(Outcome::Failure > Outcome::Findings && Outcome::Findings > Outcome::Clean);
    }

    #[test]
    fn colour_needs_a_terminal_and_no_non_empty_no_color() {
        // https://no-color.org: "when present and not an empty string".
        assert!(color_allowed(true, None));
        assert!(color_allowed(true, Some(OsStr::new(""))));
        assert!(!color_allowed(true, Some(OsStr::new("1"))));
        assert!(!color_allowed(false, None));
    }
}
