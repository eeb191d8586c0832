//! Placement maps: a pickup case's equivalent area combined with a survey case's field.

mod common;
use common::*;

/// An air-cored pickup of 200 turns, radius 10 mm (equivalent area N·π r², exact for a
/// thin coil in a uniform field): its map EMF at a point 200 mm from the go conductor of a
/// go-and-return pair (100 A, 50 Hz, return 60 mm further away) agrees within 2 % with a
/// planar solve that contains a coil of the same turns and area (two sides 10 mm apart over
/// a depth of 31.4159 mm) at that point. Both are Faraday's law on the same field; the
/// planar coil averages the field over its width, the map takes it at the point.
#[test]
fn air_cored_map_emf_matches_a_planar_coil_at_the_point() {
    let pickup = r#"
[model]
title = "air pickup"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -100], max = [100, 100] }
boundary = "open"
mesh_size = 10
[background]
b = 1e-6
direction = [0, 1]
[[coil]]
name = "pickup"
turns = 200
wire = "awg40"
rect = { min = [9.5, -1.5], max = [10.5, 1.5] }
mesh_size = 0.25
"#;
    let feeder = |coil: &str, depth: f64| {
        format!(
            r#"
[model]
title = "feeder pair"
symmetry = "planar"
frequency = 50
depth = {depth}
[domain]
circle = {{ center = [0, 0], radius = 800 }}
boundary = "open"
mesh_size = 60
[[conductor]]
name = "go"
circle = {{ center = [0, 0], radius = 5 }}
current = 100
kind = "stranded"
mesh_size = 1.5
[[conductor]]
name = "return"
circle = {{ center = [-60, 0], radius = 5 }}
current = -100
kind = "stranded"
mesh_size = 1.5
{coil}
[[probe]]
name = "spot"
line = {{ from = [200, 0], to = [200, 0.001], points = 2 }}
"#
        )
    };
    let depth = std::f64::consts::PI * 100.0 / 10.0; // mm: 10 mm × depth = π (10 mm)²
    let planar_coil = r#"
[[coil]]
name = "pickup"
turns = 200
wire = "awg36"
sides = [ { rect = { center = [205, 0], size = [1, 6] }, sense = 1 },
          { rect = { center = [195, 0], size = [1, 6] }, sense = -1 } ]
mesh_size = 0.5
"#;
    let (dir, survey) = write_case("survey.toml", &feeder("", depth));
    let pickup_path = dir.path().join("pickup.toml");
    std::fs::write(&pickup_path, pickup).unwrap();
    let out = dir.path().join("map");
    let o = fluxpick(&[
        "map",
        survey.to_str().unwrap(),
        "--pickup",
        pickup_path.to_str().unwrap(),
        "--axis",
        "90",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let map: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("map.json")).unwrap()).unwrap();
    // the pickup's equivalent area is N π r² (r the window's mean radius; thin window)
    let a_eq = get(&map, "equivalent_area_m2");
    assert_rel(
        "equivalent area",
        a_eq,
        200.0 * std::f64::consts::PI * 0.01f64.powi(2),
        2e-3,
    );
    let map_emf = get(&map, "points.0.emf_fixed_v");
    assert_rel(
        "best and fixed orientation agree on the pair's axis",
        get(&map, "points.0.emf_best_v"),
        map_emf,
        1e-3,
    );
    let planar = solve_text(&feeder(planar_coil, depth));
    assert_rel(
        "map EMF vs planar coil",
        map_emf,
        get(&planar, "coils.pickup.emf_v"),
        0.02,
    );
    for f in ["map.csv", "map.svg", "map.json"] {
        assert!(out.join(f).exists(), "{f}");
    }
}

/// `map` over a grid probe writes map.vtu: read back with a general-purpose VTK reader
/// (vtkio) it is the probe's grid (nx × ny points where the case puts them, two triangles
/// per grid square), its point arrays hold map.json's figures at the same points (a wiring
/// check of two outputs), and the field they carry is that of the two line currents
/// (independent: B = μ0 I / (2π ρ) for each long straight conductor, Ampère's law; the
/// pair's fields add as vectors, in phase, so the field ellipse is a line of that length).
#[test]
fn grid_map_vtu_reads_back_as_the_probe_grid_with_the_map_figures() {
    let pickup = r#"
[model]
title = "air pickup"
symmetry = "axisymmetric"
[domain]
rect = { min = [0, -100], max = [100, 100] }
boundary = "open"
mesh_size = 10
[background]
b = 1e-6
direction = [0, 1]
[[coil]]
name = "pickup"
turns = 200
wire = "awg40"
rect = { min = [9.5, -1.5], max = [10.5, 1.5] }
mesh_size = 0.25
"#;
    let survey = r#"
[model]
title = "feeder pair"
symmetry = "planar"
frequency = 50
depth = 1000
[domain]
circle = { center = [0, 0], radius = 800 }
boundary = "open"
mesh_size = 20
[[conductor]]
name = "go"
circle = { center = [0, 0], radius = 5 }
current = 100
kind = "stranded"
mesh_size = 1.5
[[conductor]]
name = "return"
circle = { center = [-60, 0], radius = 5 }
current = -100
kind = "stranded"
mesh_size = 1.5
[[probe]]
name = "area"
grid = { min = [150, -40], max = [250, 40], points = [5, 3] }
"#;
    let (dir, survey) = write_case("survey.toml", survey);
    let pickup_path = dir.path().join("pickup.toml");
    std::fs::write(&pickup_path, pickup).unwrap();
    let out = dir.path().join("map");
    let o = fluxpick(&[
        "map",
        survey.to_str().unwrap(),
        "--pickup",
        pickup_path.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let map: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("map.json")).unwrap()).unwrap();
    let points = map["points"].as_array().expect("points");
    let (nx, ny) = (5, 3);
    assert_eq!(points.len(), nx * ny);

    let v = common::vtu::read(&out.join("map.vtu"));
    assert_eq!(v.points.len(), nx * ny);
    assert_eq!(v.cells.len(), 2 * (nx - 1) * (ny - 1));
    assert!(v
        .types
        .iter()
        .all(|t| *t == vtkio::model::CellType::Triangle));
    assert_eq!(
        v.names(),
        (
            vec![
                "b_major_t",
                "emf_best_v",
                "emf_fixed_v",
                "nonuniform",
                "power_best_w"
            ],
            vec![]
        )
    );
    // the grid as the case places it (mm → m): x from 150 to 250 mm, y from -40 to 40 mm
    for p in &v.points {
        let on = |x: f64, lo: f64, step: f64| ((x - lo) / step - ((x - lo) / step).round()).abs();
        assert!(
            on(p[0], 0.15, 0.025) < 1e-9 && on(p[1], -0.04, 0.04) < 1e-9,
            "{p:?}"
        );
        assert!((0.15 - 1e-12..=0.25 + 1e-12).contains(&p[0]));
        assert!((-0.04 - 1e-12..=0.04 + 1e-12).contains(&p[1]) && p[2] == 0.0);
    }
    // every grid square is covered: the triangles' areas add up to 100 × 80 mm
    let area: f64 = (0..v.cells.len()).map(|c| v.cell_area(c)).sum();
    assert_rel("map.vtu area", area, 0.1 * 0.08, 1e-9);

    for (i, p) in v.points.iter().enumerate() {
        let q = points
            .iter()
            .find(|q| get(q, "x_m") == p[0] && get(q, "y_m") == p[1])
            .unwrap_or_else(|| panic!("map.json has no point at {p:?}"));
        for name in ["b_major_t", "emf_best_v", "emf_fixed_v", "power_best_w"] {
            assert_eq!(v.point(name).values[i], get(q, name), "{name} at {p:?}");
        }
        let flag = q["nonuniform"].as_bool().expect("nonuniform flag");
        assert_eq!(v.point("nonuniform").values[i], f64::from(u8::from(flag)));
        // the pair's field at the point, from the two line currents
        let line = |cx: f64, i: f64| {
            let (dx, dy) = (p[0] - cx, p[1]);
            let rho2 = dx * dx + dy * dy;
            let k = MU0 * i / (2.0 * PI * rho2);
            [-k * dy, k * dx]
        };
        let (a, b) = (line(0.0, 100.0), line(-0.06, -100.0));
        let want = (a[0] + b[0]).hypot(a[1] + b[1]);
        // 1 %: the solve's B at a point of a 20 mm air mesh (up to 3.5e-3 seen)
        assert_rel(
            &format!("|B| at {p:?} vs two line currents"),
            v.point("b_major_t").values[i],
            want,
            0.01,
        );
    }
}
