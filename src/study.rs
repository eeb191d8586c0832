//! One solve of a case: mesh, solve, post-process, and the figures of results.json.
//!
//! At frequency 0 the figures are magnetostatic, with signed values. At frequency > 0 without
//! eddy currents (no conductive part), the field is the static solution for each source
//! combined as rms phasors; solid conductors then carry uniform current (skin effect
//! neglected, reported in `warnings`).

use std::collections::BTreeMap;
use std::f64::consts::TAU;
use std::time::Instant;

use fluxpick_mesh::{Mesh, SizeMap};
use std::sync::Arc;

use fluxpick_postproc::figures::{domain_energy, flux_linkage, region_flux};
use fluxpick_postproc::{circuit, probe, wire};
use fluxpick_solver::bh::BhCurve;
use fluxpick_solver::estimate::{estimate, Use as EstUse};
use fluxpick_solver::nonlinear::{solve_nonlinear, NewtonOptions, NonlinearError};
use fluxpick_solver::{
    solve_harmonic, solve_static, Discretisation, Field, Formulation, HarmonicSolution, Problem,
    SolveError, StaticSolution,
};
use num_complex::Complex64 as C;
use serde::Serialize;

use crate::build::{BuildError, Model, Owner};
use crate::case::{Case, CoilWindow, ConductorKind, MaterialId, ProbeKind, Shape, Symmetry};

#[derive(Debug, thiserror::Error)]
pub enum StudyError {
    #[error(transparent)]
    Build(#[from] BuildError),
    #[error("material `{0}`: {1}")]
    Curve(String, fluxpick_solver::bh::BhError),
    #[error("the saturating solve failed: {0}")]
    Newton(String),
    #[error("meshing failed: {0}")]
    Mesh(#[from] fluxpick_mesh::MeshError),
    #[error("`{0}` is wholly covered by entries drawn after it (parts, then conductors, then coils, each in file order), so nothing of it is left to mesh")]
    Hidden(String),
    #[error("solve failed: {0}")]
    Solve(#[from] SolveError),
    /// Refused before meshing: over the triangle or memory limit ([`crate::limits`]).
    #[error(transparent)]
    Limit(#[from] crate::limits::TooLarge),
    /// A sanity failure of the solve, named in the case's terms ([`crate::sanity`]).
    #[error(transparent)]
    Physics(#[from] crate::sanity::PhysicsError),
}

impl StudyError {
    /// Exit status: 2 for a case the program cannot take, 1 for a failed solve.
    pub fn exit_code(&self) -> i32 {
        match self {
            StudyError::Build(_) => 2,
            StudyError::Hidden(_) | StudyError::Curve(..) => 2,
            StudyError::Newton(_) => 1,
            StudyError::Mesh(_) | StudyError::Solve(_) => 1,
            StudyError::Physics(p) => p.exit_code(),
            StudyError::Limit(_) => 2,
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
    /// Estimated relative discretisation error of `b_mean_t` (recovery estimate over the
    /// part; so for every `_err` sibling: see DEVELOPERS.md, "Error estimates").
    pub b_mean_t_err: Option<f64>,
    pub b_peak_t: f64,
    pub loss_w: f64,
    pub loss_w_err: Option<f64>,
    pub b_sat_t: Option<f64>,
    /// Peak |B| over the material's saturation flux density.
    pub b_peak_over_sat: Option<f64>,
    /// Skin depth of the part's material at the case frequency (conductive parts, f > 0).
    pub skin_depth_m: Option<f64>,
    /// With a background field: mean flux density along the part's middle cross-section
    /// (across the applied direction) over the applied b.
    pub apparent_permeability: Option<f64>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct ConductorFigures {
    pub current_a: f64,
    pub phase_deg: f64,
    pub b_mean_t: f64,
    pub b_peak_t: f64,
    /// Loss in the conductor with every source on (W, for the model depth).
    pub loss_w: f64,
    pub loss_w_err: Option<f64>,
    /// AC resistance from loss / I² (at I = 0: from its own 1 A alone).
    pub resistance_ohm: f64,
    pub resistance_ohm_err: Option<f64>,
    pub dc_resistance_ohm: f64,
    pub ac_dc_ratio: Option<f64>,
    pub ac_dc_ratio_err: Option<f64>,
    /// 2W/I² of its own field inside the conductor (internal inductance).
    pub internal_inductance_h: f64,
    pub internal_inductance_h_err: Option<f64>,
    /// ω × internal inductance (null when static).
    pub internal_reactance_ohm: Option<f64>,
    /// Flux route (at f > 0: Im(Z)/ω) for the model's extent: in planar form the loop
    /// closes at the outer boundary (or at infinity for an open one: grows with its size).
    pub inductance_h: f64,
    pub inductance_h_err: Option<f64>,
    pub skin_depth_m: Option<f64>,
    /// Voltage across the conductor for the model depth (rms; static: 0): the resistive
    /// drop plus the induced part, the loop closing at the outer boundary.
    pub voltage_v: f64,
    pub voltage_v_phase_deg: f64,
    /// Re(V I*): the power this conductor's source delivers into the field and losses.
    pub input_power_w: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct CoilFigures {
    pub turns: f64,
    pub flux_linkage_wb: f64,
    pub flux_linkage_wb_err: Option<f64>,
    pub flux_linkage_wb_phase_deg: f64,
    pub emf_v: f64,
    pub emf_v_err: Option<f64>,
    pub emf_v_phase_deg: f64,
    /// Flux route: flux linkage per ampere of its own current.
    pub inductance_h: f64,
    pub inductance_h_err: Option<f64>,
    /// Energy route: 2W/I², for the check that both agree.
    pub inductance_energy_h: f64,
    pub resistance_ohm: f64,
    pub eddy_resistance_ohm: f64,
    pub wire_diameter_m: f64,
    pub wire_length_m: f64,
    pub mean_turn_length_m: f64,
    pub copper_mass_kg: f64,
    pub q: Option<f64>,
    pub q_err: Option<f64>,
    pub tuning_capacitance_f: Option<f64>,
    pub tuning_capacitance_f_err: Option<f64>,
    pub matched_power_w: Option<f64>,
    pub matched_power_w_err: Option<f64>,
    /// Copper cross-section window (one side for planar coils), m², and the turns of the
    /// bare wire that fit it at the coil's fill factor.
    pub window_area_m2: f64,
    pub turns_that_fit: f64,
    /// Turns of grade-2 enamelled wire that fit at a packing of 0.78 (see `wire`).
    pub turns_that_fit_enamelled: f64,
    /// Wire diameter over the skin depth in copper at the case frequency: below about 0.5
    /// skin and proximity effects inside the wire are negligible (common practice).
    pub wire_diameter_over_skin_depth: Option<f64>,
    /// The tuning `tuning_capacitance_f` is for ([circuit] of this coil; series otherwise).
    pub tuning: String,
    pub series_capacitance_f: Option<f64>,
    pub parallel_capacitance_f: Option<f64>,
    /// rms voltage across the tuning capacitor at resonance (worst case: series tuning
    /// with the load shorted, parallel with it open), ≈ Q × EMF.
    pub capacitor_voltage_v: Option<f64>,
    /// The stated resistive load (null = matched).
    pub load_ohm: Option<f64>,
    pub load_power_w: Option<f64>,
    /// ½CV² of `circuit.storage` and the time to reach it at `load_power_w` through an
    /// ideal rectifier (lossless, drawing that power at any capacitor voltage).
    pub storage_energy_j: Option<f64>,
    pub charge_time_s: Option<f64>,
    /// Magnetic parts inside the coil's span, their volume (for the model depth) and mass
    /// (when every core material gives a density).
    pub core_parts: Vec<String>,
    pub core_volume_m3: Option<f64>,
    pub core_mass_kg: Option<f64>,
    /// Matched power per cm³ of core, and per gram of core and copper.
    pub power_per_cm3_w: Option<f64>,
    pub power_per_gram_w: Option<f64>,
    pub equivalent_area_m2: Option<f64>,
    pub equivalent_area_m2_err: Option<f64>,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct ProbeFigures {
    /// Sample positions (m).
    pub points: Vec<[f64; 2]>,
    /// Flux density per point (T rms per component; static: signed), null outside the domain.
    pub b_t: Vec<Option<[f64; 2]>>,
    /// |B| per point (T rms).
    pub b_abs_t: Vec<Option<f64>>,
    /// At f > 0: the ellipse the field vector traces per point.
    pub ellipse: Option<Vec<Option<Ellipse>>>,
}

/// The ellipse traced by a rotating (or alternating: minor 0) field vector.
#[derive(Clone, Copy, Debug, Serialize, PartialEq)]
pub struct Ellipse {
    /// Semi-axes, rms (peak / √2), T.
    pub major_t: f64,
    pub minor_t: f64,
    /// Direction of the major axis from +x (degrees, −90..90).
    pub angle_deg: f64,
}

#[derive(Clone, Debug, Serialize, PartialEq)]
pub struct SkinFigures {
    pub name: String,
    pub skin_depth_m: f64,
    /// Element size used at the surface.
    pub surface_element_m: f64,
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
    pub method: String,
    pub krylov_iterations: Option<usize>,
    /// With B-H curves: Newton iterations and the relative residual after each.
    pub newton_iterations: Option<usize>,
    pub residual_history: Option<Vec<f64>>,
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
    pub energy_j_err: Option<f64>,
    pub parts: BTreeMap<String, PartFigures>,
    pub conductors: BTreeMap<String, ConductorFigures>,
    pub coils: BTreeMap<String, CoilFigures>,
    pub inductance_matrix: InductanceMatrix,
    pub probes: BTreeMap<String, ProbeFigures>,
    pub skin_layers: Vec<SkinFigures>,
    pub solve: SolveFigures,
    /// The adaptive refinement (with `model.accuracy`), pass by pass.
    pub accuracy: Option<crate::adapt::AccuracyReport>,
    pub warnings: Vec<String>,
}

/// Everything one solve made: the figures and what the VTK writer needs.
pub struct Run {
    pub model: Model,
    pub mesh: Mesh,
    pub disc: Arc<Discretisation>,
    /// Real and imaginary parts of the total field (imaginary zero when static).
    pub field: [Field; 2],
    /// Current density per cell (A/m² rms phasor; every cell, the image's zero).
    pub current_density: Vec<C>,
    /// Per cell: the estimated relative error energy the cell contributes (the sum over the
    /// unit solutions of η_K²/a(u, u)); what the adaptive refinement marks by.
    pub error_indicator: Vec<f64>,
    pub results: Results,
}

fn centroid(shape: &Shape) -> [f64; 2] {
    shape.centroid()
}

/// Bounding box `[min, max]` of the space a coil encloses: axisymmetric, from the axis to
/// the window's outer radius over its height; planar, the box spanned by all its sides.
fn coil_span(case: &Case, window: &CoilWindow) -> [[f64; 2]; 2] {
    let mut lo = [f64::INFINITY; 2];
    let mut hi = [f64::NEG_INFINITY; 2];
    for (s, _) in window.shapes() {
        let (a, b) = shape_bbox(s);
        for k in 0..2 {
            lo[k] = lo[k].min(a[k]);
            hi[k] = hi[k].max(b[k]);
        }
    }
    if case.symmetry == Symmetry::Axisymmetric {
        lo[0] = 0.0;
    }
    [lo, hi]
}

/// Bounding box `(min, max)` of a shape.
pub fn shape_bbox(shape: &Shape) -> ([f64; 2], [f64; 2]) {
    let b = shape.bbox();
    (b.min, b.max)
}

/// Mean of |B · dir| along the part's middle cross-section (the line through its centroid
/// across the applied direction), in the part only; weighted by r in axisymmetric form.
fn apparent_permeability(
    bg: &Phasor,
    regions: &[u32],
    shape: &Shape,
    dir: [f64; 2],
    axi: bool,
) -> Option<f64> {
    let c = centroid(shape);
    let (lo, hi) = shape_bbox(shape);
    let half = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
    let perp = [-dir[1], dir[0]];
    let n = 801;
    let (mut sum, mut wsum) = (0.0, 0.0);
    let f = &bg.f;
    for k in 0..n {
        let t = -half + 2.0 * half * k as f64 / (n - 1) as f64;
        let p = [c[0] + t * perp[0], c[1] + t * perp[1]];
        if axi && p[0] < 0.0 {
            continue;
        }
        let Some((cell, _)) = f[0].locator.locate(&f[0].disc, p) else {
            continue;
        };
        if !regions.contains(&f[0].disc.cell_region[cell]) {
            continue;
        }
        let (Some(a), Some(b)) = (f[0].at(p), f[1].at(p)) else {
            continue;
        };
        let along = (a.b[0] * dir[0] + a.b[1] * dir[1]).hypot(b.b[0] * dir[0] + b.b[1] * dir[1]);
        let w = if axi { p[0] } else { 1.0 };
        sum += w * along;
        wsum += w;
    }
    (wsum > 0.0).then(|| sum / wsum)
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
    crate::limits::check(case)?;
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

/// How the field was solved.
enum Solved {
    Static(StaticSolution),
    Harmonic(HarmonicSolution),
}

/// A phasor field: real and imaginary parts (the imaginary part zero when static) and the
/// solid-conductor constraint values ψ of a harmonic solve.
#[derive(Clone)]
struct Phasor {
    f: [Field; 2],
    psi: Vec<C>,
}

fn zero_like(f: &Field) -> Field {
    Field::combine(&[(0.0, f)]).expect("one part")
}

/// Σ c_i P_i with complex coefficients.
fn combine(parts: &[(C, &Phasor)], like: &Field, nk: usize) -> Phasor {
    let mut re: Vec<(f64, &Field)> = Vec::new();
    let mut im: Vec<(f64, &Field)> = Vec::new();
    let mut psi = vec![C::new(0.0, 0.0); nk];
    for (k, p) in parts {
        re.push((k.re, &p.f[0]));
        re.push((-k.im, &p.f[1]));
        im.push((k.im, &p.f[0]));
        im.push((k.re, &p.f[1]));
        for (a, b) in psi.iter_mut().zip(&p.psi) {
            *a += *k * *b;
        }
    }
    Phasor {
        f: [
            Field::combine(&re).unwrap_or_else(|| zero_like(like)),
            Field::combine(&im).unwrap_or_else(|| zero_like(like)),
        ],
        psi,
    }
}

/// Does the case need the time-harmonic solve (eddy currents somewhere)?
pub fn has_eddy_currents(case: &Case) -> bool {
    let sigma = |m: MaterialId| case.material(m).conductivity;
    case.frequency > 0.0
        && (case.parts.iter().any(|p| sigma(p.material) > 0.0)
            || case
                .conductors
                .iter()
                .any(|c| c.kind == ConductorKind::Solid && sigma(c.material) > 0.0))
}

/// Field ellipse of an rms phasor vector u + jv: semi-axes (rms, i.e. peak / √2) and the
/// direction of the major axis in degrees from +x.
pub fn field_ellipse(u: [f64; 2], v: [f64; 2]) -> Ellipse {
    // eigen-decomposition of G = u uᵀ + v vᵀ
    let (a, b, c) = (
        u[0] * u[0] + v[0] * v[0],
        u[0] * u[1] + v[0] * v[1],
        u[1] * u[1] + v[1] * v[1],
    );
    let m = 0.5 * (a + c);
    let r = (0.25 * (a - c) * (a - c) + b * b).sqrt();
    let angle = 0.5 * (2.0 * b).atan2(a - c);
    Ellipse {
        major_t: (m + r).max(0.0).sqrt(),
        minor_t: (m - r).max(0.0).sqrt(),
        angle_deg: angle.to_degrees(),
    }
}

/// Packing of round enamelled wire in a bobbin (orthocyclic about 0.9, good random winding
/// about 0.78; common practice, no source).
const ENAMEL_PACKING: f64 = 0.78;

/// Conductivity of annealed copper at 20 °C, 1/(1.7241e-8 Ω·m) (IEC 60028).
const COPPER_CONDUCTIVITY_20C: f64 = 1.0 / wire::COPPER_RESISTIVITY_20C;

type Units = (
    Arc<Discretisation>,
    Vec<Phasor>,
    Option<Phasor>,
    Vec<Vec<fluxpick_solver::statics::Density>>,
    usize,
);

/// The unit solutions of a solve as phasors (imaginary parts zero when static).
fn unit_phasors(solved: &Solved) -> Units {
    match solved {
        Solved::Static(s) => (
            s.disc.clone(),
            s.unit
                .iter()
                .map(|f| Phasor {
                    f: [f.clone(), zero_like(f)],
                    psi: vec![],
                })
                .collect::<Vec<_>>(),
            s.background.as_ref().map(|f| Phasor {
                f: [f.clone(), zero_like(f)],
                psi: vec![],
            }),
            s.densities.clone(),
            0,
        ),
        Solved::Harmonic(h) => (
            h.disc.clone(),
            h.unit
                .iter()
                .zip(&h.unit_psi)
                .map(|(f, p)| Phasor {
                    f: f.clone(),
                    psi: p.clone(),
                })
                .collect(),
            h.background.as_ref().map(|f| Phasor {
                f: f.clone(),
                psi: h.background_psi.clone(),
            }),
            h.densities.clone(),
            h.constraints.len(),
        ),
    }
}

/// The total phasor field of the case's currents and background from unit solutions.
fn total_phasor(
    case: &Case,
    unit: &[Phasor],
    background: &Option<Phasor>,
    like: &Field,
    nk: usize,
) -> Phasor {
    let mut currents: Vec<C> = case
        .coils
        .iter()
        .map(|c| C::from_polar(c.current, c.phase_deg.to_radians()))
        .collect();
    currents.extend(
        case.conductors
            .iter()
            .map(|c| C::from_polar(c.current, c.phase_deg.to_radians())),
    );
    let mut parts: Vec<(C, &Phasor)> = currents.iter().copied().zip(unit.iter()).collect();
    if let (Some(b), Some(bg)) = (&case.background, background) {
        parts.push((C::from_polar(1.0, b.phase_deg.to_radians()), bg));
    }
    combine(&parts, like, nk)
}

/// The command line's `--accuracy`, which overrides `model.accuracy` for every solve.
static ACCURACY: std::sync::OnceLock<f64> = std::sync::OnceLock::new();

/// Sets the accuracy target of every later [`run`] (the `--accuracy` option).
pub fn set_accuracy(target: f64) {
    let _ = ACCURACY.set(target);
}

/// Solves a case: on one mesh, or with `model.accuracy` set, adaptively
/// ([`crate::adapt::run_adaptive`]).
pub fn run(case: &Case) -> Result<Run, StudyError> {
    match ACCURACY.get().copied().or(case.accuracy) {
        None => run_on(case, None),
        Some(target) => crate::adapt::run_adaptive(case, target),
    }
    .map_err(|e| crate::sanity::name_regions(case, e))
}

/// One solve, on the case's mesh or (with `map`) on a mesh refined to the map's sizes.
pub fn run_on(case: &Case, map: Option<&SizeMap>) -> Result<Run, StudyError> {
    let omega = TAU * case.frequency;
    let ac = case.frequency > 0.0;
    let mut warnings = Vec::new();
    let model = Model::new(case)?;
    let t0 = Instant::now();
    let mesh = match map {
        None => mesh_model(case, &model)?,
        Some(m) => fluxpick_mesh::generate_refined(&model.spec, m)?,
    };
    let mesh_s = t0.elapsed().as_secs_f64();
    let materials = model.materials(case);
    let windings = model.windings(case);
    let bvec = case
        .background
        .as_ref()
        .map(|b| [b.b * b.direction[0], b.b * b.direction[1]]);
    let mut problem = Problem {
        mesh: &mesh,
        formulation: model.formulation,
        order: model.order,
        materials: materials.clone(),
        windings: windings.clone(),
        background: bvec,
        dirichlet: model.dirichlet.clone(),
    };
    // Nonlinear regions: the curve of each region's material.
    let curves: Vec<Option<BhCurve>> = {
        model
            .owners
            .iter()
            .map(|o| {
                let mat = match o {
                    Owner::Part(i) => Some(case.material(case.parts[*i].material)),
                    Owner::Conductor(i) => Some(case.material(case.conductors[*i].material)),
                    _ => None,
                }?;
                let pts = mat.bh.as_ref()?;
                Some(BhCurve::new(pts).map_err(|e| (mat.name.clone(), e)))
            })
            .map(|c| c.transpose())
            .collect::<Result<_, _>>()
            .map_err(|(m, e)| StudyError::Curve(m, e))?
    };
    let mut newton = None;
    if ac && curves.iter().any(|c| c.is_some()) {
        // At f > 0: an effective (energy-equivalent) reluctivity per saturating region, from
        // the region's mean flux density, iterated to a fixed point.
        let mut mats = problem.materials.clone();
        let mut brackets = vec![(0.0f64, f64::INFINITY); mats.len()];
        let mut converged = false;
        let mut iterations = 0;
        for _ in 0..60 {
            iterations += 1;
            let p = Problem {
                materials: mats.clone(),
                ..problem.clone()
            };
            let s = if has_eddy_currents(case) {
                Solved::Harmonic(solve_harmonic(&p, case.frequency)?)
            } else {
                Solved::Static(solve_static(&p)?)
            };
            let (_, u, bg, _, k) = unit_phasors(&s);
            let like = match (u.first(), &bg) {
                (Some(x), _) => x.f[0].clone(),
                (None, Some(b)) => b.f[0].clone(),
                (None, None) => return Err(StudyError::Solve(SolveError::NoUnknowns)),
            };
            let tot = total_phasor(case, &u, &bg, &like, k);
            // per region, a bracket [lo, hi] on ν closed by bisection in log ν (the plain
            // fixed-point iteration oscillates once the core saturates)
            let mut change: f64 = 0.0;
            for (r, c) in curves.iter().enumerate() {
                let Some(c) = c else { continue };
                let b_mean = region_flux(&[&tot.f[0], &tot.f[1]], &[r as u32]).b_mean;
                let target = c.effective_nu(std::f64::consts::SQRT_2 * b_mean);
                let nu = mats[r].nu;
                let (lo, hi) = &mut brackets[r];
                if target > nu {
                    *lo = nu;
                } else {
                    *hi = nu;
                }
                let new = if lo.is_finite() && hi.is_finite() && *lo > 0.0 {
                    (*lo * *hi).sqrt()
                } else {
                    target
                };
                change = change
                    .max((new / nu - 1.0).abs())
                    .max((target / nu - 1.0).abs());
                mats[r].nu = new;
            }
            if change < 1e-5 {
                converged = true;
                break;
            }
        }
        warnings.push(format!(
            "saturating materials at {} Hz: an effective permeability per region from the energy-equivalent reluctivity at its mean flux density ({} iterations{}); an approximation: harmonics and saturation within a region are not modelled",
            case.frequency,
            iterations,
            if converged { "" } else { ", NOT converged" }
        ));
        problem.materials = mats;
    }
    let solved = if has_eddy_currents(case) {
        Solved::Harmonic(solve_harmonic(&problem, case.frequency)?)
    } else if !ac && curves.iter().any(|c| c.is_some()) {
        let currents: Vec<f64> = case
            .coils
            .iter()
            .map(|c| c.current)
            .chain(case.conductors.iter().map(|c| c.current))
            .collect();
        let nl = solve_nonlinear(&problem, &curves, &currents, NewtonOptions::default()).map_err(
            |e| match e {
                NonlinearError::Solve(s) => StudyError::Solve(s),
                e => StudyError::Newton(e.to_string()),
            },
        )?;
        newton = Some((nl.field, nl.report));
        Solved::Static(nl.linear)
    } else {
        Solved::Static(solve_static(&problem)?)
    };
    let t0 = Instant::now();
    // Unit solutions (each winding at 1 A rms, phase 0; the background at its b, phase 0).
    let (disc, unit, background, densities, nk) = unit_phasors(&solved);
    let like = match (&unit.first(), &background) {
        (Some(u), _) => u.f[0].clone(),
        (None, Some(b)) => b.f[0].clone(),
        (None, None) => return Err(StudyError::Solve(SolveError::NoUnknowns)),
    };
    // Phasor currents of every winding (coils first, then conductors), rms.
    let mut currents: Vec<C> = case
        .coils
        .iter()
        .map(|c| C::from_polar(c.current, c.phase_deg.to_radians()))
        .collect();
    currents.extend(
        case.conductors
            .iter()
            .map(|c| C::from_polar(c.current, c.phase_deg.to_radians())),
    );
    let mut total = total_phasor(case, &unit, &background, &like, nk);
    if let Some((f, _)) = &newton {
        // the Newton solve's field replaces the superposition (which does not hold)
        total = Phasor {
            f: [f.clone(), zero_like(f)],
            psi: vec![],
        };
        warnings.push(
            "saturating materials: figures are from the Newton solve at the case's currents and field; inductances (both routes) are those of the unsaturated materials (their μr), not incremental values at this operating point".to_string(),
        );
    }
    let field = total.f.clone();
    let axi = case.symmetry == Symmetry::Axisymmetric;
    let depth = if axi { 1.0 } else { case.depth };
    let quad = disc.order == fluxpick_solver::Order::Quadratic;

    // Flux linkage (per metre of depth in planar form) of winding i in a phasor field.
    let harmonic = match &solved {
        Solved::Harmonic(h) => Some(h),
        Solved::Static(_) => None,
    };
    let linkage = |i: usize, p: &Phasor| -> C {
        if densities[i].is_empty() {
            // a solid conductor of the harmonic solve: λ = ψ (planar) or 2πψ
            let h = harmonic.expect("only solid conductors of a harmonic solve lack a density");
            let k = h
                .constraints
                .iter()
                .position(|k| k.winding == Some(i))
                .expect("constraint of a solid conductor");
            p.psi[k] * if axi { TAU } else { 1.0 }
        } else {
            C::new(
                flux_linkage(&p.f[0], &densities[i]),
                flux_linkage(&p.f[1], &densities[i]),
            )
        }
    };
    let energy2 = |a: &Phasor, b: &Phasor| -> f64 {
        // ∫ν Re(B_a · B_b*) dV: the energy route to L_ab
        Field::coenergy_sum(&[(&a.f[0], &b.f[0]), (&a.f[1], &b.f[1])], |_| true)
    };
    let nw = unit.len();
    let mut flux_m = vec![vec![0.0; nw]; nw];
    let mut energy_m = vec![vec![0.0; nw]; nw];
    let mut lambda_unit = vec![vec![C::new(0.0, 0.0); nw]; nw];
    for i in 0..nw {
        for j in 0..nw {
            lambda_unit[i][j] = linkage(i, &unit[j]);
            flux_m[i][j] = lambda_unit[i][j].re * depth;
            if j >= i {
                energy_m[i][j] = energy2(&unit[i], &unit[j]) * depth;
                energy_m[j][i] = energy_m[i][j];
            }
        }
    }
    // Discretisation error estimates (estimate.rs): the recovered-error Gram matrix of the
    // unit solutions, the background's and the total field's.
    let est_fields = {
        let mut v: Vec<(&Field, EstUse)> = Vec::new();
        let drive = EstUse {
            drive: true,
            per_cell: false,
        };
        for p in unit.iter().chain(background.iter()) {
            v.push((&p.f[0], drive));
            if harmonic.is_some() {
                v.push((&p.f[1], drive));
            }
        }
        let per_cell = EstUse {
            drive: false,
            per_cell: true,
        };
        v.push((&total.f[0], per_cell));
        if harmonic.is_some() {
            v.push((&total.f[1], per_cell));
        }
        v
    };
    let est = estimate(&est_fields, mesh.exterior.as_ref().map(|e| e.region));
    // phasor k (units, then the background) -> its real and imaginary field indices
    let stride = if harmonic.is_some() { 2 } else { 1 };
    let gc = |a: usize, b: usize| -> C {
        let g = |x: usize, y: usize| est.gram[x][y];
        let (ra, rb) = (a * stride, b * stride);
        if stride == 1 {
            C::new(g(ra, rb), 0.0)
        } else {
            C::new(g(ra, rb) - g(ra + 1, rb + 1), g(ra, rb + 1) + g(ra + 1, rb))
        }
    };
    let bg_index = unit.len();
    let bg_coef = case
        .background
        .as_ref()
        .filter(|_| background.is_some())
        .map(|b| C::from_polar(1.0, b.phase_deg.to_radians()));
    // Error of winding i's flux linkage in the total field (per metre in planar form).
    let linkage_err = |i: usize| -> C {
        let mut e: C = (0..unit.len()).map(|j| currents[j] * gc(i, j)).sum();
        if let Some(k) = bg_coef {
            e += k * gc(i, bg_index);
        }
        e
    };
    // With B-H curves at 0 Hz the figures come from the Newton field, which the linear
    // estimates do not describe: no estimates then.
    let estimated = newton.is_none();
    let rel = |err: f64, value: f64| -> Option<f64> {
        (estimated && value.abs() > 0.0 && err.is_finite()).then(|| err.abs() / value.abs())
    };
    // Relative error of a field quantity over regions: √(η²/∫ν|B|²) of the total field.
    let region_err = |regions: &[u32]| -> Option<f64> {
        let (mut e, mut w) = (0.0, 0.0);
        for c in (0..disc.n_cells()).filter(|&c| regions.contains(&disc.cell_region[c])) {
            for k in 0..est.cell_error.len() {
                e += est.cell_error[k][c];
                w += est.cell_energy[k][c];
            }
        }
        (estimated && w > 0.0).then(|| (e / w).sqrt())
    };
    // Relative error of a region's mean |B|: the shift of the mean when B_h is replaced by
    // the recovered B* (the recovered field is the better one; their difference estimates
    // the error of the mean), over the mean of |B_h|.
    let mean_err = |regions: &[u32]| -> Option<f64> {
        let mut shift = [0.0; 4];
        let mut babs = 0.0;
        for c in (0..disc.n_cells()).filter(|&c| regions.contains(&disc.cell_region[c])) {
            for k in 0..est.cell_shift.len() {
                shift[2 * k] += est.cell_shift[k][c][0];
                shift[2 * k + 1] += est.cell_shift[k][c][1];
                babs += est.cell_abs[k][c];
            }
        }
        let s = shift.iter().map(|x| x * x).sum::<f64>().sqrt();
        (estimated && babs > 0.0).then(|| s / babs)
    };
    let energy_err = {
        let tot: f64 = est.cell_error.iter().flatten().sum();
        let w: f64 = est.cell_energy.iter().flatten().sum();
        (w > 0.0).then(|| tot / w)
    };
    // Losses per region id (W, for the model depth).
    let region_loss: Vec<f64> = match harmonic {
        Some(h) => h
            .region_losses(&total.f, &total.psi)
            .iter()
            .map(|p| p * depth)
            .collect(),
        None => vec![0.0; disc.region_count],
    };
    let skin_of = |name: &str| {
        model
            .skin
            .iter()
            .find(|s| s.name == name)
            .map(|s| s.depth_m)
    };

    // Parts and conductors: |B| statistics of the rms vector.
    let flux_stats = |regions: &[u32]| region_flux(&[&field[0], &field[1]], regions);
    let mut parts = BTreeMap::new();
    for (i, p) in case.parts.iter().enumerate() {
        let regions = model.regions_of(|o| *o == Owner::Part(i));
        let s = flux_stats(&regions);
        let b_sat = case.material(p.material).b_sat;
        let mu_app = match (&case.background, &background) {
            (Some(b), Some(bg)) if b.b != 0.0 => {
                // with saturation the Newton field at the case's own field (superposition
                // does not hold); otherwise the applied field's solution alone
                let f = if newton.is_some() { &total } else { bg };
                apparent_permeability(f, &regions, &p.shape, b.direction, axi).map(|m| m / b.b)
            }
            _ => None,
        };
        if let Some(bs) = b_sat {
            if s.b_peak > bs {
                warnings.push(format!(
                    "part `{}`: peak |B| {} exceeds the saturation flux density {} of `{}`; the linear result does not hold there",
                    p.name, crate::output::eng(s.b_peak, "T"), crate::output::eng(bs, "T"), case.material(p.material).name
                ));
            } else if s.b_peak > 0.8 * bs {
                warnings.push(format!(
                    "part `{}`: peak |B| {} is above 80 % of the saturation flux density {} (near saturation)",
                    p.name, crate::output::eng(s.b_peak, "T"), crate::output::eng(bs, "T")
                ));
            }
        }
        parts.insert(
            p.name.clone(),
            PartFigures {
                apparent_permeability: mu_app,
                material: case.material(p.material).name.clone(),
                b_mean_t: s.b_mean,
                b_mean_t_err: mean_err(&regions),
                b_peak_t: s.b_peak,
                loss_w: regions.iter().map(|&r| region_loss[r as usize]).sum(),
                loss_w_err: region_err(&regions)
                    .filter(|_| regions.iter().any(|&r| region_loss[r as usize] > 0.0))
                    .map(|e| 2.0 * e),
                b_sat_t: b_sat,
                b_peak_over_sat: b_sat.map(|bs| s.b_peak / bs),
                skin_depth_m: skin_of(&p.name),
            },
        );
    }
    let ncoils = case.coils.len();
    let mut conductors = BTreeMap::new();
    for (i, c) in case.conductors.iter().enumerate() {
        let regions = model.regions_of(|o| *o == Owner::Conductor(i));
        let s = flux_stats(&regions);
        let sigma = case.material(c.material).conductivity;
        let w = ncoils + i;
        // DC resistance: planar depth/(σS); axisymmetric (a ring) 2π/(σ∫dS/r) when solid,
        // ∫ j²/σ dV with the uniform density when stranded.
        let mut area = 0.0;
        let mut inv_r = 0.0;
        let mut dv_inv_r2 = 0.0;
        for cell in (0..disc.n_cells()).filter(|&k| regions.contains(&disc.cell_region[k])) {
            like.quadrature(cell, &fluxpick_solver::quadrature::DEGREE6, |v, dv| {
                let dsurf = if axi { dv / (TAU * v.x[0]) } else { dv };
                area += dsurf;
                if axi {
                    inv_r += dsurf / v.x[0];
                    dv_inv_r2 += dv;
                }
            });
        }
        let r_dc = if sigma <= 0.0 || area <= 0.0 {
            0.0
        } else if !axi {
            depth / (sigma * area)
        } else if c.kind == ConductorKind::Solid {
            TAU / (sigma * inv_r)
        } else {
            dv_inv_r2 / (sigma * area * area)
        };
        let inside = |cell: usize| regions.contains(&disc.cell_region[cell]);
        let own = &unit[w];
        let l_int = (own.f[0].energy(inside) + own.f[1].energy(inside)) * 2.0 * depth;
        let loss = if harmonic.is_some() && c.kind == ConductorKind::Solid {
            regions.iter().map(|&r| region_loss[r as usize]).sum()
        } else {
            c.current * c.current * r_dc
        };
        let r_ac = if c.current != 0.0 {
            loss / (c.current * c.current)
        } else {
            // no current of its own: the resistance at 1 A alone
            match harmonic {
                Some(h) if c.kind == ConductorKind::Solid => {
                    h.region_losses(&own.f, &own.psi)
                        .iter()
                        .enumerate()
                        .filter(|(r, _)| regions.contains(&(*r as u32)))
                        .map(|(_, p)| p)
                        .sum::<f64>()
                        * depth
                }
                _ => r_dc,
            }
        };
        // V = jωλ + (at DC or when stranded) the resistive drop I R_dc.
        let lam = linkage(w, &total) * depth;
        let i_w = currents[w];
        let v = C::new(0.0, omega) * lam
            + if harmonic.is_some() && c.kind == ConductorKind::Solid {
                C::new(0.0, 0.0)
            } else {
                i_w * r_dc
            };
        // the impedance per ampere of a solid conductor of the harmonic solve is a value of
        // the bilinear form (estimate.rs): its error is the Gram self term
        let z_err = (harmonic.is_some() && c.kind == ConductorKind::Solid)
            .then(|| rel(gc(w, w).norm(), lambda_unit[w][w].norm()))
            .flatten();
        let own_err = region_err(&regions).map(|e| 2.0 * e);
        conductors.insert(
            c.name.clone(),
            ConductorFigures {
                loss_w_err: z_err.or(own_err.filter(|_| harmonic.is_some())),
                resistance_ohm_err: z_err,
                ac_dc_ratio_err: z_err,
                internal_inductance_h_err: own_err,
                inductance_h_err: rel(gc(w, w).norm() * depth, flux_m[w][w]),
                voltage_v: if ac { v.norm() } else { v.re },
                voltage_v_phase_deg: if ac { v.arg().to_degrees() } else { 0.0 },
                input_power_w: (v * i_w.conj()).re,
                current_a: c.current,
                phase_deg: c.phase_deg,
                b_mean_t: s.b_mean,
                b_peak_t: s.b_peak,
                loss_w: loss,
                resistance_ohm: r_ac,
                dc_resistance_ohm: r_dc,
                ac_dc_ratio: (r_dc > 0.0).then(|| r_ac / r_dc),
                internal_inductance_h: l_int,
                internal_reactance_ohm: ac.then_some(omega * l_int),
                inductance_h: flux_m[w][w],
                skin_depth_m: skin_of(&c.name),
            },
        );
    }
    // Cross-section area (m²) and volume (m³, for the model depth) of a set of regions.
    let measure = |regions: &[u32]| -> (f64, f64) {
        let (mut area, mut volume) = (0.0, 0.0);
        for cell in (0..disc.n_cells()).filter(|&k| regions.contains(&disc.cell_region[k])) {
            like.quadrature(cell, &fluxpick_solver::quadrature::DEGREE2, |v, dv| {
                area += if axi { dv / (TAU * v.x[0]) } else { dv };
                volume += dv * depth;
            });
        }
        (area, volume)
    };
    let mut coils = BTreeMap::new();
    for (i, c) in case.coils.iter().enumerate() {
        let lam = linkage(i, &total) * depth;
        let (lam_m, lam_p) = (lam.norm(), lam.arg().to_degrees());
        let l = flux_m[i][i];
        // Z = jωλ per ampere of its own current: R_eddy = −ω Im λ.
        let r_eddy = if harmonic.is_some() {
            -omega * lambda_unit[i][i].im * depth
        } else {
            0.0
        };
        let mtl = mean_turn_length(case, &c.window);
        let length = c.turns * mtl;
        let r = wire::resistance_per_metre(c.wire.diameter, c.temperature_c) * length;
        let mass = wire::mass_per_metre(c.wire.diameter) * length;
        // EMF = −jωλ (rms phasor); static: 0.
        let emf = C::new(0.0, -omega) * lam;
        let (emf_m, emf_p) = (emf.norm(), emf.arg().to_degrees());
        let r_total = r + r_eddy;
        let tuned = ac && l > 0.0 && r_total > 0.0;
        let circuit = case.circuit.as_ref().filter(|k| k.coil.index() == i);
        let tuning = circuit.map_or(circuit::Tuning::Series, |k| match k.tuning {
            crate::case::Tuning::Series => circuit::Tuning::Series,
            crate::case::Tuning::Parallel => circuit::Tuning::Parallel,
            crate::case::Tuning::None => circuit::Tuning::None,
        });
        let c_series = tuned.then(|| circuit::series_capacitance(omega, l));
        let c_parallel = tuned.then(|| circuit::parallel_capacitance(omega, l, r_total));
        let ct = match tuning {
            circuit::Tuning::Series => c_series,
            circuit::Tuning::Parallel => c_parallel,
            circuit::Tuning::None => None,
        };
        let q = tuned.then(|| circuit::quality_factor(omega, l, r_total));
        let pm = tuned.then(|| circuit::matched_power(emf_m, r_total));
        let cap_v = ct.map(|cap| circuit::capacitor_voltage(tuning, omega, emf_m, l, r_total, cap));
        let load_ohm = circuit.and_then(|k| match k.load {
            crate::case::Load::Matched => None,
            crate::case::Load::Resistance(x) => Some(x),
        });
        let load_power = if !tuned {
            None
        } else if let Some(rl) = load_ohm {
            Some(circuit::load_power(
                tuning,
                omega,
                emf_m,
                l,
                r_total,
                ct.unwrap_or(f64::INFINITY),
                rl,
            ))
        } else {
            pm
        };
        let storage = circuit.and_then(|k| k.storage);
        let (storage_energy, charge_time) = match (storage, load_power) {
            (Some(st), Some(p)) if p > 0.0 => {
                let (e, t) = circuit::charge_time(st.capacitance, st.voltage, p);
                (Some(e), Some(t))
            }
            (Some(st), _) => (Some(0.5 * st.capacitance * st.voltage * st.voltage), None),
            _ => (None, None),
        };
        // The window and what it holds.
        let side0 = model.regions_of(|o| matches!(o, Owner::CoilSide(k, 0, _) if *k == i));
        let (window_area, _) = measure(&side0);
        let fit = wire::turns_that_fit(window_area, c.wire.diameter, c.fill_factor);
        // The core: magnetic parts (μr > 1) inside the coil's span (axisymmetric: from the
        // axis to the window; planar: between the sides), by their centroid.
        let span = coil_span(case, &c.window);
        let core: Vec<usize> = case
            .parts
            .iter()
            .enumerate()
            .filter(|(_, p)| {
                case.material(p.material).mu_r > 1.0 && {
                    let x = centroid(&p.shape);
                    x[0] >= span[0][0]
                        && x[0] <= span[1][0]
                        && x[1] >= span[0][1]
                        && x[1] <= span[1][1]
                }
            })
            .map(|(k, _)| k)
            .collect();
        let (core_volume, core_mass) = if core.is_empty() {
            (None, None)
        } else {
            let mut vol = 0.0;
            let mut mass = Some(0.0);
            for &k in &core {
                let (_, v) = measure(&model.regions_of(|o| *o == Owner::Part(k)));
                vol += v;
                let rho = case.material(case.parts[k].material).density;
                mass = match (mass, rho) {
                    (Some(m), Some(rho)) => Some(m + rho * v),
                    _ => None,
                };
            }
            (Some(vol), mass)
        };
        let wire_skin = ac.then(|| {
            c.wire.diameter / crate::build::skin_depth(case.frequency, 1.0, COPPER_CONDUCTIVITY_20C)
        });
        let lam_err = rel(linkage_err(i).norm() * depth, lam.norm());
        let l_err = rel(gc(i, i).norm() * depth, l);
        coils.insert(
            c.name.clone(),
            CoilFigures {
                flux_linkage_wb_err: lam_err,
                emf_v_err: lam_err.filter(|_| ac),
                inductance_h_err: l_err,
                q_err: l_err.filter(|_| q.is_some()),
                tuning_capacitance_f_err: l_err.filter(|_| ct.is_some()),
                matched_power_w_err: lam_err.filter(|_| pm.is_some()).map(|e| 2.0 * e),
                equivalent_area_m2_err: match (&case.background, &background) {
                    (Some(b), Some(bg)) if b.b != 0.0 && newton.is_none() => {
                        rel(gc(i, bg_index).norm(), linkage(i, bg).norm())
                    }
                    _ => None,
                },
                turns: c.turns,
                flux_linkage_wb: if ac { lam_m } else { lam.re },
                flux_linkage_wb_phase_deg: if ac { lam_p } else { 0.0 },
                emf_v: if ac { emf_m } else { 0.0 },
                emf_v_phase_deg: if ac { emf_p } else { 0.0 },
                inductance_h: l,
                inductance_energy_h: energy_m[i][i],
                resistance_ohm: r,
                eddy_resistance_ohm: r_eddy,
                wire_diameter_m: c.wire.diameter,
                wire_length_m: length,
                mean_turn_length_m: mtl,
                copper_mass_kg: mass,
                q,
                tuning_capacitance_f: ct,
                matched_power_w: pm,
                window_area_m2: window_area,
                turns_that_fit: fit,
                turns_that_fit_enamelled: wire::turns_that_fit(
                    window_area,
                    wire::overall_diameter(c.wire.diameter, wire::Grade::Grade2),
                    ENAMEL_PACKING,
                ),
                wire_diameter_over_skin_depth: wire_skin,
                tuning: match tuning {
                    circuit::Tuning::Series => "series",
                    circuit::Tuning::Parallel => "parallel",
                    circuit::Tuning::None => "none",
                }
                .into(),
                series_capacitance_f: c_series,
                parallel_capacitance_f: c_parallel,
                capacitor_voltage_v: cap_v,
                load_ohm,
                load_power_w: load_power,
                storage_energy_j: storage_energy,
                charge_time_s: charge_time,
                core_parts: core.iter().map(|&k| case.parts[k].name.clone()).collect(),
                core_volume_m3: core_volume,
                core_mass_kg: core_mass,
                power_per_cm3_w: match (pm, core_volume) {
                    (Some(p), Some(v)) if v > 0.0 => Some(p / (v * 1e6)),
                    _ => None,
                },
                power_per_gram_w: match (pm, core_mass) {
                    (Some(p), Some(m)) => Some(p / ((m + mass) * 1e3)),
                    _ => None,
                },
                equivalent_area_m2: match (&case.background, &background) {
                    // with saturation: the total flux linkage over the applied b
                    (Some(b), Some(_)) if b.b != 0.0 && newton.is_some() => Some(lam.norm() / b.b),
                    (Some(b), Some(bg)) if b.b != 0.0 => Some(linkage(i, bg).norm() * depth / b.b),
                    _ => None,
                },
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
        let pairs: Vec<Option<([f64; 2], [f64; 2])>> = re
            .iter()
            .zip(&im)
            .map(|(a, b)| match (a.b, b.b) {
                (Some(x), Some(y)) => Some((x, y)),
                _ => None,
            })
            .collect();
        let b_t = pairs
            .iter()
            .map(|p| {
                p.map(|(x, y)| {
                    if ac {
                        [x[0].hypot(y[0]), x[1].hypot(y[1])]
                    } else {
                        x
                    }
                })
            })
            .collect();
        let b_abs_t = pairs
            .iter()
            .map(|p| {
                p.map(|(x, y)| (x[0].powi(2) + x[1].powi(2) + y[0].powi(2) + y[1].powi(2)).sqrt())
            })
            .collect();
        let ellipse = if ac {
            Some(
                pairs
                    .iter()
                    .map(|p| p.map(|(x, y)| field_ellipse(x, y)))
                    .collect(),
            )
        } else {
            None
        };
        probes.insert(
            p.name.clone(),
            ProbeFigures {
                points,
                b_t,
                b_abs_t,
                ellipse,
            },
        );
    }
    // Current density per cell (A/m², rms phasor): induced and solid-conductor currents
    // from the harmonic solve plus the imposed density of stranded windings.
    let mut current_density: Vec<C> = match harmonic {
        Some(h) => h.cell_current_density(&total.f, &total.psi),
        None => vec![C::new(0.0, 0.0); disc.n_cells()],
    };
    for (w, dens) in densities.iter().enumerate() {
        for de in dens {
            for (cell, j) in current_density.iter_mut().enumerate() {
                if disc.cell_region[cell] == de.region {
                    let v = disc.vertices(cell);
                    let x = [
                        (v[0][0] + v[1][0] + v[2][0]) / 3.0,
                        (v[0][1] + v[1][1] + v[2][1]) / 3.0,
                    ];
                    *j += currents[w] * de.at(x);
                }
            }
        }
    }
    // Context warnings.
    if ac && (25.0..=300.0).contains(&case.frequency) {
        // ICNIRP 2010 reference levels for 25–300 Hz (values from memory of the guideline's
        // tables): general public 200 µT, occupational 1000 µT (rms).
        for (name, p) in &probes {
            let peak = p.b_abs_t.iter().flatten().fold(0.0f64, |a, b| a.max(*b));
            let level = if peak > 1e-3 {
                Some("the occupational reference level 1000 µT")
            } else if peak > 2e-4 {
                Some("the general-public reference level 200 µT")
            } else {
                None
            };
            if let Some(l) = level {
                warnings.push(format!(
                    "probe `{name}`: |B| up to {} exceeds {l} (ICNIRP 2010, 50/60 Hz): exposure limits apply where people can be",
                    crate::output::eng(peak, "T")
                ));
            }
        }
    }
    for (name, c) in &coils {
        if let Some(v) = c.capacitor_voltage_v.filter(|v| *v > 50.0) {
            warnings.push(format!(
                "coil `{name}`: the tuning capacitor sees about {} rms at resonance (above 50 V): rate it for this, guard it, and discharge it before touching the circuit",
                crate::output::eng(v, "V")
            ));
        }
        // The case check counts bare copper at the fill factor; with enamel (grade 2) at a
        // good random-winding packing the real window may hold fewer.
        if c.turns > c.turns_that_fit_enamelled * (1.0 + 1e-9) {
            warnings.push(format!(
                "coil `{name}`: {} turns fit as bare copper, but with grade-2 enamel at a packing of {} the window holds only about {:.0}: check the bobbin",
                c.turns,
                ENAMEL_PACKING,
                c.turns_that_fit_enamelled
            ));
        }
        if let Some(x) = c.wire_diameter_over_skin_depth.filter(|x| *x > 0.5) {
            warnings.push(format!(
                "coil `{name}`: the wire is {x:.2} skin depths thick; skin and proximity effects in the winding are not negligible and are not in `resistance_ohm`"
            ));
        }
        if !axi && !c.core_parts.is_empty() {
            warnings.push(format!(
                "coil `{name}`: a planar model treats the core ({}) as infinitely long along the depth; a finite rod is demagnetised much more strongly, so characterise rods with an axisymmetric model",
                c.core_parts.join(", ")
            ));
        }
    }
    let energy = if newton.is_some() {
        // ∫ (∫₀^B H dB) dV over the physical domain: the curve's energy density in
        // nonlinear regions, ½ν|B|² elsewhere
        let f = &field[0];
        let mut w = 0.0;
        for c in (0..disc.n_cells()).filter(|&c| !disc.is_image(c)) {
            let curve = curves
                .get(disc.cell_region[c] as usize)
                .and_then(|k| k.as_ref());
            f.quadrature(c, &fluxpick_solver::quadrature::DEGREE5, |v, dv| {
                let b = v.b[0].hypot(v.b[1]);
                w += dv
                    * match curve {
                        Some(k) => k.energy_density(b),
                        None => 0.5 * f.nu_at(c, v.x) * b * b,
                    };
            });
        }
        w * depth
    } else {
        domain_energy(&[&field[0], &field[1]]) * depth
    };
    let stats = mesh.stats();
    let physical_cells = (0..disc.n_cells()).filter(|&c| !disc.is_image(c)).count();
    let physical_nodes = {
        let mut used = vec![false; disc.points.len()];
        for c in (0..disc.n_cells()).filter(|&c| !disc.is_image(c)) {
            for &n in disc.cell(c) {
                used[n as usize] = true;
            }
        }
        used.iter().filter(|u| **u).count()
    };
    let mut names: Vec<String> = case.coils.iter().map(|c| c.name.clone()).collect();
    names.extend(case.conductors.iter().map(|c| c.name.clone()));
    let post_s = t0.elapsed().as_secs_f64();
    let (timings, nnz, max_residual, method, iterations) = match &solved {
        Solved::Static(s) => (
            s.timings,
            s.nnz,
            s.max_residual,
            "supernodal Cholesky (real)",
            None,
        ),
        Solved::Harmonic(h) => (
            h.timings,
            h.nnz,
            h.max_residual,
            "GMRES preconditioned by the Cholesky of K + ωσM",
            Some(h.krylov_iterations),
        ),
    };
    let results = Results {
        title: case.title.clone(),
        symmetry: if axi { "axisymmetric" } else { "planar" }.into(),
        frequency_hz: case.frequency,
        depth_m: (!axi).then_some(case.depth),
        mesh: MeshFigures {
            nodes: physical_nodes,
            triangles: physical_cells,
            exterior_triangles: disc.n_cells() - physical_cells,
            unknowns: disc.n_dofs + nk,
            min_angle_deg: stats.min_angle_deg,
            mean_angle_deg: stats.mean_min_angle_deg,
            element_order: if quad { 2 } else { 1 },
        },
        energy_j: energy,
        energy_j_err: energy_err.filter(|_| newton.is_none()),
        parts,
        conductors,
        coils,
        inductance_matrix: InductanceMatrix {
            names,
            flux_h: flux_m,
            energy_h: energy_m,
        },
        probes,
        skin_layers: model
            .skin
            .iter()
            .map(|s| SkinFigures {
                name: s.name.clone(),
                skin_depth_m: s.depth_m,
                surface_element_m: s.surface_size_m,
            })
            .collect(),
        solve: SolveFigures {
            mesh_s,
            assemble_s: timings.setup + timings.assemble,
            factor_s: timings.symbolic + timings.factor,
            solve_s: timings.solve,
            post_s,
            nonzeros: nnz,
            max_relative_residual: max_residual,
            method: method.into(),
            krylov_iterations: iterations,
            newton_iterations: newton.as_ref().map(|n| n.1.iterations),
            residual_history: newton.as_ref().map(|n| n.1.residual_history.clone()),
        },
        accuracy: None,
        warnings,
    };
    Ok(Run {
        model,
        mesh,
        disc,
        field,
        current_density,
        error_indicator: est.cell_indicator.clone(),
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
