//! Mesh statistics and per-triangle quality.

use crate::geom::{dist2, triangle_area, triangle_min_angle_deg};
use crate::{Mesh, Point};

/// Figures for one region id.
#[derive(Clone, Debug, Default, PartialEq)]
pub struct RegionStats {
    pub triangles: usize,
    pub area: f64,
    /// Longest triangle edge in the region.
    pub max_edge: f64,
    /// Smallest triangle angle in the region, degrees.
    pub min_angle_deg: f64,
}

/// Whole-mesh figures (`regions[id]` for every region id, 0 = background).
#[derive(Clone, Debug, Default, PartialEq)]
pub struct MeshStats {
    pub nodes: usize,
    pub triangles: usize,
    /// Smallest angle of any triangle, degrees.
    pub min_angle_deg: f64,
    /// Mean over triangles of each triangle's smallest angle, degrees.
    pub mean_min_angle_deg: f64,
    pub regions: Vec<RegionStats>,
}

impl Mesh {
    /// Corner coordinates of triangle `t`.
    #[inline]
    pub fn triangle_points(&self, t: usize) -> [Point; 3] {
        self.triangles[t].map(|v| self.points[v as usize])
    }

    /// Smallest interior angle (degrees) of every triangle, in triangle order.
    pub fn triangle_quality(&self) -> Vec<f64> {
        (0..self.triangles.len())
            .map(|t| triangle_min_angle_deg(self.triangle_points(t)))
            .collect()
    }

    /// Counts, areas, longest edges and angles, overall and per region id.
    pub fn stats(&self) -> MeshStats {
        let mut regions = vec![
            RegionStats {
                min_angle_deg: 180.0,
                ..Default::default()
            };
            self.region_count.max(1)
        ];
        let mut min_angle: f64 = 180.0;
        let mut sum = 0.0;
        for (t, &r) in self.triangle_region.iter().enumerate() {
            let p = self.triangle_points(t);
            let a = triangle_min_angle_deg(p);
            min_angle = min_angle.min(a);
            sum += a;
            if let Some(s) = regions.get_mut(r as usize) {
                s.triangles += 1;
                s.area += triangle_area(p[0], p[1], p[2]);
                let le = dist2(p[0], p[1])
                    .max(dist2(p[1], p[2]))
                    .max(dist2(p[2], p[0]))
                    .sqrt();
                s.max_edge = s.max_edge.max(le);
                s.min_angle_deg = s.min_angle_deg.min(a);
            }
        }
        let n = self.triangles.len();
        MeshStats {
            nodes: self.points.len(),
            triangles: n,
            min_angle_deg: if n == 0 { 0.0 } else { min_angle },
            mean_min_angle_deg: if n == 0 { 0.0 } else { sum / n as f64 },
            regions,
        }
    }
}
