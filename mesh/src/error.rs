//! Error types of the mesher and of the invariant check.

use thiserror::Error;

/// Why [`crate::generate`] refused or failed to mesh a [`crate::MeshSpec`].
///
/// `region` fields are indices into `MeshSpec::regions` (0-based, so region id - 1).
#[derive(Clone, Copy, Debug, PartialEq, Error)]
pub enum MeshError {
    /// A number in the spec is NaN or infinite, or a size/parameter is out of range.
    #[error("invalid parameter `{what}`: {reason}")]
    BadParameter {
        what: &'static str,
        reason: &'static str,
    },
    /// The outer boundary itself is unusable (empty rectangle, zero radius, both left and
    /// right cuts, a disk crossing the axis with `clip_at_axis`, ...).
    #[error("invalid outer boundary: {reason}")]
    BadDomain { reason: &'static str },
    /// A shape has a non-finite coordinate, a non-positive size, too few points or no area.
    #[error("region {region}: degenerate shape ({reason})")]
    DegenerateShape { region: usize, reason: &'static str },
    /// A polygon crosses or touches itself.
    #[error("region {region}: polygon edges {first} and {second} cross or touch")]
    SelfIntersecting {
        region: usize,
        first: usize,
        second: usize,
    },
    /// Part of a (polygonised, clipped) shape lies outside the outer boundary.
    #[error("region {region}: shape reaches outside the domain")]
    ShapeOutsideDomain { region: usize },
    /// With `clip_at_axis`, the shape lies wholly at x <= 0.
    #[error("region {region}: shape lies wholly at x < 0 (beyond the axis)")]
    RegionBeyondAxis { region: usize },
    /// The region is wholly covered by later regions, so no triangle carries its id.
    #[error("region {region}: no triangle left (covered by later regions?)")]
    EmptyRegion { region: usize },
    /// `exterior_image` was requested without `Outer::Disk`.
    #[error("an exterior image needs a disk-shaped outer boundary")]
    ImageNeedsDisk,
    /// The triangulation could not be built (spade rejected a point, e.g. too large).
    #[error("triangulation failed while inserting points")]
    Insertion,
    /// The spec's sizes ask for more vertices than `MeshParams::max_vertices` (estimated
    /// before meshing: domain and region bounding boxes at 0.3 h² per vertex, skin bands).
    #[error("the sizes ask for about {estimate:.3e} vertices, more than the {limit} allowed: use larger element sizes")]
    TooManyVertices { estimate: f64, limit: usize },
    /// Delaunay refinement ran out of its vertex budget or the size passes did not converge.
    #[error("refinement incomplete at stage `{stage}` after {vertices} vertices")]
    RefinementIncomplete {
        stage: &'static str,
        vertices: usize,
    },
}

/// A broken mesh invariant found by [`crate::Mesh::check_invariants`].
#[derive(Clone, Debug, PartialEq, Error)]
pub enum InvariantViolation {
    #[error("array lengths disagree: {what}")]
    Inconsistent { what: &'static str },
    #[error("triangle {triangle} has a node index out of range")]
    IndexOutOfRange { triangle: usize },
    #[error("triangle {triangle} is not counter-clockwise (signed area {area:e})")]
    NotCounterClockwise { triangle: usize, area: f64 },
    #[error("nodes {a} and {b} coincide")]
    DuplicatePoint { a: usize, b: usize },
    #[error("triangle {triangle} has region id {region} (count {count})")]
    BadRegionId {
        triangle: usize,
        region: u32,
        count: usize,
    },
    #[error("triangle {triangle} tagged {tagged} but its centroid lies in region {expected}")]
    WrongTag {
        triangle: usize,
        tagged: u32,
        expected: u32,
    },
    #[error("region {region}: mesh area {mesh} vs expected {expected}")]
    AreaMismatch {
        region: usize,
        mesh: f64,
        expected: f64,
    },
    #[error("region {region}: shape edge {edge} not covered by mesh edges")]
    MissingConstraint { region: usize, edge: usize },
    #[error("boundary edge {edge} does not lie on its side {side:?}")]
    BoundaryOffSide { edge: usize, side: crate::Side },
    #[error("{missing} free mesh edges are not listed as boundary edges (and {extra} listed are not free)")]
    BoundaryIncomplete { missing: usize, extra: usize },
    #[error("identified pair {pair} is not at the same angle and radius")]
    IdentifiedMismatch { pair: usize },
    #[error("the spec itself is invalid: {0}")]
    Spec(#[from] MeshError),
}
