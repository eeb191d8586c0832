//! The typed, validated case in SI units, built once from the raw file by
//! [`crate::case::resolve`]. Lengths are in metres (coordinates too), the planar depth in
//! metres, angles in degrees (`phase_deg`), B in T rms, currents in A rms, conductivity in S/m.
//! Axisymmetric coordinates are `[r, z]`. Only these types go downstream: later stages never see the raw structs.

use std::collections::BTreeMap;

pub use fluxpick_mesh::Shape;
/// The element order (`model.element_order` 1 or 2): the solver's own type, as the shapes
/// are the mesher's.
pub use fluxpick_solver::Order;

/// A material of the case: the index into [`Case::materials`]. Handed out by the resolver
/// only, so every id of a case names one of its materials ([`Case::material`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct MaterialId(usize);

/// A coil of the case: the index into [`Case::coils`] ([`Case::coil`]).
#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub struct CoilId(usize);

impl MaterialId {
    pub(crate) fn new(index: usize) -> Self {
        MaterialId(index)
    }

    /// The position in [`Case::materials`] (the materials in name order).
    pub fn index(self) -> usize {
        self.0
    }
}

impl CoilId {
    pub(crate) fn new(index: usize) -> Self {
        CoilId(index)
    }

    /// The position in [`Case::coils`] (file order).
    pub fn index(self) -> usize {
        self.0
    }
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Symmetry {
    Planar,
    Axisymmetric,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum BoundaryKind {
    /// Far field, as if the air went on forever.
    Open,
    /// A held at the background field's potential on the outer boundary (0 without one).
    Fixed,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum EdgeKind {
    /// Field lines cross at right angles (symmetry plane, natural condition).
    FluxNormal,
    /// A held as for `BoundaryKind::Fixed`.
    FluxParallel,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, PartialOrd, Ord, Hash)]
pub enum DomainSide {
    Left,
    Right,
    Bottom,
    Top,
}

/// The air region enclosing everything.
#[derive(Clone, Debug, PartialEq)]
pub struct Domain {
    /// `Shape::Rect` or `Shape::Circle`. In an axisymmetric model a circle is centred on the
    /// axis and stands for the half disk at r >= 0.
    pub shape: Shape,
    pub boundary: BoundaryKind,
    /// Largest element edge in the air far away (m).
    pub mesh_size: f64,
    /// Per-side conditions overriding `boundary` (rect domains only; never the axis side).
    pub edges: Vec<(DomainSide, EdgeKind)>,
}

/// A uniform applied field.
#[derive(Clone, Debug, PartialEq)]
pub struct Background {
    /// T rms.
    pub b: f64,
    /// Unit vector; `[0, ±1]` in axisymmetric models.
    pub direction: [f64; 2],
    pub phase_deg: f64,
}

/// A linear (or B-H curve) material.
#[derive(Clone, Debug, PartialEq)]
pub struct Material {
    pub name: String,
    pub mu_r: f64,
    /// S/m.
    pub conductivity: f64,
    /// `[H A/m, B T]` points, H and B strictly increasing.
    pub bh: Option<Vec<[f64; 2]>>,
    /// Saturation flux density, T.
    pub b_sat: Option<f64>,
    /// Mass density, kg/m³.
    pub density: Option<f64>,
}

/// Passive region: core, steel, shield, spacer.
#[derive(Clone, Debug, PartialEq)]
pub struct Part {
    pub name: String,
    pub material: MaterialId,
    pub shape: Shape,
    /// Largest element edge inside (m); `None` = the domain's.
    pub mesh_size: Option<f64>,
    /// Largest edge at the surface when eddy currents flow (m); `None` = δ/3.
    pub skin_mesh_size: Option<f64>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum ConductorKind {
    /// Eddy currents and skin effect at f > 0.
    Solid,
    /// Uniform current density.
    Stranded,
}

/// A region with an imposed total current.
#[derive(Clone, Debug, PartialEq)]
pub struct Conductor {
    pub name: String,
    pub material: MaterialId,
    pub shape: Shape,
    /// A rms (DC value when frequency = 0).
    pub current: f64,
    pub phase_deg: f64,
    pub kind: ConductorKind,
    pub mesh_size: Option<f64>,
    /// Largest edge at the surface when eddy currents flow (m); `None` = δ/3.
    pub skin_mesh_size: Option<f64>,
}

/// The winding wire.
#[derive(Clone, Debug, PartialEq)]
pub struct Wire {
    /// The AWG number when given as `"awgNN"`.
    pub awg: Option<u32>,
    /// Bare copper diameter, m.
    pub diameter: f64,
}

/// Where a coil's turns lie.
#[derive(Clone, Debug, PartialEq)]
pub enum CoilWindow {
    /// One window (axisymmetric coils).
    Single(Shape),
    /// Several sides, each with its sense (+1 current going in, −1 coming back); all the turns
    /// pass through every side.
    Sides(Vec<(Shape, f64)>),
}

impl CoilWindow {
    /// The shapes of the window, with their senses (+1 for a single window).
    pub fn shapes(&self) -> Vec<(&Shape, f64)> {
        match self {
            CoilWindow::Single(s) => vec![(s, 1.0)],
            CoilWindow::Sides(v) => v.iter().map(|(s, k)| (s, *k)).collect(),
        }
    }
}

/// A winding whose flux linkage and circuit figures are reported.
#[derive(Clone, Debug, PartialEq)]
pub struct Coil {
    pub name: String,
    pub turns: f64,
    pub wire: Wire,
    /// Copper area / window area (of one side, for sides).
    pub fill_factor: f64,
    pub temperature_c: f64,
    /// A rms; 0 = open-circuit pickup.
    pub current: f64,
    pub phase_deg: f64,
    pub window: CoilWindow,
    pub mesh_size: Option<f64>,
}

#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Tuning {
    Series,
    Parallel,
    None,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub enum Load {
    Matched,
    /// Ω.
    Resistance(f64),
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct Storage {
    /// F.
    pub capacitance: f64,
    /// V.
    pub voltage: f64,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Circuit {
    /// The coil the circuit belongs to.
    pub coil: CoilId,
    pub tuning: Tuning,
    pub load: Load,
    pub storage: Option<Storage>,
}

#[derive(Clone, Debug, PartialEq)]
pub enum ProbeKind {
    Line {
        from: [f64; 2],
        to: [f64; 2],
        points: usize,
    },
    Grid {
        min: [f64; 2],
        max: [f64; 2],
        points: [usize; 2],
    },
}

#[derive(Clone, Debug, PartialEq)]
pub struct Probe {
    pub name: String,
    pub kind: ProbeKind,
}

/// One swept parameter; several sweeps form a grid. Values are in the file's own terms (a
/// length parameter is in `length_unit`), as they replace `[parameters]` entries.
#[derive(Clone, Debug, PartialEq)]
pub struct Sweep {
    pub parameter: String,
    pub values: Vec<f64>,
    /// Sweeps of one group move together (the k-th values of each form one point).
    pub group: Option<String>,
}

/// A whole validated case.
#[derive(Clone, Debug, PartialEq)]
pub struct Case {
    pub title: String,
    pub symmetry: Symmetry,
    /// Hz; 0 = magnetostatic.
    pub frequency: f64,
    /// Planar extent along the conductors, m (kept, but unused, in axisymmetric models).
    pub depth: f64,
    pub element_order: Order,
    /// Relative accuracy target of the adaptive refinement (None: solve on one mesh).
    pub accuracy: Option<f64>,
    /// Element budget of the adaptive refinement (domain triangles).
    pub max_triangles: usize,
    /// Refine every cell each pass instead of where the error is (for comparison).
    pub uniform_refinement: bool,
    /// Metres per file length unit.
    pub length_unit_m: f64,
    /// Resolved parameter values, in the file's own terms, overrides applied.
    pub parameters: BTreeMap<String, f64>,
    pub domain: Domain,
    pub background: Option<Background>,
    /// Every material, the built-ins included (a user table of the same name replaces one),
    /// in name order; [`MaterialId`]s index it.
    pub materials: Vec<Material>,
    /// The built-in [`AIR`]: what the regions that are no part or conductor are labelled
    /// with (the air, coil windows, the exterior image).
    pub air: MaterialId,
    pub parts: Vec<Part>,
    pub conductors: Vec<Conductor>,
    pub coils: Vec<Coil>,
    pub circuit: Option<Circuit>,
    pub probes: Vec<Probe>,
    pub sweeps: Vec<Sweep>,
}

impl Case {
    /// The material an id of this case names.
    pub fn material(&self, id: MaterialId) -> &Material {
        &self.materials[id.0]
    }

    /// The coil an id of this case names.
    pub fn coil(&self, id: CoilId) -> &Coil {
        &self.coils[id.0]
    }

    /// The material of that name, if the case has one: for tests and tools that start
    /// from a name; the stages after the resolver use the ids they are handed.
    pub fn find_material(&self, name: &str) -> Option<MaterialId> {
        self.materials
            .iter()
            .position(|m| m.name == name)
            .map(MaterialId)
    }
}

/// Default element budget of the adaptive refinement (domain triangles).
pub const DEFAULT_MAX_TRIANGLES: usize = 2_000_000;

/// Relative permeability 1, conductivity 0.
pub const AIR: &str = "air";
/// Annealed copper, 5.8e7 S/m: a typical value (IEC 60028 gives 1/1.7241e-8 = 5.80e7 S/m at
/// 20 °C), μr 1.
pub const COPPER: &str = "copper";
/// Aluminium, 3.5e7 S/m: a typical value for pure and conductor-grade aluminium at room
/// temperature (alloys run lower), μr 1.
pub const ALUMINIUM: &str = "aluminium";

/// The built-in materials (typical values, see [`AIR`], [`COPPER`], [`ALUMINIUM`]); a
/// `[materials.NAME]` table of the same name replaces one.
pub fn builtin_materials() -> BTreeMap<String, Material> {
    let mk = |name: &str, mu_r: f64, conductivity: f64, density: f64| {
        (
            name.to_string(),
            Material {
                name: name.into(),
                mu_r,
                conductivity,
                bh: None,
                b_sat: None,
                density: Some(density),
            },
        )
    };
    // Densities: copper 8890 kg/m³ (as for wire, ASTM B258 practice), aluminium 2700,
    // air 1.2 (typical values, common practice).
    [
        mk(AIR, 1.0, 0.0, 1.2),
        mk(COPPER, 1.0, 5.8e7, 8890.0),
        mk(ALUMINIUM, 1.0, 3.5e7, 2700.0),
    ]
    .into_iter()
    .collect()
}
