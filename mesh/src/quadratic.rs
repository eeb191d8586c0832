//! Second-order (6-node) triangles from a linear mesh.

use crate::{Mesh, Point, QuadraticMesh};
use std::collections::HashMap;

#[inline]
fn key(a: u32, b: u32) -> u64 {
    (u64::from(a.min(b)) << 32) | u64::from(a.max(b))
}

/// Unique undirected edges of a triangle list, sorted by key (min << 32 | max).
pub(crate) fn sorted_edges(triangles: &[[u32; 3]]) -> Vec<u64> {
    let mut keys: Vec<u64> = triangles
        .iter()
        .flat_map(|t| [key(t[0], t[1]), key(t[1], t[2]), key(t[2], t[0])])
        .collect();
    keys.sort_unstable();
    keys.dedup();
    keys
}

impl Mesh {
    /// The same mesh with a midpoint node on every edge, shared by the two triangles that
    /// meet there. Node ids 0..V are the linear mesh's vertices; midpoints follow in sorted
    /// edge order (V + E nodes in all). Boundary edges get their midpoint; `identified`
    /// gains (image midpoint, domain midpoint) for every glued arc edge. O(E log E).
    pub fn quadratic(&self) -> QuadraticMesh {
        let nv = self.points.len() as u32;
        let edges = sorted_edges(&self.triangles);
        let mid = |a: u32, b: u32| -> u32 {
            let k = key(a, b);
            nv + edges.partition_point(|&e| e < k) as u32
        };
        let mut points: Vec<Point> = Vec::with_capacity(self.points.len() + edges.len());
        points.extend_from_slice(&self.points);
        for &e in &edges {
            let (a, b) = ((e >> 32) as usize, (e & 0xffff_ffff) as usize);
            let (p, q) = (self.points[a], self.points[b]);
            points.push([0.5 * (p[0] + q[0]), 0.5 * (p[1] + q[1])]);
        }
        let triangles = self
            .triangles
            .iter()
            .map(|t| {
                [
                    t[0],
                    t[1],
                    t[2],
                    mid(t[0], t[1]),
                    mid(t[1], t[2]),
                    mid(t[2], t[0]),
                ]
            })
            .collect();
        let boundary_edges = self
            .boundary_edges
            .iter()
            .map(|e| {
                (
                    [e.nodes[0], e.nodes[1], mid(e.nodes[0], e.nodes[1])],
                    e.side,
                )
            })
            .collect();
        let mut identified = self.identified.clone();
        if !self.identified.is_empty() {
            let image_of: HashMap<u32, u32> =
                self.identified.iter().map(|p| (p[1], p[0])).collect();
            for &e in &edges {
                let (a, b) = ((e >> 32) as u32, (e & 0xffff_ffff) as u32);
                if let (Some(&ia), Some(&ib)) = (image_of.get(&a), image_of.get(&b)) {
                    let k = key(ia, ib);
                    if let Ok(pos) = edges.binary_search(&k) {
                        identified.push([nv + pos as u32, mid(a, b)]);
                    }
                }
            }
        }
        QuadraticMesh {
            points,
            triangles,
            boundary_edges,
            identified,
        }
    }
}
