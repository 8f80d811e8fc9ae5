//! The real `trellis` program, for tests that drive it as a process.

use serde_json::Value;
use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

/// The workspace root.
pub fn repo() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR"))
        .parent()
        .expect("the lsp crate is in the workspace")
        .to_path_buf()
}

/// Builds the `trellis` binary (a no-op when it is up to date) and returns
/// its path, as cargo reports it.
pub fn trellis_binary() -> PathBuf {
    let out = Command::new(env!("CARGO"))
        .args([
            "build",
            "--quiet",
            "-p",
            "trellis-cli",
            "--bin",
            "trellis",
            "--message-format=json",
        ])
        .current_dir(repo())
        .stderr(Stdio::inherit())
        .output()
        .expect("cargo runs");
    assert!(out.status.success(), "building trellis failed");
    String::from_utf8_lossy(&out.stdout)
        .lines()
        .filter_map(|line| serde_json::from_str::<Value>(line).ok())
        .filter(|m| m["reason"] == "compiler-artifact" && m["target"]["name"] == "trellis")
        .find_map(|m| m["executable"].as_str().map(PathBuf::from))
        .expect("cargo names the trellis executable")
}
