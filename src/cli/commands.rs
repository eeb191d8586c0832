//! The `map` and `compare` commands: the library's study, its files, and what it did
//! printed.

use std::path::{Path, PathBuf};

use crate::settings::Settings;

use super::ui::Ui;
use super::{print_json, run_fail};

/// `fluxpick map`: the placement map of a pickup over a survey probe.
#[allow(clippy::too_many_arguments)]
pub(super) fn map(
    ui: &Ui,
    settings: &Settings,
    survey: &Path,
    pickup: &Path,
    probe: Option<&str>,
    axis: f64,
    best: usize,
    out: &Path,
) -> Result<(), i32> {
    let m = crate::map::map(survey, pickup, probe, axis, settings).map_err(run_fail)?;
    crate::map::write_files(out, &m).map_err(run_fail)?;
    if ui.json {
        print_json(&m.record);
    }
    ui.out(&crate::map::summary(&m, best, out));
    Ok(())
}

/// `fluxpick compare`: the cases ranked side by side; exit 1 when any case failed.
pub(super) fn compare(
    ui: &Ui,
    settings: &Settings,
    cases: &[PathBuf],
    rank: &str,
    out: Option<&Path>,
) -> Result<(), i32> {
    let rec = crate::compare::compare(cases, rank, settings).map_err(run_fail)?;
    ui.out(&crate::compare::table(&rec));
    crate::say!(
        ui,
        "ranked by {rank}, highest first; masses in grams; R is winding + induced"
    );
    for r in rec.failed() {
        eprintln!("{}: failed: {}", r.file, r.error.as_deref().unwrap_or(""));
    }
    if ui.json {
        print_json(&rec);
    }
    if let Some(dir) = out {
        crate::compare::write_files(dir, &rec).map_err(run_fail)?;
        crate::say!(ui, "wrote {}/compare.md and compare.csv", dir.display());
    }
    if rec.failed().next().is_some() {
        Err(1)
    } else {
        Ok(())
    }
}
