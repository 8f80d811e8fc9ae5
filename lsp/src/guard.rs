//! Running core work off the protocol loop, with panics caught.
//!
//! Every call into the core goes through [`run_blocking`]: the work runs on
//! tokio's blocking pool (so a long analysis never stalls message handling),
//! and a panic inside it becomes an `Err` with the panic's message instead of
//! taking the server down.

use std::any::Any;
use std::panic::{catch_unwind, AssertUnwindSafe};
use std::sync::atomic::{AtomicBool, Ordering};
use std::sync::Arc;

/// Why core work produced no result.
#[derive(Clone, Debug, PartialEq, Eq)]
pub enum Failure {
    /// The work panicked; the text is the panic message.
    Panicked(String),
    /// The work noticed that its request was cancelled and stopped.
    Cancelled,
}

impl std::fmt::Display for Failure {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        match self {
            Failure::Panicked(msg) => write!(f, "internal error (panic): {msg}"),
            Failure::Cancelled => f.write_str("cancelled"),
        }
    }
}

/// The message a panic payload carries, when it is a string.
pub fn panic_message(payload: &(dyn Any + Send)) -> String {
    if let Some(s) = payload.downcast_ref::<&str>() {
        (*s).to_string()
    } else if let Some(s) = payload.downcast_ref::<String>() {
        s.clone()
    } else {
        "a panic without a message".to_string()
    }
}

/// Runs `work` on the blocking pool and waits for it, catching panics.
pub async fn run_blocking<T, F>(work: F) -> Result<T, Failure>
where
    T: Send + 'static,
    F: FnOnce() -> T + Send + 'static,
{
    let joined = tokio::task::spawn_blocking(move || catch_unwind(AssertUnwindSafe(work))).await;
    match joined {
        Ok(Ok(value)) => Ok(value),
        Ok(Err(payload)) => Err(Failure::Panicked(panic_message(payload.as_ref()))),
        // The closure itself catches unwinding, so a join error means the
        // runtime is going away; report it the same way.
        Err(e) => Err(Failure::Panicked(e.to_string())),
    }
}

/// A flag that long core work checks between units of work (sentences,
/// samples). It is raised when the [`CancelOnDrop`] guard held by the request
/// future is dropped, which is what tower-lsp does on `$/cancelRequest`.
#[derive(Clone, Debug, Default)]
pub struct CancelFlag(Arc<AtomicBool>);

impl CancelFlag {
    pub fn is_cancelled(&self) -> bool {
        self.0.load(Ordering::Relaxed)
    }

    /// A guard that raises this flag when dropped.
    pub fn guard(&self) -> CancelOnDrop {
        CancelOnDrop(Some(self.clone()))
    }
}

/// Raises its [`CancelFlag`] when dropped, unless [`CancelOnDrop::disarm`]ed.
#[derive(Debug)]
pub struct CancelOnDrop(Option<CancelFlag>);

impl CancelOnDrop {
    /// The work finished normally: dropping the guard no longer cancels.
    pub fn disarm(mut self) {
        self.0 = None;
    }
}

impl Drop for CancelOnDrop {
    fn drop(&mut self) {
        if let Some(flag) = &self.0 {
            flag.0.store(true, Ordering::Relaxed);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[tokio::test]
    async fn a_panic_in_core_work_becomes_a_failure_with_its_message() {
        let result: Result<(), Failure> = run_blocking(|| panic!("rule table corrupted")).await;
        assert_eq!(
            result,
            Err(Failure::Panicked("rule table corrupted".to_string()))
        );
        // The pool still works afterwards.
        assert_eq!(run_blocking(|| 6 * 7).await, Ok(42));
    }

    #[test]
    fn dropping_the_guard_raises_the_flag_and_disarming_does_not() {
        let flag = CancelFlag::default();
        flag.guard().disarm();
        assert!(!flag.is_cancelled());
        drop(flag.guard());
        assert!(flag.is_cancelled());
    }
}
