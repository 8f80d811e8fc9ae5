//! `trellis man`: the manual page, generated from the command line's own
//! definitions.

use super::completions::write_stdout;
use super::{Outcome, Ran};
use crate::output::{emit, Stream};
use crate::shared::fail;
use std::path::PathBuf;

/// The full description shown by `trellis man --help`.
pub const LONG_ABOUT: &str = "Print trellis's manual page (roff) on standard output.\n\n\
    The page is generated from trellis's own argument definitions and help \
    texts. Read it with `trellis man | man -l -`, or install it:\n\n  \
    trellis man > ~/.local/share/man/man1/trellis.1\n\n\
    With --dir, one page per command is written into the directory instead \
    (trellis.1, trellis-check.1, trellis-test.1, …):\n\n  \
    trellis man --dir ~/.local/share/man/man1\n\n\
    Exit status: 0, or 2 when a page cannot be written.";

/// Arguments of `trellis man`.
#[derive(clap::Args, Debug, Clone)]
pub struct ManArgs {
    /// Write one page per command into this directory (created if missing)
    /// instead of printing the main page
    #[arg(long, value_name = "DIR")]
    pub dir: Option<PathBuf>,
}

/// Runs `trellis man` for the command line `cli`.
pub fn run(args: &ManArgs, cli: clap::Command) -> Ran {
    let Some(dir) = &args.dir else {
        let mut page = Vec::new();
        if let Err(e) = clap_mangen::Man::new(cli).render(&mut page) {
            return Err(fail(
                format!("cannot render the manual page: {e}"),
                Outcome::Failure,
            ));
        }
        return write_stdout(&page);
    };
    let written = std::fs::create_dir_all(dir).and_then(|()| clap_mangen::generate_to(cli, dir));
    if let Err(e) = written {
        return Err(fail(
            format!("cannot write the manual pages into {}: {e}", dir.display()),
            Outcome::Failure,
        ));
    }
    emit(
        Stream::Stderr,
        &format!("wrote the manual pages into {}\n", dir.display()),
    );
    Ok(Outcome::Clean)
}
