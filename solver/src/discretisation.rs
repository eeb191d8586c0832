//! The finite-element space on a mesh: node coordinates, cell connectivity for the chosen
//! element order, and the map from nodes to unknowns (Dirichlet nodes and glued image nodes).

use fluxpick_mesh::{ExteriorImage, Mesh, Side};

use crate::Formulation;

/// Element order.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub enum Order {
    Linear,
    Quadratic,
}

impl Order {
    pub fn nodes_per_cell(self) -> usize {
        match self {
            Order::Linear => 3,
            Order::Quadratic => 6,
        }
    }
}

/// Marker for a node without an unknown (its reduced potential is held at zero).
pub const FIXED: u32 = u32::MAX;

/// Nodes, cells and unknowns of one problem. Cells are stored flat, `npe` node ids each;
/// the first three are the vertices (counter-clockwise).
#[derive(Clone, Debug)]
pub struct Discretisation {
    pub formulation: Formulation,
    pub order: Order,
    pub points: Vec<[f64; 2]>,
    pub cells: Vec<u32>,
    pub cell_region: Vec<u32>,
    pub region_count: usize,
    pub exterior: Option<ExteriorImage>,
    /// Unknown index per node, or [`FIXED`].
    pub node_dof: Vec<u32>,
    pub n_dofs: usize,
    /// Number of vertices of the linear mesh (the first nodes).
    pub n_vertices: usize,
}

impl Discretisation {
    /// Builds the space. `dirichlet` lists the boundary sides on which the (reduced) potential
    /// is held at zero. In planar models with an exterior image, the image centre (the point at
    /// infinity) is held as well, which fixes the otherwise free constant.
    pub fn new(mesh: &Mesh, formulation: Formulation, order: Order, dirichlet: &[Side]) -> Self {
        let (points, cells, boundary, identified): (Vec<[f64; 2]>, Vec<u32>, Vec<Vec<u32>>, _) =
            match order {
                Order::Linear => (
                    mesh.points.clone(),
                    mesh.triangles.iter().flatten().copied().collect(),
                    mesh.boundary_edges
                        .iter()
                        .filter(|e| dirichlet.contains(&e.side))
                        .map(|e| e.nodes.to_vec())
                        .collect(),
                    mesh.identified.clone(),
                ),
                Order::Quadratic => {
                    let q = mesh.quadratic();
                    let b = q
                        .boundary_edges
                        .iter()
                        .filter(|(_, s)| dirichlet.contains(s))
                        .map(|(n, _)| n.to_vec())
                        .collect();
                    (
                        q.points,
                        q.triangles.iter().flatten().copied().collect(),
                        b,
                        q.identified,
                    )
                }
            };
        let n = points.len();
        // Representative node of each node (image arc nodes -> domain arc nodes).
        let mut rep: Vec<u32> = (0..n as u32).collect();
        for &[img, dom] in &identified {
            rep[img as usize] = dom;
        }
        let mut fixed = vec![false; n];
        for e in &boundary {
            for &v in e {
                fixed[rep[v as usize] as usize] = true;
            }
        }
        if let (Some(ext), Formulation::Planar) = (&mesh.exterior, formulation) {
            let c = [ext.center[0] + ext.offset[0], ext.center[1] + ext.offset[1]];
            if let Some(k) = nearest_node(&points, c) {
                fixed[rep[k] as usize] = true;
            }
        }
        let mut node_dof = vec![FIXED; n];
        let mut n_dofs = 0u32;
        for i in 0..n {
            if rep[i] as usize == i && !fixed[i] {
                node_dof[i] = n_dofs;
                n_dofs += 1;
            }
        }
        for i in 0..n {
            let r = rep[i] as usize;
            if r != i {
                node_dof[i] = node_dof[r];
            }
        }
        Discretisation {
            formulation,
            order,
            points,
            cells,
            cell_region: mesh.triangle_region.clone(),
            region_count: mesh.region_count,
            exterior: mesh.exterior.clone(),
            node_dof,
            n_dofs: n_dofs as usize,
            n_vertices: mesh.points.len(),
        }
    }

    pub fn npe(&self) -> usize {
        self.order.nodes_per_cell()
    }

    pub fn n_cells(&self) -> usize {
        self.cell_region.len()
    }

    pub fn cell(&self, c: usize) -> &[u32] {
        let k = self.npe();
        &self.cells[c * k..(c + 1) * k]
    }

    pub fn vertices(&self, c: usize) -> [[f64; 2]; 3] {
        let n = self.cell(c);
        [
            self.points[n[0] as usize],
            self.points[n[1] as usize],
            self.points[n[2] as usize],
        ]
    }

    /// True for cells of the exterior image (not part of the physical domain).
    pub fn is_image(&self, c: usize) -> bool {
        self.exterior
            .as_ref()
            .is_some_and(|e| e.region == self.cell_region[c])
    }
}

fn nearest_node(points: &[[f64; 2]], c: [f64; 2]) -> Option<usize> {
    points
        .iter()
        .enumerate()
        .map(|(i, p)| (i, (p[0] - c[0]).powi(2) + (p[1] - c[1]).powi(2)))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(i, _)| i)
}
