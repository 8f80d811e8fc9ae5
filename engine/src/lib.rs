//! The probabilistic engine of trellis (see ARCHITECTURE.md).

pub mod beam;
pub(crate) mod chart;
pub mod compile;
pub mod consistency;
pub mod count;
pub mod exact;
pub mod explain;
pub(crate) mod inside;
pub(crate) mod kbest;
pub mod numbers;
pub mod parser;
pub mod rng;
pub mod sample;
pub mod testing;
pub(crate) mod viterbi;

mod linalg;
mod prob_model;
mod recycle;

pub use parser::{ParseOptions, ParseOutcome, Parser};
