//! `[domain]` and `[[edge]]`: the air region enclosing everything, its outer boundary and
//! the conditions on the sides of a rect domain.

use std::ops::Range;

use super::{sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::{BoundaryKind, Domain, DomainSide, EdgeKind, Shape};
use crate::case::raw::{RawBoundary, RawCase, RawEdgeCondition, RawSide};

pub(super) fn resolve_domain(cx: &Ctx<'_>, raw: &RawCase) -> Result<Domain> {
    let d = raw.domain.get_ref();
    let (shape, span) = domain_shape(cx, raw)?;
    let boundary = match d.boundary.as_ref().map(|b| *b.get_ref()) {
        None | Some(RawBoundary::Open) => BoundaryKind::Open,
        Some(RawBoundary::Fixed) => BoundaryKind::Fixed,
    };
    let mesh_size = cx.pos_len(&d.mesh_size, "domain.mesh_size", "the mesh size")?;
    let edges = resolve_edges(cx, raw, &shape)?;
    if let (BoundaryKind::Open, Shape::Rect { min, max }) = (boundary, &shape) {
        check_open_rect(cx, raw, &edges, *min, *max, &span)?;
    }
    Ok(Domain {
        shape,
        boundary,
        mesh_size,
        edges,
    })
}

/// The domain's shape (a rect, clipped at the axis when axisymmetric, or a circle) and the
/// span of its shape key.
fn domain_shape(cx: &Ctx<'_>, raw: &RawCase) -> Result<(Shape, Range<usize>)> {
    let d = raw.domain.get_ref();
    let (shape, span) = cx.shape(d.shape_keys(), "domain", raw.domain.span(), "the domain")?;
    let shape = match shape {
        Shape::Rect { mut min, max } => {
            if cx.axisym {
                if max[0] <= 0.0 {
                    return Err(cx.err(
                        K::Axisymmetry,
                        Some(span),
                        "domain.rect",
                        "the domain lies wholly at r < 0",
                        "axisymmetric coordinates are [r, z] with r >= 0: start the domain at r = 0",
                    ));
                }
                // The part at r < 0 is not modelled: clip at the axis.
                min[0] = min[0].max(0.0);
            }
            Shape::Rect { min, max }
        }
        Shape::Circle { center, radius } => {
            if cx.axisym && center[0] != 0.0 {
                return Err(cx.err(
                    K::Axisymmetry,
                    Some(span),
                    "domain.circle.center",
                    "an axisymmetric circle domain must be centred on the axis (r = 0)",
                    "use center = [0, z] (the model is the half disk at r >= 0), or a rect",
                ));
            }
            Shape::Circle { center, radius }
        }
        _ => {
            return Err(cx.err(
                K::ShapeKeys,
                Some(span),
                "domain",
                "the domain must be a rect or a circle",
                "use rect = { min = [..], max = [..] } or circle = { center = [..], radius = R }",
            ))
        }
    };
    Ok((shape, span))
}

/// The `[[edge]]` conditions, at most one per side of a rect domain, none on the axis.
fn resolve_edges(
    cx: &Ctx<'_>,
    raw: &RawCase,
    shape: &Shape,
) -> Result<Vec<(DomainSide, EdgeKind)>> {
    let mut edges: Vec<(DomainSide, EdgeKind)> = Vec::new();
    for (i, e) in raw.edges.iter().enumerate() {
        let key = format!("edge[{i}].side");
        let ev = e.get_ref();
        let side = match ev.side.get_ref() {
            RawSide::Left => DomainSide::Left,
            RawSide::Right => DomainSide::Right,
            RawSide::Bottom => DomainSide::Bottom,
            RawSide::Top => DomainSide::Top,
        };
        let Shape::Rect { min, .. } = shape else {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "edge conditions apply only to a rect domain",
                "use a rect domain, or remove this [[edge]]",
            ));
        };
        if cx.axisym && side == DomainSide::Left && min[0] <= 0.0 {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "the left side of this axisymmetric domain is the axis (r = 0)",
                "the axis takes no condition (A = 0 there): remove this [[edge]]",
            ));
        }
        if edges.iter().any(|(s, _)| *s == side) {
            return Err(cx.err(
                K::BadEdge,
                sp(&ev.side),
                &key,
                "this side already has an edge condition",
                "give each side at most one [[edge]]",
            ));
        }
        let kind = match ev.condition.get_ref() {
            RawEdgeCondition::FluxNormal => EdgeKind::FluxNormal,
            RawEdgeCondition::FluxParallel => EdgeKind::FluxParallel,
        };
        edges.push((side, kind));
    }
    Ok(edges)
}

/// An open rect domain becomes a disk cut along at most one line per direction
/// (build.rs), and an axisymmetric one must start at the axis.
fn check_open_rect(
    cx: &Ctx<'_>,
    raw: &RawCase,
    edges: &[(DomainSide, EdgeKind)],
    min: [f64; 2],
    max: [f64; 2],
    span: &Range<usize>,
) -> Result<()> {
    let d = raw.domain.get_ref();
    for (a, b) in [
        (DomainSide::Left, DomainSide::Right),
        (DomainSide::Bottom, DomainSide::Top),
    ] {
        let has = |s| edges.iter().any(|e| e.0 == s);
        if has(a) && has(b) {
            let j = edges
                .iter()
                .rposition(|e| e.0 == a || e.0 == b)
                .unwrap_or(0);
            return Err(cx.err(
                K::BadEdge,
                sp(&raw.edges[j].get_ref().side),
                &format!("edge[{j}].side"),
                format!(
                    "with boundary = \"open\", the {} and {} sides cannot both take an \
                     edge condition",
                    side_name(a),
                    side_name(b)
                ),
                "model one half and leave the other side open, or use boundary = \"fixed\"",
            ));
        }
    }
    if cx.axisym && min[0] > 1e-12 * (max[0] - min[0]) {
        let min_span = d
            .rect
            .as_ref()
            .and_then(|r| r.get_ref().min.as_ref())
            .map_or(span.clone(), |m| m.span());
        return Err(cx.err(
            K::Axisymmetry,
            Some(min_span),
            "domain.rect.min",
            format!(
                "with boundary = \"open\", an axisymmetric domain must start at the axis; \
                 this one starts at r = {}",
                cx.show(min[0])
            ),
            "start the rect at r = 0, or use boundary = \"fixed\" to leave the axis out",
        ));
    }
    Ok(())
}

fn side_name(s: DomainSide) -> &'static str {
    match s {
        DomainSide::Left => "left",
        DomainSide::Right => "right",
        DomainSide::Bottom => "bottom",
        DomainSide::Top => "top",
    }
}
