//! `generate`: domain mesh + optional exterior image, tagged, renumbered for locality.

use crate::build::{image_offset, mesh_domain, mesh_image};
use crate::error::MeshError;
use crate::geom::BBox;
use crate::shape::{arc_range, DomainKind};
use crate::sizemap::SizeMap;
use crate::{BoundaryEdge, ExteriorImage, Mesh, MeshSpec, Point, Side};

/// Meshes `spec`: a constrained Delaunay triangulation of the outer boundary and all region
/// shapes, refined to `params.min_angle_deg` with each region's largest edge and graded air.
///
/// Guarantees (checked by [`Mesh::check_invariants`] in the tests):
/// * triangles are counter-clockwise, tagged with the last region containing them (0 = air);
/// * every polygonised shape edge is a chain of mesh edges; region areas equal the polygon
///   areas (circles/ellipses/annuli: the exact area, see [`crate::shape`]);
/// * the longest edge of every triangle is at most the size field (the region's `max_edge`,
///   graded by `params.grading` per unit of distance × h away from finer regions);
/// * minimum angle ≥ `min_angle_deg` except next to input angles that are themselves small
///   (sharp polygon corners, shapes crossing or touching at shallow angles, near-tangent
///   circles), which spade cannot improve; spade's limit is about 30–34°;
/// * with `exterior_image`, the image's arc nodes are one-to-one with the domain's final
///   arc nodes (listed in `identified`), the arc is not in `boundary_edges`.
///
/// Vertices are renumbered along a Hilbert curve. Errors rather than panics on bad input.
pub fn generate(spec: &MeshSpec) -> Result<Mesh, MeshError> {
    generate_with(spec, None)
}

/// [`generate`] with adaptive targets: at every point the size is the smaller of the spec's
/// size field and `map`'s value there (a mesh refined where an error indicator asked for it,
/// made anew by the same constrained Delaunay refinement, so the angle bound holds).
pub fn generate_refined(spec: &MeshSpec, map: &SizeMap) -> Result<Mesh, MeshError> {
    generate_with(spec, Some(map))
}

fn generate_with(spec: &MeshSpec, map: Option<&SizeMap>) -> Result<Mesh, MeshError> {
    let (domain, regions, dm) = mesh_domain(spec, map)?;
    let nreg = regions.len();
    for r in 1..=nreg as u32 {
        if !dm.tags.contains(&r) {
            return Err(MeshError::EmptyRegion {
                region: r as usize - 1,
            });
        }
    }
    let mut points = dm.points;
    let mut triangles = dm.triangles;
    let mut triangle_region = dm.tags;
    let mut boundary_edges = dm.boundary;
    let mut identified = Vec::new();
    let mut exterior = None;
    let mut region_count = 1 + nreg;
    if spec.exterior_image {
        let DomainKind::Disk {
            center,
            radius,
            cuts,
        } = domain.kind
        else {
            return Err(MeshError::ImageNeedsDisk);
        };
        // domain arc nodes, counter-clockwise from the arc start
        let mut arc_nodes: Vec<u32> = boundary_edges
            .iter()
            .filter(|e| e.side == Side::Arc)
            .flat_map(|e| e.nodes)
            .collect();
        arc_nodes.sort_unstable();
        arc_nodes.dedup();
        let (t0, _) = arc_range(cuts);
        let ang = |p: Point| {
            let a = (p[1] - center[1]).atan2(p[0] - center[0]);
            let mut d = (a - t0).rem_euclid(2.0 * std::f64::consts::PI);
            if d > 2.0 * std::f64::consts::PI - 1e-12 {
                d = 0.0;
            }
            d
        };
        arc_nodes.sort_by(|&a, &b| ang(points[a as usize]).total_cmp(&ang(points[b as usize])));
        let arc_pts: Vec<Point> = arc_nodes.iter().map(|&k| points[k as usize]).collect();
        let offset = image_offset(radius, cuts);
        let img = mesh_image(spec, center, radius, cuts, &arc_pts, offset)?;
        let base = points.len() as u32;
        points.extend_from_slice(&img.points);
        let id = nreg as u32 + 1;
        for t in &img.triangles {
            triangles.push([t[0] + base, t[1] + base, t[2] + base]);
            triangle_region.push(id);
        }
        boundary_edges.retain(|e| e.side != Side::Arc);
        for e in &img.boundary {
            boundary_edges.push(BoundaryEdge {
                nodes: [e.nodes[0] + base, e.nodes[1] + base],
                side: e.side,
            });
        }
        identified = arc_nodes
            .iter()
            .enumerate()
            .map(|(k, &d)| [base + k as u32, d])
            .collect();
        region_count += 1;
        exterior = Some(ExteriorImage {
            region: id,
            center,
            radius,
            offset,
        });
    }
    let mut mesh = Mesh {
        points,
        triangles,
        triangle_region,
        boundary_edges,
        region_count,
        exterior,
        identified,
    };
    renumber_hilbert(&mut mesh);
    Ok(mesh)
}

/// Hilbert index of (x, y) in a 2^16 × 2^16 grid.
fn hilbert(mut x: u32, mut y: u32) -> u64 {
    let n: u32 = 1 << 16;
    let mut d: u64 = 0;
    let mut s = n / 2;
    while s > 0 {
        let rx = u32::from(x & s > 0);
        let ry = u32::from(y & s > 0);
        d += u64::from(s) * u64::from(s) * u64::from((3 * rx) ^ ry);
        if ry == 0 {
            if rx == 1 {
                x = n - 1 - x;
                y = n - 1 - y;
            }
            std::mem::swap(&mut x, &mut y);
        }
        s /= 2;
    }
    d
}

/// Renumbers nodes in Hilbert-curve order of their coordinates (keeps every array
/// consistent) and sorts triangles by their first node for locality.
pub fn renumber_hilbert(mesh: &mut Mesh) {
    let b = BBox::of(&mesh.points);
    let w = (b.max[0] - b.min[0]).max(b.max[1] - b.min[1]).max(1e-300);
    let q = |v: f64, lo: f64| (((v - lo) / w).clamp(0.0, 1.0) * 65535.0) as u32;
    let mut order: Vec<(u64, u32)> = mesh
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| (hilbert(q(p[0], b.min[0]), q(p[1], b.min[1])), i as u32))
        .collect();
    order.sort_unstable();
    let mut new_of = vec![0u32; mesh.points.len()];
    let mut pts = Vec::with_capacity(mesh.points.len());
    for (new, &(_, old)) in order.iter().enumerate() {
        new_of[old as usize] = new as u32;
        pts.push(mesh.points[old as usize]);
    }
    mesh.points = pts;
    let mut tris: Vec<([u32; 3], u32)> = mesh
        .triangles
        .iter()
        .zip(&mesh.triangle_region)
        .map(|(t, &r)| {
            let t = t.map(|v| new_of[v as usize]);
            // rotate so the smallest index comes first (orientation kept)
            let k = (0..3).min_by_key(|&k| t[k]).unwrap_or(0);
            ([t[k], t[(k + 1) % 3], t[(k + 2) % 3]], r)
        })
        .collect();
    tris.sort_unstable_by_key(|(t, _)| t[0]);
    mesh.triangles = tris.iter().map(|x| x.0).collect();
    mesh.triangle_region = tris.iter().map(|x| x.1).collect();
    for e in mesh.boundary_edges.iter_mut() {
        e.nodes = e.nodes.map(|v| new_of[v as usize]);
    }
    for p in mesh.identified.iter_mut() {
        *p = p.map(|v| new_of[v as usize]);
    }
}
