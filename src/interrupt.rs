//! Ctrl-C (SIGINT), SIGTERM and SIGHUP: stop cleanly, never leaving a half-written file.
//!
//! Every output goes through a temporary file and a rename (`fluxpick_postproc::atomic_write`),
//! so a file under its final name is always whole. On top of that:
//!
//! * by default the first signal ends the process at once with status
//!   [`EXIT_INTERRUPTED`], unless outputs are being written ([`WriteGuard`]): then it ends
//!   when the guard drops, after the last rename, so no temporary file is left either;
//! * in graceful mode ([`set_graceful`], used by sweeps) the first signal only raises a flag
//!   ([`cancelled`]): the sweep starts no new point, waits for the points in flight (each
//!   recorded in its journal), writes the outputs of the finished points and exits with
//!   [`EXIT_INTERRUPTED`]. A second signal ends the process at once (the journal holds every
//!   finished point; `--resume` continues from it).

use std::sync::atomic::{AtomicBool, AtomicUsize, Ordering};

/// Exit status after an interruption (128 + SIGINT, the shells' convention).
pub const EXIT_INTERRUPTED: i32 = 130;

static CANCELLED: AtomicBool = AtomicBool::new(false);
static GRACEFUL: AtomicBool = AtomicBool::new(false);
static WRITING: AtomicUsize = AtomicUsize::new(0);

fn on_signal() {
    let again = CANCELLED.swap(true, Ordering::SeqCst);
    if again {
        eprintln!("\ninterrupted again: stopping now");
        std::process::exit(EXIT_INTERRUPTED);
    }
    if GRACEFUL.load(Ordering::SeqCst) {
        eprintln!("\ninterrupted: finishing the points in progress (interrupt again to stop now)");
    } else if WRITING.load(Ordering::SeqCst) == 0 {
        eprintln!("\ninterrupted: nothing written");
        std::process::exit(EXIT_INTERRUPTED);
    } else {
        eprintln!("\ninterrupted: finishing the file being written");
    }
}

/// Installs the handler (once per process; later calls do nothing).
pub fn install() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        // a failure (another handler installed) leaves the default behaviour: the process
        // dies, and atomic writes still leave no half-written file
        let _ = ctrlc::set_handler(on_signal);
    });
}

/// Has an interruption been asked for?
pub fn cancelled() -> bool {
    CANCELLED.load(Ordering::SeqCst)
}

/// Graceful mode: a signal only raises the [`cancelled`] flag (see the module docs).
pub fn set_graceful(on: bool) {
    GRACEFUL.store(on, Ordering::SeqCst);
}

/// While alive, a signal waits for it to drop (outputs are being written); on drop, ends the
/// process with [`EXIT_INTERRUPTED`] if a signal came meanwhile (outside graceful mode).
pub struct WriteGuard(());

impl WriteGuard {
    #[allow(clippy::new_without_default)]
    pub fn new() -> Self {
        WRITING.fetch_add(1, Ordering::SeqCst);
        WriteGuard(())
    }
}

impl Drop for WriteGuard {
    fn drop(&mut self) {
        let left = WRITING.fetch_sub(1, Ordering::SeqCst) - 1;
        if left == 0 && cancelled() && !GRACEFUL.load(Ordering::SeqCst) {
            eprintln!("interrupted: stopped after writing");
            std::process::exit(EXIT_INTERRUPTED);
        }
    }
}
