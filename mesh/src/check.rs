//! Invariant checks of a generated mesh against its spec, and expected region areas.

use crate::build::SNAP_REL;
use crate::error::{InvariantViolation, MeshError};
use crate::geom::{dist2, dist2_point_segment, polygon_area, triangle_area, BBox};
use crate::grid::PointGrid;
use crate::quadratic::sorted_edges;
use crate::shape::{arc_range, resolve_all, DomainKind, RegionGeometry};
use crate::tag::locate_region;
use crate::{Mesh, MeshSpec, Point, Side};
use std::collections::{HashMap, HashSet};

/// Gauss–Legendre 2-point rule on [0, 1]: exact for the piecewise-linear chord lengths.
const GAUSS2: [f64; 2] = [0.211_324_865_405_187_1, 0.788_675_134_594_812_9];

/// Visible area of every region id (index 0 = background inside the resolved outer
/// boundary polygon, i + 1 = `spec.regions[i]` minus what later regions cover), computed
/// independently of the mesh by exact integration of horizontal chord lengths between all
/// vertex and crossing ordinates of the polygonised shapes.
pub fn expected_region_areas(spec: &MeshSpec) -> Result<Vec<f64>, MeshError> {
    let (domain, regions) = resolve_all(spec)?;
    let mut loops: Vec<(usize, &Vec<Point>)> = vec![(0, &domain.boundary)];
    for (i, r) in regions.iter().enumerate() {
        for lp in &r.loops {
            loops.push((i + 1, lp));
        }
    }
    let segs: Vec<(Point, Point)> = loops
        .iter()
        .flat_map(|(_, lp)| (0..lp.len()).map(move |k| (lp[k], lp[(k + 1) % lp.len()])))
        .collect();
    let mut ys: Vec<f64> = segs.iter().map(|s| s.0[1]).collect();
    if segs.len() <= 6000 {
        for i in 0..segs.len() {
            for j in i + 1..segs.len() {
                if let Some(y) = crossing_y(segs[i], segs[j]) {
                    ys.push(y);
                }
            }
        }
    }
    ys.sort_by(f64::total_cmp);
    ys.dedup();
    let nreg = regions.len() + 1;
    let mut area = vec![0.0; nreg];
    let mut events: Vec<(f64, usize)> = Vec::new();
    let mut parity = vec![false; nreg];
    for w in ys.windows(2) {
        let (y0, y1) = (w[0], w[1]);
        if y1 <= y0 {
            continue;
        }
        for g in GAUSS2 {
            let y = y0 + g * (y1 - y0);
            events.clear();
            for (id, lp) in &loops {
                let n = lp.len();
                for k in 0..n {
                    let (a, b) = (lp[k], lp[(k + 1) % n]);
                    if (a[1] > y) != (b[1] > y) {
                        events.push((a[0] + (y - a[1]) / (b[1] - a[1]) * (b[0] - a[0]), *id));
                    }
                }
            }
            events.sort_by(|a, b| a.0.total_cmp(&b.0));
            parity.iter_mut().for_each(|p| *p = false);
            for k in 0..events.len() {
                let (x, id) = events[k];
                parity[id] = !parity[id];
                if k + 1 < events.len() && parity[0] {
                    let len = events[k + 1].0 - x;
                    let top = (0..nreg).rev().find(|&r| parity[r]).unwrap_or(0);
                    area[top] += 0.5 * (y1 - y0) * len;
                }
            }
        }
    }
    Ok(area)
}

fn crossing_y(s: (Point, Point), t: (Point, Point)) -> Option<f64> {
    let (a, b) = s;
    let (c, d) = t;
    let r = [b[0] - a[0], b[1] - a[1]];
    let q = [d[0] - c[0], d[1] - c[1]];
    let den = r[0] * q[1] - r[1] * q[0];
    if den == 0.0 {
        return None;
    }
    let ac = [c[0] - a[0], c[1] - a[1]];
    let u = (ac[0] * q[1] - ac[1] * q[0]) / den;
    let v = (ac[0] * r[1] - ac[1] * r[0]) / den;
    if (0.0..=1.0).contains(&u) && (0.0..=1.0).contains(&v) {
        Some(a[1] + u * r[1])
    } else {
        None
    }
}

fn key(a: u32, b: u32) -> u64 {
    (u64::from(a.min(b)) << 32) | u64::from(a.max(b))
}

impl Mesh {
    /// Checks the mesh against `spec`: array consistency, counter-clockwise triangles, no
    /// duplicate points, valid region ids, tags equal to point-in-shape tests of centroids
    /// (tiny triangles excepted), per-region areas equal to [`expected_region_areas`]
    /// (relative 1e-6 of the domain area), every shape edge covered by mesh edges,
    /// boundary edges = free edges (less the glued arc) lying on their sides, identified
    /// nodes at the same angle and radius. Costs O(n log n) plus O(S²) in shape segments.
    pub fn check_invariants(&self, spec: &MeshSpec) -> Result<(), InvariantViolation> {
        let (domain, regions) = resolve_all(spec)?;
        let scale = domain.bbox.diag();
        let tol = 100.0 * SNAP_REL * scale;
        let nv = self.points.len();
        let nreg = regions.len();
        let image_id = self.exterior.as_ref().map(|e| e.region);
        if self.triangle_region.len() != self.triangles.len() {
            return Err(InvariantViolation::Inconsistent {
                what: "triangle_region vs triangles",
            });
        }
        let expect_count = 1 + nreg + usize::from(image_id.is_some());
        if self.region_count != expect_count {
            return Err(InvariantViolation::Inconsistent {
                what: "region_count",
            });
        }
        // orientation, ids, tags, areas
        let mut area = vec![0.0; self.region_count];
        for (t, tri) in self.triangles.iter().enumerate() {
            if tri.iter().any(|&v| v as usize >= nv) {
                return Err(InvariantViolation::IndexOutOfRange { triangle: t });
            }
            let p = self.triangle_points(t);
            let a = triangle_area(p[0], p[1], p[2]);
            if a.is_nan() || a <= 0.0 {
                return Err(InvariantViolation::NotCounterClockwise {
                    triangle: t,
                    area: a,
                });
            }
            let r = self.triangle_region[t];
            if r as usize >= self.region_count {
                return Err(InvariantViolation::BadRegionId {
                    triangle: t,
                    region: r,
                    count: self.region_count,
                });
            }
            area[r as usize] += a;
            if Some(r) == image_id {
                continue;
            }
            let c = [
                (p[0][0] + p[1][0] + p[2][0]) / 3.0,
                (p[0][1] + p[1][1] + p[2][1]) / 3.0,
            ];
            let expected = locate_region(&regions, c);
            if expected != r {
                // a sliver at a crossing computed by spade may straddle the exact loop
                let le = dist2(p[0], p[1])
                    .max(dist2(p[1], p[2]))
                    .max(dist2(p[2], p[0]))
                    .sqrt();
                if a / le > tol {
                    return Err(InvariantViolation::WrongTag {
                        triangle: t,
                        tagged: r,
                        expected,
                    });
                }
            }
        }
        let expected = expected_region_areas(spec)?;
        let dom_area: f64 = area.iter().take(nreg + 1).sum();
        for r in 1..=nreg {
            if (area[r] - expected[r]).abs() > 1e-6 * dom_area + 1e-9 * expected[r] {
                return Err(InvariantViolation::AreaMismatch {
                    region: r,
                    mesh: area[r],
                    expected: expected[r],
                });
            }
        }
        let exact_domain = match domain.kind {
            DomainKind::Rect { min, max } => (max[0] - min[0]) * (max[1] - min[1]),
            DomainKind::Disk { radius, cuts, .. } => {
                let (t0, t1) = arc_range(cuts);
                0.5 * radius * radius * (t1 - t0)
            }
        };
        let lo = polygon_area(&domain.boundary).abs().min(exact_domain);
        if dom_area < lo * (1.0 - 1e-9) || dom_area > exact_domain * (1.0 + 1e-9) {
            return Err(InvariantViolation::AreaMismatch {
                region: 0,
                mesh: dom_area,
                expected: exact_domain,
            });
        }
        if let (Some(id), Some(ext)) = (image_id, &self.exterior) {
            // image area equals the domain polygon's area (same arc nodes, same cuts)
            let _ = ext;
            if (area[id as usize] - dom_area).abs() > 1e-9 * dom_area {
                return Err(InvariantViolation::AreaMismatch {
                    region: id as usize,
                    mesh: area[id as usize],
                    expected: dom_area,
                });
            }
        }

        // duplicates
        let bbox = BBox::of(&self.points);
        let grid = PointGrid::new(&self.points, bbox, tol.max(scale / 1024.0), 1024);
        for (i, &p) in self.points.iter().enumerate() {
            let b = BBox {
                min: [p[0] - tol, p[1] - tol],
                max: [p[0] + tol, p[1] + tol],
            };
            let mut dup = None;
            grid.for_each_in(b, |j| {
                if j != i && dist2(self.points[j], p) <= tol * tol {
                    dup = Some(j);
                }
            });
            if let Some(j) = dup {
                return Err(InvariantViolation::DuplicatePoint {
                    a: i.min(j),
                    b: i.max(j),
                });
            }
        }

        // constraints: every shape segment is a chain of mesh edges
        let edges = sorted_edges(&self.triangles);
        let has = |a: u32, b: u32| edges.binary_search(&key(a, b)).is_ok();
        let dom_pts: Vec<Point> = (0..nv).map(|i| self.points[i]).collect();
        let fine_cell = regions
            .iter()
            .map(|r| r.max_edge)
            .fold(spec.background_max_edge, f64::min);
        let vgrid = PointGrid::new(&dom_pts, bbox, fine_cell, 1024);
        for (r, g) in regions.iter().enumerate() {
            check_loops(r, g, &self.points, &vgrid, tol, &has)?;
        }

        // boundary: free edges = listed edges + glued arc edges
        let mut count: HashMap<u64, u32> = HashMap::with_capacity(self.triangles.len() * 2);
        for t in &self.triangles {
            for k in 0..3 {
                *count.entry(key(t[k], t[(k + 1) % 3])).or_insert(0) += 1;
            }
        }
        let free: HashSet<u64> = count
            .iter()
            .filter(|(_, &c)| c == 1)
            .map(|(&k, _)| k)
            .collect();
        let listed: HashSet<u64> = self
            .boundary_edges
            .iter()
            .map(|e| key(e.nodes[0], e.nodes[1]))
            .collect();
        let glued: HashSet<u32> = self.identified.iter().flat_map(|p| *p).collect();
        let extra = listed.difference(&free).count();
        let missing = free
            .difference(&listed)
            .filter(|&&k| {
                !(glued.contains(&((k >> 32) as u32))
                    && glued.contains(&((k & 0xffff_ffff) as u32)))
            })
            .count();
        if extra > 0 || missing > 0 {
            return Err(InvariantViolation::BoundaryIncomplete { missing, extra });
        }
        for (i, e) in self.boundary_edges.iter().enumerate() {
            let (a, b) = (
                self.points[e.nodes[0] as usize],
                self.points[e.nodes[1] as usize],
            );
            let image_edge = is_image_node(self, e.nodes[0]);
            let ok = match (&domain.kind, image_edge) {
                (DomainKind::Rect { min, max }, _) => {
                    let on = |k: usize, v: f64| (a[k] - v).abs() <= tol && (b[k] - v).abs() <= tol;
                    match e.side {
                        Side::Left => on(0, min[0]),
                        Side::Right => on(0, max[0]),
                        Side::Bottom => on(1, min[1]),
                        Side::Top => on(1, max[1]),
                        Side::Arc => false,
                    }
                }
                (DomainKind::Disk { center, radius, .. }, img) => {
                    let c = match (img, &self.exterior) {
                        (true, Some(x)) => [center[0] + x.offset[0], center[1] + x.offset[1]],
                        _ => *center,
                    };
                    let on = |k: usize| (a[k] - c[k]).abs() <= tol && (b[k] - c[k]).abs() <= tol;
                    match e.side {
                        Side::Left | Side::Right => on(0),
                        Side::Bottom | Side::Top => on(1),
                        Side::Arc => [a, b].iter().all(|p| {
                            let d = dist2(*p, c).sqrt();
                            d <= radius + tol && d >= 0.98 * radius
                        }),
                    }
                }
            };
            if !ok {
                return Err(InvariantViolation::BoundaryOffSide {
                    edge: i,
                    side: e.side,
                });
            }
        }

        // identified nodes: same position relative to their centres
        if let Some(ext) = &self.exterior {
            for (k, p) in self.identified.iter().enumerate() {
                let (pi, pd) = (self.points[p[0] as usize], self.points[p[1] as usize]);
                let back = [pi[0] - ext.offset[0], pi[1] - ext.offset[1]];
                let rd = dist2(pd, ext.center).sqrt();
                if dist2(back, pd).sqrt() > tol || rd > ext.radius + tol || rd < 0.98 * ext.radius {
                    return Err(InvariantViolation::IdentifiedMismatch { pair: k });
                }
            }
        }
        Ok(())
    }
}

fn is_image_node(mesh: &Mesh, v: u32) -> bool {
    // image nodes lie in the image's bounding disk around centre + offset
    match &mesh.exterior {
        Some(x) => {
            let c = [x.center[0] + x.offset[0], x.center[1] + x.offset[1]];
            dist2(mesh.points[v as usize], c).sqrt() <= x.radius * (1.0 + 1e-9)
        }
        None => false,
    }
}

fn check_loops(
    r: usize,
    g: &RegionGeometry,
    pts: &[Point],
    vgrid: &PointGrid,
    tol: f64,
    has: &dyn Fn(u32, u32) -> bool,
) -> Result<(), InvariantViolation> {
    let mut on: Vec<(f64, u32)> = Vec::new();
    let mut e = 0;
    for lp in &g.loops {
        let n = lp.len();
        for k in 0..n {
            let (a, b) = (lp[k], lp[(k + 1) % n]);
            let bb = BBox {
                min: [a[0].min(b[0]) - tol, a[1].min(b[1]) - tol],
                max: [a[0].max(b[0]) + tol, a[1].max(b[1]) + tol],
            };
            on.clear();
            vgrid.for_each_in(bb, |v| {
                let (d2, t) = dist2_point_segment(pts[v], a, b);
                if d2 <= tol * tol {
                    on.push((t, v as u32));
                }
            });
            on.sort_by(|x, y| x.0.total_cmp(&y.0));
            let ends_ok = on
                .first()
                .is_some_and(|f| dist2(pts[f.1 as usize], a) <= tol * tol)
                && on
                    .last()
                    .is_some_and(|l| dist2(pts[l.1 as usize], b) <= tol * tol);
            if !ends_ok || on.windows(2).any(|w| !has(w[0].1, w[1].1)) {
                return Err(InvariantViolation::MissingConstraint {
                    region: r + 1,
                    edge: e,
                });
            }
            e += 1;
        }
    }
    Ok(())
}
