//! Small geometry helpers for validation and estimates: areas (optionally clipped at the
//! axis r = x = 0), bounding boxes, extents, polygon checks. Units are whatever the caller
//! uses (metres from the resolver).

use std::f64::consts::PI;

use super::model::Shape;

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

/// Signed area (counter-clockwise positive) by the shoelace formula.
pub fn polygon_signed_area(p: &[[f64; 2]]) -> f64 {
    let n = p.len();
    (0..n)
        .map(|i| {
            let (a, b) = (p[i], p[(i + 1) % n]);
            a[0] * b[1] - b[0] * a[1]
        })
        .sum::<f64>()
        / 2.0
}

/// The polygon clipped to x >= 0 (Sutherland–Hodgman against one edge).
fn clip_polygon_right(p: &[[f64; 2]]) -> Vec<[f64; 2]> {
    let n = p.len();
    let mut out = Vec::with_capacity(n + 2);
    for i in 0..n {
        let (a, b) = (p[i], p[(i + 1) % n]);
        let (ina, inb) = (a[0] >= 0.0, b[0] >= 0.0);
        if ina {
            out.push(a);
        }
        if ina != inb {
            let t = a[0] / (a[0] - b[0]);
            out.push([0.0, a[1] + t * (b[1] - a[1])]);
        }
    }
    out
}

/// Area of `shape`; with `clip_axis`, only its part at x >= 0 counts (axisymmetric models).
pub fn area(shape: &Shape, clip_axis: bool) -> f64 {
    match shape {
        Shape::Rect { min, max } => {
            let x0 = if clip_axis { min[0].max(0.0) } else { min[0] };
            (max[0] - x0).max(0.0) * (max[1] - min[1]).max(0.0)
        }
        Shape::Circle { center, radius } => {
            if clip_axis {
                disk_area_right(center[0], *radius)
            } else {
                PI * radius * radius
            }
        }
        Shape::Ellipse {
            center,
            semi_axes: [a, b],
        } => {
            if clip_axis {
                // x = a·u, y = b·v maps the ellipse onto the unit disk; x >= 0 iff u >= 0.
                a * b * disk_area_right(center[0] / a, 1.0)
            } else {
                PI * a * b
            }
        }
        Shape::Annulus {
            center,
            inner,
            outer,
        } => {
            if clip_axis {
                disk_area_right(center[0], *outer) - disk_area_right(center[0], *inner)
            } else {
                PI * (outer * outer - inner * inner)
            }
        }
        Shape::Polygon(p) => {
            if clip_axis {
                polygon_signed_area(&clip_polygon_right(p)).abs()
            } else {
                polygon_signed_area(p).abs()
            }
        }
    }
}

/// Axis-aligned bounding box `(min, max)`.
pub fn bbox(shape: &Shape) -> ([f64; 2], [f64; 2]) {
    match shape {
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
        Shape::Polygon(p) => {
            let mut lo = [f64::INFINITY; 2];
            let mut hi = [f64::NEG_INFINITY; 2];
            for q in p {
                for k in 0..2 {
                    lo[k] = lo[k].min(q[k]);
                    hi[k] = hi[k].max(q[k]);
                }
            }
            (lo, hi)
        }
    }
}

/// Largest distance from `c` to a point of `shape`.
pub fn max_distance_from(shape: &Shape, c: [f64; 2]) -> f64 {
    let d = |p: [f64; 2]| ((p[0] - c[0]).powi(2) + (p[1] - c[1]).powi(2)).sqrt();
    match shape {
        Shape::Rect { min, max } => [*min, *max, [min[0], max[1]], [max[0], min[1]]]
            .into_iter()
            .map(d)
            .fold(0.0, f64::max),
        Shape::Circle { center, radius } => d(*center) + radius,
        Shape::Annulus { center, outer, .. } => d(*center) + outer,
        Shape::Ellipse {
            center,
            semi_axes: [a, b],
        } => {
            // Sample the boundary finely: exact enough for a containment check with tolerance.
            (0..720)
                .map(|i| {
                    let t = i as f64 * PI / 360.0;
                    d([center[0] + a * t.cos(), center[1] + b * t.sin()])
                })
                .fold(0.0, f64::max)
        }
        Shape::Polygon(p) => p.iter().copied().map(d).fold(0.0, f64::max),
    }
}

/// Whether all the points lie on one straight line (within `1e-12` of their spread).
pub fn points_collinear(p: &[[f64; 2]]) -> bool {
    let Some(&a) = p.first() else {
        return true;
    };
    let d = |q: [f64; 2]| (q[0] - a[0]).hypot(q[1] - a[1]);
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

/// Whether the polygon's edges cross or touch anywhere other than at shared vertices of
/// neighbouring edges (i.e. it is not simple).
pub fn polygon_self_intersects(p: &[[f64; 2]]) -> bool {
    let n = p.len();
    let orient = |a: [f64; 2], b: [f64; 2], c: [f64; 2]| {
        let v = (b[0] - a[0]) * (c[1] - a[1]) - (b[1] - a[1]) * (c[0] - a[0]);
        if v > 0.0 {
            1
        } else if v < 0.0 {
            -1
        } else {
            0
        }
    };
    let on_seg = |a: [f64; 2], b: [f64; 2], c: [f64; 2]| {
        c[0] >= a[0].min(b[0])
            && c[0] <= a[0].max(b[0])
            && c[1] >= a[1].min(b[1])
            && c[1] <= a[1].max(b[1])
    };
    let cross = |a: [f64; 2], b: [f64; 2], c: [f64; 2], d: [f64; 2]| {
        let (o1, o2, o3, o4) = (
            orient(a, b, c),
            orient(a, b, d),
            orient(c, d, a),
            orient(c, d, b),
        );
        if o1 != o2 && o3 != o4 {
            return true;
        }
        (o1 == 0 && on_seg(a, b, c))
            || (o2 == 0 && on_seg(a, b, d))
            || (o3 == 0 && on_seg(c, d, a))
            || (o4 == 0 && on_seg(c, d, b))
    };
    for i in 0..n {
        for j in i + 1..n {
            // Skip neighbouring edges (they share a vertex by construction).
            if j == i + 1 || (i == 0 && j == n - 1) {
                continue;
            }
            if cross(p[i], p[(i + 1) % n], p[j], p[(j + 1) % n]) {
                return true;
            }
        }
    }
    false
}

/// Whether `p` lies inside `shape` by more than `margin` (a length): points on the outline,
/// or within `margin` of it, do not count, so that shapes which only touch never overlap.
pub fn strictly_inside(shape: &Shape, p: [f64; 2], margin: f64) -> bool {
    let dist = |c: [f64; 2]| (p[0] - c[0]).hypot(p[1] - c[1]);
    match shape {
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
            // Shrink both semi-axes by the margin: a point inside the smaller ellipse is at
            // least `margin` inside the real one.
            let (a, b) = (a - margin, b - margin);
            a > 0.0
                && b > 0.0
                && ((p[0] - center[0]) / a).powi(2) + ((p[1] - center[1]) / b).powi(2) < 1.0
        }
        Shape::Polygon(v) => {
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
    }
}

/// Samples per side of the grid [`overlaps`] tests.
pub const OVERLAP_SAMPLES: usize = 64;

/// Whether the interiors of `a` and `b` share area, tested at the centres of a
/// [`OVERLAP_SAMPLES`]² grid over the intersection of their bounding boxes (with `right_only`,
/// its part at x > 0). Shapes that only touch, or share stretches of edge, never overlap;
/// an overlap thinner than about 1/64 of that intersection box can be missed.
pub fn overlaps(a: &Shape, b: &Shape, right_only: bool) -> bool {
    let ((alo, ahi), (blo, bhi)) = (bbox(a), bbox(b));
    let mut lo = [alo[0].max(blo[0]), alo[1].max(blo[1])];
    let hi = [ahi[0].min(bhi[0]), ahi[1].min(bhi[1])];
    if right_only {
        lo[0] = lo[0].max(0.0);
    }
    if !(hi[0] > lo[0] && hi[1] > lo[1]) {
        return false;
    }
    let scale = (ahi[0] - alo[0]).hypot(ahi[1] - alo[1]) + (bhi[0] - blo[0]).hypot(bhi[1] - blo[1]);
    let margin = 1e-9 * scale;
    let n = OVERLAP_SAMPLES;
    (0..n * n).any(|k| {
        let (i, j) = (k % n, k / n);
        let p = [
            lo[0] + (hi[0] - lo[0]) * (i as f64 + 0.5) / n as f64,
            lo[1] + (hi[1] - lo[1]) * (j as f64 + 0.5) / n as f64,
        ];
        strictly_inside(a, p, margin) && strictly_inside(b, p, margin)
    })
}

/// The smallest width of a shape: the narrower side of a rect, a circle's diameter, twice
/// an ellipse's smaller semi-axis, an annulus's ring width, the narrower side of a polygon's
/// bounding box.
pub fn smallest_extent(shape: &Shape) -> f64 {
    match shape {
        Shape::Rect { min, max } => (max[0] - min[0]).min(max[1] - min[1]),
        Shape::Circle { radius, .. } => 2.0 * radius,
        Shape::Ellipse {
            semi_axes: [a, b], ..
        } => 2.0 * a.min(*b),
        Shape::Annulus { inner, outer, .. } => outer - inner,
        Shape::Polygon(_) => {
            let (lo, hi) = bbox(shape);
            (hi[0] - lo[0]).min(hi[1] - lo[1])
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn areas_full_and_clipped() {
        let c = Shape::Circle {
            center: [0.0, 0.0],
            radius: 2.0,
        };
        assert!((area(&c, false) - 4.0 * PI).abs() < 1e-12);
        assert!((area(&c, true) - 2.0 * PI).abs() < 1e-12);
        let c = Shape::Circle {
            center: [-3.0, 0.0],
            radius: 2.0,
        };
        assert_eq!(area(&c, true), 0.0);
        let r = Shape::Rect {
            min: [-1.0, 0.0],
            max: [3.0, 2.0],
        };
        assert_eq!(area(&r, false), 8.0);
        assert_eq!(area(&r, true), 6.0);
        let e = Shape::Ellipse {
            center: [0.0, 0.0],
            semi_axes: [1.0, 3.0],
        };
        assert!((area(&e, true) - 1.5 * PI).abs() < 1e-12);
        let a = Shape::Annulus {
            center: [0.0, 0.0],
            inner: 1.0,
            outer: 2.0,
        };
        assert!((area(&a, true) - 1.5 * PI).abs() < 1e-12);
        let p = Shape::Polygon(vec![[-1.0, 0.0], [1.0, 0.0], [1.0, 1.0], [-1.0, 1.0]]);
        assert!((area(&p, false) - 2.0).abs() < 1e-12);
        assert!((area(&p, true) - 1.0).abs() < 1e-12);
    }

    #[test]
    fn clipped_disk_matches_segment_formula() {
        // Circle of radius 1 centred at x = 0.5: the part at x >= 0 is the disk minus the cap
        // beyond the chord at distance 0.5, cap = acos(0.5) − 0.5·sqrt(0.75).
        let c = Shape::Circle {
            center: [0.5, 0.0],
            radius: 1.0,
        };
        let cap = (0.5f64).acos() - 0.5 * 0.75f64.sqrt();
        assert!((area(&c, true) - (PI - cap)).abs() < 1e-12);
    }

    #[test]
    fn overlap_needs_shared_area() {
        let c = |x: f64, y: f64, r: f64| Shape::Circle {
            center: [x, y],
            radius: r,
        };
        let rect = |x0: f64, y0: f64, x1: f64, y1: f64| Shape::Rect {
            min: [x0, y0],
            max: [x1, y1],
        };
        // identical, nested, crossing
        assert!(overlaps(&c(0.0, 0.0, 5.0), &c(0.0, 0.0, 5.0), false));
        assert!(overlaps(
            &c(0.0, 0.0, 5.0),
            &rect(-1.0, -1.0, 1.0, 1.0),
            false
        ));
        assert!(overlaps(&c(0.0, 0.0, 5.0), &c(9.0, 0.0, 5.0), false));
        // touching at a point, sharing an edge, apart
        assert!(!overlaps(&c(0.0, 0.0, 5.0), &c(10.0, 0.0, 5.0), false));
        assert!(!overlaps(
            &rect(0.0, 0.0, 1.0, 1.0),
            &rect(1.0, 0.0, 2.0, 1.0),
            false
        ));
        assert!(!overlaps(
            &rect(0.0, 0.0, 1.0, 1.0),
            &rect(3.0, 0.0, 4.0, 1.0),
            false
        ));
        // a circle in the hole of an annulus (coaxial conductors) does not overlap it
        let ring = Shape::Annulus {
            center: [0.0, 0.0],
            inner: 4.0,
            outer: 6.0,
        };
        assert!(!overlaps(&ring, &c(0.0, 0.0, 4.0), false));
        assert!(overlaps(&ring, &c(0.0, 0.0, 4.5), false));
        // polygons: a triangle over a square's corner; one beside it sharing an edge
        let sq = Shape::Polygon(vec![[0.0, 0.0], [2.0, 0.0], [2.0, 2.0], [0.0, 2.0]]);
        let over = Shape::Polygon(vec![[1.5, 1.5], [3.0, 1.5], [1.5, 3.0]]);
        let beside = Shape::Polygon(vec![[2.0, 0.0], [3.0, 1.0], [2.0, 2.0]]);
        assert!(overlaps(&sq, &over, false));
        assert!(!overlaps(&sq, &beside, false));
        // axisymmetric: an overlap at r < 0 only does not count
        assert!(!overlaps(&c(-5.0, 0.0, 4.0), &c(-5.0, 0.0, 4.0), true));
        assert!(overlaps(&c(-1.0, 0.0, 4.0), &c(-1.0, 0.0, 4.0), true));
    }

    #[test]
    fn self_intersection() {
        let bow = [[0.0, 0.0], [1.0, 1.0], [1.0, 0.0], [0.0, 1.0]];
        assert!(polygon_self_intersects(&bow));
        let sq = [[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]];
        assert!(!polygon_self_intersects(&sq));
    }
}
