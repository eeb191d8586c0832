//! Output files of the commands (results.json, field.vtu, mesh.vtu) and the terminal
//! summary. Every file is written to a temporary name and renamed when complete.

use std::fmt::Write as _;
use std::path::Path;

use fluxpick_mesh::Mesh;
use fluxpick_postproc::atomic_write;
use fluxpick_postproc::vtk::{DataArray, Grid, VTK_QUADRATIC_TRIANGLE, VTK_TRIANGLE};
use fluxpick_solver::{Order, MU0};

use crate::build::{Model, Owner};
use crate::case::{Case, MaterialId};
use crate::format::{duration, eng, pm};
use crate::pipeline::{Results, Run};

fn material_index(case: &Case, model: &Model) -> Vec<f64> {
    let idx = |m: MaterialId| m.index() as f64;
    let air = idx(case.air);
    model
        .owners
        .iter()
        .map(|o| match *o {
            Owner::Part(i) => idx(case.parts[i].material),
            Owner::Conductor(i) => idx(case.conductors[i].material),
            _ => air,
        })
        .collect()
}

/// mesh.vtu: linear triangles, cell data region id, material index, minimum angle.
pub fn write_mesh_vtu(path: &Path, case: &Case, model: &Model, mesh: &Mesh) -> std::io::Result<()> {
    let mat = material_index(case, model);
    let quality = mesh.triangle_quality();
    let grid = Grid {
        points: mesh.points.clone(),
        cells: mesh.triangles.iter().map(|t| t.to_vec()).collect(),
        cell_types: vec![VTK_TRIANGLE; mesh.triangles.len()],
        point_data: vec![],
        cell_data: vec![
            DataArray::scalar(
                "region",
                mesh.triangle_region.iter().map(|&r| f64::from(r)).collect(),
            ),
            DataArray::scalar(
                "material",
                mesh.triangle_region
                    .iter()
                    .map(|&r| mat[r as usize])
                    .collect(),
            ),
            DataArray::scalar("min_angle_deg", quality),
        ],
    };
    grid.write(path)
}

/// field.vtu: the physical domain (the exterior image left out). Point data A (Wb/m; the
/// real and imaginary rms parts at f > 0); cell data B at the centroid (T), |B| (T rms), μr,
/// region id.
pub fn write_field_vtu(path: &Path, case: &Case, run: &Run) -> std::io::Result<()> {
    let d = &run.disc;
    let harmonic = case.frequency > 0.0;
    let cells: Vec<usize> = (0..d.n_cells()).filter(|&c| !d.is_image(c)).collect();
    let mut new_id = vec![u32::MAX; d.points.len()];
    let mut points = Vec::new();
    let mut old_of = Vec::new();
    let mut conn = Vec::with_capacity(cells.len());
    for &c in &cells {
        let ids: Vec<u32> = d
            .cell(c)
            .iter()
            .map(|&n| {
                if new_id[n as usize] == u32::MAX {
                    new_id[n as usize] = points.len() as u32;
                    points.push(d.points[n as usize]);
                    old_of.push(n as usize);
                }
                new_id[n as usize]
            })
            .collect();
        conn.push(ids);
    }
    let cell_type = if d.order == Order::Quadratic {
        VTK_QUADRATIC_TRIANGLE
    } else {
        VTK_TRIANGLE
    };
    let [re, im] = &run.field;
    let mut point_data = vec![];
    let mut cell_data = vec![];
    let b_re: Vec<[f64; 2]> = cells.iter().map(|&c| re.cell_b(c)).collect();
    let b_im: Vec<[f64; 2]> = cells.iter().map(|&c| im.cell_b(c)).collect();
    let babs: Vec<f64> = b_re
        .iter()
        .zip(&b_im)
        .map(|(a, b)| (a[0].powi(2) + a[1].powi(2) + b[0].powi(2) + b[1].powi(2)).sqrt())
        .collect();
    if harmonic {
        point_data.push(DataArray::scalar(
            "A_re",
            old_of.iter().map(|&n| re.a[n]).collect(),
        ));
        point_data.push(DataArray::scalar(
            "A_im",
            old_of.iter().map(|&n| im.a[n]).collect(),
        ));
        cell_data.push(DataArray::vector2("B_re", &b_re));
        cell_data.push(DataArray::vector2("B_im", &b_im));
    } else {
        point_data.push(DataArray::scalar(
            "A",
            old_of.iter().map(|&n| re.a[n]).collect(),
        ));
        cell_data.push(DataArray::vector2("B", &b_re));
    }
    cell_data.push(DataArray::scalar("B_abs", babs));
    // Current density (A/m², rms): induced, solid-conductor and stranded winding currents.
    let j: Vec<_> = cells.iter().map(|&c| run.current_density[c]).collect();
    if harmonic {
        cell_data.push(DataArray::scalar("J_re", j.iter().map(|z| z.re).collect()));
        cell_data.push(DataArray::scalar("J_im", j.iter().map(|z| z.im).collect()));
        cell_data.push(DataArray::scalar(
            "J_abs",
            j.iter().map(|z| z.norm()).collect(),
        ));
    } else {
        cell_data.push(DataArray::scalar("J", j.iter().map(|z| z.re).collect()));
    }
    let materials = run.model.materials(case);
    cell_data.push(DataArray::scalar(
        "mu_r",
        cells
            .iter()
            .map(|&c| {
                materials
                    .get(d.cell_region[c] as usize)
                    .map_or(1.0, |m| 1.0 / (MU0 * m.nu))
            })
            .collect(),
    ));
    cell_data.push(DataArray::scalar(
        "region",
        cells.iter().map(|&c| f64::from(d.cell_region[c])).collect(),
    ));
    // √ of the cell's share of the estimated relative error energy: large where the mesh is
    // too coarse for the figures
    cell_data.push(DataArray::scalar(
        "error_indicator",
        cells
            .iter()
            .map(|&c| run.error_indicator.get(c).map_or(0.0, |v| v.sqrt()))
            .collect(),
    ));
    let grid = Grid {
        points,
        cells: conn,
        cell_types: vec![cell_type; cells.len()],
        point_data,
        cell_data,
    };
    grid.write(path)
}

pub fn write_results_json(path: &Path, results: &Results) -> std::io::Result<()> {
    let text = serde_json::to_string_pretty(results).map_err(std::io::Error::other)?;
    atomic_write(path, format!("{text}\n").as_bytes())
}

/// The terminal summary of a solve.
pub fn summary(r: &Results) -> String {
    let mut s = summary_head(r);
    for (name, c) in &r.coils {
        s += &coil_summary(name, c, r.frequency_hz > 0.0);
    }
    s += &summary_tables(r);
    for k in &r.skin_layers {
        let _ = writeln!(
            s,
            "skin depth in {}: {} (surface elements {})",
            k.name,
            eng(k.skin_depth_m, "m"),
            eng(k.surface_element_m, "m")
        );
    }
    for w in &r.warnings {
        let _ = writeln!(s, "warning: {w}");
    }
    s
}

/// The title, mesh, times, accuracy and energy lines of the summary.
fn summary_head(r: &Results) -> String {
    let mut s = String::new();
    let _ = writeln!(s, "{} ({}, {} Hz)", r.title, r.symmetry, r.frequency_hz);
    let _ = writeln!(
        s,
        "mesh: {} triangles, {} nodes, {} unknowns (order {}), min angle {:.1}°",
        r.mesh.triangles, r.mesh.nodes, r.mesh.unknowns, r.mesh.element_order, r.mesh.min_angle_deg
    );
    let _ = writeln!(
        s,
        "time: mesh {:.2} s, assemble {:.2} s, factor {:.2} s, solve {:.2} s, post {:.2} s",
        r.solve.mesh_s, r.solve.assemble_s, r.solve.factor_s, r.solve.solve_s, r.solve.post_s
    );
    if let Some(d) = r.depth_m {
        let _ = writeln!(s, "planar figures are for a depth of {}", eng(d, "m"));
    }
    if let Some(a) = &r.accuracy {
        let last = a.refinement.last();
        let _ = writeln!(
            s,
            "accuracy: target {} %, {} after {} passes (largest estimated error {:.3} %)",
            100.0 * a.target,
            a.stopped,
            a.refinement.len(),
            100.0 * last.map_or(f64::NAN, |p| p.worst)
        );
    }
    let _ = writeln!(
        s,
        "stored energy {}{}",
        eng(r.energy_j.value, "J"),
        pm(r.energy_j.err)
    );
    s
}

/// The lines of one coil in the summary.
fn coil_summary(name: &str, c: &fluxpick_postproc::design::CoilFigures, ac: bool) -> String {
    let mut s = String::new();
    let na = |v: Option<f64>, u: &str| v.map_or("n/a".to_string(), |v| eng(v, u));
    let _ = writeln!(
        s,
        "\ncoil {name}: {} turns of {} wire, {} long, {} copper; window holds {:.0} turns at its fill factor",
        c.turns,
        eng(c.wire_diameter_m, "m"),
        eng(c.wire_length_m, "m"),
        eng(c.copper_mass_kg * 1e3, "g"),
        c.turns_that_fit
    );
    if ac {
        let _ = writeln!(
            s,
            "  flux linkage {}{} at {:.1}°, EMF {} rms at {:.1}°",
            eng(c.flux_linkage_wb.value, "Wb"),
            pm(c.flux_linkage_wb.err),
            c.flux_linkage_wb_phase_deg,
            eng(c.emf_v.value, "V"),
            c.emf_v_phase_deg
        );
    } else {
        let _ = writeln!(
            s,
            "  flux linkage {}{}",
            eng(c.flux_linkage_wb.value, "Wb"),
            pm(c.flux_linkage_wb.err)
        );
    }
    let _ = writeln!(
        s,
        "  L {}{} (energy check {}), R {} winding + {} induced, Q {}",
        eng(c.inductance_h.value, "H"),
        pm(c.inductance_h.err),
        eng(c.inductance_energy_h, "H"),
        eng(c.resistance_ohm, "Ω"),
        eng(c.eddy_resistance_ohm, "Ω"),
        c.q.value.map_or("n/a".to_string(), |q| format!("{q:.1}"))
    );
    if ac {
        let _ = writeln!(
            s,
            "  tuning {}: C {} (series {}, parallel {}), capacitor voltage at resonance {}",
            c.tuning,
            na(c.tuning_capacitance_f.value, "F"),
            na(c.series_capacitance_f, "F"),
            na(c.parallel_capacitance_f, "F"),
            na(c.capacitor_voltage_v, "V")
        );
        let load = match c.load_ohm {
            Some(x) => format!("into {}: {}", eng(x, "Ω"), na(c.load_power_w, "W")),
            None => "into a matched load".into(),
        };
        let _ = writeln!(
            s,
            "  power matched {}{}, {load}",
            na(c.matched_power_w.value, "W"),
            pm(c.matched_power_w.err)
        );
        if let Some(e) = c.storage_energy_j {
            let _ = writeln!(
                s,
                "  storage {} charged in {} (ideal rectifier)",
                eng(e, "J"),
                c.charge_time_s.map_or("n/a".to_string(), duration)
            );
        }
        if c.power_per_cm3_w.is_some() || c.power_per_gram_w.is_some() {
            let _ = writeln!(
                s,
                "  per cm³ of core {}, per gram of core and copper {}",
                na(c.power_per_cm3_w, "W"),
                na(c.power_per_gram_w, "W")
            );
        }
    } else {
        let _ = writeln!(s, "  circuit figures: n/a at 0 Hz");
    }
    if let Some(a) = c.equivalent_area_m2.value {
        let _ = writeln!(
            s,
            "  equivalent area {a:.4e} m²{} (flux linkage / applied b)",
            pm(c.equivalent_area_m2.err)
        );
    }
    s
}

/// The parts' and conductors' tables of the summary.
fn summary_tables(r: &Results) -> String {
    let mut s = String::new();
    if !r.parts.is_empty() {
        let _ = writeln!(
            s,
            "\n{:<14} {:>20} {:>12} {:>10} {:>10} {:>12}",
            "part", "mean |B|", "peak |B|", "peak/sat", "μ app.", "loss"
        );
        for (name, p) in &r.parts {
            let _ = writeln!(
                s,
                "{:<14} {:>20} {:>12} {:>10} {:>10} {:>12}",
                name,
                format!("{}{}", eng(p.b_mean_t.value, "T"), pm(p.b_mean_t.err)),
                eng(p.b_peak_t, "T"),
                p.b_peak_over_sat
                    .map_or("-".into(), |x| format!("{:.1} %", 100.0 * x)),
                p.apparent_permeability
                    .map_or("-".into(), |x| format!("{x:.1}")),
                eng(p.loss_w.value, "W")
            );
        }
    }
    if !r.conductors.is_empty() {
        let _ = writeln!(
            s,
            "\n{:<14} {:>12} {:>12} {:>9} {:>12}",
            "conductor", "current", "R (AC)", "AC/DC", "loss"
        );
        for (name, c) in &r.conductors {
            let _ = writeln!(
                s,
                "{:<14} {:>12} {:>12} {:>9} {:>12}",
                name,
                eng(c.current_a, "A"),
                eng(c.resistance_ohm.value, "Ω"),
                c.ac_dc_ratio
                    .value
                    .map_or("-".into(), |x| format!("{x:.3}{}", pm(c.ac_dc_ratio.err))),
                eng(c.loss_w.value, "W")
            );
        }
    }
    s
}
