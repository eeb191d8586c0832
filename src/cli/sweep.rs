//! The `sweep` and `merge` commands: a sweep solved with its journal (resumable after an
//! interruption), its files written, and what it did printed.

use std::path::Path;

use crate::case::{Case, RawCase, SourceInfo};
use crate::settings::Settings;
use crate::sweep;

use super::ui::Ui;

/// The `sweep` command: solves the points not yet in `DIR`'s journal (all of them without
/// `resume`), recording each as it finishes; then writes the outputs and removes the
/// journal. Interrupted (Ctrl-C, SIGTERM), it writes `sweep.csv` and `sweep.json` of the
/// finished points, keeps the journal and exits with status 130; `--resume` continues.
#[allow(clippy::too_many_arguments)]
pub(super) fn run_resumable(
    ui: &Ui,
    settings: &Settings,
    out: &Path,
    raw: &RawCase,
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
    resume: bool,
    plot: &[String],
) -> Result<(), i32> {
    use crate::sweep::journal::{Journal, Opened};
    let (journal, opened) = Journal::open(out, sweep::journal_header(src, case, shard), resume)
        .map_err(|e| {
            eprintln!("error: {e}");
            2
        })?;
    match opened {
        Opened::Fresh {
            discarded_earlier: true,
        } => eprintln!(
            "note: the unfinished sweep in {} was discarded (use --resume to continue one)",
            out.display()
        ),
        Opened::Fresh { .. } if resume => {
            eprintln!(
                "note: nothing to resume in {}: solving every point",
                out.display()
            )
        }
        Opened::Resumed { points, torn } => eprintln!(
            "resuming: {points} points already done{}",
            if torn > 0 {
                format!(" ({torn} damaged journal lines dropped)")
            } else {
                String::new()
            }
        ),
        Opened::Fresh { .. } => {}
    }
    crate::interrupt::set_graceful(true);
    let t0 = std::time::Instant::now();
    let bar = super::runtime::progress_bar(
        sweep::points(case)
            .iter()
            .filter(|p| sweep::in_shard(p.index, shard))
            .count()
            .saturating_sub(journal.done_indices().len()),
    );
    let done = || {
        if let Some(b) = &bar {
            b.inc(1);
        }
    };
    let result = sweep::run_sweep_journaled(raw, src, case, shard, settings, &journal, &done);
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    let (rec, complete) = result.map_err(|e| {
        eprintln!("error: {e}");
        1
    })?;
    let secs = t0.elapsed().as_secs_f64();
    if !complete {
        sweep::write_outputs(out, &rec, &[], "case units").map_err(|e| {
            eprintln!("error: {e}");
            1
        })?;
        eprintln!(
            "interrupted: {} points done, kept in {}/sweep.csv and sweep.json; continue with `fluxpick sweep {} --out {} --resume`",
            rec.points.len(),
            out.display(),
            src.name,
            out.display()
        );
        return Err(crate::interrupt::EXIT_INTERRUPTED);
    }
    let status = finish_sweep(ui, out, &rec, plot, secs);
    // the journal goes once sweep.json provably holds every point
    let written = std::fs::read_to_string(out.join("sweep.json"))
        .ok()
        .and_then(|t| serde_json::from_str::<sweep::SweepRecord>(&t).ok())
        .is_some_and(|r| r == rec);
    if written {
        if let Err(e) = journal.finish() {
            eprintln!("warning: {e}");
        }
    }
    status
}

/// Writes a sweep's files and prints what it did; exit 1 when any point failed.
pub(super) fn finish_sweep(
    ui: &Ui,
    out: &Path,
    rec: &crate::sweep::SweepRecord,
    plot: &[String],
    secs: f64,
) -> Result<(), i32> {
    let keys = if plot.is_empty() {
        crate::sweep::default_plot_keys(rec)
    } else {
        plot.to_vec()
    };
    let plots = crate::sweep::write_outputs(out, rec, &keys, "case units").map_err(|e| {
        eprintln!("error: {e}");
        1
    })?;
    let failed: Vec<&crate::sweep::PointResult> =
        rec.points.iter().filter(|p| p.error.is_some()).collect();
    if ui.json {
        super::print_json(rec);
    }
    if secs > 0.0 {
        crate::say!(
            ui,
            "{} points in {secs:.1} s ({:.2} points/s), {} failed",
            rec.points.len(),
            rec.points.len() as f64 / secs,
            failed.len()
        );
    } else {
        crate::say!(ui, "{} points, {} failed", rec.points.len(), failed.len());
    }
    crate::say!(
        ui,
        "wrote {}/sweep.csv, sweep.json and {} plots",
        out.display(),
        plots.len()
    );
    for c in crate::sweep::saturation_crossings(rec) {
        crate::say!(
            ui,
            "{} reaches {:.0} % at {} = {:.4}",
            c.figure,
            100.0 * c.level,
            c.parameter,
            c.value
        );
    }
    for p in &failed {
        eprintln!(
            "point {} ({:?}) failed: {}",
            p.index,
            p.parameters,
            p.error.as_deref().unwrap_or("")
        );
    }
    if failed.is_empty() {
        Ok(())
    } else {
        Err(1)
    }
}

/// `fluxpick sweep`: checks the arguments and the case, then solves with a journal.
pub(super) fn sweep_command(
    ui: &Ui,
    settings: &Settings,
    case: std::path::PathBuf,
    out: std::path::PathBuf,
    shard: Option<String>,
    plot: Vec<String>,
    resume: bool,
) -> Result<(), i32> {
    let shard = match shard.as_deref().map(|s| (s, super::parse_shard(s))) {
        None => None,
        Some((_, Some(k))) => Some(k),
        Some((s, None)) => {
            eprintln!("error: --shard {s}: write K/N with 1 <= K <= N, e.g. --shard 2/4");
            return Err(2);
        }
    };
    let (raw, text) = crate::case::load(&case).map_err(|e| {
        eprintln!("{:?}", miette::Report::new(e));
        2
    })?;
    let src = crate::case::SourceInfo::new(case.display().to_string(), text);
    let c = crate::case::resolve(&raw, &src, &Default::default()).map_err(|e| {
        eprintln!("{:?}", miette::Report::new(e));
        2
    })?;
    if c.sweeps.is_empty() {
        eprintln!(
            "error: {}: the case has no [[sweep]] entry; add one, e.g.\n  [[sweep]]\n  parameter = \"L\"\n  values = [50, 100, 150]",
            case.display()
        );
        return Err(2);
    }
    run_resumable(ui, settings, &out, &raw, &src, &c, shard, resume, &plot)
}

/// `fluxpick merge`: joins shards' sweep.json files into one sweep.
pub(super) fn merge(
    ui: &Ui,
    dirs: Vec<std::path::PathBuf>,
    out: std::path::PathBuf,
) -> Result<(), i32> {
    let mut recs = Vec::new();
    for d in &dirs {
        let p = d.join("sweep.json");
        let text = std::fs::read_to_string(&p).map_err(|e| {
            eprintln!("error: cannot read {}: {e}", p.display());
            2
        })?;
        let rec: crate::sweep::SweepRecord = serde_json::from_str(&text).map_err(|e| {
            eprintln!("error: {}: not a sweep record: {e}", p.display());
            2
        })?;
        recs.push(rec);
    }
    let rec = crate::sweep::merge(&recs).map_err(|e| {
        eprintln!("error: {e}");
        2
    })?;
    if rec.points.len() < rec.total_points {
        eprintln!(
            "note: {} of {} points present (shards missing?)",
            rec.points.len(),
            rec.total_points
        );
    }
    finish_sweep(ui, &out, &rec, &[], 0.0)
}
