//! The element size field.
//!
//! Inside region t the target largest edge is h_t; around every region r finer than the
//! background the size grows linearly with the distance d_r to r's boundary:
//!
//! h(x) = min(h_t, min_r (h_r + (g - 1) · d_r(x))),   t = the region containing x,
//!
//! so that neighbouring elements (about h apart) differ by at most the factor g
//! (`MeshParams::grading`). The background is region 0 with h_0 = `background_max_edge`.
//! d_r is the distance to r's polygonised loops (unsigned), so the part of r covered by a
//! later region is graded from r's boundary rather than forced to h_r.

use crate::geom::BBox;
use crate::grid::SegGrid;
use crate::shape::RegionGeometry;
use crate::sizemap::SizeMap;
use crate::Point;

struct Fine {
    h: f64,
    id: u32,
    bbox: BBox,
    grid: SegGrid,
}

pub(crate) struct SizeField {
    /// h per region id (0 = background).
    pub region_h: Vec<f64>,
    slope: f64,
    fine: Vec<Fine>,
    /// Adaptive targets from an earlier mesh (the smaller of the two counts).
    map: Option<SizeMap>,
}

impl SizeField {
    pub(crate) fn new(bg: f64, grading: f64, regions: &[RegionGeometry]) -> Self {
        let mut region_h = vec![bg];
        region_h.extend(regions.iter().map(|r| r.max_edge));
        let mut fine = Vec::new();
        for (i, r) in regions.iter().enumerate() {
            if r.max_edge >= bg {
                continue;
            }
            let mut segs = Vec::new();
            for lp in &r.loops {
                for k in 0..lp.len() {
                    segs.push([lp[k], lp[(k + 1) % lp.len()]]);
                }
            }
            let cell = (r.bbox.diag() / 32.0).max(2.0 * r.max_edge);
            fine.push(Fine {
                h: r.max_edge,
                id: i as u32 + 1,
                bbox: r.bbox,
                grid: SegGrid::new(segs, r.bbox, cell, 64),
            });
        }
        // Skin layers: a size source on the region's boundary that also acts inside it.
        for r in regions {
            let Some(s) = r.skin_edge else { continue };
            let mut segs = Vec::new();
            for lp in &r.loops {
                for k in 0..lp.len() {
                    segs.push([lp[k], lp[(k + 1) % lp.len()]]);
                }
            }
            let cell = (r.bbox.diag() / 32.0).max(2.0 * s);
            fine.push(Fine {
                h: s,
                id: u32::MAX,
                bbox: r.bbox,
                grid: SegGrid::new(segs, r.bbox, cell, 64),
            });
        }
        // finest first: their influence prunes the others sooner
        fine.sort_by(|a, b| a.h.total_cmp(&b.h));
        SizeField {
            region_h,
            slope: grading - 1.0,
            fine,
            map: None,
        }
    }

    pub(crate) fn with_map(mut self, map: Option<&SizeMap>) -> Self {
        self.map = map.cloned();
        self
    }

    fn mapped(&self, p: Point) -> f64 {
        self.map
            .as_ref()
            .and_then(|m| m.at(p))
            .unwrap_or(f64::INFINITY)
    }

    /// Target largest edge at `p`, inside region `tag` (None: ignore the containing region,
    /// use the background as the cap).
    pub(crate) fn at(&self, tag: Option<u32>, p: Point) -> f64 {
        let mut best = self.region_h[tag.unwrap_or(0) as usize];
        if tag.is_none() {
            // boundary points: the finest region whose loop passes here counts via d = 0
            best = self.region_h[0];
        }
        for f in &self.fine {
            if f.h >= best || Some(f.id) == tag {
                continue;
            }
            let lim = (best - f.h) / self.slope;
            if f.bbox.dist(p) >= lim {
                continue;
            }
            let d = f.grid.nearest(p, lim);
            best = best.min(f.h + self.slope * d);
        }
        best.min(self.mapped(p))
    }

    /// A cheap lower bound of [`Self::at`] (bounding boxes only).
    pub(crate) fn lower_bound(&self, tag: u32, p: Point) -> f64 {
        let mut best = self.region_h[tag as usize];
        for f in &self.fine {
            if f.h >= best || f.id == tag {
                continue;
            }
            best = best.min(f.h + self.slope * f.bbox.dist(p));
        }
        best.min(self.map.as_ref().map_or(f64::INFINITY, |m| m.lower(p)))
    }

    /// The smallest size anywhere.
    pub(crate) fn min_h(&self) -> f64 {
        self.region_h.iter().copied().fold(f64::INFINITY, f64::min)
    }
}
