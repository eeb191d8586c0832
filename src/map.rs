//! Placement maps (`fluxpick map`): where to put a pickup beside conductors and steel.
//!
//! Two solves are combined. The *pickup case* (axisymmetric, a core and coil in a uniform
//! axial background field) gives the coil's equivalent area A_eq = λ/b, its inductance and
//! resistance. The *survey case* (planar, the conductors and steel, no pickup) gives the
//! phasor field at the points of one of its probes. A pickup small against the distance over
//! which the survey field changes collects λ = A_eq · (B · n) with n its axis, so at each
//! point:
//!
//! * best orientation: the axis along the major axis of the field ellipse, EMF = ω A_eq B_major;
//! * fixed orientation (an axis angle from +x): EMF = ω A_eq |B · n|;
//! * matched power EMF² / (4 R), R the coil's winding plus induced resistance.
//!
//! Points where the pickup (core length along the best axis, outer radius) would not fit
//! in air are left out. The uniform-field assumption is checked: a point is flagged where |B| along the core's
//! length (± half its length along the best axis) differs by more than 5 % from the centre.
//! The pickup's own effect on the survey field (its core gathering flux from the conductors'
//! field) is in A_eq; its effect on nearby steel is not.

use std::fmt::Write as _;
use std::path::Path;

use serde::Serialize;

use crate::case::{load_case, Case, ProbeKind, Symmetry};
use crate::error::RunError;
use crate::format::eng;
use crate::pipeline;
use crate::settings::Settings;
use fluxpick_postproc::atomic_write;
use fluxpick_postproc::design::field_ellipse;
use fluxpick_postproc::probe;
use fluxpick_postproc::vtk::{DataArray, Grid, VTK_TRIANGLE};

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MapPoint {
    pub x_m: f64,
    pub y_m: f64,
    /// Field ellipse (rms semi-axes, T; angle of the major axis from +x, degrees).
    pub b_major_t: f64,
    pub b_minor_t: f64,
    pub angle_deg: f64,
    pub emf_best_v: f64,
    pub emf_fixed_v: f64,
    pub power_best_w: f64,
    pub power_fixed_w: f64,
    /// |B| changes by more than 5 % over the core's length here.
    pub nonuniform: bool,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MapRecord {
    pub survey: String,
    pub pickup: String,
    pub frequency_hz: f64,
    pub equivalent_area_m2: f64,
    pub inductance_h: f64,
    pub resistance_ohm: f64,
    pub core_length_m: f64,
    pub fixed_axis_deg: f64,
    pub probe: String,
    pub points: Vec<MapPoint>,
}

fn fail(msg: String) -> RunError {
    RunError::Input(msg)
}

/// The pickup's figures: (A_eq, L, R, core length along the axis, outer radius).
fn pickup_figures(
    path: &Path,
    case: &Case,
    settings: &Settings,
) -> Result<(f64, f64, f64, f64, f64), RunError> {
    if case.symmetry != Symmetry::Axisymmetric || case.background.is_none() {
        return Err(fail(format!(
            "{}: the pickup case must be axisymmetric with a [background] axial field (it gives the coil's equivalent area)",
            path.display()
        )));
    }
    let coil = case
        .circuit
        .as_ref()
        .map(|c| case.coil(c.coil).name.clone())
        .or_else(|| case.coils.first().map(|c| c.name.clone()))
        .ok_or_else(|| {
            fail(format!(
                "{}: the pickup case has no [[coil]]",
                path.display()
            ))
        })?;
    let run = pipeline::run(case, settings).map_err(|e| RunError::Study {
        file: path.display().to_string(),
        source: e,
    })?;
    let c = &run.results.coils[&coil];
    let a_eq = c.equivalent_area_m2.value.unwrap_or(0.0);
    // the core's length: the span in z of the coil's core parts, or of the coil window
    let mut z = (f64::INFINITY, f64::NEG_INFINITY);
    let parts: Vec<&crate::case::Part> = case
        .parts
        .iter()
        .filter(|p| c.core_parts.contains(&p.name))
        .collect();
    let shapes: Vec<&crate::case::Shape> = if parts.is_empty() {
        case.coils
            .iter()
            .filter(|k| k.name == coil)
            .flat_map(|k| k.window.shapes().into_iter().map(|(s, _)| s))
            .collect()
    } else {
        parts.iter().map(|p| &p.shape).collect()
    };
    for s in shapes {
        let (lo, hi) = crate::pipeline::shape_bbox(s);
        z = (z.0.min(lo[1]), z.1.max(hi[1]));
    }
    // outer radius of the pickup: its coil windows and core parts
    let mut radius: f64 = 0.0;
    for k in case.coils.iter().filter(|k| k.name == coil) {
        for (s, _) in k.window.shapes() {
            radius = radius.max(crate::pipeline::shape_bbox(s).1[0]);
        }
    }
    for p in &parts {
        radius = radius.max(crate::pipeline::shape_bbox(&p.shape).1[0]);
    }
    Ok((
        a_eq,
        c.inductance_h.value,
        c.resistance_ohm + c.eddy_resistance_ohm,
        (z.1 - z.0).max(0.0),
        radius,
    ))
}

/// A placement map: its record and what its files need.
pub struct MapStudy {
    pub record: MapRecord,
    /// The probe's points (all, also those left out of the record) and the probe.
    pub points: Vec<[f64; 2]>,
    pub probe: crate::case::Probe,
    /// The survey's solve.
    pub run: pipeline::Run,
}

/// Solves the pickup and the survey and maps the pickup over the survey probe's points.
pub fn map(
    survey_path: &Path,
    pickup_path: &Path,
    probe_name: Option<&str>,
    axis_deg: f64,
    settings: &Settings,
) -> Result<MapStudy, RunError> {
    let survey = load_case(survey_path)?;
    let pickup = load_case(pickup_path)?;
    if survey.symmetry != Symmetry::Planar || survey.frequency <= 0.0 {
        return Err(fail(format!(
            "{}: the survey case must be planar with a frequency > 0 (the field the pickup sits in)",
            survey_path.display()
        )));
    }
    let probe = match probe_name {
        Some(n) => survey.probes.iter().find(|p| p.name == n),
        None => survey.probes.first(),
    }
    .ok_or_else(|| {
        let names: Vec<&str> = survey.probes.iter().map(|p| p.name.as_str()).collect();
        let help =
            match probe_name.and_then(|n| crate::case::error::nearest(n, names.iter().copied())) {
                Some(m) => format!("did you mean `--probe {m}`?"),
                None if names.is_empty() => {
                    "add a [[probe]] with a grid or a line to the survey case".into()
                }
                None => format!("the survey's probes: {}", names.join(", ")),
            };
        fail(format!(
            "{}: no [[probe]]{} to map over\n  help: {help}",
            survey_path.display(),
            probe_name.map_or(String::new(), |n| format!(" named `{n}`"))
        ))
    })?;
    let (a_eq, l, r, core_len, radius) = pickup_figures(pickup_path, &pickup, settings)?;
    let run = pipeline::run(&survey, settings).map_err(|e| RunError::Study {
        file: survey_path.display().to_string(),
        source: e,
    })?;
    let omega = std::f64::consts::TAU * survey.frequency;
    let pts = match probe.kind {
        ProbeKind::Line { from, to, points } => probe::line_points(from, to, points),
        ProbeKind::Grid { min, max, points } => probe::grid_points(min, max, points),
    };
    let [re, im] = &run.field;
    let n = [axis_deg.to_radians().cos(), axis_deg.to_radians().sin()];
    let b_abs = |p: [f64; 2]| -> Option<f64> {
        let (a, b) = (re.at(p)?, im.at(p)?);
        Some((a.b[0].powi(2) + a.b[1].powi(2) + b.b[0].powi(2) + b.b[1].powi(2)).sqrt())
    };
    let mut points = Vec::new();
    for &p in &pts {
        // only places in air: a pickup cannot sit inside a conductor or a part
        match re.locator.locate(&re.disc, p) {
            Some((cell, _)) if re.disc.cell_region[cell] == 0 => {}
            _ => continue,
        }
        let (Some(a), Some(b)) = (re.at(p), im.at(p)) else {
            continue;
        };
        let e = field_ellipse(a.b, b.b);
        // the pickup (its length along the best axis, its outer radius either side) must
        // fit in air: sampled on 9 lines of 21 points
        let t = e.angle_deg.to_radians();
        let h = 0.5 * core_len;
        let fits = (0..=20).all(|k| {
            let s = -1.0 + 0.1 * k as f64;
            (0..=8).map(|j| -1.0 + 0.25 * j as f64).all(|side| {
                let q = [
                    p[0] + s * h * t.cos() - side * radius * t.sin(),
                    p[1] + s * h * t.sin() + side * radius * t.cos(),
                ];
                matches!(re.locator.locate(&re.disc, q), Some((cell, _)) if re.disc.cell_region[cell] == 0)
            })
        });
        if !fits {
            continue;
        }
        let along = (a.b[0] * n[0] + a.b[1] * n[1]).hypot(b.b[0] * n[0] + b.b[1] * n[1]);
        let emf_best = omega * a_eq * e.major_t;
        let emf_fixed = omega * a_eq * along;
        let centre = b_abs(p).unwrap_or(0.0);
        let nonuniform = [1.0, -1.0].iter().any(|s| {
            match b_abs([p[0] + s * h * t.cos(), p[1] + s * h * t.sin()]) {
                Some(v) => (v - centre).abs() > 0.05 * centre,
                None => true,
            }
        });
        points.push(MapPoint {
            x_m: p[0],
            y_m: p[1],
            b_major_t: e.major_t,
            b_minor_t: e.minor_t,
            angle_deg: e.angle_deg,
            emf_best_v: emf_best,
            emf_fixed_v: emf_fixed,
            power_best_w: if r > 0.0 {
                emf_best * emf_best / (4.0 * r)
            } else {
                0.0
            },
            power_fixed_w: if r > 0.0 {
                emf_fixed * emf_fixed / (4.0 * r)
            } else {
                0.0
            },
            nonuniform,
        });
    }
    let rec = MapRecord {
        survey: survey_path.display().to_string(),
        pickup: pickup_path.display().to_string(),
        frequency_hz: survey.frequency,
        equivalent_area_m2: a_eq,
        inductance_h: l,
        resistance_ohm: r,
        core_length_m: core_len,
        fixed_axis_deg: axis_deg,
        probe: probe.name.clone(),
        points,
    };
    Ok(MapStudy {
        record: rec,
        points: pts,
        probe: probe.clone(),
        run,
    })
}

/// The terminal summary of a map: the pickup, the `best` positions and a caution.
pub fn summary(m: &MapStudy, best: usize, out: &Path) -> String {
    let rec = &m.record;
    let mut t = String::new();
    let _ = writeln!(
        t,
        "pickup {}: equivalent area {:.4e} m², L {}, R {}; survey {} at {} Hz, {} points of probe `{}`",
        rec.pickup,
        rec.equivalent_area_m2,
        eng(rec.inductance_h, "H"),
        eng(rec.resistance_ohm, "Ω"),
        rec.survey,
        rec.frequency_hz,
        rec.points.len(),
        rec.probe
    );
    let mut order: Vec<&MapPoint> = rec.points.iter().collect();
    order.sort_by(|a, b| b.emf_best_v.total_cmp(&a.emf_best_v));
    let _ = writeln!(
        t,
        "{:>4} {:>10} {:>10} {:>12} {:>8} {:>12} {:>12}  note",
        "rank", "x (m)", "y (m)", "EMF best", "axis °", "P matched", "EMF fixed"
    );
    for (i, p) in order.iter().take(best).enumerate() {
        let _ = writeln!(
            t,
            "{:>4} {:>10.4} {:>10.4} {:>12} {:>8.1} {:>12} {:>12}  {}",
            i + 1,
            p.x_m,
            p.y_m,
            eng(p.emf_best_v, "V"),
            p.angle_deg,
            eng(p.power_best_w, "W"),
            eng(p.emf_fixed_v, "V"),
            if p.nonuniform {
                "field varies > 5 % along the core: solve this placement with the pickup in the model"
            } else {
                ""
            }
        );
    }
    if order.first().is_some_and(|p| p.emf_best_v > 50.0) {
        let _ = writeln!(
            t,
            "caution: EMF above 50 V at the best positions; a tuned pickup's capacitor sees about Q times that. Treat the coil and its circuit as hazardous, and follow local rules for work near live conductors"
        );
    }
    let _ = writeln!(
        t,
        "wrote {}/map.csv, map.json, map.svg{}",
        out.display(),
        if matches!(m.probe.kind, ProbeKind::Grid { .. }) {
            " and map.vtu"
        } else {
            ""
        }
    );
    t
}

/// Writes `DIR/map.csv`, `map.json`, `map.svg` and, for a grid probe, `map.vtu`.
pub fn write_files(out: &Path, m: &MapStudy) -> Result<(), RunError> {
    write_outputs(out, &m.record, &m.points, &m.probe, &m.run).map_err(RunError::Write)
}

fn write_outputs(
    out: &Path,
    rec: &MapRecord,
    pts: &[[f64; 2]],
    probe: &crate::case::Probe,
    run: &pipeline::Run,
) -> Result<(), String> {
    std::fs::create_dir_all(out).map_err(|e| format!("cannot create {}: {e}", out.display()))?;
    let mut w = csv::Writer::from_writer(Vec::new());
    w.write_record([
        "x_m",
        "y_m",
        "b_major_t",
        "b_minor_t",
        "angle_deg",
        "emf_best_v",
        "emf_fixed_v",
        "power_best_w",
        "power_fixed_w",
        "nonuniform",
    ])
    .map_err(|e| e.to_string())?;
    for p in &rec.points {
        w.write_record([
            format!("{}", p.x_m),
            format!("{}", p.y_m),
            format!("{:e}", p.b_major_t),
            format!("{:e}", p.b_minor_t),
            format!("{}", p.angle_deg),
            format!("{:e}", p.emf_best_v),
            format!("{:e}", p.emf_fixed_v),
            format!("{:e}", p.power_best_w),
            format!("{:e}", p.power_fixed_w),
            p.nonuniform.to_string(),
        ])
        .map_err(|e| e.to_string())?;
    }
    let csv = w.into_inner().map_err(|e| e.to_string())?;
    atomic_write(&out.join("map.csv"), &csv).map_err(|e| e.to_string())?;
    let json = serde_json::to_string_pretty(rec).map_err(|e| e.to_string())?;
    atomic_write(&out.join("map.json"), format!("{json}\n").as_bytes())
        .map_err(|e| e.to_string())?;
    // VTK: a grid probe as triangles with point data; a line as a strip of points
    let mut grid = Grid::default();
    let by_pos = |p: [f64; 2]| rec.points.iter().find(|q| q.x_m == p[0] && q.y_m == p[1]);
    if let ProbeKind::Grid {
        points: [nx, ny], ..
    } = probe.kind
    {
        grid.points = pts.to_vec();
        for j in 0..ny.saturating_sub(1) {
            for i in 0..nx.saturating_sub(1) {
                let id = |i: usize, j: usize| (j * nx + i) as u32;
                grid.cells
                    .push(vec![id(i, j), id(i + 1, j), id(i + 1, j + 1)]);
                grid.cells
                    .push(vec![id(i, j), id(i + 1, j + 1), id(i, j + 1)]);
            }
        }
        grid.cell_types = vec![VTK_TRIANGLE; grid.cells.len()];
        let field = |f: &dyn Fn(&MapPoint) -> f64| -> Vec<f64> {
            pts.iter().map(|&p| by_pos(p).map_or(0.0, f)).collect()
        };
        grid.point_data = vec![
            DataArray::scalar("emf_best_v", field(&|q| q.emf_best_v)),
            DataArray::scalar("emf_fixed_v", field(&|q| q.emf_fixed_v)),
            DataArray::scalar("power_best_w", field(&|q| q.power_best_w)),
            DataArray::scalar("b_major_t", field(&|q| q.b_major_t)),
            DataArray::scalar("nonuniform", field(&|q| f64::from(u8::from(q.nonuniform)))),
        ];
        let tmp = out.join("map.vtu");
        grid.write(&tmp).map_err(|e| e.to_string())?;
    }
    let svg = map_svg(rec, probe, run);
    atomic_write(&out.join("map.svg"), svg.as_bytes()).map_err(|e| e.to_string())?;
    Ok(())
}

/// Heat map of the best-orientation EMF over a grid probe (or EMF along a line probe),
/// with the survey's outlines.
fn map_svg(rec: &MapRecord, probe: &crate::case::Probe, run: &pipeline::Run) -> String {
    let mut s = String::new();
    match probe.kind {
        ProbeKind::Grid {
            min,
            max,
            points: [nx, ny],
        } => {
            // one cell per point, centred on it; square cells when the spacings agree
            let (dx_m, dy_m) = (
                (max[0] - min[0]) / (nx.max(2) - 1) as f64,
                (max[1] - min[1]) / (ny.max(2) - 1) as f64,
            );
            let cell = 720.0 / nx as f64;
            let cell_y = cell * if dx_m > 0.0 { dy_m / dx_m } else { 1.0 };
            let (w, h) = (720.0, cell_y * ny as f64);
            let to_px = |p: [f64; 2]| {
                (
                    0.5 * cell + (p[0] - min[0]) / dx_m.max(1e-300) * cell,
                    h - 0.5 * cell_y - (p[1] - min[1]) / dy_m.max(1e-300) * cell_y,
                )
            };
            let vals: Vec<f64> = rec
                .points
                .iter()
                .map(|p| p.emf_best_v)
                .filter(|v| *v > 0.0)
                .collect();
            let lo = vals.iter().copied().fold(f64::INFINITY, f64::min);
            let hi = vals.iter().copied().fold(0.0f64, f64::max);
            let (l0, l1) = (lo.max(hi * 1e-4).log10(), hi.log10());
            let _ = writeln!(
                s,
                r#"<svg xmlns="http://www.w3.org/2000/svg" width="{w}" height="{}" font-family="sans-serif" font-size="12"><rect width="100%" height="100%" fill="white"/>"#,
                h + 40.0
            );
            for p in &rec.points {
                let t = if l1 > l0 {
                    (p.emf_best_v.max(1e-300).log10() - l0) / (l1 - l0)
                } else {
                    1.0
                };
                let (r, g, b) = crate::picture::ramp(t);
                let (x, y) = to_px([p.x_m, p.y_m]);
                let _ = writeln!(
                    s,
                    r#"<rect x="{:.1}" y="{:.1}" width="{:.2}" height="{:.2}" fill="rgb({r},{g},{b})"/>"#,
                    x - 0.5 * cell,
                    y - 0.5 * cell_y,
                    cell + 0.3,
                    cell_y + 0.3
                );
                if p.nonuniform {
                    let _ = writeln!(
                        s,
                        r#"<line x1="{:.1}" y1="{:.1}" x2="{:.1}" y2="{:.1}" stroke="black" stroke-opacity="0.4"/>"#,
                        x - 0.3 * cell,
                        y - 0.3 * cell_y,
                        x + 0.3 * cell,
                        y + 0.3 * cell_y
                    );
                }
            }
            // outlines of the survey's parts and conductors
            let mut path = String::new();
            let inside = |p: (f64, f64)| p.0 >= 0.0 && p.0 <= w && p.1 >= 0.0 && p.1 <= h;
            for (a, b) in crate::picture::region_outlines(&run.mesh) {
                let (p, q) = (to_px(a), to_px(b));
                if inside(p) && inside(q) {
                    let _ = write!(path, "M{:.1} {:.1}L{:.1} {:.1}", p.0, p.1, q.0, q.1);
                }
            }
            let _ = writeln!(
                s,
                r#"<path d="{path}" stroke="white" stroke-width="1.5" fill="none"/>"#
            );
            let _ = writeln!(
                s,
                r#"<text x="8" y="{:.0}">EMF at the best orientation, log scale {} … {}; crossed cells: field varies &gt; 5 % along the core</text></svg>"#,
                h + 24.0,
                eng(10f64.powf(l0), "V"),
                eng(hi, "V")
            );
        }
        ProbeKind::Line { from, .. } => {
            use plotters::prelude::*;
            let d: Vec<(f64, f64)> = rec
                .points
                .iter()
                .map(|p| ((p.x_m - from[0]).hypot(p.y_m - from[1]), p.emf_best_v))
                .collect();
            let xmax = d.iter().map(|p| p.0).fold(0.0, f64::max).max(1e-9);
            let ymax = d.iter().map(|p| p.1).fold(0.0, f64::max).max(1e-30) * 1.05;
            {
                let root = SVGBackend::with_string(&mut s, (720, 420)).into_drawing_area();
                let _ = root.fill(&WHITE);
                if let Ok(mut chart) = ChartBuilder::on(&root)
                    .caption(
                        "EMF at the best orientation along the probe",
                        ("sans-serif", 18),
                    )
                    .margin(14)
                    .x_label_area_size(36)
                    .y_label_area_size(70)
                    .build_cartesian_2d(0.0..xmax, 0.0..ymax)
                {
                    let _ = chart
                        .configure_mesh()
                        .x_desc("distance along the probe (m)")
                        .y_desc("EMF (V rms)")
                        .y_label_formatter(&|v| format!("{v:.2e}"))
                        .draw();
                    let _ = chart.draw_series(LineSeries::new(d, BLUE.stroke_width(2)));
                }
                let _ = root.present();
            }
        }
    }
    s
}
