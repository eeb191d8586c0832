//! The assembled static system as sprs matrices, and its export in the Matrix Market
//! coordinate format (NIST's exchange format for sparse matrices) through sprs's own writer,
//! so that it can be read by other tools (a reference solver, an eigenvalue code, a
//! plotting script).

use std::io::Write;
use std::path::{Path, PathBuf};

use sprs::{CsMat, TriMat};

use crate::discretisation::{Discretisation, FIXED};

/// The real system K x = F of a static problem over its node unknowns (the reaction
/// potential A − A_b, held nodes left out): made by [`crate::SolverSetup::static_system`]
/// or [`crate::statics::static_system`].
#[derive(Clone, Debug, PartialEq)]
pub struct StaticSystem {
    /// K (symmetric positive definite in a well-posed problem; both triangles stored), n × n
    /// in compressed sparse columns, rows sorted.
    pub matrix: CsMat<f64>,
    /// F, n × k in compressed sparse columns (exact zeros left out): one column per winding
    /// carrying 1 A, in the problem's order, then one for the applied field if there is one.
    pub rhs: CsMat<f64>,
    /// Name of each column of `rhs`: the winding names, then `background`.
    pub columns: Vec<String>,
    /// Coordinates of the node of every unknown: for an unknown shared by glued nodes of an
    /// exterior image the node in the domain, for one of the image alone its point in image
    /// coordinates.
    pub unknown_points: Vec<[f64; 2]>,
}

/// Failure to write a Matrix Market file.
#[derive(Debug, thiserror::Error)]
pub enum ExportError {
    #[error("could not write the {what} to {}: {source}", path.display())]
    File {
        what: &'static str,
        path: PathBuf,
        source: std::io::Error,
    },
    #[error("could not write the {what}: {source}")]
    Write {
        what: &'static str,
        source: std::io::Error,
    },
}

impl StaticSystem {
    pub(crate) fn new(
        d: &Discretisation,
        matrix: CsMat<f64>,
        rhs: &[Vec<f64>],
        columns: Vec<String>,
    ) -> Self {
        let n = d.n_dofs;
        let mut f = TriMat::new((n, rhs.len()));
        for (j, col) in rhs.iter().enumerate() {
            for (i, &v) in col.iter().enumerate() {
                if v != 0.0 {
                    f.add_triplet(i, j, v);
                }
            }
        }
        let mut unknown_points = vec![[f64::NAN; 2]; n];
        let mut seen = vec![false; n];
        // the domain's nodes first: an unknown shared with glued image nodes gets its point
        // in the domain
        for image in [false, true] {
            for c in (0..d.n_cells()).filter(|&c| d.is_image(c) == image) {
                for &node in d.cell(c) {
                    let dof = d.node_dof[node as usize];
                    if dof != FIXED && !seen[dof as usize] {
                        seen[dof as usize] = true;
                        unknown_points[dof as usize] = d.points[node as usize];
                    }
                }
            }
        }
        StaticSystem {
            matrix,
            rhs: f.to_csc(),
            columns,
            unknown_points,
        }
    }

    /// Writes K to `matrix` and F to `rhs` in the Matrix Market coordinate format, real
    /// general (every stored entry of both triangles, 1-based indices, values in Rust's
    /// shortest round-trip decimal form, so a reader gets the same numbers back), with
    /// `sprs::io::write_matrix_market_to_bufwrite`. Give it a `Vec<u8>` to write the files
    /// atomically yourself.
    pub fn write_matrix_market<W: Write>(
        &self,
        matrix: &mut W,
        rhs: &mut W,
    ) -> Result<(), ExportError> {
        sprs::io::write_matrix_market_to_bufwrite(matrix, &self.matrix).map_err(|source| {
            ExportError::Write {
                what: "matrix",
                source,
            }
        })?;
        sprs::io::write_matrix_market_to_bufwrite(rhs, &self.rhs).map_err(|source| {
            ExportError::Write {
                what: "right-hand sides",
                source,
            }
        })
    }

    /// As [`StaticSystem::write_matrix_market`], to two files (created or truncated, with
    /// `sprs::io::write_matrix_market`). Not atomic: a failure can leave a file half written.
    pub fn write_matrix_market_files(&self, matrix: &Path, rhs: &Path) -> Result<(), ExportError> {
        sprs::io::write_matrix_market(matrix, &self.matrix).map_err(|source| {
            ExportError::File {
                what: "matrix",
                path: matrix.to_path_buf(),
                source,
            }
        })?;
        sprs::io::write_matrix_market(rhs, &self.rhs).map_err(|source| ExportError::File {
            what: "right-hand sides",
            path: rhs.to_path_buf(),
            source,
        })
    }
}
