//! A size map for adaptive refinement: a target largest edge per triangle of an earlier
//! mesh, looked up by point. [`crate::generate_refined`] meshes a spec again with each
//! point's size the smaller of the spec's size field and the map's value there.

use crate::Point;

/// Target largest edge on the triangles of a triangulation (outside them: no target).
#[derive(Clone, Debug)]
pub struct SizeMap {
    points: Vec<Point>,
    triangles: Vec<[u32; 3]>,
    h: Vec<f64>,
    grid: Grid,
    /// Per top-level bin: the smallest target among its triangles (a cheap lower bound).
    bin_min: Vec<f64>,
}

/// Bins holding more triangles than this get a grid of their own (a graded mesh puts
/// thousands of small triangles in one bin of a uniform grid, and each lookup scanned them:
/// 98 % of the time of re-meshing the spheroid to 1.3M triangles went there).
const LEAF: usize = 16;
/// Deepest nesting of bins (a fan of many triangles round one vertex cannot be split).
const MAX_DEPTH: usize = 8;

/// A uniform grid of bins over a rectangle, each listing the triangles whose bounding box
/// meets it; crowded bins are grids again.
#[derive(Clone, Debug)]
struct Grid {
    min: Point,
    cell: [f64; 2],
    dims: [usize; 2],
    start: Vec<u32>,
    items: Vec<u32>,
    sub: Vec<Option<Box<Grid>>>,
}

impl Grid {
    fn build(min: Point, max: Point, tris: &[u32], boxes: &[(Point, Point)], depth: usize) -> Grid {
        let n = ((tris.len() as f64).sqrt().ceil() as usize).max(1);
        let dims = [n, n];
        let span = [(max[0] - min[0]).max(1e-300), (max[1] - min[1]).max(1e-300)];
        let cell = [span[0] / n as f64, span[1] / n as f64];
        let bucket = |x: f64, k: usize| -> usize {
            (((x - min[k]) / cell[k]).floor().max(0.0) as usize).min(dims[k] - 1)
        };
        let range = |t: u32| {
            let (lo, hi) = boxes[t as usize];
            (
                bucket(lo[0], 0)..=bucket(hi[0], 0),
                bucket(lo[1], 1)..=bucket(hi[1], 1),
            )
        };
        let mut count = vec![0u32; n * n + 1];
        for &t in tris {
            let (ri, rj) = range(t);
            for j in rj {
                for i in ri.clone() {
                    count[j * n + i + 1] += 1;
                }
            }
        }
        for b in 0..n * n {
            count[b + 1] += count[b];
        }
        let start = count.clone();
        let mut fill = count;
        let mut items = vec![0u32; start[n * n] as usize];
        for &t in tris {
            let (ri, rj) = range(t);
            for j in rj {
                for i in ri.clone() {
                    let b = j * n + i;
                    items[fill[b] as usize] = t;
                    fill[b] += 1;
                }
            }
        }
        let sub = (0..n * n)
            .map(|b| {
                let list = &items[start[b] as usize..start[b + 1] as usize];
                // split a crowded bin, unless it holds (nearly) everything of this grid
                // already: then splitting does not separate its triangles
                (list.len() > LEAF && depth < MAX_DEPTH && (n > 1 || depth == 0)).then(|| {
                    let (i, j) = (b % n, b / n);
                    let lo = [min[0] + i as f64 * cell[0], min[1] + j as f64 * cell[1]];
                    let hi = [lo[0] + cell[0], lo[1] + cell[1]];
                    Box::new(Grid::build(lo, hi, list, boxes, depth + 1))
                })
            })
            .collect();
        Grid {
            min,
            cell,
            dims,
            start,
            items,
            sub,
        }
    }

    /// The triangles that may contain `p` (a point inside or near this grid's rectangle).
    fn candidates(&self, p: Point) -> &[u32] {
        let i =
            (((p[0] - self.min[0]) / self.cell[0]).floor().max(0.0) as usize).min(self.dims[0] - 1);
        let j =
            (((p[1] - self.min[1]) / self.cell[1]).floor().max(0.0) as usize).min(self.dims[1] - 1);
        let b = j * self.dims[0] + i;
        match &self.sub[b] {
            Some(g) => g.candidates(p),
            None => &self.items[self.start[b] as usize..self.start[b + 1] as usize],
        }
    }
}

impl SizeMap {
    /// `h[t]` is the target largest edge on triangle `t`. Non-positive or non-finite targets
    /// are ignored (no target there).
    pub fn new(points: Vec<Point>, triangles: Vec<[u32; 3]>, h: Vec<f64>) -> Self {
        assert_eq!(triangles.len(), h.len(), "one target per triangle");
        let boxes: Vec<(Point, Point)> = triangles
            .iter()
            .map(|t| {
                let xs = t.map(|v| points[v as usize]);
                let lo = [0, 1].map(|k| xs.iter().map(|p| p[k]).fold(f64::INFINITY, f64::min));
                let hi = [0, 1].map(|k| xs.iter().map(|p| p[k]).fold(f64::NEG_INFINITY, f64::max));
                (lo, hi)
            })
            .collect();
        let mut min = [f64::INFINITY; 2];
        let mut max = [f64::NEG_INFINITY; 2];
        for (lo, hi) in &boxes {
            for k in 0..2 {
                min[k] = min[k].min(lo[k]);
                max[k] = max[k].max(hi[k]);
            }
        }
        let all: Vec<u32> = (0..triangles.len() as u32).collect();
        let grid = Grid::build(min, max, &all, &boxes, 0);
        let bin_min = (0..grid.dims[0] * grid.dims[1])
            .map(|b| {
                grid.items[grid.start[b] as usize..grid.start[b + 1] as usize]
                    .iter()
                    .map(|&t| h[t as usize])
                    .filter(|h| *h > 0.0 && h.is_finite())
                    .fold(f64::INFINITY, f64::min)
            })
            .collect();
        SizeMap {
            points,
            triangles,
            h,
            grid,
            bin_min,
        }
    }

    /// Σ area / (`area_per_h2` · h²) over the triangles with a target: the vertices a mesh
    /// to this map needs when each vertex covers `area_per_h2`·h².
    pub fn vertex_estimate(&self, area_per_h2: f64) -> f64 {
        self.triangles
            .iter()
            .zip(&self.h)
            .filter(|(_, h)| h.is_finite() && **h > 0.0)
            .map(|(t, h)| {
                let [a, b, c] = t.map(|v| self.points[v as usize]);
                crate::geom::triangle_area(a, b, c).abs() / (area_per_h2 * h * h)
            })
            .sum()
    }

    /// A lower bound of [`Self::at`] at `p` (the smallest target of its bin; infinite
    /// outside the map), in constant time.
    pub fn lower(&self, p: Point) -> f64 {
        let g = &self.grid;
        let fi = ((p[0] - g.min[0]) / g.cell[0]).floor();
        let fj = ((p[1] - g.min[1]) / g.cell[1]).floor();
        if !(fi >= -1.0 && fi <= g.dims[0] as f64 && fj >= -1.0 && fj <= g.dims[1] as f64) {
            return f64::INFINITY;
        }
        let i = (fi.max(0.0) as usize).min(g.dims[0] - 1);
        let j = (fj.max(0.0) as usize).min(g.dims[1] - 1);
        self.bin_min[j * g.dims[0] + i]
    }

    /// The target at `p`: the value of the triangle containing it (the smallest among
    /// triangles sharing `p` on an edge), or None outside every triangle.
    pub fn at(&self, p: Point) -> Option<f64> {
        let g = &self.grid;
        let fi = ((p[0] - g.min[0]) / g.cell[0]).floor();
        let fj = ((p[1] - g.min[1]) / g.cell[1]).floor();
        if !(fi >= -1.0 && fi <= g.dims[0] as f64 && fj >= -1.0 && fj <= g.dims[1] as f64) {
            return None;
        }
        let mut best: Option<f64> = None;
        for &t in g.candidates(p) {
            let h = self.h[t as usize];
            if !(h > 0.0 && h.is_finite()) || best.is_some_and(|x| x <= h) {
                continue;
            }
            let [a, bb, c] = self.triangles[t as usize].map(|v| self.points[v as usize]);
            let cross = |u: Point, v: Point, w: Point| {
                (v[0] - u[0]) * (w[1] - u[1]) - (v[1] - u[1]) * (w[0] - u[0])
            };
            let area = cross(a, bb, c);
            let tol = -1e-12 * area.abs();
            let inside = |s: f64| if area > 0.0 { s >= tol } else { s <= -tol };
            if inside(cross(a, bb, p)) && inside(cross(bb, c, p)) && inside(cross(c, a, p)) {
                best = Some(h);
            }
        }
        best
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn looks_up_the_containing_triangle() {
        // unit square as two triangles with targets 0.1 and 0.2
        let m = SizeMap::new(
            vec![[0.0, 0.0], [1.0, 0.0], [1.0, 1.0], [0.0, 1.0]],
            vec![[0, 1, 2], [0, 2, 3]],
            vec![0.1, 0.2],
        );
        assert_eq!(m.at([0.8, 0.2]), Some(0.1));
        assert_eq!(m.at([0.2, 0.8]), Some(0.2));
        // on the shared diagonal: the smaller
        assert_eq!(m.at([0.5, 0.5]), Some(0.1));
        assert_eq!(m.at([1.5, 0.5]), None);
        assert_eq!(m.at([-0.01, 0.5]), None);
    }
}
