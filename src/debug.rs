//! The one switch for the library's diagnostic output: the selection's inner stages (price
//! updates, rounds, starts, nodes, windows) are written on stderr only when the command line
//! turned it on (`PAVESTRAT_DEBUG_SELECT=1`). Off by default, so library callers see nothing.

use std::sync::atomic::{AtomicBool, Ordering};

static ON: AtomicBool = AtomicBool::new(false);

/// Turn the diagnostic output on or off for the rest of the process.
pub fn enable(on: bool) {
    ON.store(on, Ordering::Relaxed);
}

/// Whether diagnostic output is on.
pub fn enabled() -> bool {
    ON.load(Ordering::Relaxed)
}
