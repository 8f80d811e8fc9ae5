//! The probabilistic engine of trellis (see ARCHITECTURE.md).

pub(crate) mod chart;
pub mod compile;
pub mod count;
pub mod explain;
pub(crate) mod inside;
pub(crate) mod kbest;
pub mod parser;
pub(crate) mod viterbi;

pub use parser::{ParseOptions, ParseOutcome, Parser};
