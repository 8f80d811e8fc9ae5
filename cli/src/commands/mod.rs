//! The subcommands, one module each, and how a run ends.
//!
//! Every command's `run` returns [`Ran`]: the [`Outcome`] of the work, or a
//! [`Stop`] when it ended early (its reason already reported on stderr).
//! Only `main` turns either into the process exit status.

pub mod check;
pub mod completions;
pub mod eval;
pub mod fit;
pub mod fmt;
pub mod init;
pub mod learn;
pub mod lsp;
pub mod man;
pub mod parse;
pub mod sample;
pub mod stats;
pub mod test;

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

/// A command ended before its work was done, with this outcome; why has
/// been reported on stderr already.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Stop(pub Outcome);

/// What a command's `run` returns.
pub type Ran = Result<Outcome, Stop>;

/// The exit status of a finished or stopped command.
pub fn ended(ran: Ran) -> Outcome {
    match ran {
        Ok(outcome) | Err(Stop(outcome)) => outcome,
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn exit_statuses_are_zero_one_two() {
        assert_eq!(Outcome::Clean.code(), 0);
        assert_eq!(Outcome::Findings.code(), 1);
        assert_eq!(Outcome::Failure.code(), 2);
        assert!(Outcome::Failure > Outcome::Findings && Outcome::Findings > Outcome::Clean);
    }

    #[test]
    fn a_stop_ends_with_its_outcome() {
        assert_eq!(ended(Ok(Outcome::Clean)), Outcome::Clean);
        assert_eq!(ended(Err(Stop(Outcome::Failure))), Outcome::Failure);
    }
}
