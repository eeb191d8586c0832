//! Process-wide run settings from the CLI's global options: the worker threads, the resource
//! limits ([`crate::limits`]), and progress display on a terminal.

use std::io::IsTerminal;
use std::time::Duration;

/// Applies `--threads`, `--max-triangles` and `--max-memory`: checks them, builds the global
/// thread pool (the assembly, the factorisation and a sweep's points all run on it) and sets
/// the limits. Exit status 2 for an unusable value, 1 when the threads cannot start.
pub fn settings_from_cli(
    threads: Option<usize>,
    max_triangles: Option<u64>,
    max_memory_gb: Option<f64>,
) -> Result<(), i32> {
    if threads == Some(0) {
        eprintln!("error: --threads 0: give at least 1 (or leave it out to use every core)");
        return Err(2);
    }
    if max_triangles == Some(0) {
        eprintln!("error: --max-triangles 0: give at least 1");
        return Err(2);
    }
    if let Some(g) = max_memory_gb {
        if !(g.is_finite() && g > 0.0) {
            eprintln!("error: --max-memory {g}: give a positive number of GB, e.g. --max-memory 4");
            return Err(2);
        }
    }
    if let Some(n) = threads {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| {
                eprintln!("error: cannot start the worker threads: {e}");
                1
            })?;
    }
    crate::limits::configure(max_triangles, max_memory_gb);
    Ok(())
}

/// A spinner with the elapsed time on standard error while a long step runs, on a terminal
/// only (never in pipes, files or tests). Cleared when dropped.
pub fn spinner(what: &str) -> Option<Spinner> {
    if !std::io::stderr().is_terminal() {
        return None;
    }
    let b = indicatif::ProgressBar::new_spinner();
    b.set_style(
        indicatif::ProgressStyle::with_template("{spinner} {msg} {elapsed}")
            .unwrap_or_else(|_| indicatif::ProgressStyle::default_spinner()),
    );
    b.set_message(what.to_string());
    b.enable_steady_tick(Duration::from_millis(200));
    Some(Spinner(b))
}

/// See [`spinner`].
pub struct Spinner(indicatif::ProgressBar);

impl Drop for Spinner {
    fn drop(&mut self) {
        self.0.finish_and_clear();
    }
}
