//! Annotated trees: from a treebank to a grammar, and back.
//!
//! * `read.rs` — a streaming reader of labelled-bracket trees with located
//!   errors and resynchronisation after a malformed tree;
//! * `clean.rs` — the usual clean-up of treebank trees (function tags and
//!   indices, empty elements, unary chains of one label);
//! * `binarize.rs` — binarization, lossless or with horizontal and
//!   vertical markovization, under the naming scheme of `names.rs`, and
//!   its exact inverse;
//! * `fit.rs` — checking trees written in a grammar's own symbols against
//!   its rules and re-estimating its weights from them, with smoothing;
//! * `learn.rs` — counting rules over trees and writing the
//!   maximum-likelihood grammar in trellis's canonical layout.
//!
//! Pure: text arrives through `std::io::BufRead`; no files, no printing.

pub mod binarize;
pub mod clean;
pub mod eval;
pub mod fit;
pub mod learn;
pub mod names;
pub mod read;

pub use binarize::{binarize, debinarize, Markov};
pub use clean::{clean, clean_located, Cleaning};
pub use learn::{Counts, LearnOptions};
pub use read::{ReadError, TreeReader};
