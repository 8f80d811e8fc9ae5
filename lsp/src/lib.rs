//! The trellis language server (arrives with its own issue).
