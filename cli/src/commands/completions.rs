//! `trellis completions`: a shell's completion script, generated from the
//! command line's own definitions.

use super::{Outcome, Ran};
use crate::shared::fail;
use clap_complete::Shell;

/// The full description shown by `trellis completions --help`.
pub const LONG_ABOUT: &str = "Print the completion script for a shell on standard output.\n\n\
    The script is generated from trellis's own argument definitions, so it \
    completes every command, option and option value of this version. \
    Install it where your shell looks for completions, for example:\n\n  \
    trellis completions bash > ~/.local/share/bash-completion/completions/trellis\n  \
    trellis completions zsh > ~/.zfunc/_trellis     # with fpath+=~/.zfunc in ~/.zshrc\n  \
    trellis completions fish > ~/.config/fish/completions/trellis.fish\n\n\
    Exit status: 0, or 2 when standard output cannot be written.";

/// Arguments of `trellis completions`.
#[derive(clap::Args, Debug, Clone)]
pub struct CompletionsArgs {
    /// The shell to complete for
    #[arg(value_enum, value_name = "SHELL")]
    pub shell: Shell,
}

/// Runs `trellis completions` for the command line `cli`.
pub fn run(args: &CompletionsArgs, mut cli: clap::Command) -> Ran {
    let mut script = Vec::new();
    clap_complete::generate(args.shell, &mut cli, "trellis", &mut script);
    write_stdout(&script)
}

/// Writes bytes to standard output, failing with status 2 when it cannot.
pub fn write_stdout(bytes: &[u8]) -> Ran {
    use std::io::Write;
    let mut out = std::io::stdout().lock();
    match out.write_all(bytes).and_then(|()| out.flush()) {
        Ok(()) => Ok(Outcome::Clean),
        Err(e) => Err(fail(
            format!("cannot write standard output: {e}"),
            Outcome::Failure,
        )),
    }
}
