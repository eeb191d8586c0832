//! Saturating cores through the binary: a ferrite rod with a B-H curve in a rising uniform
//! field collects less per tesla as it saturates, and matches the linear result at low
//! field (the curve's initial permeability). A core's pickup per tesla falling once it
//! saturates is common practice, no source; the low-field and file checks are consistency
//! checks of our own (the same physics by two routes). The B-H points are invented, shaped
//! like a ferrite's.

mod common;
use common::*;

fn rod(b: f64, material: &str) -> String {
    rod_at(b, material, 0.0)
}

fn rod_at(b: f64, material: &str, frequency: f64) -> String {
    format!(
        r#"
[model]
title = "saturating rod"
symmetry = "axisymmetric"
frequency = {frequency}
[domain]
rect = {{ min = [0, -300], max = [300, 300] }}
boundary = "open"
mesh_size = 30
[background]
b = {b}
direction = [0, 1]
{material}
[[part]]
name = "rod"
material = "ferrite"
rect = {{ min = [0, -75], max = [12.5, 75] }}
mesh_size = 2
[[coil]]
name = "pickup"
turns = 1000
wire = "awg30"
rect = {{ min = [13, -40], max = [16, 40] }}
mesh_size = 2
"#
    )
}

/// A ferrite-like curve (invented points) whose permeability B/H only falls from its
/// initial value (25 mT at 10 A/m, μr ≈ 1989) towards saturation near 0.5 T.
const CURVE: &str = "[materials.ferrite]\nmu_r = 1989.4368\nbh = [[0, 0], [10, 0.025], [25, 0.06], [50, 0.11], [100, 0.19], [200, 0.3], [500, 0.42], [2000, 0.48], [8000, 0.5]]\n";
const LINEAR: &str = "[materials.ferrite]\nmu_r = 1989.4368\n";

#[test]
fn saturating_rod_collects_less_per_tesla_as_the_field_rises() {
    let low = solve_text(&rod(1e-6, CURVE));
    let lin = solve_text(&rod(1e-6, LINEAR));
    assert_rel(
        "equivalent area at 1 µT, curve vs linear",
        get(&low, "coils.pickup.equivalent_area_m2"),
        get(&lin, "coils.pickup.equivalent_area_m2"),
        1e-3,
    );
    assert!(low["solve"]["newton_iterations"].as_u64().is_some());
    // the stored energy from the curve's ∫H dB equals ½νB² at low field
    assert_rel(
        "stored energy at 1 µT",
        get(&low, "energy_j"),
        get(&lin, "energy_j"),
        1e-3,
    );
    let mut last = f64::INFINITY;
    for b in [1e-6, 2e-3, 8e-3, 3e-2] {
        let r = solve_text(&rod(b, CURVE));
        let a = get(&r, "coils.pickup.equivalent_area_m2");
        let peak = get(&r, "parts.rod.b_peak_t");
        eprintln!(
            "applied {b} T: equivalent area {a:.4} m², rod peak {peak:.3} T, Newton {} iterations",
            r["solve"]["newton_iterations"]
        );
        assert!(
            a < last * (1.0 + 1e-6),
            "pickup per tesla should fall: {a} after {last}"
        );
        last = a;
    }
    // saturated (peak above the curve's 0.5 T at 30 mT applied): well below the linear figure
    assert!(last < 0.7 * get(&lin, "coils.pickup.equivalent_area_m2"));
}

/// A built-in typical curve by name solves through Newton and reports its iterations.
#[test]
fn built_in_curve_by_name() {
    let r = solve_text(&rod(
        2e-2,
        "[materials.ferrite]\nmu_r = 2000\nbh_curve = \"mnzn-ferrite\"\n",
    ));
    let n = r["solve"]["newton_iterations"]
        .as_u64()
        .expect("Newton iterations");
    let h = r["solve"]["residual_history"].as_array().expect("history");
    assert_eq!(h.len() as u64, n + 1);
    assert!(h.last().unwrap().as_f64().unwrap() < 1e-8);
    assert!(
        get(&r, "parts.rod.b_peak_t") > 0.3,
        "saturating at 20 mT applied"
    );
}

/// At 50 Hz the effective-permeability model: at low field the linear result (0.1 %), and
/// less pickup per tesla once the rod saturates; the model's warning says what it is.
#[test]
fn effective_permeability_at_50_hz() {
    let low = solve_text(&rod_at(1e-6, CURVE, 50.0));
    let lin = solve_text(&rod_at(1e-6, LINEAR, 50.0));
    assert_rel(
        "50 Hz equivalent area at 1 µT, curve vs linear",
        get(&low, "coils.pickup.equivalent_area_m2"),
        get(&lin, "coils.pickup.equivalent_area_m2"),
        1e-3,
    );
    let high = solve_text(&rod_at(3e-2, CURVE, 50.0));
    let a = get(&high, "coils.pickup.equivalent_area_m2");
    eprintln!("50 Hz, 30 mT applied: equivalent area {a}");
    assert!(a < 0.8 * get(&lin, "coils.pickup.equivalent_area_m2"));
    let w = high["warnings"].as_array().unwrap();
    assert!(
        w.iter()
            .any(|x| x.as_str().unwrap().contains("effective permeability")
                && !x.as_str().unwrap().contains("NOT converged")),
        "{w:?}"
    );
}

/// A sweep of the source current finds the current at which the core's peak |B| reaches
/// 80 % of its saturation; solving at that current gives 80 % back (within the linear
/// interpolation between sweep points).
#[test]
fn current_sweep_finds_where_the_core_nears_saturation() {
    let text = r#"
[model]
title = "driven core"
symmetry = "axisymmetric"
[parameters]
I = 0.1
[domain]
rect = { min = [0, -200], max = [200, 200] }
boundary = "open"
mesh_size = 25
[materials.ferrite]
mu_r = 2000
b_sat = 0.45
bh_curve = "mnzn-ferrite"
[[part]]
name = "core"
material = "ferrite"
rect = { min = [0, -60], max = [10, 60] }
mesh_size = 2
[[coil]]
name = "drive"
turns = 500
wire = "awg28"
current = "I"
rect = { min = [11, -50], max = [15, 50] }
mesh_size = 2
[[sweep]]
parameter = "I"
from = 1
to = 4
steps = 13
"#;
    let (dir, case) = write_case("core.toml", text);
    let out = dir.path().join("sw");
    let o = fluxpick(&[
        "sweep",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let stdout = String::from_utf8_lossy(&o.stdout);
    assert!(
        stdout.contains("parts.core.b_peak_over_sat reaches 80 %"),
        "{stdout}"
    );
    let c: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("crossings.json")).unwrap())
            .unwrap();
    let hit = c
        .as_array()
        .unwrap()
        .iter()
        .find(|x| x["figure"] == "parts.core.b_peak_over_sat" && x["level"] == 0.8)
        .expect("80 % crossing");
    let i80 = hit["value"].as_f64().unwrap();
    let r = solve_text(&text.replace("I = 0.1", &format!("I = {i80}")));
    let ratio = get(&r, "parts.core.b_peak_t") / 0.45;
    eprintln!(
        "80 % of saturation at I = {i80:.4} A; solved there: {:.3}",
        ratio
    );
    assert!((ratio - 0.8).abs() < 0.05, "{ratio}");
}

/// A B-H curve read from a CSV file beside the case gives the same answer as the same
/// points written inline.
#[test]
fn bh_curve_from_a_csv_file() {
    let inline = solve_text(&rod(2e-2, CURVE));
    let (dir, case) = write_case(
        "rod.toml",
        &rod(
            2e-2,
            "[materials.ferrite]\nmu_r = 1989.4368\nbh_file = \"ferrite.csv\"\n",
        ),
    );
    std::fs::write(
        dir.path().join("ferrite.csv"),
        "H_A_per_m,B_T\n0,0\n10,0.025\n25,0.06\n50,0.11\n100,0.19\n200,0.3\n500,0.42\n2000,0.48\n8000,0.5\n",
    )
    .unwrap();
    let from_file = solve(&case, &dir.path().join("out"));
    assert_eq!(
        get(&from_file, "coils.pickup.equivalent_area_m2"),
        get(&inline, "coils.pickup.equivalent_area_m2")
    );
    // a missing file is a case error naming the key
    std::fs::remove_file(dir.path().join("ferrite.csv")).unwrap();
    let o = fluxpick(&["check", case.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("materials.ferrite.bh_file") && err.contains("ferrite.csv"),
        "{err}"
    );
}
