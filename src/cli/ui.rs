//! Terminal conventions shared by every command: how much to print (`--quiet`, `--verbose`),
//! whether standard output is reserved for JSON (`--json`), and whether to colour (only on a
//! terminal, never when `NO_COLOR` is set: <https://no-color.org>).
//!
//! The choice is a value, [`Ui`], made once from the arguments and passed to every command.
//! Human-readable reports go through [`say!`](crate::say) (standard output, silenced by
//! `--quiet` and `--json`); progress through [`note!`](crate::note) (standard error, shown
//! with `--verbose`); warnings through [`Ui::warn`] (standard error, silenced by `--quiet`).
//! Errors are always printed.

use std::io::IsTerminal;

/// How much a command prints besides errors.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Level {
    Quiet,
    Normal,
    Verbose,
}

/// What the terminal gets.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub struct Ui {
    pub level: Level,
    /// Standard output is for one JSON document only.
    pub json: bool,
}

impl Ui {
    pub fn quiet(&self) -> bool {
        self.level == Level::Quiet
    }

    pub fn verbose(&self) -> bool {
        self.level == Level::Verbose
    }

    /// Whether human-readable reports go to standard output.
    pub fn human(&self) -> bool {
        !self.quiet() && !self.json
    }

    /// Prints text on standard output unless `--quiet` or `--json` (no newline added).
    pub fn out(&self, text: &str) {
        if self.human() {
            print!("{text}");
        }
    }

    /// Prints a warning about `file` on standard error (yellow on a terminal) unless
    /// `--quiet`.
    pub fn warn(&self, file: &str, w: &crate::lint::Warning) {
        if self.quiet() {
            return;
        }
        let head = if colour_stderr() {
            "\x1b[1;33mwarning\x1b[0m"
        } else {
            "warning"
        };
        eprintln!("{head}: {file}: {w}");
    }
}

/// Whether `NO_COLOR` asks for no colour (set and not empty).
pub fn no_color_env() -> bool {
    std::env::var_os("NO_COLOR").is_some_and(|v| !v.is_empty())
}

/// Whether to colour what goes to standard error.
pub fn colour_stderr() -> bool {
    !no_color_env() && std::io::stderr().is_terminal()
}

/// Prints a line on standard output unless `--quiet` or `--json`: `say!(ui, "...", ..)`.
#[macro_export]
macro_rules! say {
    ($ui:expr, $($t:tt)*) => {
        if $ui.human() {
            println!($($t)*);
        }
    };
}

/// Prints a progress line on standard error with `--verbose`: `note!(ui, "...", ..)`.
#[macro_export]
macro_rules! note {
    ($ui:expr, $($t:tt)*) => {
        if $ui.verbose() {
            eprintln!("{}", format_args!($($t)*));
        }
    };
}

/// Sets up `miette`'s error rendering: colour only when [`colour_stderr`].
pub fn init_error_rendering() {
    let colour = colour_stderr();
    let _ = miette::set_hook(Box::new(move |_| {
        Box::new(miette::MietteHandlerOpts::new().color(colour).build())
    }));
}
