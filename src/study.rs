//! One solve of a case: mesh, solve, post-process, and the figures of results.json.
//!
//! At frequency 0 the figures are magnetostatic, with signed values. At frequency > 0 without
//! eddy currents (no conductive part), the field is the static solution for each source
//! combined as rms phasors; solid conductors then carry uniform current (skin effect
//! neglected, reported in `warnings`).

use std::collections::BTreeMap;
use std::f64::consts::TAU;
use std::time::Instant;

use fluxpick_mesh::Mesh;
use fluxpick_postproc::figures::{domain_energy, flux_linkage, inductances, region_flux};
use fluxpick_postproc::{probe, wire};
use fluxpick_solver::{solve_static, Field, Formulation, Problem, SolveError, StaticSolution};
use serde::Serialize;

use crate::build::{BuildError, Model, Owner};
use crate::case::{Case, CoilWindow, ConductorKind, ProbeKind, Shape, Symmetry};

#[derive(Debug, thiserror::Error)]
pub enum StudyError {
    #[error(transparent)]
    Build(#[from] BuildError),
    #[error("meshing failed: {0}")]
    Mesh(#[from] fluxpick_mesh::MeshError),
    #[error("`{0}` is wholly covered by entries drawn after it (parts, then conductors, then coils, each in file order), so nothing of it is left to mesh")]
    Hidden(String),
    #[error("solve failed: {0}")]
    Solve(#[from] SolveError),
    #[error("part `{0}` is conductive (σ > 0) at frequency > 0: eddy currents need the time-harmonic solver, which this version does not have; set its conductivity to 0 to neglect them")]
    EddyCurrentsUnsupported(String),
}

impl StudyError {
    /// Exit status: 2 for a case the program cannot take, 1 for a failed solve.
    pub fn exit_code(&self) -> i32 {
        match self {
            StudyError::Build(_) | StudyError::EddyCurrentsUnsupported(_) => 2,
            StudyError::Hidden(_) => 2,
            StudyError::Mesh(_) | StudyError::Solve(_) => 1,
        }
    }
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct MeshFigures {
    /// Nodes and triangles of the physical domain (the exterior image not counted).
    pub nodes: usize,
    pub triangles: usize,
    /// Triangles of the exterior image of an open boundary.
    pub exterior_triangles: usize,
    pub unknowns: usize,
    pub min_angle_deg: f64,
    pub mean_angle_deg: f64,
    pub element_order: u8,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct PartFigures {
    pub material: String,
    pub b_mean_t: f64,
    pub b_peak_t: f64,
    pub loss_w: f64,
    pub b_sat_t: Option<f64>,
    /// Peak |B| over the material's saturation flux density.
    pub b_peak_over_sat: Option<f64>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct ConductorFigures {
    pub current_a: f64,
    pub b_mean_t: f64,
    pub b_peak_t: f64,
    pub loss_w: f64,
    pub resistance_ohm: f64,
    pub inductance_h: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct CoilFigures {
    pub turns: f64,
    pub flux_linkage_wb: f64,
    pub flux_linkage_wb_phase_deg: f64,
    pub emf_v: f64,
    pub emf_v_phase_deg: f64,
    /// Flux route: flux linkage per ampere of its own current.
    pub inductance_h: f64,
    /// Energy route: 2W/I², for the check that both agree.
    pub inductance_energy_h: f64,
    pub resistance_ohm: f64,
    pub eddy_resistance_ohm: f64,
    pub wire_diameter_m: f64,
    pub wire_length_m: f64,
    pub mean_turn_length_m: f64,
    pub copper_mass_kg: f64,
    pub q: Option<f64>,
    pub tuning_capacitance_f: Option<f64>,
    pub matched_power_w: Option<f64>,
    pub equivalent_area_m2: Option<f64>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct ProbeFigures {
    /// Sample positions (m).
    pub points: Vec<[f64; 2]>,
    /// Flux density per point (T rms per component; static: signed), null outside the domain.
    pub b_t: Vec<Option<[f64; 2]>>,
    /// |B| per point (T rms).
    pub b_abs_t: Vec<Option<f64>>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct InductanceMatrix {
    pub names: Vec<String>,
    pub flux_h: Vec<Vec<f64>>,
    pub energy_h: Vec<Vec<f64>>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SolveFigures {
    pub mesh_s: f64,
    pub assemble_s: f64,
    pub factor_s: f64,
    pub solve_s: f64,
    pub post_s: f64,
    pub nonzeros: usize,
    pub max_relative_residual: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct Results {
    pub title: String,
    pub symmetry: String,
    pub frequency_hz: f64,
    /// Planar figures are for this depth (m); 2π rad in axisymmetric.
    pub depth_m: Option<f64>,
    pub mesh: MeshFigures,
    pub energy_j: f64,
    pub parts: BTreeMap<String, PartFigures>,
    pub conductors: BTreeMap<String, ConductorFigures>,
    pub coils: BTreeMap<String, CoilFigures>,
    pub inductance_matrix: InductanceMatrix,
    pub probes: BTreeMap<String, ProbeFigures>,
    pub solve: SolveFigures,
    pub warnings: Vec<String>,
}

/// Everything one solve made: the figures and what the VTK writer needs.
pub struct Run {
    pub model: Model,
    pub mesh: Mesh,
    pub solution: StaticSolution,
    /// Real and imaginary parts of the total field (imaginary zero when static).
    pub field: [Field; 2],
    pub results: Results,
}

/// A phasor of rms magnitude `m` at `phase_deg`.
fn phasor(m: f64, phase_deg: f64) -> [f64; 2] {
    let p = phase_deg.to_radians();
    [m * p.cos(), m * p.sin()]
}

fn magnitude_phase(z: [f64; 2]) -> (f64, f64) {
    (z[0].hypot(z[1]), z[1].atan2(z[0]).to_degrees())
}

fn centroid(shape: &Shape) -> [f64; 2] {
    match shape {
        Shape::Rect { min, max } => [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1])],
        Shape::Circle { center, .. }
        | Shape::Ellipse { center, .. }
        | Shape::Annulus { center, .. } => *center,
        Shape::Polygon(p) => {
            let n = p.len() as f64;
            [
                p.iter().map(|q| q[0]).sum::<f64>() / n,
                p.iter().map(|q| q[1]).sum::<f64>() / n,
            ]
        }
    }
}

/// Mean length of one turn: axisymmetric 2π r̄ of the window's centroid; planar, two runs
/// along the depth plus two end runs across the distance between the sides' centroids
/// (straight end turns: an approximation).
pub fn mean_turn_length(case: &Case, window: &CoilWindow) -> f64 {
    match (case.symmetry, window) {
        (Symmetry::Axisymmetric, w) => {
            let shapes = w.shapes();
            let r = shapes.iter().map(|(s, _)| centroid(s)[0]).sum::<f64>() / shapes.len() as f64;
            TAU * r
        }
        (Symmetry::Planar, CoilWindow::Sides(sides)) if sides.len() >= 2 => {
            let a = centroid(&sides[0].0);
            let b = centroid(&sides[1].0);
            2.0 * case.depth + 2.0 * (a[0] - b[0]).hypot(a[1] - b[1])
        }
        (Symmetry::Planar, _) => case.depth,
    }
}

/// Meshes a model, naming the entry when a mesh error concerns one.
pub fn mesh_model(case: &Case, model: &Model) -> Result<Mesh, StudyError> {
    fluxpick_mesh::generate(&model.spec).map_err(|e| match e {
        fluxpick_mesh::MeshError::EmptyRegion { region } => StudyError::Hidden(
            crate::output::region_names(case, model)
                .get(region + 1)
                .cloned()
                .unwrap_or_else(|| format!("region {region}")),
        ),
        e => StudyError::Mesh(e),
    })
}

pub fn run(case: &Case) -> Result<Run, StudyError> {
    let omega = TAU * case.frequency;
    let harmonic = case.frequency > 0.0;
    let mut warnings = Vec::new();
    if harmonic {
        for p in &case.parts {
            if case
                .materials
                .get(&p.material)
                .is_some_and(|m| m.conductivity > 0.0)
            {
                return Err(StudyError::EddyCurrentsUnsupported(p.name.clone()));
            }
        }
        for c in &case.conductors {
            if c.kind == ConductorKind::Solid {
                warnings.push(format!(
                    "conductor `{}`: solid at {} Hz, solved with uniform current (skin and proximity effects neglected)",
                    c.name, case.frequency
                ));
            }
        }
    }
    let model = Model::new(case)?;
    let t0 = Instant::now();
    let mesh = mesh_model(case, &model)?;
    let mesh_s = t0.elapsed().as_secs_f64();
    let materials = model.materials(case)?;
    let windings = model.windings(case);
    let bvec = case
        .background
        .as_ref()
        .map(|b| [b.b * b.direction[0], b.b * b.direction[1]]);
    let problem = Problem {
        mesh: &mesh,
        formulation: model.formulation,
        order: model.order,
        materials: materials.clone(),
        windings: windings.clone(),
        background: bvec,
        dirichlet: model.dirichlet.clone(),
    };
    let sol = solve_static(&problem)?;
    let t0 = Instant::now();
    // Phasor currents of every winding (coils first, then conductors), rms.
    let mut currents: Vec<[f64; 2]> = case
        .coils
        .iter()
        .map(|c| phasor(c.current, c.phase_deg))
        .collect();
    currents.extend(
        case.conductors
            .iter()
            .map(|c| phasor(c.current, c.phase_deg)),
    );
    let bg_phase = case
        .background
        .as_ref()
        .map_or(0.0, |b| b.phase_deg)
        .to_radians();
    let combine = |k: usize| -> Field {
        let mut parts: Vec<(f64, &Field)> = Vec::new();
        if let Some(b) = &sol.background {
            parts.push((
                if k == 0 {
                    bg_phase.cos()
                } else {
                    bg_phase.sin()
                },
                b,
            ));
        }
        for (i, f) in currents.iter().zip(&sol.unit) {
            parts.push((i[k], f));
        }
        Field::combine(&parts).unwrap_or_else(|| sol.total(&[]))
    };
    let field = [combine(0), combine(1)];
    let depth = if case.symmetry == Symmetry::Planar {
        case.depth
    } else {
        1.0
    };
    let quad = sol.disc.order == fluxpick_solver::Order::Quadratic;

    // Parts and conductors: |B| statistics of the rms vector.
    let flux_stats = |regions: &[u32]| region_flux(&[&field[0], &field[1]], regions);
    let mut parts = BTreeMap::new();
    for (i, p) in case.parts.iter().enumerate() {
        let regions = model.regions_of(|o| *o == Owner::Part(i));
        let s = flux_stats(&regions);
        let b_sat = case.materials.get(&p.material).and_then(|m| m.b_sat);
        parts.insert(
            p.name.clone(),
            PartFigures {
                material: p.material.clone(),
                b_mean_t: s.b_mean,
                b_peak_t: s.b_peak,
                loss_w: 0.0,
                b_sat_t: b_sat,
                b_peak_over_sat: b_sat.map(|bs| s.b_peak / bs),
            },
        );
    }
    let ind = inductances(&sol);
    let ncoils = case.coils.len();
    let mut conductors = BTreeMap::new();
    for (i, c) in case.conductors.iter().enumerate() {
        let regions = model.regions_of(|o| *o == Owner::Conductor(i));
        let s = flux_stats(&regions);
        let sigma = case
            .materials
            .get(&c.material)
            .map_or(0.0, |m| m.conductivity);
        let w = ncoils + i;
        // DC resistance from the current density per ampere: R = ∫ j²/σ dV (j per ampere).
        let r = if sigma > 0.0 {
            let mut p = 0.0;
            for cell in 0..sol.disc.n_cells() {
                for de in sol.densities[w]
                    .iter()
                    .filter(|de| de.region == sol.disc.cell_region[cell])
                {
                    sol.unit[w].quadrature(cell, &fluxpick_solver::quadrature::DEGREE6, |v, dv| {
                        p += de.at(v.x).powi(2) / sigma * dv;
                    });
                }
            }
            p * depth
        } else {
            0.0
        };
        conductors.insert(
            c.name.clone(),
            ConductorFigures {
                current_a: c.current,
                b_mean_t: s.b_mean,
                b_peak_t: s.b_peak,
                loss_w: c.current * c.current * r,
                resistance_ohm: r,
                inductance_h: ind.flux[w][w] * depth,
            },
        );
    }
    let mut coils = BTreeMap::new();
    for (i, c) in case.coils.iter().enumerate() {
        let lam = [
            flux_linkage(&field[0], &sol.densities[i]) * depth,
            flux_linkage(&field[1], &sol.densities[i]) * depth,
        ];
        let (lam_m, lam_p) = magnitude_phase(lam);
        let l = ind.flux[i][i] * depth;
        let mtl = mean_turn_length(case, &c.window);
        let length = c.turns * mtl;
        let r = wire::resistance_per_metre(c.wire.diameter, c.temperature_c) * length;
        let mass = wire::mass_per_metre(c.wire.diameter) * length;
        // EMF = −jωλ (rms phasor); static: 0.
        let emf = [omega * lam[1], -omega * lam[0]];
        let (emf_m, emf_p) = magnitude_phase(emf);
        let (q, ct, pm) = if harmonic && l > 0.0 && r > 0.0 {
            (
                Some(omega * l / r),
                Some(1.0 / (omega * omega * l)),
                Some(emf_m * emf_m / (4.0 * r)),
            )
        } else {
            (None, None, None)
        };
        coils.insert(
            c.name.clone(),
            CoilFigures {
                turns: c.turns,
                flux_linkage_wb: if harmonic { lam_m } else { lam[0] },
                flux_linkage_wb_phase_deg: if harmonic { lam_p } else { 0.0 },
                emf_v: if harmonic { emf_m } else { 0.0 },
                emf_v_phase_deg: if harmonic { emf_p } else { 0.0 },
                inductance_h: l,
                inductance_energy_h: ind.energy[i][i] * depth,
                resistance_ohm: r,
                eddy_resistance_ohm: 0.0,
                wire_diameter_m: c.wire.diameter,
                wire_length_m: length,
                mean_turn_length_m: mtl,
                copper_mass_kg: mass,
                q,
                tuning_capacitance_f: ct,
                matched_power_w: pm,
                equivalent_area_m2: case.background.as_ref().filter(|b| b.b != 0.0).map(|b| {
                    let bg = sol.background.as_ref().expect("background solved");
                    flux_linkage(bg, &sol.densities[i]) * depth / b.b
                }),
            },
        );
    }
    let mut probes = BTreeMap::new();
    for p in &case.probes {
        let points = match p.kind {
            ProbeKind::Line { from, to, points } => probe::line_points(from, to, points),
            ProbeKind::Grid { min, max, points } => probe::grid_points(min, max, points),
        };
        let re = probe::sample(&field[0], &points);
        let im = probe::sample(&field[1], &points);
        let b_t: Vec<Option<[f64; 2]>> = re
            .iter()
            .zip(&im)
            .map(|(a, b)| match (a.b, b.b) {
                (Some(x), Some(y)) if harmonic => Some([x[0].hypot(y[0]), x[1].hypot(y[1])]),
                (Some(x), _) => Some(x),
                _ => None,
            })
            .collect();
        let b_abs_t = re
            .iter()
            .zip(&im)
            .map(|(a, b)| match (a.b, b.b) {
                (Some(x), Some(y)) => {
                    Some((x[0].powi(2) + x[1].powi(2) + y[0].powi(2) + y[1].powi(2)).sqrt())
                }
                _ => None,
            })
            .collect();
        probes.insert(
            p.name.clone(),
            ProbeFigures {
                points,
                b_t,
                b_abs_t,
            },
        );
    }
    let energy = (domain_energy(&field[0]) + domain_energy(&field[1])) * depth;
    let stats = mesh.stats();
    let physical_cells = (0..sol.disc.n_cells())
        .filter(|&c| !sol.disc.is_image(c))
        .count();
    let physical_nodes = {
        let mut used = vec![false; sol.disc.points.len()];
        for c in (0..sol.disc.n_cells()).filter(|&c| !sol.disc.is_image(c)) {
            for &n in sol.disc.cell(c) {
                used[n as usize] = true;
            }
        }
        used.iter().filter(|u| **u).count()
    };
    let mut names: Vec<String> = case.coils.iter().map(|c| c.name.clone()).collect();
    names.extend(case.conductors.iter().map(|c| c.name.clone()));
    let scale = |m: &Vec<Vec<f64>>| {
        m.iter()
            .map(|r| r.iter().map(|v| v * depth).collect())
            .collect()
    };
    let post_s = t0.elapsed().as_secs_f64();
    let results = Results {
        title: case.title.clone(),
        symmetry: match case.symmetry {
            Symmetry::Planar => "planar".into(),
            Symmetry::Axisymmetric => "axisymmetric".into(),
        },
        frequency_hz: case.frequency,
        depth_m: (case.symmetry == Symmetry::Planar).then_some(case.depth),
        mesh: MeshFigures {
            nodes: physical_nodes,
            triangles: physical_cells,
            exterior_triangles: sol.disc.n_cells() - physical_cells,
            unknowns: sol.disc.n_dofs,
            min_angle_deg: stats.min_angle_deg,
            mean_angle_deg: stats.mean_min_angle_deg,
            element_order: if quad { 2 } else { 1 },
        },
        energy_j: energy,
        parts,
        conductors,
        coils,
        inductance_matrix: InductanceMatrix {
            names,
            flux_h: scale(&ind.flux),
            energy_h: scale(&ind.energy),
        },
        probes,
        solve: SolveFigures {
            mesh_s,
            assemble_s: sol.timings.setup + sol.timings.assemble,
            factor_s: sol.timings.symbolic + sol.timings.factor,
            solve_s: sol.timings.solve,
            post_s,
            nonzeros: sol.nnz,
            max_relative_residual: sol.max_residual,
        },
        warnings,
    };
    Ok(Run {
        model,
        mesh,
        solution: sol,
        field,
        results,
    })
}

/// Formulation name for messages.
pub fn formulation_name(f: Formulation) -> &'static str {
    match f {
        Formulation::Planar => "planar",
        Formulation::Axisymmetric => "axisymmetric",
    }
}
