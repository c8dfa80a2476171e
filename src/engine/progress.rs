//! Progress of long runs and the request to stop: two process-wide counters the engine updates
//! once per chunk (they never change a result) and the command line reads.

use std::sync::atomic::{AtomicBool, AtomicU64, Ordering};

static TRIALS_DONE: AtomicU64 = AtomicU64::new(0);
static INTERRUPTED: AtomicBool = AtomicBool::new(false);

/// Trials made so far in this process.
pub(crate) fn trials_done() -> u64 {
    TRIALS_DONE.load(Ordering::Relaxed)
}

/// Count trials made.
pub(crate) fn add(trials: u64) {
    TRIALS_DONE.fetch_add(trials, Ordering::Relaxed);
}

/// Ask every running chunk loop to stop (from a Ctrl-C handler).
pub fn interrupt() {
    INTERRUPTED.store(true, Ordering::SeqCst);
}

/// Whether a stop was asked for.
pub fn interrupted() -> bool {
    INTERRUPTED.load(Ordering::Relaxed)
}
