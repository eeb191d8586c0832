//! Parameter studies: the points of a case's `[[sweep]]` entries (a grid over the swept
//! parameters; entries sharing a `group` move together), solved in parallel, written as
//! `sweep.csv`, `sweep.json` and SVG plots; shards of a sweep and their merging.
//!
//! Each point's figures are independent of the order and thread count they were solved on:
//! every solve is deterministic (reductions are collected in cell order) and the run times
//! (`solve.*_s`) are left out of the sweep's outputs.

use std::collections::BTreeMap;
use std::path::Path;

use rayon::prelude::*;

use crate::case::{resolve, Case, RawCase, SourceInfo};

pub mod journal;
pub mod record;

use crate::pipeline;
use crate::settings::Settings;
use fluxpick_postproc::atomic_write;
pub use record::{csv_text, figure_keys, Crossing, Point, PointResult, SweepRecord};

/// Why a sweep's journal, merge or files failed.
#[derive(Debug, thiserror::Error)]
pub enum SweepError {
    #[error("cannot {action} {}: {source}", .path.display())]
    Io {
        action: &'static str,
        path: std::path::PathBuf,
        source: std::io::Error,
    },
    #[error("{} is not a sweep journal ({reason}); remove it or run without --resume", .path.display())]
    NotAJournal {
        path: std::path::PathBuf,
        reason: String,
    },
    #[error("{} belongs to another sweep (the case file, its sweeps or the shard changed since it was written); run without --resume to start over", .path.display())]
    OtherSweep { path: std::path::PathBuf },
    #[error("nothing to merge")]
    NothingToMerge,
    #[error("the shards are not of one sweep: parameters {first:?} of {first_points} points vs {other:?} of {other_points}")]
    NotOneSweep {
        first: Vec<String>,
        first_points: usize,
        other: Vec<String>,
        other_points: usize,
    },
    #[error("no point has both `{x}` and `{key}`")]
    NothingToPlot { x: String, key: String },
    /// A table, record or plot could not be encoded.
    #[error("{0}")]
    Encode(String),
}

impl SweepError {
    /// An I/O failure of `action` on `path`.
    pub fn io(action: &'static str, path: &Path) -> impl FnOnce(std::io::Error) -> SweepError {
        let path = path.to_path_buf();
        move |source| SweepError::Io {
            action,
            path,
            source,
        }
    }

    /// An encoding failure (serde, csv, plotting).
    pub fn encode(e: impl std::fmt::Display) -> SweepError {
        SweepError::Encode(e.to_string())
    }
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
pub fn flatten(results: &pipeline::Results) -> BTreeMap<String, f64> {
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
fn solve_point(raw: &RawCase, src: &SourceInfo, p: &Point, settings: &Settings) -> PointResult {
    let outcome = resolve(raw, src, &p.parameters)
        .map_err(|e| e.render_plain())
        .and_then(|c| pipeline::run(&c, settings).map_err(|e| e.to_string()));
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

/// Solves the points (of one shard, if given) in parallel; `done` is called once per
/// finished point (a progress display). A point that fails is recorded with its error; the
/// others go on. The settings' memory limit is shared by the solves running at once.
pub fn run_sweep(
    raw: &RawCase,
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
    settings: &Settings,
    done: &(dyn Fn() + Sync),
) -> SweepRecord {
    let all = points(case);
    let total_points = all.len();
    let todo: Vec<Point> = all
        .into_iter()
        .filter(|p| in_shard(p.index, shard))
        .collect();
    let settings = settings.shared_by(rayon::current_num_threads());
    let mut results: Vec<PointResult> = todo
        .par_iter()
        .map(|p| {
            let r = solve_point(raw, src, p, &settings);
            done();
            r
        })
        .collect();
    results.sort_by_key(|r| r.index);
    SweepRecord {
        title: case.title.clone(),
        parameters: case.sweeps.iter().map(|s| s.parameter.clone()).collect(),
        total_points,
        points: results,
    }
}

/// The journal header of a sweep of `case` (text `src`), for [`journal::Journal`].
pub fn journal_header(
    src: &SourceInfo,
    case: &Case,
    shard: Option<(usize, usize)>,
) -> journal::Header {
    journal::Header::new(
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
    settings: &Settings,
    journal: &journal::Journal,
    done: &(dyn Fn() + Sync),
) -> Result<(SweepRecord, bool), SweepError> {
    let finished: std::collections::BTreeSet<usize> = journal.done_indices().into_iter().collect();
    let todo: Vec<Point> = points(case)
        .into_iter()
        .filter(|p| in_shard(p.index, shard) && !finished.contains(&p.index))
        .collect();
    let settings = settings.shared_by(rayon::current_num_threads());
    let failures: Vec<SweepError> = todo
        .par_iter()
        .filter_map(|p| {
            if crate::interrupt::cancelled() {
                return None;
            }
            let r = solve_point(raw, src, p, &settings);
            done();
            journal.record(r).err()
        })
        .collect();
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
pub fn merge(records: &[SweepRecord]) -> Result<SweepRecord, SweepError> {
    let first = records.first().ok_or(SweepError::NothingToMerge)?;
    let mut points: BTreeMap<usize, PointResult> = BTreeMap::new();
    for r in records {
        if r.parameters != first.parameters || r.total_points != first.total_points {
            return Err(SweepError::NotOneSweep {
                first: first.parameters.clone(),
                first_points: first.total_points,
                other: r.parameters.clone(),
                other_points: r.total_points,
            });
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
pub fn plot_svg(rec: &SweepRecord, key: &str, x: &str, x_unit: &str) -> Result<String, SweepError> {
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
        return Err(SweepError::NothingToPlot {
            x: x.to_string(),
            key: key.to_string(),
        });
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
        root.fill(&WHITE).map_err(SweepError::encode)?;
        let unit = unit_of(key);
        let mut chart = ChartBuilder::on(&root)
            .caption(format!("{key} against {x}"), ("sans-serif", 20))
            .margin(16)
            .x_label_area_size(40)
            .y_label_area_size(80)
            .build_cartesian_2d(x0..x1, y0..y1)
            .map_err(SweepError::encode)?;
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
            .map_err(SweepError::encode)?;
        let palette = [BLUE, RED, GREEN, MAGENTA, CYAN, BLACK];
        for (i, (label, mut pts)) in series.into_iter().enumerate() {
            pts.sort_by(|a, b| a.0.total_cmp(&b.0));
            let color = palette[i % palette.len()];
            let s = chart
                .draw_series(LineSeries::new(pts.clone(), color.stroke_width(2)))
                .map_err(SweepError::encode)?;
            if !label.is_empty() {
                s.label(label).legend(move |(x, y)| {
                    PathElement::new(vec![(x, y), (x + 20, y)], color.stroke_width(2))
                });
            }
            chart
                .draw_series(pts.iter().map(|p| Circle::new(*p, 3, color.filled())))
                .map_err(SweepError::encode)?;
        }
        if rec.parameters.len() > 1 {
            chart
                .configure_series_labels()
                .background_style(WHITE.mix(0.8))
                .border_style(BLACK)
                .draw()
                .map_err(SweepError::encode)?;
        }
        root.present().map_err(SweepError::encode)?;
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
) -> Result<Vec<String>, SweepError> {
    std::fs::create_dir_all(dir).map_err(SweepError::io("create", dir))?;
    let csv = csv_text(rec)?;
    let path = dir.join("sweep.csv");
    atomic_write(&path, csv.as_bytes()).map_err(SweepError::io("write", &path))?;
    let json = serde_json::to_string_pretty(rec).map_err(SweepError::encode)?;
    let path = dir.join("sweep.json");
    atomic_write(&path, format!("{json}\n").as_bytes()).map_err(SweepError::io("write", &path))?;
    let crossings = saturation_crossings(rec);
    if !crossings.is_empty() {
        let text = serde_json::to_string_pretty(&crossings).map_err(SweepError::encode)?;
        let path = dir.join("crossings.json");
        atomic_write(&path, format!("{text}\n").as_bytes())
            .map_err(SweepError::io("write", &path))?;
    }
    let mut written = Vec::new();
    for key in plot_keys {
        for x in &rec.parameters {
            let svg = plot_svg(rec, key, x, x_unit)?;
            let name = format!("{}-vs-{x}.svg", key.replace('.', "_"));
            let path = dir.join(&name);
            atomic_write(&path, svg.as_bytes()).map_err(SweepError::io("write", &path))?;
            written.push(name);
        }
    }
    Ok(written)
}
