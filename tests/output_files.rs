//! The files `solve` and `mesh` write are what they claim: results.json carries the keys of
//! the contract (docs/case-format.md), and the .vtu files read back in a general-purpose VTK
//! reader (the vtkio crate) with the advertised arrays.

mod common;
use common::*;

use vtkio::model::{Attribute, DataSet, Piece};

const CASE: &str = r#"
[model]
title = "rod in a uniform field"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -100], max = [100, 100] }
boundary = "open"
mesh_size = 10
[background]
b = 1.0e-6
direction = [0, 1]
[materials.ferrite]
mu_r = 1000
[[part]]
name = "core"
material = "ferrite"
rect = { min = [0, -40], max = [5, 40] }
mesh_size = 1.5
[[coil]]
name = "pickup"
turns = 1000
wire = "awg36"
fill_factor = 0.6
rect = { min = [5.5, -30], max = [8, 30] }
[[probe]]
name = "axis"
line = { from = [0, -80], to = [0, 80], points = 9 }
"#;

fn read_vtu(path: &std::path::Path) -> vtkio::model::UnstructuredGridPiece {
    let vtk = vtkio::Vtk::import(path).unwrap_or_else(|e| panic!("{}: {e:?}", path.display()));
    match vtk.data {
        DataSet::UnstructuredGrid { pieces, .. } => match pieces.into_iter().next() {
            Some(Piece::Inline(p)) => *p,
            _ => panic!("no inline piece"),
        },
        _ => panic!("not an unstructured grid"),
    }
}

fn array(attrs: &[Attribute], name: &str) -> Vec<f64> {
    attrs
        .iter()
        .find_map(|a| match a {
            Attribute::DataArray(d) if d.name == name => d.data.cast_into::<f64>(),
            _ => None,
        })
        .unwrap_or_else(|| panic!("no array {name}"))
}

#[test]
fn solve_writes_contract_keys_and_a_readable_field_vtu() {
    let (dir, case) = write_case("rod.toml", CASE);
    let out = dir.path().join("out");
    let r = solve(&case, &out);
    for key in [
        "mesh.nodes",
        "mesh.triangles",
        "mesh.unknowns",
        "mesh.min_angle_deg",
        "energy_j",
        "parts.core.b_mean_t",
        "parts.core.b_peak_t",
        "parts.core.loss_w",
        "coils.pickup.flux_linkage_wb",
        "coils.pickup.emf_v",
        "coils.pickup.inductance_h",
        "coils.pickup.resistance_ohm",
        "coils.pickup.eddy_resistance_ohm",
        "coils.pickup.equivalent_area_m2",
    ] {
        let v = get(&r, key);
        assert!(v.is_finite(), "{key} = {v}");
    }
    // q, tuning capacitance and matched power are not applicable at 0 Hz: present, null
    for key in ["q", "tuning_capacitance_f", "matched_power_w"] {
        assert!(
            r["coils"]["pickup"][key].is_null(),
            "{key} should be null at 0 Hz"
        );
    }
    assert_eq!(r["probes"]["axis"]["points"].as_array().unwrap().len(), 9);
    assert_eq!(r["probes"]["axis"]["b_t"].as_array().unwrap().len(), 9);

    let p = read_vtu(&out.join("field.vtu"));
    assert_eq!(p.num_points() as f64, get(&r, "mesh.nodes"));
    assert_eq!(p.cells.types.len() as f64, get(&r, "mesh.triangles"));
    let babs = array(&p.data.cell, "B_abs");
    let mu = array(&p.data.cell, "mu_r");
    let a = array(&p.data.point, "A");
    assert_eq!(a.len(), p.num_points());
    assert_eq!(babs.len(), p.cells.types.len());
    assert!(mu.contains(&1000.0) && mu.contains(&1.0));
    // The core concentrates the field: its cells carry the largest |B|.
    let peak = babs.iter().copied().fold(0.0, f64::max);
    let core_peak = babs
        .iter()
        .zip(&mu)
        .filter(|(_, m)| **m == 1000.0)
        .map(|(b, _)| *b)
        .fold(0.0, f64::max);
    assert!(
        core_peak == peak && peak > 5e-6,
        "peak |B| {peak}, in the core {core_peak}"
    );
    // no temporary files left behind
    for e in std::fs::read_dir(&out).unwrap() {
        let n = e.unwrap().file_name().into_string().unwrap();
        assert!(!n.starts_with('.'), "leftover {n}");
    }
}

#[test]
fn mesh_writes_a_readable_mesh_vtu() {
    let (dir, case) = write_case("rod.toml", CASE);
    let out = dir.path().join("m");
    let o = fluxpick(&[
        "mesh",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    assert!(
        text.contains("core") && text.contains("triangles"),
        "{text}"
    );
    let p = read_vtu(&out.join("mesh.vtu"));
    let region = array(&p.data.cell, "region");
    let angle = array(&p.data.cell, "min_angle_deg");
    assert_eq!(region.len(), p.cells.types.len());
    assert!(region.contains(&1.0), "core region present");
    assert!(
        angle.iter().all(|a| *a > 20.0),
        "min angle {}",
        angle.iter().copied().fold(90.0, f64::min)
    );
}

/// `solve --plot` writes a field picture: an SVG with the |B| shading, flux lines, the
/// outlines and a colour bar labelled in tesla.
#[test]
fn solve_plot_writes_a_field_picture() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let o = fluxpick(&[
        "solve",
        repo().join("cases/feeder-pair.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--plot",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let svg = std::fs::read_to_string(out.join("field.svg")).unwrap();
    assert!(svg.starts_with("<svg") && svg.trim_end().ends_with("</svg>"));
    assert!(svg.matches("<rect").count() > 100, "shading");
    assert!(svg.contains(r#"stroke="white""#) && svg.contains(r#"stroke="black""#));
    assert!(svg.contains("contours of A") && svg.contains("T</text>"));
}

/// Conjugate gradients preconditioned by the diagonal, on a symmetric positive definite
/// sparse matrix (a textbook method, e.g. Saad, "Iterative Methods for Sparse Linear
/// Systems", alg. 9.1); our own few lines, independent of the program's direct solver.
fn jacobi_cg(k: &sprs::CsMat<f64>, b: &[f64]) -> Vec<f64> {
    let n = b.len();
    let diag: Vec<f64> = (0..n).map(|i| *k.get(i, i).unwrap()).collect();
    let mul = |x: &[f64]| -> Vec<f64> {
        let mut y = vec![0.0; n];
        for (v, (i, j)) in k.iter() {
            y[i] += v * x[j];
        }
        y
    };
    let dot = |a: &[f64], b: &[f64]| a.iter().zip(b).map(|(x, y)| x * y).sum::<f64>();
    let mut x = vec![0.0; n];
    let mut r = b.to_vec();
    let mut z: Vec<f64> = r.iter().zip(&diag).map(|(r, d)| r / d).collect();
    let mut p = z.clone();
    let mut rz = dot(&r, &z);
    let b_norm = dot(b, b).sqrt();
    for _ in 0..50 * n {
        let q = mul(&p);
        let alpha = rz / dot(&p, &q);
        for i in 0..n {
            x[i] += alpha * p[i];
            r[i] -= alpha * q[i];
        }
        if dot(&r, &r).sqrt() < 1e-13 * b_norm {
            break;
        }
        z = r.iter().zip(&diag).map(|(r, d)| r / d).collect();
        let rz_new = dot(&r, &z);
        for i in 0..n {
            p[i] = z[i] + rz_new / rz * p[i];
        }
        rz = rz_new;
    }
    x
}

/// `solve --matrix-market` writes the assembled system, read back by sprs's own Matrix
/// Market reader: K is square over the unknowns and symmetric, and the coil's inductance
/// from it by an independent route (our conjugate gradients: L = Fᵀ K⁻¹ F for the coil's
/// column F at 1 A, the energy of the Galerkin solution) equals results.json's.
#[test]
fn solve_matrix_market_writes_the_assembled_system() {
    let (dir, case) = write_case("rod.toml", CASE);
    let out = dir.path().join("out");
    let o = fluxpick(&[
        "solve",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--matrix-market",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let r: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("results.json")).unwrap()).unwrap();
    let k: sprs::CsMat<f64> = sprs::io::read_matrix_market(out.join("system-matrix.mtx"))
        .unwrap()
        .to_csc();
    let f: sprs::CsMat<f64> = sprs::io::read_matrix_market(out.join("system-rhs.mtx"))
        .unwrap()
        .to_csc();
    let n = get(&r, "mesh.unknowns") as usize;
    assert_eq!(k.shape(), (n, n));
    assert_eq!(
        f.shape(),
        (n, 2),
        "the pickup's column and the background's"
    );
    for (v, (i, j)) in k.iter() {
        let t = *k.get(j, i).expect("symmetric pattern");
        assert!((v - t).abs() <= 1e-12 * v.abs().max(t.abs()), "K[{i},{j}]");
    }
    let unknowns = std::fs::read_to_string(out.join("system-unknowns.csv")).unwrap();
    assert!(unknowns.starts_with("# right-hand-side columns: pickup, background\n"));
    assert_eq!(unknowns.lines().count(), n + 2);
    let mut b = vec![0.0; n];
    for (i, v) in f.outer_view(0).unwrap().iter() {
        b[i] = *v;
    }
    let u = jacobi_cg(&k, &b);
    let l: f64 = u.iter().zip(&b).map(|(x, y)| x * y).sum();
    assert_rel(
        "L = Fᵀ K⁻¹ F by conjugate gradients against results.json",
        l,
        get(&r, "coils.pickup.inductance_h"),
        1e-8,
    );
}

/// `map.vtu` of a grid probe reads back in the general-purpose VTK reader: one point per
/// probe point, two triangles per grid cell, its arrays, and the best-orientation EMF at each
/// mapped point equal to map.json's (points left out of the map, where the pickup does not
/// fit, read 0 there).
#[test]
fn map_writes_a_readable_map_vtu() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("map");
    let o = fluxpick(&[
        "map",
        repo().join("cases/busbar-survey.toml").to_str().unwrap(),
        "--pickup",
        repo()
            .join("cases/rod-uniform-field.toml")
            .to_str()
            .unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rec: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("map.json")).unwrap()).unwrap();
    let g = read_vtu(&out.join("map.vtu"));
    let n = g.num_points();
    let cells = g.cells.types.len();
    // a grid of nx × ny points has 2 (nx − 1)(ny − 1) triangles
    let (nx, ny) = (1..=n)
        .filter(|nx| n % nx == 0)
        .map(|nx| (nx, n / nx))
        .find(|(nx, ny)| 2 * (nx - 1) * (ny - 1) == cells)
        .expect("a structured grid of triangles");
    assert!(nx > 1 && ny > 1);
    let emf = array(&g.data.point, "emf_best_v");
    for name in ["emf_fixed_v", "power_best_w", "b_major_t", "nonuniform"] {
        assert_eq!(array(&g.data.point, name).len(), n, "{name}");
    }
    let mapped = rec["points"].as_array().unwrap();
    assert!(!mapped.is_empty());
    let best = mapped
        .iter()
        .map(|p| p["emf_best_v"].as_f64().unwrap())
        .fold(0.0f64, f64::max);
    let vtu_best = emf.iter().copied().fold(0.0f64, f64::max);
    assert!(
        (vtu_best - best).abs() <= 1e-12 * best,
        "{vtu_best} vs {best}"
    );
    assert_eq!(emf.iter().filter(|v| **v > 0.0).count(), mapped.len());
}
