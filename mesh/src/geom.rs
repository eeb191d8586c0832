//! Small planar geometry helpers (plain `f64`, no robustness beyond careful formulas), and
//! the measures of a [`Shape`]: its bounding box, area (optionally clipped at the axis
//! x = 0), area centroid, smallest extent, farthest point from a centre, whether it holds a
//! point or shares area with another shape; and the polygon checks (self-intersection,
//! collinear points). Every caller in the workspace uses these; the mesh's own validation
//! and the case files' validation agree because they share them.

use std::f64::consts::PI;

use crate::{Point, Shape};

#[inline]
pub(crate) fn sub(a: Point, b: Point) -> Point {
    [a[0] - b[0], a[1] - b[1]]
}

#[inline]
pub(crate) fn cross(o: Point, a: Point, b: Point) -> f64 {
    (a[0] - o[0]) * (b[1] - o[1]) - (a[1] - o[1]) * (b[0] - o[0])
}

#[inline]
pub(crate) fn dist2(a: Point, b: Point) -> f64 {
    let d = sub(a, b);
    d[0] * d[0] + d[1] * d[1]
}

/// Squared distance from `p` to segment `ab` and the parameter of the closest point.
#[inline]
pub(crate) fn dist2_point_segment(p: Point, a: Point, b: Point) -> (f64, f64) {
    let ab = sub(b, a);
    let l2 = ab[0] * ab[0] + ab[1] * ab[1];
    if l2 == 0.0 {
        return (dist2(p, a), 0.0);
    }
    let ap = sub(p, a);
    let t = ((ap[0] * ab[0] + ap[1] * ab[1]) / l2).clamp(0.0, 1.0);
    let q = [a[0] + t * ab[0], a[1] + t * ab[1]];
    (dist2(p, q), t)
}

/// Signed shoelace area (positive for counter-clockwise).
pub fn polygon_area(poly: &[Point]) -> f64 {
    let n = poly.len();
    let mut s = 0.0;
    for i in 0..n {
        let a = poly[i];
        let b = poly[(i + 1) % n];
        s += a[0] * b[1] - a[1] * b[0];
    }
    0.5 * s
}

/// Area centroid of a simple polygon (either orientation; `None` when its area is zero): the
/// first moments by Green's theorem over the edges, divided by the shoelace area (common
/// practice, no source).
pub fn polygon_centroid(poly: &[Point]) -> Option<Point> {
    let n = poly.len();
    let (mut a, mut cx, mut cy) = (0.0, 0.0, 0.0);
    for i in 0..n {
        let (p, q) = (poly[i], poly[(i + 1) % n]);
        let w = p[0] * q[1] - p[1] * q[0];
        a += w;
        cx += (p[0] + q[0]) * w;
        cy += (p[1] + q[1]) * w;
    }
    (a != 0.0).then(|| [cx / (3.0 * a), cy / (3.0 * a)])
}

/// Signed area of a triangle (positive when counter-clockwise).
#[inline]
pub fn triangle_area(a: Point, b: Point, c: Point) -> f64 {
    0.5 * cross(a, b, c)
}

/// Even-odd point-in-polygon test over several closed loops.
pub(crate) fn point_in_loops(p: Point, loops: &[Vec<Point>]) -> bool {
    let mut inside = false;
    for lp in loops {
        let n = lp.len();
        let mut j = n - 1;
        for i in 0..n {
            let a = lp[i];
            let b = lp[j];
            if (a[1] > p[1]) != (b[1] > p[1]) {
                let x = a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0]);
                if p[0] < x {
                    inside = !inside;
                }
            }
            j = i;
        }
    }
    inside
}

/// Do closed segments `ab` and `cd` intersect (touching counts)?
pub(crate) fn segments_touch(a: Point, b: Point, c: Point, d: Point) -> bool {
    let d1 = cross(c, d, a);
    let d2 = cross(c, d, b);
    let d3 = cross(a, b, c);
    let d4 = cross(a, b, d);
    if ((d1 > 0.0 && d2 < 0.0) || (d1 < 0.0 && d2 > 0.0))
        && ((d3 > 0.0 && d4 < 0.0) || (d3 < 0.0 && d4 > 0.0))
    {
        return true;
    }
    let on = |p: Point, q: Point, r: Point, o: f64| {
        o == 0.0
            && r[0] >= p[0].min(q[0])
            && r[0] <= p[0].max(q[0])
            && r[1] >= p[1].min(q[1])
            && r[1] <= p[1].max(q[1])
    };
    on(c, d, a, d1) || on(c, d, b, d2) || on(a, b, c, d3) || on(a, b, d, d4)
}

/// The first pair of edges `(i, j)`, `i < j`, of a closed polygon that cross or touch other
/// than at the vertex two neighbouring edges share, or that fold back onto each other at it;
/// `None` for a simple polygon. Edge `i` runs from `p[i]` to `p[i + 1]`. Repeated
/// consecutive points make a zero-length edge that touches its neighbours' neighbours.
/// O(n²) with a bounding-box prefilter: polygons given by hand are small.
pub fn polygon_self_intersection(p: &[Point]) -> Option<(usize, usize)> {
    let n = p.len();
    let bbs: Vec<BBox> = (0..n).map(|i| BBox::of([&p[i], &p[(i + 1) % n]])).collect();
    for i in 0..n {
        for j in i + 1..n {
            let adjacent = j == i + 1 || (i == 0 && j == n - 1);
            if !bbs[i].overlaps(&bbs[j]) {
                continue;
            }
            let (a, b) = (p[i], p[(i + 1) % n]);
            let (c, d) = (p[j], p[(j + 1) % n]);
            if adjacent {
                // adjacent edges share one end; they must not fold back onto each other
                let (shared, other_i, other_j) = if j == i + 1 { (b, a, d) } else { (a, b, c) };
                let o = cross(shared, other_i, other_j);
                let u = sub(other_i, shared);
                let v = sub(other_j, shared);
                if o == 0.0 && u[0] * v[0] + u[1] * v[1] > 0.0 {
                    return Some((i, j));
                }
            } else if segments_touch(a, b, c, d) {
                return Some((i, j));
            }
        }
    }
    None
}

/// Whether all the points lie on one straight line (within `1e-12` of their spread).
pub fn points_collinear(p: &[Point]) -> bool {
    let Some(&a) = p.first() else {
        return true;
    };
    let d = |q: Point| (q[0] - a[0]).hypot(q[1] - a[1]);
    let far = p
        .iter()
        .copied()
        .fold(a, |m, q| if d(q) > d(m) { q } else { m });
    let len = d(far);
    len == 0.0
        || p.iter().all(|q| {
            let c = (far[0] - a[0]) * (q[1] - a[1]) - (far[1] - a[1]) * (q[0] - a[0]);
            c.abs() <= 1e-12 * len * len
        })
}

/// Axis-aligned bounding box.
#[derive(Clone, Copy, Debug, PartialEq)]
pub struct BBox {
    pub min: Point,
    pub max: Point,
}

impl BBox {
    pub(crate) const EMPTY: BBox = BBox {
        min: [f64::INFINITY, f64::INFINITY],
        max: [f64::NEG_INFINITY, f64::NEG_INFINITY],
    };

    pub(crate) fn of<'a>(pts: impl IntoIterator<Item = &'a Point>) -> BBox {
        let mut b = BBox::EMPTY;
        for p in pts {
            b.add(*p);
        }
        b
    }

    #[inline]
    pub(crate) fn add(&mut self, p: Point) {
        self.min[0] = self.min[0].min(p[0]);
        self.min[1] = self.min[1].min(p[1]);
        self.max[0] = self.max[0].max(p[0]);
        self.max[1] = self.max[1].max(p[1]);
    }

    pub(crate) fn union(&self, o: &BBox) -> BBox {
        BBox {
            min: [self.min[0].min(o.min[0]), self.min[1].min(o.min[1])],
            max: [self.max[0].max(o.max[0]), self.max[1].max(o.max[1])],
        }
    }

    #[inline]
    pub(crate) fn contains(&self, p: Point) -> bool {
        p[0] >= self.min[0] && p[0] <= self.max[0] && p[1] >= self.min[1] && p[1] <= self.max[1]
    }

    /// Euclidean distance from `p` to the box (0 inside).
    #[inline]
    pub(crate) fn dist(&self, p: Point) -> f64 {
        let dx = (self.min[0] - p[0]).max(p[0] - self.max[0]).max(0.0);
        let dy = (self.min[1] - p[1]).max(p[1] - self.max[1]).max(0.0);
        (dx * dx + dy * dy).sqrt()
    }

    pub(crate) fn diag(&self) -> f64 {
        dist2(self.min, self.max).sqrt()
    }

    pub(crate) fn overlaps(&self, o: &BBox) -> bool {
        self.min[0] <= o.max[0]
            && o.min[0] <= self.max[0]
            && self.min[1] <= o.max[1]
            && o.min[1] <= self.max[1]
    }
}

/// Area of the part of a disk (centre x `cx`, radius `r`) at x >= 0.
fn disk_area_right(cx: f64, r: f64) -> f64 {
    // Area of the cap beyond a chord at distance t (0 <= t <= r) from the centre.
    let cap = |t: f64| {
        let t = t.clamp(0.0, r);
        r * r * (t / r).acos() - t * (r * r - t * t).sqrt()
    };
    if cx >= r {
        PI * r * r
    } else if cx <= -r {
        0.0
    } else if cx >= 0.0 {
        PI * r * r - cap(cx)
    } else {
        cap(-cx)
    }
}

/// Samples per side of the grid [`Shape::overlaps`] tests.
pub const OVERLAP_SAMPLES: usize = 64;

impl Shape {
    /// Axis-aligned bounding box.
    pub fn bbox(&self) -> BBox {
        let (min, max) = match self {
            Shape::Rect { min, max } => (*min, *max),
            Shape::Circle {
                center: c,
                radius: r,
            } => ([c[0] - r, c[1] - r], [c[0] + r, c[1] + r]),
            Shape::Ellipse {
                center: c,
                semi_axes: [a, b],
            } => ([c[0] - a, c[1] - b], [c[0] + a, c[1] + b]),
            Shape::Annulus {
                center: c,
                outer: r,
                ..
            } => ([c[0] - r, c[1] - r], [c[0] + r, c[1] + r]),
            Shape::Polygon(p) => return BBox::of(p),
        };
        BBox { min, max }
    }

    /// Exact area of the analytic shape (not polygonised): w·h, πr², πab, π(r1² − r0²), or
    /// the shoelace area of the polygon. With `clip_at_axis`, only its part at x >= 0 counts
    /// (axisymmetric models, as [`crate::MeshSpec::clip_at_axis`] meshes it).
    pub fn area(&self, clip_at_axis: bool) -> f64 {
        match self {
            Shape::Rect { min, max } => {
                let x0 = if clip_at_axis {
                    min[0].max(0.0)
                } else {
                    min[0]
                };
                (max[0] - x0).max(0.0) * (max[1] - min[1]).max(0.0)
            }
            Shape::Circle { center, radius } if clip_at_axis => disk_area_right(center[0], *radius),
            Shape::Circle { radius, .. } => PI * radius * radius,
            // x = a·u, y = b·v maps the ellipse onto the unit disk; x >= 0 iff u >= 0.
            Shape::Ellipse {
                center,
                semi_axes: [a, b],
            } if clip_at_axis => a * b * disk_area_right(center[0] / a, 1.0),
            Shape::Ellipse {
                semi_axes: [a, b], ..
            } => PI * a * b,
            Shape::Annulus {
                center,
                inner,
                outer,
            } if clip_at_axis => {
                disk_area_right(center[0], *outer) - disk_area_right(center[0], *inner)
            }
            Shape::Annulus { inner, outer, .. } => PI * (outer * outer - inner * inner),
            Shape::Polygon(p) if clip_at_axis => {
                polygon_area(&crate::shape::clip_loop_at_axis(p)).abs()
            }
            Shape::Polygon(p) => polygon_area(p).abs(),
        }
    }

    /// The area centroid (not clipped at the axis): the centre of a rect, circle, ellipse or
    /// annulus; for a polygon the centroid of its area ([`polygon_centroid`]), not the mean
    /// of its vertices (the two agree for triangles only), or the vertex mean when the
    /// polygon has no area.
    pub fn centroid(&self) -> Point {
        match self {
            Shape::Rect { min, max } => [0.5 * (min[0] + max[0]), 0.5 * (min[1] + max[1])],
            Shape::Circle { center, .. }
            | Shape::Ellipse { center, .. }
            | Shape::Annulus { center, .. } => *center,
            Shape::Polygon(p) => polygon_centroid(p).unwrap_or_else(|| {
                let n = p.len().max(1) as f64;
                [
                    p.iter().map(|q| q[0]).sum::<f64>() / n,
                    p.iter().map(|q| q[1]).sum::<f64>() / n,
                ]
            }),
        }
    }

    /// The smallest width: the narrower side of a rect, a circle's diameter, twice an
    /// ellipse's smaller semi-axis, an annulus's ring width, the narrower side of a
    /// polygon's bounding box.
    pub fn smallest_extent(&self) -> f64 {
        match self {
            Shape::Rect { min, max } => (max[0] - min[0]).min(max[1] - min[1]),
            Shape::Circle { radius, .. } => 2.0 * radius,
            Shape::Ellipse {
                semi_axes: [a, b], ..
            } => 2.0 * a.min(*b),
            Shape::Annulus { inner, outer, .. } => outer - inner,
            Shape::Polygon(_) => {
                let b = self.bbox();
                (b.max[0] - b.min[0]).min(b.max[1] - b.min[1])
            }
        }
    }

    /// Largest distance from `c` to a point of the shape (an ellipse's is sampled at 720
    /// points of its outline: exact enough for a containment check with a tolerance).
    pub fn max_distance_from(&self, c: Point) -> f64 {
        let d = |p: Point| ((p[0] - c[0]).powi(2) + (p[1] - c[1]).powi(2)).sqrt();
        match self {
            Shape::Rect { min, max } => [*min, *max, [min[0], max[1]], [max[0], min[1]]]
                .into_iter()
                .map(d)
                .fold(0.0, f64::max),
            Shape::Circle { center, radius } => d(*center) + radius,
            Shape::Annulus { center, outer, .. } => d(*center) + outer,
            Shape::Ellipse {
                center,
                semi_axes: [a, b],
            } => (0..720)
                .map(|i| {
                    let t = i as f64 * PI / 360.0;
                    d([center[0] + a * t.cos(), center[1] + b * t.sin()])
                })
                .fold(0.0, f64::max),
            Shape::Polygon(p) => p.iter().copied().map(d).fold(0.0, f64::max),
        }
    }

    /// Whether `p` lies inside the shape by more than `margin` (a length): points on the
    /// outline, or within `margin` of it, do not count, so that shapes which only touch
    /// never overlap.
    pub fn strictly_contains(&self, p: Point, margin: f64) -> bool {
        let dist = |c: Point| (p[0] - c[0]).hypot(p[1] - c[1]);
        match self {
            Shape::Rect { min, max } => {
                p[0] > min[0] + margin
                    && p[0] < max[0] - margin
                    && p[1] > min[1] + margin
                    && p[1] < max[1] - margin
            }
            Shape::Circle { center, radius } => dist(*center) < radius - margin,
            Shape::Annulus {
                center,
                inner,
                outer,
            } => {
                let d = dist(*center);
                d > inner + margin && d < outer - margin
            }
            Shape::Ellipse {
                center,
                semi_axes: [a, b],
            } => {
                // Shrink both semi-axes by the margin: a point inside the smaller ellipse is
                // at least `margin` inside the real one.
                let (a, b) = (a - margin, b - margin);
                a > 0.0
                    && b > 0.0
                    && ((p[0] - center[0]) / a).powi(2) + ((p[1] - center[1]) / b).powi(2) < 1.0
            }
            Shape::Polygon(v) => polygon_strictly_contains(v, p, margin),
        }
    }

    /// Whether the interiors of `self` and `other` share area, tested at the centres of an
    /// [`OVERLAP_SAMPLES`]² grid over the intersection of their bounding boxes (with
    /// `right_only`, its part at x > 0). Shapes that only touch, or share stretches of edge,
    /// never overlap; an overlap thinner than about 1/64 of that intersection box can be
    /// missed.
    pub fn overlaps(&self, other: &Shape, right_only: bool) -> bool {
        let (a, b) = (self.bbox(), other.bbox());
        let (alo, ahi, blo, bhi) = (a.min, a.max, b.min, b.max);
        let mut lo = [alo[0].max(blo[0]), alo[1].max(blo[1])];
        let hi = [ahi[0].min(bhi[0]), ahi[1].min(bhi[1])];
        if right_only {
            lo[0] = lo[0].max(0.0);
        }
        if !(hi[0] > lo[0] && hi[1] > lo[1]) {
            return false;
        }
        let scale =
            (ahi[0] - alo[0]).hypot(ahi[1] - alo[1]) + (bhi[0] - blo[0]).hypot(bhi[1] - blo[1]);
        let margin = 1e-9 * scale;
        let n = OVERLAP_SAMPLES;
        (0..n * n).any(|k| {
            let (i, j) = (k % n, k / n);
            let p = [
                lo[0] + (hi[0] - lo[0]) * (i as f64 + 0.5) / n as f64,
                lo[1] + (hi[1] - lo[1]) * (j as f64 + 0.5) / n as f64,
            ];
            self.strictly_contains(p, margin) && other.strictly_contains(p, margin)
        })
    }
}

/// [`Shape::strictly_contains`] for a polygon: farther than `margin` from every edge and
/// inside by even-odd ray casting.
fn polygon_strictly_contains(v: &[Point], p: Point, margin: f64) -> bool {
    let dist = |c: Point| (p[0] - c[0]).hypot(p[1] - c[1]);
    let n = v.len();
    let mut inside = false;
    for i in 0..n {
        let (a, b) = (v[i], v[(i + 1) % n]);
        // distance to this edge
        let (ex, ey) = (b[0] - a[0], b[1] - a[1]);
        let len2 = ex * ex + ey * ey;
        let t = if len2 > 0.0 {
            (((p[0] - a[0]) * ex + (p[1] - a[1]) * ey) / len2).clamp(0.0, 1.0)
        } else {
            0.0
        };
        if dist([a[0] + t * ex, a[1] + t * ey]) <= margin {
            return false;
        }
        // even-odd ray casting towards +x
        if (a[1] > p[1]) != (b[1] > p[1])
            && p[0] < a[0] + (p[1] - a[1]) / (b[1] - a[1]) * (b[0] - a[0])
        {
            inside = !inside;
        }
    }
    inside
}

/// Smallest interior angle of a triangle, in degrees (0 for a degenerate one).
pub fn triangle_min_angle_deg(p: [Point; 3]) -> f64 {
    let l2 = [dist2(p[1], p[2]), dist2(p[2], p[0]), dist2(p[0], p[1])];
    // the smallest angle is opposite the shortest edge
    let (k, _) =
        l2.iter().enumerate().fold(
            (0, f64::INFINITY),
            |acc, (i, &v)| if v < acc.1 { (i, v) } else { acc },
        );
    let a = p[k];
    let u = sub(p[(k + 1) % 3], a);
    let v = sub(p[(k + 2) % 3], a);
    let c = u[0] * v[1] - u[1] * v[0];
    let d = u[0] * v[0] + u[1] * v[1];
    c.abs().atan2(d).to_degrees()
}

#[cfg(test)]
mod tests {
    use super::*;

    fn rect(x0: f64, y0: f64, x1: f64, y1: f64) -> Shape {
        Shape::Rect {
            min: [x0, y0],
            max: [x1, y1],
        }
    }

    fn circle(x: f64, y: f64, r: f64) -> Shape {
        Shape::Circle {
            center: [x, y],
            radius: r,
        }
    }

    /// Exact areas (πr², w·h, πab, π(r1² − r0²), halves by symmetry about the axis), full
    /// and clipped at x = 0.
    #[test]
    fn areas_full_and_clipped() {
        let c = circle(0.0, 0.0, 2.0);
        assert!((c.area(false) - 4.0 * PI).abs() < 1e-12);
        assert!((c.area(true) - 2.0 * PI).abs() < 1e-12);
        assert_eq!(circle(-3.0, 0.0, 2.0).area(true), 0.0);
        let r = rect(-1.0, 0.0, 3.0, 2.0);
        assert_eq!(r.area(false), 8.0);
        assert_eq!(r.area(true), 6.0);
        let e = Shape::Ellipse {
            center: [0.0, 0.0],
            semi_axes: [1.0, 3.0],
        };
        assert!((e.area(false) - 3.0 * PI).abs() < 1e-12);
        assert!((e.area(true) - 1.5 * PI).abs() < 1e-12);
        let a = Shape::Annulus {
            center: [0.0, 0.0],
            inner: 1.0,
            outer: 2.0,
        };
        assert!((a.area(false) - 3.0 * PI).abs() < 1e-12);
        assert!((a.area(true) - 1.5 * PI).abs() < 1e-12);
        let p = Shape::Polygon(vec![[-1.0, 0.0], [1.0, 0.0], [1.0, 1.0], [-1.0, 1.0]]);
        assert!((p.area(false) - 2.0).abs() < 1e-12);
        assert!((p.area(true) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn clipped_disk_matches_segment_formula() {
        // Circle of radius 1 centred at x = 0.5: the part at x >= 0 is the disk minus the cap
        // beyond the chord at distance 0.5, cap = acos(0.5) − 0.5·sqrt(0.75) (area of a
        // circular segment, r² acos(d/r) − d √(r² − d²): common practice, no source).
        let cap = (0.5f64).acos() - 0.5 * 0.75f64.sqrt();
        assert!((circle(0.5, 0.0, 1.0).area(true) - (PI - cap)).abs() < 1e-12);
    }

    /// A triangle's centroid is the mean of its vertices (the medians meet there: classical
    /// geometry, common practice, no source); the shoelace-moment formula must agree, in
    /// either orientation.
    #[test]
    fn triangle_centroid_is_the_vertex_mean() {
        let t = vec![[0.0, 0.0], [6.0, 0.0], [1.0, 3.0]];
        let mean = [7.0 / 3.0, 1.0];
        for p in [t.clone(), t.into_iter().rev().collect()] {
            let g = Shape::Polygon(p).centroid();
            assert!((g[0] - mean[0]).abs() < 1e-14 && (g[1] - mean[1]).abs() < 1e-14);
        }
    }

    /// An L of two rectangles, 4 × 1 along the bottom and 1 × 2 up the left side: the area
    /// centroid is the area-weighted mean of the rectangles' centres (composite areas, as
    /// statics texts teach it: common practice, no source), (4·(2, 0.5) + 2·(0.5, 2)) / 6 =
    /// (1.5, 1). The vertex mean, (5/3, 4/3), is not it.
    #[test]
    fn l_shape_centroid_is_the_composite_area_centroid() {
        let l = vec![
            [0.0, 0.0],
            [4.0, 0.0],
            [4.0, 1.0],
            [1.0, 1.0],
            [1.0, 3.0],
            [0.0, 3.0],
        ];
        let shape = Shape::Polygon(l.clone());
        let g = shape.centroid();
        assert!(
            (g[0] - 1.5).abs() < 1e-14 && (g[1] - 1.0).abs() < 1e-14,
            "{g:?}"
        );
        assert!((shape.area(false) - 6.0).abs() < 1e-14);
        // shifted far from the origin, clockwise: the same point, shifted
        let far: Vec<Point> = l.iter().rev().map(|p| [p[0] + 1e3, p[1] - 2e3]).collect();
        let g = Shape::Polygon(far).centroid();
        assert!(
            (g[0] - 1001.5).abs() < 1e-9 && (g[1] + 1999.0).abs() < 1e-9,
            "{g:?}"
        );
    }

    /// Centred shapes have their centre as centroid (symmetry); a polygon without area
    /// falls back to its vertex mean.
    #[test]
    fn symmetric_and_degenerate_centroids() {
        assert_eq!(rect(1.0, 2.0, 5.0, 3.0).centroid(), [3.0, 2.5]);
        assert_eq!(circle(-1.0, 4.0, 2.0).centroid(), [-1.0, 4.0]);
        let line = Shape::Polygon(vec![[0.0, 0.0], [1.0, 1.0], [2.0, 2.0]]);
        assert_eq!(line.centroid(), [1.0, 1.0]);
    }

    #[test]
    fn bbox_and_smallest_extent() {
        let e = Shape::Ellipse {
            center: [1.0, -1.0],
            semi_axes: [3.0, 0.5],
        };
        assert_eq!(
            e.bbox(),
            BBox {
                min: [-2.0, -1.5],
                max: [4.0, -0.5]
            }
        );
        assert_eq!(e.smallest_extent(), 1.0);
        let a = Shape::Annulus {
            center: [0.0, 0.0],
            inner: 2.0,
            outer: 2.5,
        };
        assert_eq!(a.smallest_extent(), 0.5);
        let tri = Shape::Polygon(vec![[0.0, 0.0], [4.0, 0.0], [1.0, 3.0]]);
        assert_eq!(
            tri.bbox(),
            BBox {
                min: [0.0, 0.0],
                max: [4.0, 3.0]
            }
        );
        assert_eq!(tri.smallest_extent(), 3.0);
        assert_eq!(rect(0.0, 0.0, 3.0, 4.0).max_distance_from([0.0, 0.0]), 5.0);
    }

    #[test]
    fn overlap_needs_shared_area() {
        let c = circle;
        // identical, nested, crossing
        assert!(c(0.0, 0.0, 5.0).overlaps(&c(0.0, 0.0, 5.0), false));
        assert!(c(0.0, 0.0, 5.0).overlaps(&rect(-1.0, -1.0, 1.0, 1.0), false));
        assert!(c(0.0, 0.0, 5.0).overlaps(&c(9.0, 0.0, 5.0), false));
        // touching at a point, sharing an edge, apart
        assert!(!c(0.0, 0.0, 5.0).overlaps(&c(10.0, 0.0, 5.0), false));
        assert!(!rect(0.0, 0.0, 1.0, 1.0).overlaps(&rect(1.0, 0.0, 2.0, 1.0), false));
        assert!(!rect(0.0, 0.0, 1.0, 1.0).overlaps(&rect(3.0, 0.0, 4.0, 1.0), false));
        // a circle in the hole of an annulus (coaxial conductors) does not overlap it
        let ring = Shape::Annulus {
            center: [0.0, 0.0],
            inner: 4.0,
            outer: 6.0,
        };
        assert!(!ring.overlaps(&c(0.0, 0.0, 4.0), false));
        assert!(ring.overlaps(&c(0.0, 0.0, 4.5), false));
        // polygons: a triangle over a square's corner; one beside it sharing an edge
        let sq = Shape::Polygon(vec![[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [0.0, 2.0]]);
        let over = Shape::Polygon(vec![[1.5, 1.5], [3.0, 1.5], [1.5, 3.0]]);
        let beside = Shape::Polygon(vec![[2.0, 0.0], [3.0, 1.0], [2.0, 2.0]]);
        assert!(sq.overlaps(&over, false));
        assert!(!sq.overlaps(&beside, false));
        // axisymmetric: an overlap at r < 0 only does not count
        assert!(!c(-5.0, 0.0, 4.0).overlaps(&c(-5.0, 0.0, 4.0), true));
        assert!(c(-1.0, 0.0, 4.0).overlaps(&c(-1.0, 0.0, 4.0), true));
    }

    #[test]
    fn self_intersection() {
        let bow = [[0.0, 0.0], [1.0, 1.0], [1.0, 0.0], [0.0, 1.0]];
        assert_eq!(polygon_self_intersection(&bow), Some((0, 2)));
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        assert_eq!(polygon_self_intersection(&sq), None);
        // a spike folding back along its own edge: adjacent edges 1 and 2 overlap
        let spike = [[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [2.0, 1.0], [0.0, 1.0]];
        assert!(polygon_self_intersection(&spike).is_some());
        assert!(points_collinear(&[[0.0, 0.0], [1.0, 1.0], [3.0, 3.0]]));
        assert!(!points_collinear(&[[0.0, 0.0], [1.0, 1.0], [3.0, 3.1]]));
    }
}
