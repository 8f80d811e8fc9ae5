//! The trellis extension for Zed: tells Zed how to start the language
//! server. Highlighting, brackets, indentation and the outline come from
//! the tree-sitter grammar and the queries in `languages/trellis/`.
//!
//! The server is `trellis lsp`, found as Zed's settings say
//! (`lsp.trellis.binary.path` and `.arguments`), else on the worktree
//! shell's `PATH`.

use zed_extension_api::{self as zed, settings::LspSettings, LanguageServerId, Result};

/// Where to find trellis when it is not installed.
const INSTALL: &str = "install it with `cargo install --path cli` from the trellis repository, \
or set `lsp.trellis.binary.path` in Zed's settings";

struct Trellis;

impl zed::Extension for Trellis {
    fn new() -> Self {
        Trellis
    }

    fn language_server_command(
        &mut self,
        _language_server_id: &LanguageServerId,
        worktree: &zed::Worktree,
    ) -> Result<zed::Command> {
        let binary = LspSettings::for_worktree("trellis", worktree)
            .ok()
            .and_then(|settings| settings.binary);
        let args = binary
            .as_ref()
            .and_then(|b| b.arguments.clone())
            .unwrap_or_else(|| vec!["lsp".to_string()]);
        let command = match binary.and_then(|b| b.path) {
            Some(path) => path,
            None => worktree
                .which("trellis")
                .ok_or_else(|| format!("`trellis` is not on PATH: {INSTALL}"))?,
        };
        Ok(zed::Command {
            command,
            args,
            env: worktree.shell_env(),
        })
    }
}

zed::register_extension!(Trellis);
