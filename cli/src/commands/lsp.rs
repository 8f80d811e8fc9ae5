//! `trellis lsp`: run the language server over standard input and output.

use super::{Outcome, Ran};
use crate::shared::fail;

pub const LONG_ABOUT: &str = "Run the trellis language server, speaking the Language \
    Server Protocol on standard input and output. Editors start it themselves; \
    editors/README.md in the trellis repository shows how to set one up.\n\n\
    Exit status: 0 when the editor asked the server to shut down before it \
    exited, 1 when it exited (or closed the connection) without asking.";

/// Arguments of `trellis lsp`.
#[derive(clap::Args, Debug, Clone)]
pub struct LspArgs {
    /// Talk over standard input and output (the only transport, and the
    /// default; accepted because many editors pass it)
    #[arg(long)]
    pub stdio: bool,
}

pub fn run(_args: &LspArgs) -> Ran {
    let runtime = tokio::runtime::Builder::new_multi_thread()
        .enable_all()
        .build()
        .map_err(|e| {
            fail(
                format!("cannot start the language server: {e}"),
                Outcome::Failure,
            )
        })?;
    let ending = runtime.block_on(trellis_lsp::serve_stdio());
    // Analyses still running on the blocking pool are of no use to anyone
    // once the client has gone: do not wait for them.
    runtime.shutdown_background();
    // The LSP specification (3.17, "exit Notification"): status 0 when
    // `shutdown` came before `exit`, 1 otherwise.
    Ok(if ending.after_shutdown {
        Outcome::Clean
    } else {
        Outcome::Findings
    })
}
