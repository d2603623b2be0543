//! Ctrl-C and SIGTERM, one handler for every command: a batch scheduler sends SIGTERM before it kills a job.
//!
//! Commands without durable work (`run`, `compare`, `fleet`, `search`, …)
//! stop at once with one line and exit 130. `experiment` declares its units
//! durable while they run ([`finish_units_on_stop`]): a signal then lets
//! the running units finish and be saved, starts no new one, and the
//! command exits 130 with a `--resume` hint. Both signals exit 130 because
//! the handler cannot tell them apart (the `ctrlc` crate reports SIGINT,
//! SIGTERM and SIGHUP alike) and a scheduler only needs to see "stopped".

use std::sync::atomic::{AtomicBool, Ordering};

/// Set while an experiment's units run: a signal stops new units instead of the process.
static DURABLE: AtomicBool = AtomicBool::new(false);
/// Set by a signal (or by a failed unit): start no new unit.
static STOP: AtomicBool = AtomicBool::new(false);

/// The exit code of a command stopped by Ctrl-C or SIGTERM.
pub const STOPPED: u8 = 130;

/// Install the handler once, at start-up. If it cannot be installed the
/// operating system's default applies (the process ends at once); finished
/// experiment units are on disk either way.
pub fn install() {
    let _ = ctrlc::set_handler(|| {
        if !DURABLE.load(Ordering::SeqCst) {
            crate::output::note!(
                "\nstopped by Ctrl-C or SIGTERM before the command finished; nothing more was written"
            );
            std::process::exit(i32::from(STOPPED));
        }
        if STOP.swap(true, Ordering::SeqCst) {
            crate::output::note!("\nstill finishing the running units; they will be saved");
        } else {
            crate::output::note!("\nCtrl-C or SIGTERM: finishing the running units, then stopping");
        }
    });
}

/// From now on a signal lets the running units finish instead of ending the process.
pub fn finish_units_on_stop() {
    DURABLE.store(true, Ordering::SeqCst);
}

/// Whether a signal (or [`request_stop`]) asked to start no new unit.
pub fn stopping() -> bool {
    STOP.load(Ordering::SeqCst)
}

/// Start no new unit (a unit failed).
pub fn request_stop() {
    STOP.store(true, Ordering::SeqCst);
}
