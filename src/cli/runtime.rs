//! The run's settings from the CLI's global options, and progress display on a terminal.

use std::io::IsTerminal;
use std::time::Duration;

use crate::limits::Limits;
use crate::settings::Settings;

/// Checks `--threads`, `--max-triangles`, `--max-memory` and `--accuracy`, builds the global
/// thread pool (the assembly, the factorisation and a sweep's points all run on it) and
/// returns the settings every solve of the command gets. Exit status 2 for an unusable
/// value, 1 when the threads cannot start.
pub fn settings_from_cli(cli: &super::Cli) -> Result<Settings, i32> {
    if cli.threads == Some(0) {
        eprintln!("error: --threads 0: give at least 1 (or leave it out to use every core)");
        return Err(2);
    }
    if cli.max_triangles == Some(0) {
        eprintln!("error: --max-triangles 0: give at least 1");
        return Err(2);
    }
    if let Some(g) = cli.max_memory {
        if !(g.is_finite() && g > 0.0) {
            eprintln!("error: --max-memory {g}: give a positive number of GB, e.g. --max-memory 4");
            return Err(2);
        }
    }
    if let Some(n) = cli.threads {
        rayon::ThreadPoolBuilder::new()
            .num_threads(n)
            .build_global()
            .map_err(|e| {
                eprintln!("error: cannot start the worker threads: {e}");
                1
            })?;
    }
    if let Some(a) = cli.accuracy {
        if !(1e-6..=0.5).contains(&a) {
            eprintln!("error: --accuracy {a}: the target is a relative error between 1e-6 and 0.5\n  help: write e.g. --accuracy 0.005 for 0.5 %");
            return Err(2);
        }
    }
    Ok(Settings {
        accuracy: cli.accuracy,
        limits: Limits::new(cli.max_triangles, cli.max_memory),
    })
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

/// A bar of finished points on standard error, on a terminal only.
pub fn progress_bar(len: usize) -> Option<indicatif::ProgressBar> {
    if !std::io::stderr().is_terminal() {
        return None;
    }
    let b = indicatif::ProgressBar::new(len as u64);
    b.set_style(
        indicatif::ProgressStyle::with_template(
            "{bar:40} {pos}/{len} points, {elapsed} elapsed, about {eta} to go",
        )
        .unwrap_or_else(|_| indicatif::ProgressStyle::default_bar()),
    );
    Some(b)
}
