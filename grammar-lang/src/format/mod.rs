//! The formatter: one canonical layout for `.trellis` text.
//!
//! It works on the lossless syntax (the token list and the tree with byte
//! spans), never on the semantic model, and only moves whitespace and line
//! breaks: every name, weight, terminal, comment and doc comment is written
//! exactly as the user wrote it. The only tokens it may drop are `|`
//! separators that become line breaks (or a leading or trailing `|` inside a
//! one-line block), which the language treats as layout. Text with syntax
//! errors is refused: [`format`] returns the errors instead.
//!
//! # Layout
//!
//! * Declarations stay in the order of the file (nothing is reordered, so
//!   no comment drifts away from what it annotates and `use` order is kept),
//!   one per line. `grammar`, `start` and `use` lines that follow each other
//!   stay together (a blank line between them is kept, never added); a block
//!   or `test` block is separated from its neighbours by exactly one blank
//!   line; runs of blank lines become one; the file ends with one newline.
//! * A block is `Name {` or `Name relative {`, then one alternative per
//!   line indented by two spaces, then `}` on its own line. A `|` at a line
//!   break is dropped. Weights form a column: each weight is left-aligned
//!   and padded to the widest weight of the block, followed by two spaces;
//!   an unweighted alternative starts at the indentation like a weight.
//! * A block written on one line whose alternatives are all single
//!   unweighted terminals stays on one line, `Kind { "return" | "single" }`,
//!   when that line (comments not counted) fits the width; otherwise it is
//!   laid out like any other block. An empty block is `Name {}`.
//! * A `test` block has one case per line, indented by two spaces, with
//!   single spaces between the parts (`accept "words" as (S (A "x") "y")`:
//!   no space just inside brackets). An expected tree written on several
//!   lines keeps its line breaks: each continuation line is indented one
//!   step (two spaces) more than the case per bracket open at its start,
//!   one step less when it starts with `)`; blank lines inside it are
//!   dropped and comments stay where they are.
//! * Comments: a comment at the end of a line stays at the end of that
//!   line (after the alternative, declaration or brace it followed), two
//!   spaces after the code; the trailing comments of a run of alternatives
//!   or cases not interrupted by a blank line or a comment line are aligned
//!   in one column. A comment on a line of its own stays on its own line, in
//!   the same place between the same neighbours, indented like them.
//!   Blank lines between comments and alternatives are kept (one at most),
//!   so a `##` doc comment documents exactly what it documented before; a
//!   blank line is never removed below a `##` line that documents nothing,
//!   and one is added there if the line below would otherwise start to be
//!   documented by it (a `##` above a line that starts with `|`).
//! * Trailing spaces are removed; the line ending (`\n` or `\r\n`) of the
//!   file's first line is used throughout; a byte-order mark is kept.
//! * The width (`FormatOptions::width`, `[format] width` in `trellis.toml`,
//!   default 100, counted in characters) only decides whether a one-line
//!   block stays on one line: alternatives, cases and trees are never
//!   broken across lines, so a long one stays long.

mod edits;
mod layout;

pub use edits::{changed_lines, minimal_edits, minimal_edits_in_range, LineChange};

use crate::diagnostic::Diagnostic;
use crate::source::FileId;
use crate::syntax::ast::{SyntaxError, SyntaxFile};

/// The default line width.
pub const DEFAULT_WIDTH: usize = 100;

/// How to format.
#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash)]
pub struct FormatOptions {
    /// The longest line (in characters) a block may take on one line.
    pub width: usize,
}

impl Default for FormatOptions {
    fn default() -> Self {
        FormatOptions {
            width: DEFAULT_WIDTH,
        }
    }
}

/// Why a text was not formatted: it has syntax errors.
#[derive(Clone, Debug, PartialEq, Eq)]
pub struct FormatError {
    /// Every syntax error, in order of position.
    pub errors: Vec<SyntaxError>,
}

impl FormatError {
    /// The errors as the diagnostics `check` reports for them, in `file`.
    pub fn diagnostics(&self, file: FileId) -> Vec<Diagnostic> {
        self.errors.iter().map(|e| e.to_diagnostic(file)).collect()
    }
}

impl std::fmt::Display for FormatError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let n = self.errors.len();
        write!(
            f,
            "not formatted: {n} syntax error{}",
            if n == 1 { "" } else { "s" }
        )
    }
}

impl std::error::Error for FormatError {}

/// Formats `text`, or returns its syntax errors.
pub fn format(text: &str, options: &FormatOptions) -> Result<String, FormatError> {
    let syntax = crate::syntax::parse(text);
    format_syntax(text, &syntax, options)
}

/// Formats `text` whose syntax (`crate::syntax::parse(text)`) is already
/// known, or returns its syntax errors.
pub fn format_syntax(
    text: &str,
    syntax: &SyntaxFile,
    options: &FormatOptions,
) -> Result<String, FormatError> {
    if !syntax.errors.is_empty() {
        return Err(FormatError {
            errors: syntax.errors.clone(),
        });
    }
    Ok(layout::layout(text, syntax, options))
}
