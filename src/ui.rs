//! Terminal conventions shared by every command: how much to print (`--quiet`, `--verbose`),
//! whether standard output is reserved for JSON (`--json`), and whether to colour (only on a
//! terminal, never when `NO_COLOR` is set: <https://no-color.org>).
//!
//! Human-readable reports go through [`say!`](crate::say) (standard output, silenced by
//! `--quiet` and `--json`); progress through [`note!`](crate::note) (standard error, shown
//! with `--verbose`); warnings through [`warn`] (standard error, silenced by `--quiet`).
//! Errors are always printed.

use std::io::IsTerminal;
use std::sync::atomic::{AtomicBool, AtomicU8, Ordering};

static LEVEL: AtomicU8 = AtomicU8::new(1);
static JSON: AtomicBool = AtomicBool::new(false);

/// How much a command prints besides errors.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    Quiet,
    Normal,
    Verbose,
}

/// Sets the level for the rest of the process (the CLI calls it once).
pub fn set_level(l: Level) {
    LEVEL.store(l as u8, Ordering::Relaxed);
}

/// Reserves standard output for one JSON document (the CLI calls it for `--json`).
pub fn set_json(on: bool) {
    JSON.store(on, Ordering::Relaxed);
}

pub fn quiet() -> bool {
    LEVEL.load(Ordering::Relaxed) == Level::Quiet as u8
}

pub fn verbose() -> bool {
    LEVEL.load(Ordering::Relaxed) == Level::Verbose as u8
}

/// Whether standard output is for JSON only.
pub fn json() -> bool {
    JSON.load(Ordering::Relaxed)
}

/// Whether human-readable reports go to standard output.
pub fn human() -> bool {
    !quiet() && !json()
}

/// Whether `NO_COLOR` asks for no colour (set and not empty).
pub fn no_color_env() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

/// Whether to colour what goes to standard error.
pub fn colour_stderr() -> bool {
    !no_color_env() && std::io::stderr().is_terminal()
}

/// Prints a line on standard output unless `--quiet` or `--json`.
#[macro_export]
macro_rules! say {
    ($($t:tt)*) => {
        if $crate::ui::human() {
            println!($($t)*);
        }
    };
}

/// Prints a progress line on standard error with `--verbose`.
#[macro_export]
macro_rules! note {
    ($($t:tt)*) => {
        if $crate::ui::verbose() {
            eprintln!("{}", format_args!($($t)*));
        }
    };
}

/// Prints text on standard output unless `--quiet` or `--json` (no newline added).
pub fn out(text: &str) {
    if human() {
        print!("{text}");
    }
}

/// Prints a warning about `file` on standard error (yellow on a terminal) unless `--quiet`.
pub fn warn(file: &str, w: &crate::lint::Warning) {
    if quiet() {
        return;
    }
    let head = if colour_stderr() {
        "\x1b[1;33mwarning\x1b[0m"
    } else {
        "warning"
    };
    eprintln!("{head}: {file}: {w}");
}

/// Sets up `miette`'s error rendering: colour only when [`colour_stderr`].
pub fn init_error_rendering() {
    let colour = colour_stderr();
    let _ = miette::set_hook(Box::new(move |_| {
        Box::new(miette::MietteHandlerOpts::new().color(colour).build())
    }));
}
