//! Parameter studies: the points of a case's `[[sweep]]` entries (a grid over the swept
//! parameters; entries sharing a `group` move together), solved in parallel, written as
//! `sweep.csv`, `sweep.json` and SVG plots; shards of a sweep and their merging.
//!
//! Each point's figures are independent of the order and thread count they were solved on:
//! every solve is deterministic (reductions are collected in cell order) and the run times
//! (`solve.*_s`) are left out of the sweep's outputs.

use std::collections::BTreeMap;
use std::io::IsTerminal;
use std::path::Path;

use rayon::prelude::*;
use serde::{Deserialize, Serialize};

use crate::case::{resolve, Case, RawCase, SourceInfo};
use crate::study;
use fluxpick_postproc::atomic_write;

/// One point of a sweep: its index in the full grid and the parameter values.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Point {
    pub index: usize,
    pub parameters: BTreeMap<String, f64>,
}

/// What a point gave: its scalar figures by dotted key, or the error that stopped it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointResult {
    pub index: usize,
    pub parameters: BTreeMap<String, f64>,
    pub figures: Option<BTreeMap<String, f64>>,
    pub error: Option<String>,
}

/// The whole of a sweep (or of one shard of it), as written to `sweep.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SweepRecord {
    pub title: String,
    /// Swept parameters in file order.
    pub parameters: Vec<String>,
    /// Points in the full grid.
    pub total_points: usize,
    pub points: Vec<PointResult>,
}

/// Where a figure first reaches a level along a one-parameter sweep (linear interpolation
/// between neighbouring points), e.g. the source current at which a core's peak flux
/// density reaches 80 % of its saturation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Crossing {
    pub figure: String,
    pub level: f64,
    pub parameter: String,
    pub value: f64,
}

/// Saturation crossings of a sweep over one parameter (or one group, by its first
/// parameter): for every part with a saturation flux density, where its peak and its mean
/// |B| reach 80 % and 100 % of it.
pub fn saturation_crossings(rec: &SweepRecord) -> Vec<Crossing> {
    let Some(x) = rec.parameters.first() else {
        return vec![];
    };
    let mut pts: Vec<(f64, &BTreeMap<String, f64>)> = rec
        .points
        .iter()
        .filter_map(|p| Some((*p.parameters.get(x)?, p.figures.as_ref()?)))
        .collect();
    // one axis only: every point differs in x
    let mut xs: Vec<f64> = pts.iter().map(|p| p.0).collect();
    xs.sort_by(f64::total_cmp);
    xs.dedup();
    if xs.len() != pts.len() || pts.len() < 2 {
        return vec![];
    }
    pts.sort_by(|a, b| a.0.total_cmp(&b.0));
    let mut out = Vec::new();
    let parts: Vec<String> = pts[0]
        .1
        .keys()
        .filter_map(|k| k.strip_suffix(".b_sat_t").map(str::to_string))
        .collect();
    for part in parts {
        let sat = pts[0].1[&format!("{part}.b_sat_t")];
        for (fig, key) in [("b_peak", ".b_peak_t"), ("b_mean", ".b_mean_t")] {
            let series: Vec<(f64, f64)> = pts
                .iter()
                .filter_map(|(xv, f)| Some((*xv, f.get(&format!("{part}{key}"))? / sat)))
                .collect();
            for level in [0.8, 1.0] {
                if let Some(w) = series
                    .windows(2)
                    .find(|w| w[0].1 < level && w[1].1 >= level)
                {
                    let t = (level - w[0].1) / (w[1].1 - w[0].1);
                    out.push(Crossing {
                        figure: format!("{part}.{fig}_over_sat"),
                        level,
                        parameter: x.clone(),
                        value: w[0].0 + t * (w[1].0 - w[0].0),
                    });
                }
            }
        }
    }
    out
}

/// The axes of the grid: each a list of (parameter, values) moving together.
fn axes(case: &Case) -> Vec<Vec<(String, Vec<f64>)>> {
    let mut out: Vec<Vec<(String, Vec<f64>)>> = Vec::new();
    let mut group_axis: BTreeMap<String, usize> = BTreeMap::new();
    for s in &case.sweeps {
        match &s.group {
            Some(g) if group_axis.contains_key(g) => {
                out[group_axis[g]].push((s.parameter.clone(), s.values.clone()));
            }
            Some(g) => {
                group_axis.insert(g.clone(), out.len());
                out.push(vec![(s.parameter.clone(), s.values.clone())]);
            }
            None => out.push(vec![(s.parameter.clone(), s.values.clone())]),
        }
    }
    out
}

/// Every point of the grid, the first axis varying slowest.
pub fn points(case: &Case) -> Vec<Point> {
    let axes = axes(case);
    let sizes: Vec<usize> = axes.iter().map(|a| a[0].1.len()).collect();
    let total: usize = sizes.iter().product::<usize>().max(1);
    if axes.is_empty() {
        return vec![];
    }
    (0..total)
        .map(|index| {
            let mut rest = index;
            let mut k = vec![0; axes.len()];
            for a in (0..axes.len()).rev() {
                k[a] = rest % sizes[a];
                rest /= sizes[a];
            }
            let mut parameters = BTreeMap::new();
            for (a, axis) in axes.iter().enumerate() {
                for (name, values) in axis {
                    parameters.insert(name.clone(), values[k[a]]);
                }
            }
            Point { index, parameters }
        })
        .collect()
}

/// Scalar figures of a results record by dotted key (arrays and nulls left out, and the
/// run times, which differ from run to run).
pub fn flatten(results: &study::Results) -> BTreeMap<String, f64> {
    fn walk(prefix: &str, v: &serde_json::Value, out: &mut BTreeMap<String, f64>) {
        match v {
            serde_json::Value::Object(m) => {
                for (k, x) in m {
                    let key = if prefix.is_empty() {
                        k.clone()
                    } else {
                        format!("{prefix}.{k}")
                    };
                    walk(&key, x, out);
                }
            }
            serde_json::Value::Number(n) => {
                let timing = prefix.starts_with("solve.") && prefix.ends_with("_s");
                if let (Some(x), false) = (n.as_f64(), timing) {
                    out.insert(prefix.to_string(), x);
                }
            }
            _ => {}
        }
    }
    let mut out = BTreeMap::new();
    if let Ok(v) = serde_json::to_value(results) {
        walk("", &v, &mut out);
    }
    out
}

/// Which points a shard `k` of `n` (1-based) runs: every n-th, starting at the k-th.
pub fn in_shard(index: usize, shard: Option<(usize, usize)>) -> bool {
    match shard {
        None => true,
        Some((k, n)) => index % n == k - 1,
    }
}

/// Solves one point: resolve the case with the point's parameters, then run it.
fn solve_point(raw: &RawCase, src: &SourceInfo, p: &Point) -> PointResult {
    let outcome = resolve(raw, src, &p.parameters)
        .map_err(|e| e.render_plain())
        .and_then(|c| study::run(&c).map_err(|e| e.to_string()));
    match outcome {
        Ok(run) => PointResult {
            index: p.index,
            parameters: p.parameters.clone(),
            figures: Some(flatten(&run.results)),
            error: None,
        },
        Err(e) => PointResult {
            index: p.index,
            parameters: p.parameters.clone(),
            figures: None,
            error: Some(e),
        },
    }
}

fn progress_bar(progress: bool, len: usize) -> Option<indicatif::ProgressBar> {
    if !(progress && std::io::stderr().is_terminal()) {
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

/// Solves the points (of one shard, if given) in parallel. A point that fails is recorded
/// with its error; the others go on. `progress` shows a bar on standard error (on a
/// terminal only).
pub fn run_sweep(
    raw: &RawCase,
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
    progress: bool,
) -> SweepRecord {
    let all = points(case);
    let total_points = all.len();
    let todo: Vec<Point> = all
        .into_iter()
        .filter(|p| in_shard(p.index, shard))
        .collect();
    let bar = progress_bar(progress, todo.len());
    let mut results: Vec<PointResult> = todo
        .par_iter()
        .map(|p| {
            let r = solve_point(raw, src, p);
            if let Some(b) = &bar {
                b.inc(1);
            }
            r
        })
        .collect();
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    results.sort_by_key(|r| r.index);
    SweepRecord {
        title: case.title.clone(),
        parameters: case.sweeps.iter().map(|s| s.parameter.clone()).collect(),
        total_points,
        points: results,
    }
}

/// The journal header of a sweep of `case` (text `src`), for [`crate::journal::Journal`].
pub fn journal_header(
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
) -> crate::journal::Header {
    crate::journal::Header::new(
        &src.text,
        &case.title,
        case.sweeps.iter().map(|s| s.parameter.clone()).collect(),
        points(case).len(),
        shard,
    )
}

/// As [`run_sweep`], but each finished point is recorded in `journal` (appended and synced
/// at once) and the points the journal already holds are skipped. When an interruption is
/// asked for ([`crate::interrupt::cancelled`]) no new point starts; the points in flight
/// finish and are recorded. Returns the record of every finished point (sorted by index)
/// and whether it holds every point of the shard.
pub fn run_sweep_journaled(
    raw: &RawCase,
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
    progress: bool,
    journal: &crate::journal::Journal,
) -> Result<(SweepRecord, bool), String> {
    let done: std::collections::BTreeSet<usize> = journal.done_indices().into_iter().collect();
    let todo: Vec<Point> = points(case)
        .into_iter()
        .filter(|p| in_shard(p.index, shard) && !done.contains(&p.index))
        .collect();
    let bar = progress_bar(progress, todo.len());
    let failures: Vec<String> = todo
        .par_iter()
        .filter_map(|p| {
            if crate::interrupt::cancelled() {
                return None;
            }
            let r = solve_point(raw, src, p);
            if let Some(b) = &bar {
                b.inc(1);
            }
            journal.record(r).err()
        })
        .collect();
    if let Some(b) = bar {
        b.finish_and_clear();
    }
    if let Some(e) = failures.into_iter().next() {
        return Err(e);
    }
    let rec = journal.record_so_far();
    let expected = points(case)
        .iter()
        .filter(|p| in_shard(p.index, shard))
        .count();
    let complete = rec.points.len() == expected;
    Ok((rec, complete))
}

/// Joins the records of several shards of one sweep: points by index, each once.
pub fn merge(records: &[SweepRecord]) -> Result<SweepRecord, String> {
    let first = records.first().ok_or("nothing to merge")?;
    let mut points: BTreeMap<usize, PointResult> = BTreeMap::new();
    for r in records {
        if r.parameters != first.parameters || r.total_points != first.total_points {
            return Err(format!(
                "the shards are not of one sweep: parameters {:?} of {} points vs {:?} of {}",
                first.parameters, first.total_points, r.parameters, r.total_points
            ));
        }
        for p in &r.points {
            points.entry(p.index).or_insert_with(|| p.clone());
        }
    }
    Ok(SweepRecord {
        title: first.title.clone(),
        parameters: first.parameters.clone(),
        total_points: first.total_points,
        points: points.into_values().collect(),
    })
}

/// The figure columns of a record: every key any point has, sorted.
fn figure_keys(rec: &SweepRecord) -> Vec<String> {
    let mut keys: Vec<String> = rec
        .points
        .iter()
        .filter_map(|p| p.figures.as_ref())
        .flat_map(|f| f.keys().cloned())
        .collect();
    keys.sort();
    keys.dedup();
    keys
}

/// `sweep.csv`: one row per point, the parameters, then every figure by dotted key, then
/// `error` (empty when the point solved).
pub fn csv_text(rec: &SweepRecord) -> Result<String, String> {
    let keys = figure_keys(rec);
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header = vec!["point".to_string()];
    header.extend(rec.parameters.iter().cloned());
    header.extend(keys.iter().cloned());
    header.push("error".into());
    w.write_record(&header).map_err(|e| e.to_string())?;
    for p in &rec.points {
        let mut row = vec![p.index.to_string()];
        for name in &rec.parameters {
            row.push(
                p.parameters
                    .get(name)
                    .map_or(String::new(), |v| format!("{v}")),
            );
        }
        for k in &keys {
            row.push(
                p.figures
                    .as_ref()
                    .and_then(|f| f.get(k))
                    .map_or(String::new(), |v| format!("{v:e}")),
            );
        }
        row.push(p.error.clone().unwrap_or_default().replace('\n', " "));
        w.write_record(&row).map_err(|e| e.to_string())?;
    }
    let bytes = w.into_inner().map_err(|e| e.to_string())?;
    String::from_utf8(bytes).map_err(|e| e.to_string())
}

/// The figures plotted when the user names none: for each coil its EMF, inductance, Q and
/// matched power (those that exist), for each part its peak |B|.
pub fn default_plot_keys(rec: &SweepRecord) -> Vec<String> {
    let keys = figure_keys(rec);
    let wanted = [
        ".emf_v",
        ".equivalent_area_m2",
        ".inductance_h",
        ".q",
        ".matched_power_w",
        ".b_peak_t",
    ];
    keys.into_iter()
        .filter(|k| {
            (k.starts_with("coils.") || k.starts_with("parts."))
                && wanted.iter().any(|w| k.ends_with(w))
                && !k.ends_with("_phase_deg")
        })
        .collect()
}

/// Unit of a figure from its key's suffix, for axis labels.
fn unit_of(key: &str) -> &'static str {
    for (suffix, unit) in [
        ("_v", "V"),
        ("_h", "H"),
        ("_ohm", "Ω"),
        ("_w", "W"),
        ("_f", "F"),
        ("_t", "T"),
        ("_m2", "m²"),
        ("_m3", "m³"),
        ("_wb", "Wb"),
        ("_kg", "kg"),
        ("_j", "J"),
        ("_s", "s"),
        ("_deg", "°"),
    ] {
        if key.ends_with(suffix) {
            return unit;
        }
    }
    ""
}

/// An SVG plot of `key` against parameter `x`, one line per combination of the other
/// swept parameters. `x_unit` labels the parameter (the case's length unit, say).
pub fn plot_svg(rec: &SweepRecord, key: &str, x: &str, x_unit: &str) -> Result<String, String> {
    use plotters::prelude::*;
    let mut series: BTreeMap<String, Vec<(f64, f64)>> = BTreeMap::new();
    for p in &rec.points {
        let (Some(xv), Some(y)) = (
            p.parameters.get(x),
            p.figures.as_ref().and_then(|f| f.get(key)),
        ) else {
            continue;
        };
        let label = p
            .parameters
            .iter()
            .filter(|(k, _)| k.as_str() != x)
            .map(|(k, v)| format!("{k} = {v}"))
            .collect::<Vec<_>>()
            .join(", ");
        series.entry(label).or_default().push((*xv, *y));
    }
    if series.is_empty() {
        return Err(format!("no point has both `{x}` and `{key}`"));
    }
    let all: Vec<(f64, f64)> = series.values().flatten().copied().collect();
    let (mut x0, mut x1) = all.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |a, p| {
        (a.0.min(p.0), a.1.max(p.0))
    });
    let (mut y0, mut y1) = all.iter().fold((f64::INFINITY, f64::NEG_INFINITY), |a, p| {
        (a.0.min(p.1), a.1.max(p.1))
    });
    if x1 <= x0 {
        x0 -= 0.5;
        x1 += 0.5;
    }
    let pad = if y1 > y0 {
        0.05 * (y1 - y0)
    } else {
        0.05 * y0.abs().max(1e-30)
    };
    y0 -= pad;
    y1 += pad;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (720, 480)).into_drawing_area();
        root.fill(&WHITE).map_err(|e| e.to_string())?;
        let unit = unit_of(key);
        let mut chart = ChartBuilder::on(&root)
            .caption(format!("{key} against {x}"), ("sans-serif", 20))
            .margin(16)
            .x_label_area_size(40)
            .y_label_area_size(80)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(|e| e.to_string())?;
        chart
            .configure_mesh()
            .x_desc(if x_unit.is_empty() {
                x.to_string()
            } else {
                format!("{x} ({x_unit})")
            })
            .y_desc(if unit.is_empty() {
                key.to_string()
            } else {
                format!("{key} ({unit})")
            })
            .y_label_formatter(&|v| format!("{v:.3e}"))
            .light_line_style(RGBColor(238, 238, 238))
            .draw()
            .map_err(|e| e.to_string())?;
        let palette = [BLUE, RED, GREEN, MAGENTA, CYAN, BLACK];
        for (i, (label, mut pts)) in series.into_iter().enumerate() {
            pts.sort_by(|a, b| a.0.total_cmp(&b.0));
            let color = palette[i % palette.len()];
            let s = chart
                .draw_series(LineSeries::new(pts.clone(), color.stroke_width(2)))
                .map_err(|e| e.to_string())?;
            if !label.is_empty() {
                s.label(label).legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
                });
            }
            chart
                .draw_series(pts.iter().map(|p| Circle::new(*p, 3, color.filled())))
                .map_err(|e| e.to_string())?;
        }
        if rec.parameters.len() > 1 {
            chart
                .configure_series_labels()
                .background_style(WHITE.mix(0.8))
                .border_style(BLACK)
                .draw()
                .map_err(|e| e.to_string())?;
        }
        root.present().map_err(|e| e.to_string())?;
    }
    Ok(svg)
}

/// Writes `sweep.csv`, `sweep.json` and one SVG per (figure, parameter) into `dir`, each
/// through a temporary file and a rename. Returns the plot files written.
pub fn write_outputs(
    dir: &Path,
    rec: &SweepRecord,
    plot_keys: &[String],
    x_unit: &str,
) -> Result<Vec<String>, String> {
    std::fs::create_dir_all(dir).map_err(|e| format!("cannot create {}: {e}", dir.display()))?;
    let csv = csv_text(rec)?;
    atomic_write(&dir.join("sweep.csv"), csv.as_bytes()).map_err(|e| e.to_string())?;
    let json = serde_json::to_string_pretty(rec).map_err(|e| e.to_string())?;
    atomic_write(&dir.join("sweep.json"), format!("{json}\n").as_bytes())
        .map_err(|e| e.to_string())?;
    let crossings = saturation_crossings(rec);
    if !crossings.is_empty() {
        let text = serde_json::to_string_pretty(&crossings).map_err(|e| e.to_string())?;
        atomic_write(&dir.join("crossings.json"), format!("{text}\n").as_bytes())
            .map_err(|e| e.to_string())?;
    }
    let mut written = Vec::new();
    for key in plot_keys {
        for x in &rec.parameters {
            let svg = plot_svg(rec, key, x, x_unit)?;
            let name = format!("{}-vs-{x}.svg", key.replace('.', "_"));
            atomic_write(&dir.join(&name), svg.as_bytes()).map_err(|e| e.to_string())?;
            written.push(name);
        }
    }
    Ok(written)
}

/// The `sweep` command: solves the points not yet in `DIR`'s journal (all of them without
/// `resume`), recording each as it finishes; then writes the outputs and removes the
/// journal. Interrupted (Ctrl-C, SIGTERM), it writes `sweep.csv` and `sweep.json` of the
/// finished points, keeps the journal and exits with status 130; `--resume` continues.
pub(crate) fn run_resumable(
    out: &Path,
    raw: &RawCase,
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
    resume: bool,
    plot: &[String],
) -> Result<(), i32> {
    use crate::journal::{Journal, Opened};
    let (journal, opened) =
        Journal::open(out, journal_header(src, case, shard), resume).map_err(|e| {
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
    crate::limits::set_concurrent_solves(rayon::current_num_threads());
    crate::interrupt::set_graceful(true);
    let t0 = std::time::Instant::now();
    let (rec, complete) =
        run_sweep_journaled(raw, src, case, shard, true, &journal).map_err(|e| {
            eprintln!("error: {e}");
            1
        })?;
    let secs = t0.elapsed().as_secs_f64();
    if !complete {
        write_outputs(out, &rec, &[], "case units").map_err(|e| {
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
    let status = crate::cli::finish_sweep(out, &rec, plot, secs);
    // the journal goes once sweep.json provably holds every point
    let written = std::fs::read_to_string(out.join("sweep.json"))
        .ok()
        .and_then(|t| serde_json::from_str::<SweepRecord>(&t).ok())
        .is_some_and(|r| r == rec);
    if written {
        if let Err(e) = journal.finish() {
            eprintln!("warning: {e}");
        }
    }
    status
}
