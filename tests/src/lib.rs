//! Shared helpers for the acceptance tests.
