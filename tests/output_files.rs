//! The files `solve` and `mesh` write are what they claim: results.json carries the keys of
//! the contract (docs/case-format.md, "Results"), and the .vtu files read back in a
//! general-purpose VTK reader (the vtkio crate) with the advertised arrays.

mod common;
use common::*;

use common::vtu;
use vtkio::model::CellType;

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

/// The cells whose corner centroid lies inside `inside`, and their total area (m²).
fn cells_in(v: &vtu::Vtu, inside: impl Fn([f64; 2]) -> bool) -> (Vec<usize>, f64) {
    let cells: Vec<usize> = (0..v.cells.len())
        .filter(|&c| inside(v.centroid(c)))
        .collect();
    let area = cells.iter().map(|&c| v.cell_area(c)).sum();
    (cells, area)
}

/// The cell type `solve` writes for results.json's `mesh.element_order`.
fn cell_type(r: &serde_json::Value) -> CellType {
    match get(r, "mesh.element_order") as u32 {
        1 => CellType::Triangle,
        2 => CellType::QuadraticTriangle,
        n => panic!("element order {n}"),
    }
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

    // field.vtu read back: one point per node and one cell per triangle of results.json,
    // of the type its element order says, with the arrays docs/guide.md (section 3) lists
    // for a static case
    let v = vtu::read(&out.join("field.vtu"));
    assert_eq!(v.points.len() as f64, get(&r, "mesh.nodes"));
    assert_eq!(v.cells.len() as f64, get(&r, "mesh.triangles"));
    assert!(v.types.iter().all(|t| *t == cell_type(&r)));
    assert_eq!(
        v.names(),
        (
            vec!["A"],
            vec!["B", "B_abs", "J", "error_indicator", "mu_r", "region"]
        )
    );
    let babs = &v.cell("B_abs").values;
    let mu = &v.cell("mu_r").values;
    assert_eq!(v.point("A").components, 1);
    let b = v.cell("B");
    assert_eq!(b.components, 3);
    // Wiring check (the writer's |B| against its own B vector), paired with the geometry
    // and field checks below.
    for (c, abs) in babs.iter().enumerate() {
        let (x, y, z) = (b.values[3 * c], b.values[3 * c + 1], b.values[3 * c + 2]);
        assert_eq!(z, 0.0);
        assert!(
            (x.hypot(y) - abs).abs() <= 1e-12 * abs.max(1e-30),
            "cell {c}"
        );
    }
    // Independent of the program: the cells of μr 1000 are the core the case draws,
    // 5 × 80 mm (r from 0 to 5 mm, z from -40 to 40 mm), and only those.
    let (core, core_area) = cells_in(&v, |p| p[0] < 5e-3 && p[1].abs() < 40e-3);
    assert!(core.iter().all(|&c| mu[c] == 1000.0));
    assert_eq!(
        core.len(),
        mu.iter().filter(|m| **m == 1000.0).count(),
        "μr 1000 outside the core"
    );
    assert_rel("core area in field.vtu", core_area, 5e-3 * 80e-3, 1e-9);
    assert!(mu.iter().all(|m| *m == 1000.0 || *m == 1.0));
    // The core concentrates the field: its cells carry the largest |B|.
    let peak = babs.iter().copied().fold(0.0, f64::max);
    let core_peak = core.iter().map(|&c| babs[c]).fold(0.0, f64::max);
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

/// `mesh` writes mesh.vtu: it reads back with the counts `mesh --json` prints and that
/// results.json gives for the same case (its triangles plus the exterior image's), the
/// region areas the case draws, and per-cell smallest angles that match the cells' corners.
#[test]
fn mesh_writes_a_readable_mesh_vtu() {
    let (dir, case) = write_case("rod.toml", CASE);
    let out = dir.path().join("m");
    let o = fluxpick(&[
        "mesh",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--json",
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let text = String::from_utf8_lossy(&o.stdout);
    let json_start = text.find('{').expect("JSON on standard output");
    let stats: serde_json::Value = serde_json::Deserializer::from_str(&text[json_start..])
        .into_iter()
        .next()
        .expect("one JSON value")
        .expect("valid JSON");
    assert!(
        text.contains("core") && text.contains("triangles"),
        "{text}"
    );
    let v = vtu::read(&out.join("mesh.vtu"));
    assert_eq!(v.points.len() as f64, get(&stats, "nodes"));
    assert_eq!(v.cells.len() as f64, get(&stats, "triangles"));
    assert!(v.types.iter().all(|t| *t == CellType::Triangle));
    assert_eq!(
        v.names(),
        (vec![], vec!["material", "min_angle_deg", "region"])
    );
    let solved = solve(&case, &dir.path().join("s"));
    assert_eq!(
        v.cells.len() as f64,
        get(&solved, "mesh.triangles") + get(&solved, "mesh.exterior_triangles"),
        "mesh.vtu holds the solve's triangles and the exterior image's"
    );

    // Per region: the triangle count and area `mesh --json` reports (a wiring check of two
    // outputs of one mesh), and for the core and the coil window the areas the case draws
    // (independent: 5 × 80 mm and 2.5 × 60 mm; straight sides, so exact).
    let region = &v.cell("region").values;
    let regions = stats["regions"].as_array().expect("regions");
    for (i, r) in regions.iter().enumerate() {
        let (cells, area) = cells_in_region(&v, region, i);
        assert_eq!(cells as f64, get(r, "triangles"), "region {i}");
        assert_rel(&format!("region {i} area"), area, get(r, "area_m2"), 1e-9);
        let drawn = match r["name"].as_str() {
            Some("core") => Some(5e-3 * 80e-3),
            Some("pickup/0") => Some(2.5e-3 * 60e-3),
            _ => None,
        };
        if let Some(a) = drawn {
            assert_rel(&format!("{} area as drawn", r["name"]), area, a, 1e-9);
        }
    }
    assert!(regions.iter().any(|r| r["name"] == "core"));

    // The smallest-angle array against the angles of each cell's corners as read back.
    let angle = &v.cell("min_angle_deg").values;
    for (c, a) in angle.iter().enumerate() {
        let p = |k: usize| v.points[v.cells[c][k]];
        let corner = |o: [f64; 3], a: [f64; 3], b: [f64; 3]| {
            let (u, w) = ([a[0] - o[0], a[1] - o[1]], [b[0] - o[0], b[1] - o[1]]);
            (u[0] * w[1] - u[1] * w[0])
                .abs()
                .atan2(u[0] * w[0] + u[1] * w[1])
                .to_degrees()
        };
        let min = corner(p(0), p(1), p(2))
            .min(corner(p(1), p(2), p(0)))
            .min(corner(p(2), p(0), p(1)));
        assert!(
            (min - a).abs() < 1e-6,
            "cell {c}: {a}° written, {min}° read"
        );
    }
    let smallest = angle.iter().copied().fold(90.0, f64::min);
    assert_eq!(smallest, get(&stats, "min_angle_deg"));
    assert!(smallest > 20.0, "min angle {smallest}");
}

/// The number of cells whose `region` value is `i`, and their total area (m²).
fn cells_in_region(v: &vtu::Vtu, region: &[f64], i: usize) -> (usize, f64) {
    let cells: Vec<usize> = (0..v.cells.len())
        .filter(|&c| region[c] == i as f64)
        .collect();
    (cells.len(), cells.iter().map(|&c| v.cell_area(c)).sum())
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

/// field.vtu of a 50 Hz case (cases/feeder-pair.toml: two solid copper bars of radius
/// 10 mm at y = ±30 mm carrying ±400 A rms, a ferrite rod 100 × 10 mm centred at x = 150 mm)
/// reads back with the counts of results.json, the phasor arrays docs/guide.md lists, μr 2000
/// in exactly the rod's cells, and current densities that add up over each bar's cells to the
/// current results.json reports for it and the case imposes (Kirchhoff's current law on a
/// solid conductor: the eddy currents inside it only redistribute the net current).
#[test]
fn harmonic_field_vtu_reads_back_with_the_bar_currents() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let r = solve(&repo().join("cases/feeder-pair.toml"), &out);
    let v = vtu::read(&out.join("field.vtu"));
    assert_eq!(v.points.len() as f64, get(&r, "mesh.nodes"));
    assert_eq!(v.cells.len() as f64, get(&r, "mesh.triangles"));
    assert!(v.types.iter().all(|t| *t == cell_type(&r)));
    assert_eq!(
        v.names(),
        (
            vec!["A_im", "A_re"],
            vec![
                "B_abs",
                "B_im",
                "B_re",
                "J_abs",
                "J_im",
                "J_re",
                "error_indicator",
                "mu_r",
                "region"
            ]
        )
    );
    assert_eq!(v.cell("B_re").components, 3);
    assert_eq!(v.cell("B_im").components, 3);
    assert_eq!(v.point("A_re").components, 1);

    // the rod: 100 × 10 mm centred at (150, 0) mm, μr 2000 there and nowhere else
    let mu = &v.cell("mu_r").values;
    let (rod, rod_area) = cells_in(&v, |p| (p[0] - 0.15).abs() < 0.05 && p[1].abs() < 5e-3);
    assert!(rod.iter().all(|&c| mu[c] == 2000.0));
    assert_eq!(rod.len(), mu.iter().filter(|m| **m == 2000.0).count());
    assert_rel("rod area in field.vtu", rod_area, 0.1 * 0.01, 1e-9);

    // ∫ J dA over each bar (cell value × the cell's exact area)
    let (jr, ji) = (&v.cell("J_re").values, &v.cell("J_im").values);
    for (name, y) in [("go", 0.03), ("return", -0.03)] {
        let (bar, area) = cells_in(&v, |p| p[0].hypot(p[1] - y) < 0.01);
        // the mesher keeps the circle's area (curved quadratic sides)
        assert_rel(&format!("{name} area"), area, PI * 0.01f64.powi(2), 1e-6);
        let (re, im) = bar.iter().fold((0.0, 0.0), |(a, b), &c| {
            let da = v.cell_area(c);
            (a + jr[c] * da, b + ji[c] * da)
        });
        // the case: ±400 A at phase 0; results.json reports the signed rms current
        let imposed = if name == "go" { 400.0 } else { -400.0 };
        assert_eq!(get(&r, &format!("conductors.{name}.current_a")), imposed);
        // The cell values are taken at the centroids, so the sums are a one-point rule per
        // cell: seen here 4e-5 of 400 A off in the in-phase part, 1.2e-3 (0.49 A) in the
        // quadrature part, which the eddy currents alone make up.
        assert_rel(&format!("{name}: ∫ J_re dA"), re, imposed, 1e-3);
        eprintln!("{name}: ∫ J_im dA = {im:.4} A");
        assert!(im.abs() < 5e-3 * 400.0, "{name}: ∫ J_im dA = {im}");
    }
}
