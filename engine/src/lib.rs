//! The probabilistic engine of trellis (see ARCHITECTURE.md).
