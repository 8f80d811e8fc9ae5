//! # trellis-project — grammars on disk, for both shells
//!
//! What the command line and the language server both need and neither
//! may write for itself: reading grammar files (one loader, one wording of
//! every failure), finding and reading `trellis.toml` and noticing when it
//! changes, discovering grammars under directories, deciding which grammar
//! speaks for a file and reporting a finding shared by several grammars
//! once, formatting files and writing them back atomically, loading a
//! grammar through the analysis façade, and running test blocks with their
//! counts and the rules they cover.
//!
//! I/O is allowed here; protocol types (LSP) and terminal output are not:
//! every answer is data or a message for the shell to present.

pub mod cache;
pub mod config;
pub mod coverage;
pub mod discover;
pub mod evaluate;
pub mod files;
pub mod fit;
pub mod format;
pub mod grammars;
pub mod learn;
pub mod load;
pub mod test_run;

pub use cache::{FileCache, SyntaxCache};
pub use config::{ConfigProblem, EditorLimits, Resolver, Settings, Stamps};

pub use discover::{discover, identity, paths_or_here, Root};
pub use files::{read_file, read_text, write_atomic, DiskLoader, Overlay, ReadPolicy};
pub use format::{format_paths, options_for_dir, FormatRun, Formatted};
pub use grammars::{
    affected_by, analyse_paths, analyse_paths_with, grammar_roots, select, speakers, Analysed,
    Checked, Repeats,
};
pub use load::{load_grammar, LoadError};
