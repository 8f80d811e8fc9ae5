//! What every CLI test needs: running the built `trellis` binary.

// Each test file uses only some of these.
#![allow(dead_code)]

use std::io::Write;
use std::path::Path;
use std::process::{Command, Stdio};

/// What one run of `trellis` left behind.
pub struct Run {
    pub code: i32,
    pub stdout: String,
    pub stderr: String,
}

/// Runs `trellis <args>` in `dir`, as a user at a shell would (with
/// `NO_COLOR` unset so colour decisions are the program's own).
pub fn trellis(dir: &Path, args: &[&str]) -> Run {
    trellis_with_env(dir, args, &[])
}

/// [`trellis`] with these environment variables set.
pub fn trellis_with_env(dir: &Path, args: &[&str], env: &[(&str, &str)]) -> Run {
    let out = Command::new(env!("CARGO_BIN_EXE_trellis"))
        .args(args)
        .current_dir(dir)
        .env_remove("NO_COLOR")
        .envs(env.iter().copied())
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

/// A small kiosk grammar in which "a day ticket" has two trees, worked by
/// hand: the article can belong to the ticket or to the request,
///   (Request (Ticket "a" (Kind "day") "ticket"))  1/2 · 1/2 · 1/3 = 1/12
///   (Request "a" (Ticket (Kind "day") "ticket"))  1/2 · 1/2 · 1/3 = 1/12
/// — a tie — while "a a day ticket" has the one tree
///   (Request "a" (Ticket "a" (Kind "day") "ticket"))  1/2 · 1/2 · 1/3 = 1/12.
pub const KIOSK: &str = r#"
start Request

Request {
  1/2  Ticket
  1/2  "a" Ticket
}

Ticket {
  1/2  Kind "ticket"
  1/2  "a" Kind "ticket"
}

Kind { "day" | "single" | "return" }
"#;

/// Runs `trellis <args>` in `dir` with `input` on standard input.
pub fn trellis_stdin(dir: &Path, args: &[&str], input: &str) -> (i32, String, String) {
    let mut child = Command::new(env!("CARGO_BIN_EXE_trellis"))
        .args(args)
        .current_dir(dir)
        .stdin(Stdio::piped())
        .stdout(Stdio::piped())
        .stderr(Stdio::piped())
        .spawn()
        .expect("the trellis binary runs");
    child
        .stdin
        .take()
        .unwrap()
        .write_all(input.as_bytes())
        .unwrap();
    let out = child.wait_with_output().unwrap();
    (
        out.status.code().unwrap(),
        String::from_utf8(out.stdout).unwrap(),
        String::from_utf8(out.stderr).unwrap(),
    )
}
