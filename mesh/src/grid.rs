//! Uniform bucket grids for nearest-segment and near-point queries.

use crate::geom::{dist2_point_segment, BBox};
use crate::Point;

/// Segments bucketed in a uniform grid (CSR layout).
pub(crate) struct SegGrid {
    origin: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    start: Vec<u32>,
    items: Vec<u32>,
    pub(crate) segs: Vec<[Point; 2]>,
}

impl SegGrid {
    /// Grid over `bbox` with about `target_cell` cells, at most `max_cells` per axis.
    pub(crate) fn new(
        segs: Vec<[Point; 2]>,
        bbox: BBox,
        target_cell: f64,
        max_cells: usize,
    ) -> Self {
        let w = (bbox.max[0] - bbox.min[0]).max(1e-300);
        let h = (bbox.max[1] - bbox.min[1]).max(1e-300);
        let mut cell = target_cell.max(w.max(h) / max_cells as f64);
        if !(cell.is_finite() && cell > 0.0) {
            cell = w.max(h).max(1.0);
        }
        let nx = ((w / cell).ceil() as usize).clamp(1, max_cells);
        let ny = ((h / cell).ceil() as usize).clamp(1, max_cells);
        let mut g = SegGrid {
            origin: bbox.min,
            cell,
            nx,
            ny,
            start: vec![0; nx * ny + 1],
            items: Vec::new(),
            segs,
        };
        // two passes: count, then fill
        let ranges: Vec<[usize; 4]> = g.segs.iter().map(|s| g.cell_range(s)).collect();
        for r in &ranges {
            for j in r[2]..=r[3] {
                for i in r[0]..=r[1] {
                    g.start[j * nx + i + 1] += 1;
                }
            }
        }
        for k in 0..nx * ny {
            g.start[k + 1] += g.start[k];
        }
        let mut fill = g.start.clone();
        g.items = vec![0; g.start[nx * ny] as usize];
        for (s, r) in ranges.iter().enumerate() {
            for j in r[2]..=r[3] {
                for i in r[0]..=r[1] {
                    let c = j * nx + i;
                    g.items[fill[c] as usize] = s as u32;
                    fill[c] += 1;
                }
            }
        }
        g
    }

    #[inline]
    fn cell_of(&self, p: Point) -> (isize, isize) {
        (
            ((p[0] - self.origin[0]) / self.cell).floor() as isize,
            ((p[1] - self.origin[1]) / self.cell).floor() as isize,
        )
    }

    fn cell_range(&self, s: &[Point; 2]) -> [usize; 4] {
        let (i0, j0) = self.cell_of([s[0][0].min(s[1][0]), s[0][1].min(s[1][1])]);
        let (i1, j1) = self.cell_of([s[0][0].max(s[1][0]), s[0][1].max(s[1][1])]);
        let cx = |i: isize| i.clamp(0, self.nx as isize - 1) as usize;
        let cy = |j: isize| j.clamp(0, self.ny as isize - 1) as usize;
        [cx(i0), cx(i1), cy(j0), cy(j1)]
    }

    #[inline]
    fn cell_dist(&self, p: Point, i: usize, j: usize) -> f64 {
        let b = BBox {
            min: [
                self.origin[0] + i as f64 * self.cell,
                self.origin[1] + j as f64 * self.cell,
            ],
            max: [
                self.origin[0] + (i + 1) as f64 * self.cell,
                self.origin[1] + (j + 1) as f64 * self.cell,
            ],
        };
        b.dist(p)
    }

    /// Distance from `p` to the nearest segment if it is below `limit`, else `limit`.
    /// Searches rings of cells outwards from the (clamped) cell of `p`.
    pub(crate) fn nearest(&self, p: Point, limit: f64) -> f64 {
        let (ci, cj) = self.cell_of(p);
        let ci = ci.clamp(0, self.nx as isize - 1);
        let cj = cj.clamp(0, self.ny as isize - 1);
        let mut best2 = limit * limit;
        let kmax = self.nx.max(self.ny) as isize;
        for k in 0..=kmax {
            let mut ring_min = f64::INFINITY;
            let mut any = false;
            let i_lo = ci - k;
            let i_hi = ci + k;
            let j_lo = cj - k;
            let j_hi = cj + k;
            for j in j_lo..=j_hi {
                if j < 0 || j >= self.ny as isize {
                    continue;
                }
                let edge_row = j == j_lo || j == j_hi;
                let mut i = i_lo;
                while i <= i_hi {
                    if i >= 0 && i < self.nx as isize {
                        any = true;
                        let d = self.cell_dist(p, i as usize, j as usize);
                        ring_min = ring_min.min(d);
                        if d * d < best2 {
                            let c = j as usize * self.nx + i as usize;
                            for &s in
                                &self.items[self.start[c] as usize..self.start[c + 1] as usize]
                            {
                                let sg = &self.segs[s as usize];
                                let (d2, _) = dist2_point_segment(p, sg[0], sg[1]);
                                if d2 < best2 {
                                    best2 = d2;
                                }
                            }
                        }
                    }
                    if edge_row || i == i_hi {
                        i += 1;
                    } else {
                        i = i_hi;
                    }
                }
            }
            if !any || ring_min * ring_min >= best2 {
                break;
            }
        }
        best2.sqrt().min(limit)
    }
}

/// Points bucketed in a uniform grid (CSR layout), for "points near a segment" queries.
pub(crate) struct PointGrid {
    origin: Point,
    cell: f64,
    nx: usize,
    ny: usize,
    start: Vec<u32>,
    items: Vec<u32>,
}

impl PointGrid {
    pub(crate) fn new(pts: &[Point], bbox: BBox, target_cell: f64, max_cells: usize) -> Self {
        let w = (bbox.max[0] - bbox.min[0]).max(1e-300);
        let h = (bbox.max[1] - bbox.min[1]).max(1e-300);
        let cell = target_cell.max(w.max(h) / max_cells as f64);
        let nx = ((w / cell).ceil() as usize).clamp(1, max_cells);
        let ny = ((h / cell).ceil() as usize).clamp(1, max_cells);
        let mut g = PointGrid {
            origin: bbox.min,
            cell,
            nx,
            ny,
            start: vec![0; nx * ny + 1],
            items: vec![0; pts.len()],
        };
        let cells: Vec<usize> = pts.iter().map(|&p| g.cell(p)).collect();
        for &c in &cells {
            g.start[c + 1] += 1;
        }
        for k in 0..nx * ny {
            g.start[k + 1] += g.start[k];
        }
        let mut fill = g.start.clone();
        for (i, &c) in cells.iter().enumerate() {
            g.items[fill[c] as usize] = i as u32;
            fill[c] += 1;
        }
        g
    }

    fn cell(&self, p: Point) -> usize {
        let i =
            (((p[0] - self.origin[0]) / self.cell).floor() as isize).clamp(0, self.nx as isize - 1);
        let j =
            (((p[1] - self.origin[1]) / self.cell).floor() as isize).clamp(0, self.ny as isize - 1);
        j as usize * self.nx + i as usize
    }

    /// Calls `f(point index)` for all points in cells meeting the box.
    pub(crate) fn for_each_in(&self, b: BBox, mut f: impl FnMut(usize)) {
        let ci = |x: f64| {
            (((x - self.origin[0]) / self.cell).floor() as isize).clamp(0, self.nx as isize - 1)
                as usize
        };
        let cj = |y: f64| {
            (((y - self.origin[1]) / self.cell).floor() as isize).clamp(0, self.ny as isize - 1)
                as usize
        };
        for j in cj(b.min[1])..=cj(b.max[1]) {
            for i in ci(b.min[0])..=ci(b.max[0]) {
                let c = j * self.nx + i;
                for &s in &self.items[self.start[c] as usize..self.start[c + 1] as usize] {
                    f(s as usize);
                }
            }
        }
    }
}
