//! Reading back the `.vtu` files the program writes with a general-purpose VTK reader (the
//! vtkio crate), so that a test checks what any viewer would see, not our writer's intent.

use std::path::Path;
use vtkio::model::{Attribute, CellType, DataSet, Piece};

/// A named data array: components per point or cell, and the values in order.
pub struct Array {
    pub name: String,
    pub components: usize,
    pub values: Vec<f64>,
}

/// One unstructured-grid piece as vtkio reads it.
pub struct Vtu {
    pub points: Vec<[f64; 3]>,
    /// Point ids of each cell.
    pub cells: Vec<Vec<usize>>,
    pub types: Vec<CellType>,
    pub point_data: Vec<Array>,
    pub cell_data: Vec<Array>,
}

fn arrays(attrs: Vec<Attribute>) -> Vec<Array> {
    attrs
        .into_iter()
        .map(|a| match a {
            Attribute::DataArray(d) => Array {
                components: d.num_comp(),
                values: d
                    .data
                    .cast_into::<f64>()
                    .unwrap_or_else(|| panic!("array {} is not numeric", d.name)),
                name: d.name,
            },
            Attribute::Field { name, .. } => panic!("unexpected field data {name}"),
        })
        .collect()
}

/// Reads `path` (an UnstructuredGrid with one inline piece) or panics saying why.
pub fn read(path: &Path) -> Vtu {
    let vtk = vtkio::Vtk::import(path).unwrap_or_else(|e| panic!("{}: {e:?}", path.display()));
    let piece = match vtk.data {
        DataSet::UnstructuredGrid { pieces, .. } => {
            assert_eq!(pieces.len(), 1, "{}: one piece", path.display());
            match pieces.into_iter().next() {
                Some(Piece::Inline(p)) => *p,
                _ => panic!("{}: no inline piece", path.display()),
            }
        }
        _ => panic!("{}: not an unstructured grid", path.display()),
    };
    let xyz = piece
        .points
        .cast_into::<f64>()
        .expect("numeric point coordinates");
    assert_eq!(xyz.len() % 3, 0);
    let points = xyz.chunks(3).map(|c| [c[0], c[1], c[2]]).collect();
    let (connectivity, offsets) = piece.cells.cell_verts.into_xml();
    let mut cells = Vec::with_capacity(offsets.len());
    let mut start = 0usize;
    for &end in &offsets {
        let end = end as usize;
        cells.push(
            connectivity[start..end]
                .iter()
                .map(|&i| i as usize)
                .collect(),
        );
        start = end;
    }
    Vtu {
        points,
        cells,
        types: piece.cells.types,
        point_data: arrays(piece.data.point),
        cell_data: arrays(piece.data.cell),
    }
}

fn sorted_names(a: &[Array]) -> Vec<&str> {
    let mut n: Vec<&str> = a.iter().map(|x| x.name.as_str()).collect();
    n.sort_unstable();
    n
}

impl Vtu {
    /// The names of the point arrays and of the cell arrays, each sorted.
    pub fn names(&self) -> (Vec<&str>, Vec<&str>) {
        (
            sorted_names(&self.point_data),
            sorted_names(&self.cell_data),
        )
    }

    fn find<'a>(list: &'a [Array], name: &str, n: usize, what: &str) -> &'a Array {
        let a = list
            .iter()
            .find(|a| a.name == name)
            .unwrap_or_else(|| panic!("no {what} array {name}"));
        assert_eq!(
            a.values.len(),
            n * a.components,
            "{what} array {name}: {} values for {n} {what}s of {} components",
            a.values.len(),
            a.components
        );
        a
    }

    /// A point array, checked to hold one value (or vector) per point.
    pub fn point(&self, name: &str) -> &Array {
        Self::find(&self.point_data, name, self.points.len(), "point")
    }

    /// A cell array, checked to hold one value (or vector) per cell.
    pub fn cell(&self, name: &str) -> &Array {
        Self::find(&self.cell_data, name, self.cells.len(), "cell")
    }

    /// The area of cell `c` in the x–y plane: a straight-sided triangle, or a 6-node quadratic
    /// one (corners, then the mid-edge nodes 0–1, 1–2, 2–0, VTK's order) with curved sides,
    /// integrated exactly (the Jacobian of the quadratic map is quadratic; the three-point
    /// rule at the edge midpoints is exact for it).
    pub fn cell_area(&self, c: usize) -> f64 {
        let p = |i: usize| self.points[self.cells[c][i]];
        match self.types[c] {
            CellType::Triangle => {
                let (a, b, d) = (p(0), p(1), p(2));
                0.5 * ((b[0] - a[0]) * (d[1] - a[1]) - (d[0] - a[0]) * (b[1] - a[1])).abs()
            }
            CellType::QuadraticTriangle => {
                let x: Vec<[f64; 3]> = (0..6).map(p).collect();
                let mut area = 0.0;
                for (s, t) in [(0.5, 0.0), (0.5, 0.5), (0.0, 0.5)] {
                    let u = 1.0 - s - t;
                    // derivatives of the six shape functions in s and t
                    let ds = [
                        1.0 - 4.0 * u,
                        4.0 * s - 1.0,
                        0.0,
                        4.0 * (u - s),
                        4.0 * t,
                        -4.0 * t,
                    ];
                    let dt = [
                        1.0 - 4.0 * u,
                        0.0,
                        4.0 * t - 1.0,
                        -4.0 * s,
                        4.0 * s,
                        4.0 * (u - t),
                    ];
                    let mut j = [[0.0; 2]; 2];
                    for k in 0..6 {
                        for d in 0..2 {
                            j[d][0] += ds[k] * x[k][d];
                            j[d][1] += dt[k] * x[k][d];
                        }
                    }
                    area += (j[0][0] * j[1][1] - j[0][1] * j[1][0]).abs() / 6.0;
                }
                area
            }
            t => panic!("cell {c}: unexpected type {t:?}"),
        }
    }

    /// The mean of cell `c`'s corner points.
    pub fn centroid(&self, c: usize) -> [f64; 2] {
        let mut m = [0.0; 2];
        for &i in &self.cells[c][..3] {
            m[0] += self.points[i][0] / 3.0;
            m[1] += self.points[i][1] / 3.0;
        }
        m
    }
}
