//! Polygonisation of shapes and of the outer boundary, clipping at the axis, validation.
//!
//! Curves are replaced by polygons whose edges are at most [`SPACING`] times the local
//! largest edge, with at least [`MIN_CURVE_SEGMENTS`] segments per full turn. Circles,
//! ellipses and annulus rings are placed on a slightly larger, *area-equivalent* polygon so
//! that the polygon area equals the exact area (πr², πab) up to rounding. The outer disk is
//! the exception: its arc nodes lie exactly on the circle (the exterior image relies on
//! |x - c| = R at the glued nodes).

use crate::error::MeshError;
use crate::geom::{polygon_area, polygon_centroid, polygon_self_intersection, BBox};
use crate::sizemap::SizeMap;
use crate::{Cuts, MeshSpec, Outer, Point, Shape};
use std::f64::consts::PI;

/// Fewest segments used for a full circle or ellipse, however small (keeps them round:
/// the chord sagitta is then at most 1 - cos(π/24) = 0.86 % of the radius).
pub const MIN_CURVE_SEGMENTS: usize = 24;

/// Boundary points are spaced at most this fraction of the local largest edge.
pub const SPACING: f64 = 0.85;

/// A region's polygonised (and, with `clip_at_axis`, clipped) shape: closed loops, the
/// region being the points inside an odd number of them.
#[derive(Clone, Debug, PartialEq)]
pub struct RegionGeometry {
    pub loops: Vec<Vec<Point>>,
    pub bbox: BBox,
    /// Largest edge inside (the background size when the input gave none).
    pub max_edge: f64,
    /// Largest edge at the boundary (a skin layer graded inward), if finer than `max_edge`.
    pub skin_edge: Option<f64>,
}

impl RegionGeometry {
    /// Is `p` inside (even-odd over the loops)?
    pub fn contains(&self, p: Point) -> bool {
        self.bbox.contains(p) && crate::geom::point_in_loops(p, &self.loops)
    }

    /// Area of the polygonised shape (before later shapes are drawn over it).
    pub fn area(&self) -> f64 {
        // loops of one shape are nested (annulus) or disjoint pieces: sum of |area| with the
        // sign given by nesting depth parity
        let mut a = 0.0;
        for (i, lp) in self.loops.iter().enumerate() {
            let depth = self
                .loops
                .iter()
                .enumerate()
                .filter(|(j, o)| {
                    *j != i && crate::geom::point_in_loops(lp[0], std::slice::from_ref(o))
                })
                .count();
            let s = polygon_area(lp).abs();
            a += if depth % 2 == 0 { s } else { -s };
        }
        a
    }
}

/// The resolved outer boundary (after clipping at the axis).
#[derive(Clone, Debug, PartialEq)]
pub(crate) enum DomainKind {
    Rect {
        min: Point,
        max: Point,
    },
    Disk {
        center: Point,
        radius: f64,
        cuts: Cuts,
    },
}

#[derive(Clone, Debug, PartialEq)]
pub(crate) struct Domain {
    pub kind: DomainKind,
    /// Counter-clockwise convex loop.
    pub boundary: Vec<Point>,
    pub bbox: BBox,
}

fn finite(p: Point) -> bool {
    p[0].is_finite() && p[1].is_finite()
}

fn pos(x: f64) -> bool {
    x.is_finite() && x > 0.0
}

/// Segment count for a closed curve whose largest chord is about `2π r_max / n`.
fn curve_segments(r_max: f64, h: f64) -> usize {
    let n = (2.0 * PI * r_max / (SPACING * h)).ceil();
    if n.is_finite() {
        (n as usize).clamp(MIN_CURVE_SEGMENTS, 1 << 22)
    } else {
        MIN_CURVE_SEGMENTS
    }
}

/// Ellipse (or circle) polygon with the exact area, counter-clockwise.
fn ellipse_loop(c: Point, a: f64, b: f64, h: f64) -> Vec<Point> {
    let n = curve_segments(a.max(b), h);
    let step = 2.0 * PI / n as f64;
    // polygon at uniform parameter has area n/2 a b sin(2π/n): scale to πab
    let s = (2.0 * PI / (n as f64 * step.sin())).sqrt();
    (0..n)
        .map(|k| {
            let u = unit(k as f64 * step);
            [c[0] + s * a * u[0], c[1] + s * b * u[1]]
        })
        .collect()
}

/// Ellipse (or circle) polygon with the exact area whose chords follow the finer of `h` and
/// `map` along the curve (adaptive refinement: fine where the map asks, not everywhere).
/// With `axis` (axisymmetric meshes, clipped at x = 0) the map is read at |x|, the mirror
/// image of the meshed half, and a curve across the axis is not moved off it.
fn ellipse_loop_mapped(c: Point, a: f64, b: f64, h: f64, map: &SizeMap, axis: bool) -> Vec<Point> {
    let at = |t: f64| {
        let u = unit(t);
        [c[0] + a * u[0], c[1] + b * u[1]]
    };
    let local = |t: f64| {
        let p = at(t);
        let p = if axis { [p[0].abs(), p[1]] } else { p };
        map.at(p).map_or(h, |m| m.min(h))
    };
    // the finest target along the curve sets the sampling of the density integral
    let coarse: Vec<f64> = (0..4 * MIN_CURVE_SEGMENTS)
        .map(|k| local(2.0 * PI * k as f64 / (4 * MIN_CURVE_SEGMENTS) as f64))
        .collect();
    let finest = coarse.iter().copied().fold(h, f64::min);
    let perimeter = 2.0 * PI * a.max(b);
    let samples = ((4.0 * perimeter / finest).ceil() as usize).clamp(1024, 1 << 22);
    let dt = 2.0 * PI / samples as f64;
    // W(t) = ∫ |dp/dt| / (SPACING h_local) dt: one chord per unit of W
    let mut w = Vec::with_capacity(samples + 1);
    w.push(0.0);
    for k in 0..samples {
        let t = (k as f64 + 0.5) * dt;
        let speed = (a * t.sin()).hypot(b * t.cos());
        let dens = (speed / (SPACING * local(t))).max(MIN_CURVE_SEGMENTS as f64 / (2.0 * PI));
        w.push(w[k] + dens * dt);
    }
    let total = w[samples];
    let n = (total.ceil() as usize).clamp(MIN_CURVE_SEGMENTS, 1 << 22);
    let mut pts = Vec::with_capacity(n);
    let mut k = 0;
    for i in 0..n {
        let target = total * i as f64 / n as f64;
        while k + 1 < samples && w[k + 1] < target {
            k += 1;
        }
        let f = ((target - w[k]) / (w[k + 1] - w[k])).clamp(0.0, 1.0);
        pts.push(at((k as f64 + f) * dt));
    }
    // scale about the centre to the exact area πab, then move the polygon so that its
    // centroid is the centre: chords of unequal length leave the centroid off the centre
    // (by up to a fraction of the sagitta), which moves a winding's or a conductor's current
    // and shifted the mutual inductance of two 0.1 mm loops by up to 2e-5 from pass to pass
    // of the accuracy loop. With area and centroid exact, the polygon has the curve's
    // zeroth and first moments (∫ r dA in axisymmetric form).
    let area = polygon_area(&pts).abs();
    let s = (PI * a * b / area).sqrt();
    let mut out: Vec<Point> = pts
        .iter()
        .map(|p| [c[0] + s * (p[0] - c[0]), c[1] + s * (p[1] - c[1])])
        .collect();
    if let Some(g) = polygon_centroid(&out) {
        let across = axis && c[0] - a < 0.0 && c[0] + a > 0.0;
        let d = [if across { 0.0 } else { c[0] - g[0] }, c[1] - g[1]];
        for p in out.iter_mut() {
            p[0] += d[0];
            p[1] += d[1];
        }
    }
    out
}

fn validate_polygon(region: usize, p: &[Point]) -> Result<(), MeshError> {
    if p.len() < 3 {
        return Err(MeshError::DegenerateShape {
            region,
            reason: "polygon with fewer than 3 points",
        });
    }
    if !p.iter().all(|&q| finite(q)) {
        return Err(MeshError::DegenerateShape {
            region,
            reason: "non-finite coordinate",
        });
    }
    let n = p.len();
    let scale = BBox::of(p).diag();
    let area = polygon_area(p).abs();
    if area.is_nan() || area <= 1e-12 * scale * scale {
        return Err(MeshError::DegenerateShape {
            region,
            reason: "polygon without area",
        });
    }
    for i in 0..n {
        if p[i] == p[(i + 1) % n] {
            return Err(MeshError::DegenerateShape {
                region,
                reason: "repeated polygon point",
            });
        }
    }
    if let Some((first, second)) = polygon_self_intersection(p) {
        return Err(MeshError::SelfIntersecting {
            region,
            first,
            second,
        });
    }
    Ok(())
}

/// Polygonise one region's shape at largest edge `h` (validated; not clipped; `axis`: the
/// mesh is axisymmetric, see [`ellipse_loop_mapped`]).
pub(crate) fn polygonise(
    region: usize,
    shape: &Shape,
    h: f64,
    map: Option<&SizeMap>,
    axis: bool,
) -> Result<Vec<Vec<Point>>, MeshError> {
    let ellipse = |c: Point, a: f64, b: f64| match map {
        Some(m) => ellipse_loop_mapped(c, a, b, h, m, axis),
        None => ellipse_loop(c, a, b, h),
    };
    let bad = |reason| Err(MeshError::DegenerateShape { region, reason });
    match shape {
        Shape::Rect { min, max } => {
            if !finite(*min) || !finite(*max) {
                return bad("non-finite coordinate");
            }
            if !(max[0] > min[0] && max[1] > min[1]) {
                return bad("rectangle with max <= min");
            }
            Ok(vec![vec![*min, [max[0], min[1]], *max, [min[0], max[1]]]])
        }
        Shape::Circle { center, radius } => {
            if !finite(*center) {
                return bad("non-finite coordinate");
            }
            if !pos(*radius) {
                return bad("radius must be positive and finite");
            }
            Ok(vec![ellipse(*center, *radius, *radius)])
        }
        Shape::Ellipse { center, semi_axes } => {
            if !finite(*center) {
                return bad("non-finite coordinate");
            }
            if !pos(semi_axes[0]) || !pos(semi_axes[1]) {
                return bad("semi-axes must be positive and finite");
            }
            Ok(vec![ellipse(*center, semi_axes[0], semi_axes[1])])
        }
        Shape::Annulus {
            center,
            inner,
            outer,
        } => {
            if !finite(*center) {
                return bad("non-finite coordinate");
            }
            if !pos(*inner) || !pos(*outer) || inner >= outer {
                return bad("annulus needs 0 < inner < outer");
            }
            Ok(vec![
                ellipse(*center, *outer, *outer),
                ellipse(*center, *inner, *inner),
            ])
        }
        Shape::Polygon(p) => {
            validate_polygon(region, p)?;
            let mut q = p.clone();
            if polygon_area(&q) < 0.0 {
                q.reverse();
            }
            Ok(vec![q])
        }
    }
}

/// Sutherland–Hodgman clip of a closed loop to x >= 0. Points on the axis get x = 0 exactly.
pub(crate) fn clip_loop_at_axis(lp: &[Point]) -> Vec<Point> {
    let n = lp.len();
    let mut out = Vec::with_capacity(n + 2);
    for i in 0..n {
        let a = lp[i];
        let b = lp[(i + 1) % n];
        let ina = a[0] >= 0.0;
        let inb = b[0] >= 0.0;
        if ina {
            out.push(a);
        }
        if ina != inb && a[0] != 0.0 && b[0] != 0.0 {
            let t = a[0] / (a[0] - b[0]);
            out.push([0.0, a[1] + t * (b[1] - a[1])]);
        }
    }
    out.dedup();
    while out.len() > 1 && out.first() == out.last() {
        out.pop();
    }
    out
}

/// cos/sin that are exact at multiples of 90°.
pub(crate) fn unit(theta: f64) -> Point {
    let q = theta / (0.5 * PI);
    let r = q.round();
    if (q - r).abs() < 1e-12 {
        match (r as i64).rem_euclid(4) {
            0 => [1.0, 0.0],
            1 => [0.0, 1.0],
            2 => [-1.0, 0.0],
            _ => [0.0, -1.0],
        }
    } else {
        [theta.cos(), theta.sin()]
    }
}

/// Angular range [start, end] of the arc kept by the cuts (counter-clockwise).
pub(crate) fn arc_range(c: Cuts) -> (f64, f64) {
    match (c.left, c.right, c.bottom, c.top) {
        (false, false, false, false) => (0.0, 2.0 * PI),
        (true, false, false, false) => (-0.5 * PI, 0.5 * PI),
        (false, true, false, false) => (0.5 * PI, 1.5 * PI),
        (false, false, true, false) => (0.0, PI),
        (false, false, false, true) => (PI, 2.0 * PI),
        (true, false, true, false) => (0.0, 0.5 * PI),
        (false, true, true, false) => (0.5 * PI, PI),
        (false, true, false, true) => (PI, 1.5 * PI),
        _ => (1.5 * PI, 2.0 * PI), // left + top
    }
}

pub(crate) fn resolve_domain(spec: &MeshSpec) -> Result<Domain, MeshError> {
    let h = spec.background_max_edge;
    match &spec.outer {
        Outer::Rect { min, max } => {
            if !finite(*min) || !finite(*max) {
                return Err(MeshError::BadDomain {
                    reason: "non-finite coordinate",
                });
            }
            let mut min = *min;
            if spec.clip_at_axis && min[0] < 0.0 {
                min[0] = 0.0;
            }
            if !(max[0] > min[0] && max[1] > min[1]) {
                return Err(MeshError::BadDomain {
                    reason: "rectangle with max <= min (after clipping at the axis)",
                });
            }
            let boundary = vec![min, [max[0], min[1]], *max, [min[0], max[1]]];
            Ok(Domain {
                kind: DomainKind::Rect { min, max: *max },
                bbox: BBox::of(&boundary),
                boundary,
            })
        }
        Outer::Disk {
            center,
            radius,
            cuts,
        } => {
            if !finite(*center) || !pos(*radius) {
                return Err(MeshError::BadDomain {
                    reason: "disk needs a finite centre and a positive radius",
                });
            }
            if (cuts.left && cuts.right) || (cuts.bottom && cuts.top) {
                return Err(MeshError::BadDomain {
                    reason: "opposite cuts (left+right or bottom+top)",
                });
            }
            let mut cuts = *cuts;
            let r = *radius;
            if spec.clip_at_axis {
                if center[0] == 0.0 {
                    if cuts.right {
                        return Err(MeshError::BadDomain {
                            reason: "right cut on the axis leaves nothing at x >= 0",
                        });
                    }
                    cuts.left = true;
                } else if center[0] - r < 0.0 {
                    return Err(MeshError::BadDomain {
                        reason: "disk crosses the axis off its centre",
                    });
                }
            }
            let (t0, t1) = arc_range(cuts);
            let full = !(cuts.left || cuts.right || cuts.bottom || cuts.top);
            let span = t1 - t0;
            let n_full = curve_segments(r, h);
            let n =
                ((n_full as f64 * span / (2.0 * PI)).ceil() as usize).max(MIN_CURVE_SEGMENTS / 4);
            let mut boundary = Vec::with_capacity(n + 2);
            let count = if full { n } else { n + 1 };
            for k in 0..count {
                let t = if k == n {
                    t1
                } else {
                    t0 + span * k as f64 / n as f64
                };
                let u = unit(t);
                boundary.push([center[0] + r * u[0], center[1] + r * u[1]]);
            }
            if !full {
                // back through the centre (a vertex of the cut lines)
                boundary.push(*center);
            }
            Ok(Domain {
                kind: DomainKind::Disk {
                    center: *center,
                    radius: r,
                    cuts,
                },
                bbox: BBox::of(&boundary),
                boundary,
            })
        }
    }
}

/// Polygonise and clip every region (index = region id - 1) and resolve the domain.
/// This is what the mesh is built from, and what [`crate::expected_region_areas`] measures.
pub fn region_geometries(spec: &MeshSpec) -> Result<Vec<RegionGeometry>, MeshError> {
    Ok(resolve_all(spec)?.1)
}

pub(crate) fn validate_spec(spec: &MeshSpec) -> Result<(), MeshError> {
    if !pos(spec.background_max_edge) {
        return Err(MeshError::BadParameter {
            what: "background_max_edge",
            reason: "must be positive and finite",
        });
    }
    let a = spec.params.min_angle_deg;
    if !(a.is_finite() && (0.0..=34.0).contains(&a)) {
        return Err(MeshError::BadParameter {
            what: "min_angle_deg",
            reason: "must be within 0..=34 degrees",
        });
    }
    let g = spec.params.grading;
    if !(g.is_finite() && g > 1.0 && g <= 10.0) {
        return Err(MeshError::BadParameter {
            what: "grading",
            reason: "must be in (1, 10]",
        });
    }
    if spec.exterior_image && !matches!(spec.outer, Outer::Disk { .. }) {
        return Err(MeshError::ImageNeedsDisk);
    }
    Ok(())
}

pub(crate) fn resolve_all(spec: &MeshSpec) -> Result<(Domain, Vec<RegionGeometry>), MeshError> {
    resolve_all_mapped(spec, None)
}

/// [`resolve_all`] with adaptive size targets: a curved shape is polygonised at the finest
/// size `map` asks for along it (so refinement also makes circles and ellipses rounder and the
/// geometry error shrinks with the discretisation error).
pub(crate) fn resolve_all_mapped(
    spec: &MeshSpec,
    map: Option<&SizeMap>,
) -> Result<(Domain, Vec<RegionGeometry>), MeshError> {
    validate_spec(spec)?;
    let domain = resolve_domain(spec)?;
    let scale = domain.bbox.diag();
    let tol = 1e-9 * scale;
    let mut out = Vec::with_capacity(spec.regions.len());
    for (i, r) in spec.regions.iter().enumerate() {
        let h = match r.max_edge {
            Some(h) if pos(h) => h,
            Some(_) => {
                return Err(MeshError::DegenerateShape {
                    region: i,
                    reason: "max_edge must be positive and finite",
                })
            }
            None => spec.background_max_edge,
        };
        let skin = match r.skin_edge {
            Some(s) if pos(s) => (s < h).then_some(s),
            Some(_) => {
                return Err(MeshError::DegenerateShape {
                    region: i,
                    reason: "skin_edge must be positive and finite",
                })
            }
            None => None,
        };
        let mut loops = polygonise(i, &r.shape, skin.unwrap_or(h), map, spec.clip_at_axis)?;
        if spec.clip_at_axis {
            loops = loops
                .iter()
                .map(|l| clip_loop_at_axis(l))
                .filter(|l| l.len() >= 3 && polygon_area(l).abs() > 1e-12 * scale * scale)
                .collect();
            if loops.is_empty() {
                return Err(MeshError::RegionBeyondAxis { region: i });
            }
        }
        // inside the domain (tolerance tol); snap near-boundary points of a rect domain onto it
        for lp in loops.iter_mut() {
            for p in lp.iter_mut() {
                match &domain.kind {
                    DomainKind::Rect { min, max } => {
                        for k in 0..2 {
                            if p[k] < min[k] - tol || p[k] > max[k] + tol {
                                return Err(MeshError::ShapeOutsideDomain { region: i });
                            }
                            // on (or within tol of) a side: exactly on it
                            if (p[k] - min[k]).abs() <= tol {
                                p[k] = min[k];
                            } else if (p[k] - max[k]).abs() <= tol {
                                p[k] = max[k];
                            }
                        }
                    }
                    DomainKind::Disk { center, cuts, .. } => {
                        if (cuts.left || cuts.right) && (p[0] - center[0]).abs() <= tol {
                            p[0] = center[0];
                        }
                        if (cuts.bottom || cuts.top) && (p[1] - center[1]).abs() <= tol {
                            p[1] = center[1];
                        }
                        let b = &domain.boundary;
                        let n = b.len();
                        for k in 0..n {
                            let (a, c) = (b[k], b[(k + 1) % n]);
                            let len = crate::geom::dist2(a, c).sqrt();
                            if crate::geom::cross(a, c, *p) < -tol * len {
                                return Err(MeshError::ShapeOutsideDomain { region: i });
                            }
                        }
                    }
                }
            }
            lp.dedup();
        }
        let bbox = loops.iter().fold(BBox::EMPTY, |b, l| b.union(&BBox::of(l)));
        out.push(RegionGeometry {
            loops,
            bbox,
            max_edge: h,
            skin_edge: skin,
        });
    }
    Ok((domain, out))
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A circle polygonised under a size map that is 20 times finer on one side keeps the
    /// exact area and has its centroid at the centre (the mapped polygon's chords differ in
    /// length, which without the shift puts the centroid off the centre).
    #[test]
    fn mapped_circle_keeps_area_and_centroid() {
        let (c, r) = ([3.0, -2.0], 0.5);
        // size 0.002 left of the centre, 0.04 right of it
        let pts = vec![
            [2.0, -3.0],
            [3.0, -3.0],
            [4.0, -3.0],
            [2.0, -1.0],
            [3.0, -1.0],
            [4.0, -1.0],
        ];
        let tris = vec![[0, 1, 4], [0, 4, 3], [1, 2, 5], [1, 5, 4]];
        let map = SizeMap::new(pts, tris, vec![0.002, 0.002, 0.04, 0.04]);
        let p = ellipse_loop_mapped(c, r, r, 0.04, &map, false);
        let chords: Vec<f64> = (0..p.len())
            .map(|k| {
                let (a, b) = (p[k], p[(k + 1) % p.len()]);
                (a[0] - b[0]).hypot(a[1] - b[1])
            })
            .collect();
        let (lo, hi) = chords
            .iter()
            .fold((f64::MAX, 0.0f64), |(l, h), &s| (l.min(s), h.max(s)));
        assert!(
            hi > 5.0 * lo,
            "chords {lo}..{hi}: the map should grade them"
        );
        let area = polygon_area(&p).abs();
        assert!((area - PI * r * r).abs() < 1e-12 * r * r, "area {area}");
        let g = polygon_centroid(&p).unwrap();
        assert!(
            (g[0] - c[0]).hypot(g[1] - c[1]) < 1e-12 * r,
            "centroid {g:?}, centre {c:?}"
        );
    }
}
