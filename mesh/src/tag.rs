//! Region tags: flood fill over faces without crossing constraint edges, one
//! point-in-polygon test per connected component (at its largest triangle's centroid).
//!
//! Because every region loop is a chain of constraint edges, each component lies wholly in
//! one cell of the shape arrangement, so this equals testing every triangle's centroid
//! against the shapes ("the last region containing it wins").

use crate::shape::RegionGeometry;
use crate::Point;
use spade::handles::FixedFaceHandle;
use spade::{ConstrainedDelaunayTriangulation, Point2, Triangulation};

pub(crate) type Cdt = ConstrainedDelaunayTriangulation<Point2<f64>>;

/// Region id of point `p`: the last region (highest index) containing it, else 0.
pub fn locate_region(regions: &[RegionGeometry], p: Point) -> u32 {
    for (i, r) in regions.iter().enumerate().rev() {
        if r.contains(p) {
            return i as u32 + 1;
        }
    }
    0
}

const UNSET: u32 = u32::MAX;

/// Tag per face index (`cdt.num_all_faces()` long; the outer face keeps `u32::MAX`).
pub(crate) fn tag_faces(cdt: &Cdt, regions: &[RegionGeometry]) -> Vec<u32> {
    let mut tag = vec![UNSET; cdt.num_all_faces()];
    let mut stack: Vec<FixedFaceHandle<spade::handles::InnerTag>> = Vec::new();
    let mut comp: Vec<usize> = Vec::new();
    for f in cdt.inner_faces() {
        let start = f.fix();
        if tag[start.index()] != UNSET {
            continue;
        }
        comp.clear();
        tag[start.index()] = UNSET - 1;
        stack.push(start);
        let mut best_area = -1.0;
        let mut best_c = [0.0, 0.0];
        while let Some(h) = stack.pop() {
            let face = cdt.face(h);
            comp.push(h.index());
            let a = face.area();
            if a > best_area {
                best_area = a;
                let c = face.center();
                best_c = [c.x, c.y];
            }
            for e in face.adjacent_edges() {
                if e.as_undirected().is_constraint_edge() {
                    continue;
                }
                if let Some(n) = e.rev().face().as_inner() {
                    let k = n.fix();
                    if tag[k.index()] == UNSET {
                        tag[k.index()] = UNSET - 1;
                        stack.push(k);
                    }
                }
            }
        }
        let id = locate_region(regions, best_c);
        for &k in &comp {
            tag[k] = id;
        }
    }
    tag
}
