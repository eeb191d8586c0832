//! Adaptive refinement to a stated accuracy (`model.accuracy`, `--accuracy`).
//!
//! Each pass solves the case, estimates the relative discretisation error of every figure
//! that decides a design (each coil's flux linkage and inductance, each part's mean |B|, the
//! losses of parts and solid conductors; `solver/src/estimate.rs` and
//! DEVELOPERS.md, "Error estimates"), and stops when all are below the target. Otherwise it
//! marks the cells carrying the larger half of the estimated error (Dörfler's bulk
//! criterion: the fewest cells whose indicators sum to half the total; Dörfler, "A
//! convergent adaptive algorithm for Poisson's equation", SIAM J. Numer. Anal. 33 (1996)),
//! asks for half their size there, and meshes the case again by the same constrained
//! Delaunay refinement (so the angle bound holds), until the target is met, the element
//! budget (`model.max_triangles`) would be exceeded, or [`MAX_PASSES`] passes have run. What
//! stopped it is stated in results.json (`accuracy.stopped`) and in the summary, never
//! silently.
//!
//! Each pass is a fresh solve on the new mesh: the model (geometry, materials, windings) is
//! built once and reused; the matrix pattern and its factorisation depend on the mesh and
//! are made anew.

use std::collections::BTreeMap;
use std::time::Instant;

use fluxpick_mesh::SizeMap;
use serde::Serialize;

use crate::case::Case;
use crate::study::{run_on, Results, Run, StudyError};

/// Most passes of one adaptive solve.
pub const MAX_PASSES: usize = 12;

/// Fraction of the total estimated error that the marked cells carry (Dörfler's θ).
const BULK: f64 = 0.5;

/// Size asked for in a marked cell, as a fraction of its longest edge.
const SHRINK: f64 = 0.5;

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct AccuracyReport {
    /// The relative accuracy asked for.
    pub target: f64,
    /// Whether every estimated figure error is at or below the target.
    pub reached: bool,
    /// Why the refinement stopped: "target reached", "element budget", "pass limit".
    pub stopped: String,
    pub max_triangles: usize,
    /// One entry per pass, the last being the result reported.
    pub refinement: Vec<Pass>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Pass {
    pub triangles: usize,
    pub unknowns: usize,
    pub seconds: f64,
    /// The deciding figures by dotted key, and their estimated relative errors.
    pub figures: BTreeMap<String, f64>,
    pub estimates: BTreeMap<String, f64>,
    /// The largest estimate.
    pub worst: f64,
}

/// The figures the adaptive loop controls, with their estimates (dotted keys as in
/// results.json).
pub fn controlled(r: &Results) -> Vec<(String, f64, Option<f64>)> {
    let mut out = Vec::new();
    for (name, c) in &r.coils {
        out.push((
            format!("coils.{name}.flux_linkage_wb"),
            c.flux_linkage_wb,
            c.flux_linkage_wb_err,
        ));
        out.push((
            format!("coils.{name}.inductance_h"),
            c.inductance_h,
            c.inductance_h_err,
        ));
    }
    for (name, p) in &r.parts {
        out.push((format!("parts.{name}.b_mean_t"), p.b_mean_t, p.b_mean_t_err));
        if p.loss_w > 0.0 {
            out.push((format!("parts.{name}.loss_w"), p.loss_w, p.loss_w_err));
        }
    }
    for (name, c) in &r.conductors {
        if c.loss_w > 0.0 && c.loss_w_err.is_some() {
            out.push((format!("conductors.{name}.loss_w"), c.loss_w, c.loss_w_err));
        }
    }
    out
}

/// The cells to refine: the fewest, largest indicators summing to `BULK` of the total
/// (physical cells only; `keep(c)` says which).
fn mark(indicator: &[f64], keep: impl Fn(usize) -> bool) -> Vec<usize> {
    let mut cells: Vec<usize> = (0..indicator.len())
        .filter(|&c| keep(c) && indicator[c] > 0.0)
        .collect();
    cells.sort_by(|&a, &b| indicator[b].total_cmp(&indicator[a]).then(a.cmp(&b)));
    let total: f64 = cells.iter().map(|&c| indicator[c]).sum();
    let mut sum = 0.0;
    let mut out = Vec::new();
    for c in cells {
        if sum >= BULK * total {
            break;
        }
        sum += indicator[c];
        out.push(c);
    }
    out
}

/// Target sizes on the physical triangles of a run: half the longest edge where marked,
/// the longest edge elsewhere.
fn size_map(run: &Run, marked: &[usize]) -> SizeMap {
    let mesh = &run.mesh;
    let image = mesh.exterior.as_ref().map(|e| e.region);
    let physical: Vec<usize> = (0..mesh.triangles.len())
        .filter(|&t| Some(mesh.triangle_region[t]) != image)
        .collect();
    let mut shrink = vec![false; mesh.triangles.len()];
    for &c in marked {
        shrink[c] = true;
    }
    let longest = |t: usize| {
        let p = mesh.triangles[t].map(|v| mesh.points[v as usize]);
        (0..3)
            .map(|k| {
                let (a, b) = (p[k], p[(k + 1) % 3]);
                (a[0] - b[0]).hypot(a[1] - b[1])
            })
            .fold(0.0, f64::max)
    };
    let h = physical
        .iter()
        .map(|&t| longest(t) * if shrink[t] { SHRINK } else { 1.0 })
        .collect();
    SizeMap::new(
        mesh.points.clone(),
        physical.iter().map(|&t| mesh.triangles[t]).collect(),
        h,
    )
}

/// Solves `case` adaptively to the relative accuracy `target`.
pub fn run_adaptive(case: &Case, target: f64) -> Result<Run, StudyError> {
    let mut map: Option<SizeMap> = None;
    let mut passes = Vec::new();
    let (mut run, stopped) = loop {
        let t0 = Instant::now();
        let run = run_on(case, map.as_ref())?;
        let figs = controlled(&run.results);
        let worst = figs
            .iter()
            .filter_map(|f| f.2)
            .fold(0.0f64, |a, b| a.max(b));
        passes.push(Pass {
            triangles: run.results.mesh.triangles,
            unknowns: run.results.mesh.unknowns,
            seconds: t0.elapsed().as_secs_f64(),
            figures: figs.iter().map(|f| (f.0.clone(), f.1)).collect(),
            estimates: figs
                .iter()
                .filter_map(|f| f.2.map(|e| (f.0.clone(), e)))
                .collect(),
            worst,
        });
        if worst <= target {
            break (run, "target reached");
        }
        if passes.len() >= MAX_PASSES {
            break (run, "pass limit");
        }
        let image = run.mesh.exterior.as_ref().map(|e| e.region);
        let marked = mark(&run.error_indicator, |c| {
            Some(run.mesh.triangle_region[c]) != image
        });
        // a halved cell becomes about four
        let next = run.results.mesh.triangles + 3 * marked.len();
        if marked.is_empty() || next > case.max_triangles {
            break (run, "element budget");
        }
        map = Some(size_map(&run, &marked));
    };
    let reached = stopped == "target reached";
    if !reached {
        run.results.warnings.push(format!(
            "accuracy: the target {} was not reached ({stopped} after {} passes, {} triangles): the largest estimated error is {:.2} %; raise model.max_triangles or relax the target",
            target,
            passes.len(),
            run.results.mesh.triangles,
            100.0 * passes.last().map_or(f64::NAN, |p| p.worst)
        ));
    }
    run.results.accuracy = Some(AccuracyReport {
        target,
        reached,
        stopped: stopped.into(),
        max_triangles: case.max_triangles,
        refinement: passes,
    });
    Ok(run)
}
