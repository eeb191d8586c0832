//! Small planar geometry helpers (plain `f64`, no robustness beyond careful formulas).

use crate::Point;

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

/// Area centroid of a simple polygon (either orientation; `None` when its area is zero).
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
