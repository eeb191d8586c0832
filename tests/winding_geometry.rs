//! The mean turn length of polygon windows and sides, from the case alone (no solve): it is
//! taken at the window's area centroid, which for an L-shaped window is not the mean of its
//! corners.

use fluxpick::case::load_case_str;
use fluxpick::pipeline::mean_turn_length;

use std::f64::consts::PI;

/// An L of two rectangles: r 10..50 × z 0..10 (400 mm², centroid r = 30, z = 5) and
/// r 10..20 × z 10..30 (200 mm², centroid r = 15, z = 20). Composite-area centroid (common
/// practice in statics, no source): r = (400·30 + 200·15) / 600 = 25 mm,
/// z = (400·5 + 200·20) / 600 = 10 mm. The mean of the six corners is r = 26.67 mm.
const L_MM: &str = "[[10, 0], [50, 0], [50, 10], [20, 10], [20, 30], [10, 30]]";
const L_MIRRORED_MM: &str = "[[-10, 0], [-10, 30], [-20, 30], [-20, 10], [-50, 10], [-50, 0]]";

/// Pappus–Guldinus (second theorem): the volume a plane area A sweeps around an axis is
/// A · 2π r̄, r̄ the distance of its area centroid from the axis; a uniformly filled window
/// of N turns therefore holds N turns of mean length 2π r̄.
#[test]
fn axisymmetric_l_window_turn_is_two_pi_times_the_area_centroid_radius() {
    let text = format!(
        r#"
[model]
symmetry = "axisymmetric"
[domain]
rect = {{ min = [0, -100], max = [100, 100] }}
mesh_size = 10
[[coil]]
name = "pickup"
turns = 100
wire = "awg30"
polygon = {L_MM}
"#
    );
    let case = load_case_str("l-window.toml", &text).unwrap();
    let mtl = mean_turn_length(&case, &case.coils[0].window);
    let want = 2.0 * PI * 0.025;
    assert!((mtl - want).abs() < 1e-12 * want, "{mtl} m, want {want} m");
    // the corners' mean would have given 2π · 26.67 mm, 6.7 % more
    assert!((mtl - 2.0 * PI * 0.160 / 6.0).abs() > 0.06 * want);
}

/// Planar: two runs along the depth plus two end runs between the sides' centroids (the
/// program's stated approximation); with the L and its mirror image the centroids are
/// (±25, 10) mm, 50 mm apart, so the turn is 2 · 1 m + 2 · 0.05 m.
#[test]
fn planar_l_sides_end_runs_join_the_area_centroids() {
    let text = format!(
        r#"
[model]
symmetry = "planar"
[domain]
rect = {{ min = [-100, -100], max = [100, 100] }}
mesh_size = 10
[[coil]]
name = "pickup"
turns = 100
wire = "awg30"
sides = [ {{ polygon = {L_MM}, sense = 1 }}, {{ polygon = {L_MIRRORED_MM}, sense = -1 }} ]
"#
    );
    let case = load_case_str("l-sides.toml", &text).unwrap();
    let mtl = mean_turn_length(&case, &case.coils[0].window);
    assert!((mtl - 2.1).abs() < 1e-12, "{mtl} m");
}
