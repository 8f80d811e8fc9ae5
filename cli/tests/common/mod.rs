//! What every CLI test needs: running the built `trellis` binary.

use std::path::Path;
use std::process::Command;

/// What one run of `trellis` left behind.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `trellis <args>` in `dir`, as a user at a shell would (with
/// `NO_COLOR` unset so colour decisions are the program's own).
pub fn trellis(dir: &Path, args: &[&str]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_trellis"))
        .args(args)
        .current_dir(dir)
        .env_remove("NO_COLOR")
        .output()
        .expect("the trellis binary runs");
    Run {
        code: out
            .status
            .code()
            .expect("trellis exits normally, not by a signal"),
        stdout: String::from_utf8(out.stdout).expect("stdout is UTF-8"),
        stderr: String::from_utf8(out.stderr).expect("stderr is UTF-8"),
    }
}
