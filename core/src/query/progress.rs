//! How far a long answer has got, and a way to stop it: shared between the thread answering and
//! the one watching (the window's progress bar and its Cancel button).

use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

use super::QueryError;

/// Work done out of work planned, and whether the watcher asked to stop. The planned total may grow
/// as the answer learns how much there is (a reach map learns its cells only after finding them).
#[derive(Debug, Default)]
pub struct Progress {
    done: AtomicUsize,
    total: AtomicUsize,
    cancelled: AtomicBool,
}

impl Progress {
    /// The share done, from 0 to 1 (0 until the work is planned).
    pub fn fraction(&self) -> f32 {
        let total = self.total.load(Ordering::Relaxed);
        if total == 0 {
            return 0.0;
        }
        (self.done.load(Ordering::Relaxed) as f32 / total as f32).min(1.0)
    }

    /// Asks the work to stop at its next step; it then ends with [`QueryError::Cancelled`].
    pub fn cancel(&self) {
        self.cancelled.store(true, Ordering::Relaxed);
    }

    /// True once [`Progress::cancel`] was called.
    pub fn is_cancelled(&self) -> bool {
        self.cancelled.load(Ordering::Relaxed)
    }

    /// Plans `total` steps of work in all.
    pub(crate) fn plan(&self, total: usize) {
        self.total.store(total, Ordering::Relaxed);
    }

    /// Counts one step done; an error when the work was cancelled.
    pub(crate) fn step(&self) -> Result<(), QueryError> {
        if self.is_cancelled() {
            return Err(QueryError::Cancelled);
        }
        self.done.fetch_add(1, Ordering::Relaxed);
        Ok(())
    }
}
