//! fluxpick-mesh: constrained Delaunay meshing of 2D region arrangements.
//!
//! ```
//! use fluxpick_mesh::{generate, MeshParams, MeshSpec, Outer, RegionInput, Shape};
//!
//! let spec = MeshSpec {
//!     outer: Outer::Rect { min: [0.0, -50.0], max: [50.0, 50.0] },
//!     background_max_edge: 8.0,
//!     regions: vec![RegionInput {
//!         shape: Shape::Circle { center: [0.0, 0.0], radius: 10.0 },
//!         max_edge: Some(2.0),
//!         skin_edge: None,
//!     }],
//!     clip_at_axis: true, // axisymmetric: the circle becomes a half disk (a sphere)
//!     exterior_image: false,
//!     params: MeshParams::default(),
//! };
//! let mesh = generate(&spec).unwrap();
//! mesh.check_invariants(&spec).unwrap();
//! let st = mesh.stats();
//! // the half disk keeps the exact area pi r^2 / 2 to 0.1%
//! let exact = 0.5 * std::f64::consts::PI * 100.0;
//! assert!((st.regions[1].area - exact).abs() < 1e-3 * exact);
//! assert!(st.min_angle_deg > 25.0);
//! let quad = mesh.quadratic();
//! assert_eq!(quad.points.len(), mesh.points.len() + mesh.edge_count());
//! ```
//!
//! Modules: [`geom`] (a [`Shape`]'s bbox, area, centroid, extent, overlap; polygon checks),
//! [`shape`] (polygonisation, clipping at the axis), `build` (loops → spade CDT →
//! refinement with the [`size`] field), `tag` (region ids), `assemble` ([`generate`], image,
//! renumbering), `quadratic` ([`Mesh::quadratic`]), [`stats`], `check`
//! ([`Mesh::check_invariants`], [`expected_region_areas`]).
//!
//! CONTRACT (public API the solver and the CLI build against; internals are free):
//! the mesh knows nothing of physics: points, counter-clockwise triangles, a region id per
//! triangle, tagged boundary edges, and optionally an "exterior image" sector glued to a
//! circular outer boundary (used by the solver for an open boundary via Kelvin inversion).

mod assemble;
mod build;
mod check;
mod error;
pub mod geom;
mod grid;
mod quadratic;
pub mod shape;
mod size;
pub mod sizemap;
pub mod stats;
mod tag;

pub use assemble::{generate, generate_refined, renumber_hilbert};
pub use build::{MAX_DOMAIN_ASPECT, MAX_SIZE_PASSES};
pub use check::expected_region_areas;
pub use error::{InvariantViolation, MeshError};
pub use geom::{
    points_collinear, polygon_area, polygon_centroid, polygon_self_intersection, triangle_area,
    triangle_min_angle_deg, BBox,
};
pub use shape::{region_geometries, RegionGeometry, MIN_CURVE_SEGMENTS, SPACING};
pub use sizemap::SizeMap;
pub use stats::{MeshStats, RegionStats};
pub use tag::locate_region;

/// A point `[x, y]` (axisymmetric models: `[r, z]`).
pub type Point = [f64; 2];

/// A closed shape in the model plane (SI units are not assumed: the mesh is unit-agnostic).
#[derive(Clone, Debug, PartialEq)]
pub enum Shape {
    Rect {
        min: Point,
        max: Point,
    },
    Circle {
        center: Point,
        radius: f64,
    },
    Ellipse {
        center: Point,
        semi_axes: [f64; 2],
    },
    Annulus {
        center: Point,
        inner: f64,
        outer: f64,
    },
    /// Simple polygon, either orientation, not closed (first point not repeated).
    Polygon(Vec<Point>),
}

/// One region to mesh: region id = index in `MeshSpec::regions` + 1 (0 is the background).
#[derive(Clone, Debug, PartialEq)]
pub struct RegionInput {
    pub shape: Shape,
    /// Largest edge length inside the region; `None` = the background size.
    pub max_edge: Option<f64>,
    /// Largest edge at the region's boundary, the size growing from there at the grading
    /// rate, inward up to `max_edge` and outward into the neighbours (a skin layer for
    /// eddy currents). `None` = no layer.
    pub skin_edge: Option<f64>,
}

/// Which half-planes through the centre cut an outer disk (at most one of left/right and
/// one of bottom/top). `left = true` keeps x >= center.x, the cut line tagged `Side::Left`.
#[derive(Clone, Copy, Debug, Default, PartialEq, Eq)]
pub struct Cuts {
    pub left: bool,
    pub right: bool,
    pub bottom: bool,
    pub top: bool,
}

/// The outer boundary of the meshed domain.
#[derive(Clone, Debug, PartialEq)]
pub enum Outer {
    /// Sides tagged Left/Right/Bottom/Top.
    Rect { min: Point, max: Point },
    /// A disk (possibly cut to a half or a quarter by lines through its centre); the arc is
    /// tagged `Side::Arc`, the cut lines by the side they bound.
    Disk {
        center: Point,
        radius: f64,
        cuts: Cuts,
    },
}

#[derive(Clone, Copy, Debug, PartialEq, Eq, Hash, PartialOrd, Ord)]
pub enum Side {
    Left,
    Right,
    Bottom,
    Top,
    Arc,
}

#[derive(Clone, Debug, PartialEq)]
pub struct MeshParams {
    /// Minimum angle target in degrees (default 28).
    pub min_angle_deg: f64,
    /// Largest ratio of neighbouring element sizes when grading from fine regions (default 1.3).
    pub grading: f64,
    /// Most vertices meshing may make (default [`DEFAULT_MAX_VERTICES`]): a spec whose
    /// estimate exceeds it is refused before any work ([`MeshError::TooManyVertices`]), and
    /// refinement stops there ([`MeshError::RefinementIncomplete`]). Spade keeps about
    /// 200 bytes per vertex.
    pub max_vertices: usize,
}

/// Default [`MeshParams::max_vertices`]: 50 million (about 10 GB of triangulation; the CLI
/// refuses cases far smaller from their memory estimate first).
pub const DEFAULT_MAX_VERTICES: usize = 50_000_000;

impl Default for MeshParams {
    fn default() -> Self {
        MeshParams {
            min_angle_deg: 28.0,
            grading: 1.3,
            max_vertices: DEFAULT_MAX_VERTICES,
        }
    }
}

#[derive(Clone, Debug, PartialEq)]
pub struct MeshSpec {
    pub outer: Outer,
    /// Largest edge in the background (air) region.
    pub background_max_edge: f64,
    /// Drawn in order: later regions are drawn over earlier ones where they overlap.
    pub regions: Vec<RegionInput>,
    /// Clip every region at x >= 0 (axisymmetric models: x is r).
    pub clip_at_axis: bool,
    /// Build an exterior image sector glued to the arc (requires `Outer::Disk`).
    pub exterior_image: bool,
    pub params: MeshParams,
}

#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BoundaryEdge {
    pub nodes: [u32; 2],
    pub side: Side,
}

/// The exterior image sector: the region outside the arc mapped by inversion
/// rho' = R^2 / rho about the disk centre, drawn translated by `offset` so that it does not
/// overlap the domain. Its arc nodes are identified with the domain's arc nodes.
#[derive(Clone, Debug, PartialEq)]
pub struct ExteriorImage {
    /// Region id of the image triangles.
    pub region: u32,
    /// Centre of the disk in the domain.
    pub center: Point,
    pub radius: f64,
    /// Image coordinates = domain-inverted coordinates + offset.
    pub offset: Point,
}

#[derive(Clone, Debug, PartialEq)]
pub struct Mesh {
    pub points: Vec<Point>,
    /// Counter-clockwise.
    pub triangles: Vec<[u32; 3]>,
    /// 0 = background, i + 1 = `spec.regions[i]`, `exterior.region` for the image.
    pub triangle_region: Vec<u32>,
    /// Edges on the outer boundary (and on the image's cut lines), not the glued arc.
    pub boundary_edges: Vec<BoundaryEdge>,
    /// Number of region ids in use (background + inputs + image if any).
    pub region_count: usize,
    pub exterior: Option<ExteriorImage>,
    /// Pairs (image node, domain node) that are the same unknown.
    pub identified: Vec<[u32; 2]>,
}

/// Second-order (6-node) triangles: vertices 0..3 then the midpoints of edges
/// (0,1), (1,2), (2,0). Vertex node ids are the same as in the linear mesh.
#[derive(Clone, Debug, PartialEq)]
pub struct QuadraticMesh {
    pub points: Vec<Point>,
    pub triangles: Vec<[u32; 6]>,
    /// nodes: [end, end, midpoint].
    pub boundary_edges: Vec<([u32; 3], Side)>,
    pub identified: Vec<[u32; 2]>,
}

impl Mesh {
    /// Number of distinct (undirected) edges.
    pub fn edge_count(&self) -> usize {
        quadratic::sorted_edges(&self.triangles).len()
    }
}
