//! Error estimates and the accuracy loop (`model.accuracy`) against reference values that
//! do not come from fluxpick: every pass's true error is computed from the reference, the
//! loop must stop with the true error within the target, and after the first pass the
//! estimate must be within a factor of 3 of the true error (effectivity 1/3 to 3), but for
//! the one case marked below where it is known to be conservative.

mod common;
use common::*;

/// Passes of results.json's accuracy report: (unknowns, figure, estimate of the figure).
fn passes(r: &serde_json::Value, key: &str) -> Vec<(f64, f64, f64)> {
    r["accuracy"]["refinement"]
        .as_array()
        .expect("accuracy.refinement")
        .iter()
        .map(|p| {
            (
                p["unknowns"].as_f64().unwrap(),
                p["figures"][key].as_f64().unwrap(),
                p["estimates"][key].as_f64().unwrap(),
            )
        })
        .collect()
}

fn check_loop(name: &str, r: &serde_json::Value, key: &str, want: f64, target: f64, max_eff: f64) {
    assert_eq!(
        r["accuracy"]["reached"].as_bool(),
        Some(true),
        "{name}: {}",
        r["accuracy"]
    );
    let ps = passes(r, key);
    assert!(ps.len() >= 2, "{name}: at least two passes");
    for (k, &(n, f, est)) in ps.iter().enumerate() {
        let truth = (f - want).abs() / want.abs();
        let eff = est / truth;
        eprintln!("{name} pass {}: {n} unknowns, true error {truth:.3e}, estimate {est:.3e}, effectivity {eff:.2}", k + 1);
        if k > 0 {
            assert!(
                (1.0 / 3.0..=max_eff).contains(&eff),
                "{name} pass {}: effectivity {eff}",
                k + 1
            );
        }
    }
    let (_, f, _) = *ps.last().unwrap();
    let truth = (f - want).abs() / want.abs();
    assert!(
        truth <= target,
        "{name}: true error {truth} above the target {target}"
    );
    // the reported figure and its _err sibling are the last pass's
    assert_eq!(get(r, key), f);
}

/// Air-cored multilayer coil, N = 500, winding r 15–25 mm, z ±10 mm, uniform current
/// density: L = 7.8952441307407 mH, Maxwell's coaxial-filament mutual inductance (Treatise
/// §701) integrated over the cross-section twice, by two independent quadratures
/// (scipy/mpmath; scripts/reference-values/, agreeing to 2e-16; Wheeler's multilayer
/// formula is 0.27 % lower, within its stated 1 %).
#[test]
fn multilayer_coil_inductance_to_1e_5() {
    let r = solve_text(
        r#"
[model]
title = "multilayer air coil"
symmetry = "axisymmetric"
accuracy = 1e-5
[domain]
rect = { min = [0, -200], max = [200, 200] }
boundary = "open"
mesh_size = 40
[[coil]]
name = "coil"
turns = 500
wire = "awg30"
rect = { min = [15, -10], max = [25, 10] }
mesh_size = 5
"#,
    );
    check_loop(
        "multilayer coil",
        &r,
        "coils.coil.inductance_h",
        7.8952441307407e-3,
        1e-5,
        3.0,
    );
    let e = get(&r, "coils.coil.inductance_h_err");
    assert!(e > 0.0 && e <= 1e-5, "inductance_h_err {e}");
}

/// Two coaxial loops of round cross-section 0.1 mm radius at (10 mm, 0) and (15 mm, 5 mm):
/// their mutual inductance with uniform current density over the sections is
/// 11.8467669422308 nH (Maxwell's filament formula, Treatise §701, averaged over both
/// sections by three independent quadratures, scripts/reference-values/; 2.25e-5 above the
/// filament value 11.84650 nH).
#[test]
fn coaxial_loops_mutual_inductance_to_1e_5() {
    let r = solve_text(
        r#"
[model]
title = "two loops"
symmetry = "axisymmetric"
accuracy = 1e-5
[domain]
rect = { min = [0, -60], max = [60, 60] }
boundary = "open"
mesh_size = 10
[[coil]]
name = "a"
turns = 1
wire_diameter = 0.1
fill_factor = 0.5
current = 1
circle = { center = [10, 0], radius = 0.1 }
[[coil]]
name = "b"
turns = 1
wire_diameter = 0.1
fill_factor = 0.5
current = 0
circle = { center = [15, 5], radius = 0.1 }
"#,
    );
    check_loop(
        "coaxial loops",
        &r,
        "coils.b.flux_linkage_wb",
        11.8467669422308e-9,
        1e-5,
        // Known gap (issue 10): the mutual inductance of separated loops converges faster
        // than the error energy that sets the extrapolation ratio, so the estimate is
        // conservative here: effectivity 4.5 measured on pass 2. It must not be optimistic.
        6.0,
    );
}

/// A target the element budget cannot meet is reported, not hidden.
#[test]
fn unreachable_target_says_so() {
    let r = solve_text(
        r#"
[model]
title = "multilayer air coil"
symmetry = "axisymmetric"
accuracy = 1e-6
max_triangles = 2000
[domain]
rect = { min = [0, -200], max = [200, 200] }
boundary = "open"
mesh_size = 40
[[coil]]
name = "coil"
turns = 500
wire = "awg30"
rect = { min = [15, -10], max = [25, 10] }
mesh_size = 5
"#,
    );
    assert_eq!(r["accuracy"]["reached"].as_bool(), Some(false));
    assert_eq!(r["accuracy"]["stopped"].as_str(), Some("element budget"));
    let warned = r["warnings"]
        .as_array()
        .unwrap()
        .iter()
        .any(|w| w.as_str().unwrap_or("").contains("was not reached"));
    assert!(warned, "{}", r["warnings"]);
}
