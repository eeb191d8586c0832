//! The figures stage: the case's parts, conductors, coils and probes described in the
//! library's plain terms (regions, material data, windings) and handed to the figure
//! functions of `fluxpick_postproc::design`.
//!
//! Geometry that only the case knows stays here: which parts form a coil's core (magnetic
//! parts inside the coil's span, by their centroid) and a winding's mean turn length.

use std::collections::BTreeMap;
use std::f64::consts::TAU;

use fluxpick_postproc::circuit::Tuning;
use fluxpick_postproc::design::{self, Context, CorePart, Harvest, Section, Storage};
use fluxpick_postproc::errors::ErrorModel;
use fluxpick_postproc::fields::Fields;
use fluxpick_postproc::probe;
use fluxpick_solver::bh::BhCurve;

use crate::build::{Model, Owner};
use crate::case::{Case, Coil, CoilWindow, ConductorKind, ProbeKind, Shape, Symmetry};

use super::results::{Results, SkinFigures, SolveFigures};

/// The figures of one solve, without warnings and run times (`solve` gives those).
pub struct Figures {
    pub parts: BTreeMap<String, design::PartFigures>,
    pub conductors: BTreeMap<String, design::ConductorFigures>,
    pub coils: BTreeMap<String, design::CoilFigures>,
    pub probes: BTreeMap<String, design::ProbeFigures>,
    pub inductance_matrix: design::InductanceMatrix,
    /// Stored energy of the total field (J, for the model depth).
    pub energy: f64,
}

/// The context every figure shares.
pub fn context(case: &Case) -> Context {
    let axi = case.symmetry == Symmetry::Axisymmetric;
    Context {
        frequency: case.frequency,
        depth: if axi { 1.0 } else { case.depth },
        axisymmetric: axi,
    }
}

/// Bounding box `(min, max)` of a shape.
pub fn shape_bbox(shape: &Shape) -> ([f64; 2], [f64; 2]) {
    let b = shape.bbox();
    (b.min, b.max)
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

/// Mean length of one turn: axisymmetric 2π r̄ of the window's centroid; planar, two runs
/// along the depth plus two end runs across the distance between the sides' centroids
/// (straight end turns: an approximation).
pub fn mean_turn_length(case: &Case, window: &CoilWindow) -> f64 {
    match (case.symmetry, window) {
        (Symmetry::Axisymmetric, w) => {
            let shapes = w.shapes();
            let r = shapes.iter().map(|(s, _)| s.centroid()[0]).sum::<f64>() / shapes.len() as f64;
            TAU * r
        }
        (Symmetry::Planar, CoilWindow::Sides(sides)) if sides.len() >= 2 => {
            let a = sides[0].0.centroid();
            let b = sides[1].0.centroid();
            2.0 * case.depth + 2.0 * (a[0] - b[0]).hypot(a[1] - b[1])
        }
        (Symmetry::Planar, _) => case.depth,
    }
}

fn skin_of(model: &Model, name: &str) -> Option<f64> {
    model
        .skin
        .iter()
        .find(|s| s.name == name)
        .map(|s| s.depth_m)
}

fn part_specs(case: &Case, model: &Model) -> Vec<design::PartSpec> {
    case.parts
        .iter()
        .enumerate()
        .map(|(i, p)| {
            let material = case.material(p.material);
            design::PartSpec {
                material: material.name.clone(),
                regions: model.regions_of(|o| *o == Owner::Part(i)),
                b_sat: material.b_sat,
                skin_depth_m: skin_of(model, &p.name),
                section: case.background.as_ref().map(|b| Section {
                    centroid: p.shape.centroid(),
                    bbox: shape_bbox(&p.shape),
                    direction: b.direction,
                    b: b.b,
                }),
            }
        })
        .collect()
}

fn conductor_specs(case: &Case, model: &Model) -> Vec<design::ConductorSpec> {
    case.conductors
        .iter()
        .enumerate()
        .map(|(i, c)| design::ConductorSpec {
            winding: case.coils.len() + i,
            regions: model.regions_of(|o| *o == Owner::Conductor(i)),
            sigma: case.material(c.material).conductivity,
            solid: c.kind == ConductorKind::Solid,
            current: c.current,
            phase_deg: c.phase_deg,
            skin_depth_m: skin_of(model, &c.name),
        })
        .collect()
}

/// The magnetic parts (μr > 1) inside a coil's span, by their centroid.
fn core_of(case: &Case, model: &Model, coil: &Coil) -> Vec<CorePart> {
    let span = coil_span(case, &coil.window);
    let inside = |x: [f64; 2]| {
        x[0] >= span[0][0] && x[0] <= span[1][0] && x[1] >= span[0][1] && x[1] <= span[1][1]
    };
    case.parts
        .iter()
        .enumerate()
        .filter(|(_, p)| case.material(p.material).mu_r > 1.0 && inside(p.shape.centroid()))
        .map(|(k, p)| CorePart {
            name: p.name.clone(),
            regions: model.regions_of(|o| *o == Owner::Part(k)),
            density: case.material(p.material).density,
        })
        .collect()
}

fn harvest_of(case: &Case, index: usize) -> Harvest {
    let circuit = case.circuit.as_ref().filter(|k| k.coil.index() == index);
    Harvest {
        tuning: circuit.map_or(Tuning::Series, |k| match k.tuning {
            crate::case::Tuning::Series => Tuning::Series,
            crate::case::Tuning::Parallel => Tuning::Parallel,
            crate::case::Tuning::None => Tuning::None,
        }),
        load_ohm: circuit.and_then(|k| match k.load {
            crate::case::Load::Matched => None,
            crate::case::Load::Resistance(x) => Some(x),
        }),
        storage: circuit.and_then(|k| k.storage).map(|s| Storage {
            capacitance: s.capacitance,
            voltage: s.voltage,
        }),
    }
}

fn coil_specs(case: &Case, model: &Model) -> Vec<design::CoilSpec> {
    case.coils
        .iter()
        .enumerate()
        .map(|(i, c)| design::CoilSpec {
            winding: i,
            turns: c.turns,
            wire_diameter: c.wire.diameter,
            temperature_c: c.temperature_c,
            fill_factor: c.fill_factor,
            mean_turn_length: mean_turn_length(case, &c.window),
            window_regions: model.regions_of(|o| matches!(o, Owner::CoilSide(k, 0, _) if *k == i)),
            core: core_of(case, model, c),
            harvest: harvest_of(case, i),
            applied_b: case.background.as_ref().map(|b| b.b),
        })
        .collect()
}

/// The sample points of every probe.
pub fn probe_points(case: &Case) -> Vec<Vec<[f64; 2]>> {
    case.probes
        .iter()
        .map(|p| match p.kind {
            ProbeKind::Line { from, to, points } => probe::line_points(from, to, points),
            ProbeKind::Grid { min, max, points } => probe::grid_points(min, max, points),
        })
        .collect()
}

/// Every figure of the case from its fields and their error model.
pub fn figures(
    case: &Case,
    model: &Model,
    fields: &Fields,
    errors: &ErrorModel,
    curves: &[Option<BhCurve>],
) -> Figures {
    let ctx = context(case);
    let region_loss = fields.region_losses(ctx.depth);
    let names = case
        .coils
        .iter()
        .map(|c| c.name.clone())
        .chain(case.conductors.iter().map(|c| c.name.clone()))
        .collect();
    let (lambda, inductance_matrix) = design::inductance_matrix(fields, ctx.depth, names);
    let parts = case
        .parts
        .iter()
        .zip(part_specs(case, model))
        .map(|(p, s)| {
            let f = design::part_figures(fields, errors, &ctx, &s, &region_loss);
            (p.name.clone(), f)
        })
        .collect();
    let conductors = case
        .conductors
        .iter()
        .zip(conductor_specs(case, model))
        .map(|(c, s)| {
            let own = lambda[s.winding][s.winding];
            let f = design::conductor_figures(fields, errors, &ctx, &s, &region_loss, own);
            (c.name.clone(), f)
        })
        .collect();
    let coils = case
        .coils
        .iter()
        .zip(coil_specs(case, model))
        .map(|(c, s)| {
            let (own, l_energy) = (
                lambda[s.winding][s.winding],
                inductance_matrix.energy_h[s.winding][s.winding],
            );
            let f = design::coil_figures(fields, errors, &ctx, &s, own, l_energy);
            (c.name.clone(), f)
        })
        .collect();
    let probes = case
        .probes
        .iter()
        .zip(probe_points(case))
        .map(|(p, pts)| (p.name.clone(), design::probe_figures(fields, pts, ctx.ac())))
        .collect();
    Figures {
        parts,
        conductors,
        coils,
        probes,
        inductance_matrix,
        energy: design::stored_energy(fields, curves, ctx.depth),
    }
}

/// The results record of one solve from its figures; warnings come later (a pass over the
/// whole record, [`super::warnings`]).
pub fn results(
    case: &Case,
    model: &Model,
    mesh: &fluxpick_mesh::Mesh,
    fields: &Fields,
    errors: &ErrorModel,
    figures: Figures,
    solve: SolveFigures,
) -> Results {
    let axi = case.symmetry == Symmetry::Axisymmetric;
    Results {
        title: case.title.clone(),
        symmetry: if axi { "axisymmetric" } else { "planar" }.into(),
        frequency_hz: case.frequency,
        depth_m: (!axi).then_some(case.depth),
        mesh: design::mesh_figures(mesh, fields),
        energy_j: fluxpick_postproc::estimated::Estimated::new(figures.energy, errors.energy()),
        parts: figures.parts,
        conductors: figures.conductors,
        coils: figures.coils,
        inductance_matrix: figures.inductance_matrix,
        probes: figures.probes,
        skin_layers: model
            .skin
            .iter()
            .map(|s| SkinFigures {
                name: s.name.clone(),
                skin_depth_m: s.depth_m,
                surface_element_m: s.surface_size_m,
            })
            .collect(),
        solve,
        accuracy: None,
        warnings: Vec::new(),
    }
}
