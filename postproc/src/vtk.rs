//! A small VTK XML UnstructuredGrid (.vtu) writer: little-endian binary arrays, base64-encoded
//! inline with a UInt64 byte-count header, as the VTK file-format documentation describes
//! ("VTK File Formats", XML formats, binary inline data). Linear triangles are VTK cell type 5,
//! quadratic (6-node) triangles type 22. Files are written atomically (see [`crate::atomic_write`]).

use std::fmt::Write as _;
use std::path::Path;

/// VTK cell type of a 3-node triangle.
pub const VTK_TRIANGLE: u8 = 5;
/// VTK cell type of a 6-node quadratic triangle (vertices, then edge midpoints 01, 12, 20).
pub const VTK_QUADRATIC_TRIANGLE: u8 = 22;

/// A named data array with `components` values per point or cell.
#[derive(Clone, Debug)]
pub struct DataArray {
    pub name: String,
    pub components: usize,
    pub values: Vec<f64>,
}

impl DataArray {
    pub fn scalar(name: &str, values: Vec<f64>) -> Self {
        DataArray {
            name: name.to_string(),
            components: 1,
            values,
        }
    }
    /// 2D vectors written as 3-component arrays (z = 0) so viewers treat them as vectors.
    pub fn vector2(name: &str, values: &[[f64; 2]]) -> Self {
        DataArray {
            name: name.to_string(),
            components: 3,
            values: values.iter().flat_map(|v| [v[0], v[1], 0.0]).collect(),
        }
    }
}

/// An unstructured grid of triangles.
#[derive(Clone, Debug, Default)]
pub struct Grid {
    pub points: Vec<[f64; 2]>,
    /// Node ids per cell (3 or 6 each).
    pub cells: Vec<Vec<u32>>,
    pub cell_types: Vec<u8>,
    pub point_data: Vec<DataArray>,
    pub cell_data: Vec<DataArray>,
}

fn base64(bytes: &[u8]) -> String {
    const T: &[u8; 64] = b"ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz0123456789+/";
    let mut s = String::with_capacity(bytes.len().div_ceil(3) * 4);
    for ch in bytes.chunks(3) {
        let b = [ch[0], *ch.get(1).unwrap_or(&0), *ch.get(2).unwrap_or(&0)];
        let n = (u32::from(b[0]) << 16) | (u32::from(b[1]) << 8) | u32::from(b[2]);
        s.push(T[(n >> 18) as usize & 63] as char);
        s.push(T[(n >> 12) as usize & 63] as char);
        s.push(if ch.len() > 1 {
            T[(n >> 6) as usize & 63] as char
        } else {
            '='
        });
        s.push(if ch.len() > 2 {
            T[n as usize & 63] as char
        } else {
            '='
        });
    }
    s
}

fn encode(data: &[u8]) -> String {
    let mut all = Vec::with_capacity(data.len() + 8);
    all.extend_from_slice(&(data.len() as u64).to_le_bytes());
    all.extend_from_slice(data);
    base64(&all)
}

fn f64_bytes(v: &[f64]) -> Vec<u8> {
    v.iter().flat_map(|x| x.to_le_bytes()).collect()
}

fn array(out: &mut String, ty: &str, name: &str, comps: usize, data: &[u8]) {
    let _ = writeln!(
        out,
        r#"        <DataArray type="{ty}" Name="{name}" NumberOfComponents="{comps}" format="binary">"#
    );
    out.push_str("          ");
    out.push_str(&encode(data));
    out.push_str("\n        </DataArray>\n");
}

fn xml_escape(s: &str) -> String {
    s.replace('&', "&amp;")
        .replace('<', "&lt;")
        .replace('>', "&gt;")
        .replace('"', "&quot;")
}

impl Grid {
    /// The file's text.
    pub fn to_xml(&self) -> String {
        let mut out = String::new();
        out.push_str("<?xml version=\"1.0\"?>\n");
        out.push_str(
            "<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\" header_type=\"UInt64\">\n",
        );
        out.push_str("  <UnstructuredGrid>\n");
        let _ = writeln!(
            out,
            "    <Piece NumberOfPoints=\"{}\" NumberOfCells=\"{}\">",
            self.points.len(),
            self.cells.len()
        );
        out.push_str("      <Points>\n");
        let pts: Vec<f64> = self.points.iter().flat_map(|p| [p[0], p[1], 0.0]).collect();
        array(&mut out, "Float64", "Points", 3, &f64_bytes(&pts));
        out.push_str("      </Points>\n      <Cells>\n");
        let conn: Vec<u8> = self
            .cells
            .iter()
            .flatten()
            .flat_map(|&n| i64::from(n).to_le_bytes())
            .collect();
        array(&mut out, "Int64", "connectivity", 1, &conn);
        let mut off = 0i64;
        let offsets: Vec<u8> = self
            .cells
            .iter()
            .flat_map(|c| {
                off += c.len() as i64;
                off.to_le_bytes()
            })
            .collect();
        array(&mut out, "Int64", "offsets", 1, &offsets);
        array(&mut out, "UInt8", "types", 1, &self.cell_types);
        out.push_str("      </Cells>\n");
        for (tag, data) in [
            ("PointData", &self.point_data),
            ("CellData", &self.cell_data),
        ] {
            let _ = writeln!(out, "      <{tag}>");
            for a in data.iter() {
                array(
                    &mut out,
                    "Float64",
                    &xml_escape(&a.name),
                    a.components,
                    &f64_bytes(&a.values),
                );
            }
            let _ = writeln!(out, "      </{tag}>");
        }
        out.push_str("    </Piece>\n  </UnstructuredGrid>\n</VTKFile>\n");
        out
    }

    /// Writes the file atomically.
    pub fn write(&self, path: &Path) -> std::io::Result<()> {
        crate::atomic_write(path, self.to_xml().as_bytes())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn base64_matches_rfc4648_test_vectors() {
        // RFC 4648 §10 test vectors
        for (i, o) in [
            ("", ""),
            ("f", "Zg=="),
            ("fo", "Zm8="),
            ("foo", "Zm9v"),
            ("foob", "Zm9vYg=="),
            ("foobar", "Zm9vYmFy"),
        ] {
            assert_eq!(base64(i.as_bytes()), o);
        }
    }
}
