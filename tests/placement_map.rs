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
