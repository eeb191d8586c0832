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
//!
//! SIGTERM is blocked in every thread and taken by a thread of its own with `sigwait`, not by
//! a handler: METIS (the ordering) installs its own process-wide SIGTERM handler while it
//! runs (GKlib's error trap, which long-jumps back into METIS), and a SIGTERM delivered then
//! crashed the process with a segmentation fault (seen in the SIGTERM test of
//! tests/robustness.rs). [`install`] must therefore run before any other thread starts, so
//! that every thread inherits the blocked mask.

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

/// Installs the handling (once per process; later calls do nothing). Call it before any
/// other thread starts (see the module docs).
pub fn install() {
    static ONCE: std::sync::Once = std::sync::Once::new();
    ONCE.call_once(|| {
        #[cfg(unix)]
        take_sigterm_in_a_thread();
        // a failure (another handler installed) leaves the default behaviour: the process
        // dies, and atomic writes still leave no half-written file
        let _ = ctrlc::set_handler(on_signal);
    });
}

/// Blocks SIGTERM in this thread (and so in every thread started after it) and waits for it
/// in a thread of its own, which then acts as the signal handler would.
#[cfg(unix)]
fn take_sigterm_in_a_thread() {
    // SAFETY: plain libc calls on a sigset_t owned here; pthread_sigmask changes only this
    // thread's mask, and sigwait only reads the set.
    let set = unsafe {
        let mut set: libc::sigset_t = std::mem::zeroed();
        libc::sigemptyset(&mut set);
        libc::sigaddset(&mut set, libc::SIGTERM);
        if libc::pthread_sigmask(libc::SIG_BLOCK, &set, std::ptr::null_mut()) != 0 {
            return;
        }
        set
    };
    let spawned = std::thread::Builder::new()
        .name("sigterm".into())
        .spawn(move || loop {
            let mut sig: libc::c_int = 0;
            // SAFETY: as above; `set` lives in this closure.
            if unsafe { libc::sigwait(&set, &mut sig) } == 0 {
                on_signal();
            }
        });
    if spawned.is_err() {
        // nobody would take it: unblock, and SIGTERM goes to the handler again
        // SAFETY: as above.
        unsafe {
            libc::pthread_sigmask(libc::SIG_UNBLOCK, &set, std::ptr::null_mut());
        }
    }
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
