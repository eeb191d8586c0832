//! From a validated [`Case`] to what the library crates take: the mesh specification, who
//! owns each region, and the solver's materials, windings and boundary conditions.
//!
//! Open boundaries: the exterior of a disk is mapped into an image disk by Kelvin inversion
//! (see fluxpick-solver). A rect domain with `boundary = "open"` is therefore enlarged to the
//! disk (or half or quarter disk on symmetry lines and the axis) that encloses it with a 10 %
//! margin; the rect only says how far the near field must be meshed.

use fluxpick_mesh::{Cuts, MeshParams, MeshSpec, Outer, RegionInput, Shape, Side};
use fluxpick_solver::{Formulation, Order, RegionMaterial, Spread, Winding, WindingRegion};

use crate::case::{BoundaryKind, Case, ConductorKind, DomainSide, EdgeKind, MaterialId, Symmetry};

/// Radius of the open-boundary disk relative to the farthest domain corner from its centre.
pub const OPEN_DISK_MARGIN: f64 = 1.1;
/// Regions without a `mesh_size` get at most this fraction of their smallest extent.
pub const DEFAULT_REGION_SIZE_FRACTION: f64 = 1.0 / 4.0;

/// What a mesh region is in the case.
#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Owner {
    Air,
    Part(usize),
    Conductor(usize),
    /// Coil index, side index, sense.
    CoilSide(usize, usize, f64),
    Exterior,
}

#[derive(Debug, thiserror::Error, PartialEq)]
pub enum BuildError {
    #[error("an open boundary with symmetry conditions on both the {0:?} and the {1:?} sides cannot be represented: model one half and make the other side part of the open boundary")]
    OpposedSymmetryEdges(DomainSide, DomainSide),
    #[error("the axisymmetric domain must start at the axis (r = 0) for an open boundary; it starts at r = {0} m")]
    AxisymmetricDomainOffAxis(f64),
    #[error("the domain must be a rect or a circle")]
    DomainShape,
}

/// The case turned into the library crates' inputs.
#[derive(Clone, Debug)]
pub struct Model {
    pub spec: MeshSpec,
    /// Owner of each region id (index = region id).
    pub owners: Vec<Owner>,
    pub formulation: Formulation,
    pub order: Order,
    pub dirichlet: Vec<Side>,
    /// Skin depth (m) and the surface element size used (m) of every part or conductor
    /// that carries eddy currents, by name (empty when static).
    pub skin: Vec<SkinLayer>,
}

#[derive(Clone, Debug, PartialEq)]
pub struct SkinLayer {
    pub name: String,
    pub depth_m: f64,
    pub surface_size_m: f64,
}

pub use fluxpick_postproc::design::skin_depth;

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

/// Default surface element size as a fraction of the skin depth, by element order
/// (second order: a third, checked against the exact round-wire and plate solutions in
/// the solver's tests; first order: a sixth).
pub(crate) fn skin_fraction(order: Order) -> f64 {
    match order {
        Order::Quadratic => 1.0 / 3.0,
        Order::Linear => 1.0 / 6.0,
    }
}

fn side_of(s: DomainSide) -> Side {
    match s {
        DomainSide::Left => Side::Left,
        DomainSide::Right => Side::Right,
        DomainSide::Bottom => Side::Bottom,
        DomainSide::Top => Side::Top,
    }
}

fn region(shape: &Shape, size: Option<f64>, background: f64) -> RegionInput {
    let default = (shape.smallest_extent() * DEFAULT_REGION_SIZE_FRACTION).min(background);
    RegionInput {
        shape: shape.clone(),
        max_edge: Some(size.unwrap_or(default).min(background)),
        skin_edge: None,
    }
}

/// The mesh regions in drawing order (parts, conductors, coil sides), their owners (air
/// first) and the skin layers of the regions that carry eddy currents at f > 0.
fn regions(case: &Case) -> (Vec<RegionInput>, Vec<Owner>, Vec<SkinLayer>) {
    let h = case.domain.mesh_size;
    let mut regions = Vec::new();
    let mut owners = vec![Owner::Air];
    let order = case.element_order;
    let mut skin = Vec::new();
    // A skin layer on every region that carries eddy currents at f > 0.
    let mut layer = |r: &mut RegionInput, name: &str, material: MaterialId, own: Option<f64>| {
        let m = case.material(material);
        if case.frequency <= 0.0 || m.conductivity <= 0.0 {
            return;
        }
        let depth = skin_depth(case.frequency, m.mu_r, m.conductivity);
        let size = own.unwrap_or(depth * skin_fraction(order));
        let inside = r.max_edge.unwrap_or(h);
        if size < inside {
            r.skin_edge = Some(size);
        }
        skin.push(SkinLayer {
            name: name.to_string(),
            depth_m: depth,
            surface_size_m: size.min(inside),
        });
    };
    for (i, p) in case.parts.iter().enumerate() {
        let mut r = region(&p.shape, p.mesh_size, h);
        layer(&mut r, &p.name, p.material, p.skin_mesh_size);
        regions.push(r);
        owners.push(Owner::Part(i));
    }
    for (i, c) in case.conductors.iter().enumerate() {
        let mut r = region(&c.shape, c.mesh_size, h);
        if c.kind == ConductorKind::Solid {
            layer(&mut r, &c.name, c.material, c.skin_mesh_size);
        }
        regions.push(r);
        owners.push(Owner::Conductor(i));
    }
    for (i, c) in case.coils.iter().enumerate() {
        for (k, (shape, sense)) in c.window.shapes().into_iter().enumerate() {
            regions.push(region(shape, c.mesh_size, h));
            owners.push(Owner::CoilSide(i, k, sense));
        }
    }
    (regions, owners, skin)
}

/// The sides where the potential is held: flux-parallel edges, every side of a fixed
/// boundary, and the axis of an axisymmetric model.
fn fixed_sides(case: &Case) -> Vec<Side> {
    let axi = case.symmetry == Symmetry::Axisymmetric;
    let edge = |s: DomainSide| case.domain.edges.iter().find(|e| e.0 == s).map(|e| e.1);
    let mut dirichlet = Vec::new();
    // Flux-parallel edges hold the potential; flux-normal ones are natural.
    for s in [
        DomainSide::Left,
        DomainSide::Right,
        DomainSide::Bottom,
        DomainSide::Top,
    ] {
        match (case.domain.boundary, edge(s)) {
            (_, Some(EdgeKind::FluxParallel)) => dirichlet.push(side_of(s)),
            (BoundaryKind::Fixed, None) => dirichlet.push(side_of(s)),
            _ => {}
        }
    }
    if case.domain.boundary == BoundaryKind::Fixed {
        dirichlet.push(Side::Arc);
    }
    if axi && !dirichlet.contains(&Side::Left) {
        dirichlet.push(Side::Left); // the axis: A = 0
    }
    dirichlet
}

/// The outer boundary to mesh and whether it carries an exterior image (open boundaries).
fn outer_boundary(case: &Case) -> Result<(Outer, bool), BuildError> {
    let axi = case.symmetry == Symmetry::Axisymmetric;
    let edge = |s: DomainSide| case.domain.edges.iter().find(|e| e.0 == s).map(|e| e.1);
    Ok(match (&case.domain.shape, case.domain.boundary) {
        (Shape::Rect { min, max }, BoundaryKind::Fixed) => (
            Outer::Rect {
                min: *min,
                max: *max,
            },
            false,
        ),
        (Shape::Circle { center, radius }, BoundaryKind::Fixed) => (
            Outer::Disk {
                center: *center,
                radius: *radius,
                cuts: Cuts::default(),
            },
            false,
        ),
        (Shape::Circle { center, radius }, BoundaryKind::Open) => (
            Outer::Disk {
                center: *center,
                radius: *radius,
                cuts: Cuts::default(),
            },
            true,
        ),
        (Shape::Rect { min, max }, BoundaryKind::Open) => {
            let has = |s| edge(s).is_some();
            for (a, b) in [
                (DomainSide::Left, DomainSide::Right),
                (DomainSide::Bottom, DomainSide::Top),
            ] {
                if has(a) && has(b) {
                    return Err(BuildError::OpposedSymmetryEdges(a, b));
                }
            }
            if axi && min[0].abs() > 1e-12 * (max[0] - min[0]) {
                return Err(BuildError::AxisymmetricDomainOffAxis(min[0]));
            }
            let cuts = Cuts {
                left: axi || has(DomainSide::Left),
                right: has(DomainSide::Right),
                bottom: has(DomainSide::Bottom),
                top: has(DomainSide::Top),
            };
            let cx = if cuts.left {
                min[0]
            } else if cuts.right {
                max[0]
            } else {
                0.5 * (min[0] + max[0])
            };
            let cy = if cuts.bottom {
                min[1]
            } else if cuts.top {
                max[1]
            } else {
                0.5 * (min[1] + max[1])
            };
            let far = [min, max]
                .iter()
                .flat_map(|a| [min, max].map(|b| [a[0], b[1]]))
                .map(|p| (p[0] - cx).hypot(p[1] - cy))
                .fold(0.0, f64::max);
            (
                Outer::Disk {
                    center: [cx, cy],
                    radius: OPEN_DISK_MARGIN * far,
                    cuts,
                },
                true,
            )
        }
        _ => return Err(BuildError::DomainShape),
    })
}

impl Model {
    pub fn new(case: &Case) -> Result<Model, BuildError> {
        let axi = case.symmetry == Symmetry::Axisymmetric;
        let (regions, mut owners, skin) = regions(case);
        let dirichlet = fixed_sides(case);
        let (outer, exterior_image) = outer_boundary(case)?;
        if exterior_image {
            owners.push(Owner::Exterior);
        }
        let spec = MeshSpec {
            outer,
            background_max_edge: case.domain.mesh_size,
            regions,
            clip_at_axis: axi,
            exterior_image,
            params: MeshParams::default(),
        };
        Ok(Model {
            spec,
            owners,
            formulation: if axi {
                Formulation::Axisymmetric
            } else {
                Formulation::Planar
            },
            order: case.element_order,
            dirichlet,
            skin,
        })
    }

    /// Material of every region id (air for coil windows and the exterior).
    pub fn materials(&self, case: &Case) -> Vec<RegionMaterial> {
        let get = |id: MaterialId| {
            let m = case.material(id);
            RegionMaterial::from_mu_r(m.mu_r, m.conductivity)
        };
        self.owners
            .iter()
            .map(|o| match o {
                Owner::Part(i) => get(case.parts[*i].material),
                Owner::Conductor(i) => get(case.conductors[*i].material),
                _ => RegionMaterial::from_mu_r(1.0, 0.0),
            })
            .collect()
    }

    /// The windings: every coil (all its sides), then every conductor.
    pub fn windings(&self, case: &Case) -> Vec<Winding> {
        let mut out: Vec<Winding> = case
            .coils
            .iter()
            .map(|c| Winding {
                name: c.name.clone(),
                regions: vec![],
            })
            .collect();
        for (r, o) in self.owners.iter().enumerate() {
            if let Owner::CoilSide(i, _, sense) = o {
                out[*i].regions.push(WindingRegion {
                    region: r as u32,
                    turns: case.coils[*i].turns * sense,
                    spread: Spread::Uniform,
                });
            }
        }
        for (r, o) in self.owners.iter().enumerate() {
            if let Owner::Conductor(i) = o {
                let c = &case.conductors[*i];
                out.push(Winding {
                    name: c.name.clone(),
                    regions: vec![WindingRegion {
                        region: r as u32,
                        turns: 1.0,
                        spread: match c.kind {
                            ConductorKind::Solid => Spread::Solid,
                            ConductorKind::Stranded => Spread::Uniform,
                        },
                    }],
                });
            }
        }
        out
    }

    /// Region names for output: "air", part/conductor names, "coil/side", "exterior".
    pub fn region_names(&self, case: &Case) -> Vec<String> {
        self.owners
            .iter()
            .map(|o| match *o {
                Owner::Air => "air".to_string(),
                Owner::Part(i) => case.parts[i].name.clone(),
                Owner::Conductor(i) => case.conductors[i].name.clone(),
                Owner::CoilSide(i, k, _) => format!("{}/{}", case.coils[i].name, k),
                Owner::Exterior => "exterior".to_string(),
            })
            .collect()
    }

    /// Region ids owned by a part, a conductor or a coil.
    pub fn regions_of(&self, pred: impl Fn(&Owner) -> bool) -> Vec<u32> {
        self.owners
            .iter()
            .enumerate()
            .filter(|(_, o)| pred(o))
            .map(|(r, _)| r as u32)
            .collect()
    }
}
