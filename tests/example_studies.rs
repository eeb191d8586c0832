//! The example cases and studies in `cases/`, run as a user would, each asserting its
//! main figure or trend.

mod common;
use common::*;

use std::path::PathBuf;

fn case(name: &str) -> PathBuf {
    repo().join("cases").join(name)
}

fn sweep_points(name: &str) -> Vec<serde_json::Value> {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let o = fluxpick(&[
        "sweep",
        case(name).to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let rec: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    rec["points"].as_array().unwrap().clone()
}

fn fig(p: &serde_json::Value, key: &str) -> f64 {
    p["figures"][key]
        .as_f64()
        .unwrap_or_else(|| panic!("{key} missing"))
}

/// Every example case checks and solves, and its first coil's (or conductor's) figure is
/// finite and positive.
#[test]
fn every_example_case_solves() {
    let mut n = 0;
    for entry in std::fs::read_dir(repo().join("cases")).unwrap() {
        let path = entry.unwrap().path();
        if path.extension().is_none_or(|x| x != "toml") {
            continue;
        }
        let c = fluxpick(&["check", path.to_str().unwrap()]);
        assert!(
            c.status.success(),
            "{}: {}",
            path.display(),
            String::from_utf8_lossy(&c.stderr)
        );
        let dir = tempfile::tempdir().unwrap();
        let r = solve(&path, &dir.path().join("out"));
        let coils = r["coils"].as_object().unwrap();
        let value = if let Some((_, c)) = coils.iter().next() {
            c["inductance_h"].as_f64().unwrap()
        } else {
            let (_, c) = r["conductors"].as_object().unwrap().iter().next().unwrap();
            c["loss_w"].as_f64().unwrap()
        };
        assert!(
            value.is_finite() && value > 0.0,
            "{}: {value}",
            path.display()
        );
        n += 1;
    }
    assert!(n >= 6, "only {n} example cases");
}

/// Rod L/D at constant volume: the mid-plane apparent permeability rises with L/D, stays
/// below μr, and exceeds that of a prolate spheroid of the same L/D, μr/(1 + N(μr − 1)) with
/// Osborn's N (Osborn 1945), since a cylinder concentrates more flux at its middle (the
/// fluxmetric demagnetising factor of a cylinder is below the spheroid's: Bozorth & Chapin
/// 1942; Chen, Brug & Goldfarb 1991). At constant volume the pickup rises with L/D.
#[test]
fn rod_aspect_study_reproduces_the_demagnetisation_trends() {
    let pts = sweep_points("rod-aspect-study.toml");
    assert_eq!(pts.len(), 6);
    let mu_r = 2000.0;
    let mut last = (0.0, 0.0);
    for p in &pts {
        let m = p["parameters"]["m"].as_f64().unwrap();
        let mu = fig(p, "parts.rod.apparent_permeability");
        let area = fig(p, "coils.pickup.equivalent_area_m2");
        let spheroid = mu_r / (1.0 + osborn_prolate(m) * (mu_r - 1.0));
        eprintln!(
            "L/D {m}: apparent μ {mu:.2} (spheroid {spheroid:.2}), equivalent area {area:.3} m²"
        );
        assert!(mu < mu_r, "L/D {m}");
        assert!(
            mu > spheroid,
            "L/D {m}: cylinder {mu} vs spheroid {spheroid}"
        );
        assert!(mu > last.0 && area > last.1, "L/D {m}: not rising");
        last = (mu, area);
    }
}

/// A steel plate near the rod's end: the plate's permeability wins over its eddy currents
/// here and raises the EMF close up; the effect dies away with the gap, and at 320 mm the
/// EMF is that of the same pickup with no plate (rod-uniform-field.toml, solved at 60 Hz, so
/// scaled by 50/60) within 0.5 %.
#[test]
fn plate_gap_study_converges_to_the_free_rod() {
    let pts = sweep_points("rod-plate-gap-study.toml");
    let emf: Vec<f64> = pts.iter().map(|p| fig(p, "coils.pickup.emf_v")).collect();
    let dir = tempfile::tempdir().unwrap();
    let free = solve(&case("rod-uniform-field.toml"), &dir.path().join("out"));
    let e_free = get(&free, "coils.pickup.emf_v") * 50.0 / 60.0;
    eprintln!("EMF against gap {emf:?}, no plate {e_free}");
    for w in emf.windows(2) {
        assert!(
            w[1] < w[0],
            "EMF should fall as the plate moves away: {emf:?}"
        );
    }
    assert!(emf[0] > 1.1 * e_free, "the plate's effect close up");
    assert_rel(
        "EMF at 320 mm vs no plate",
        *emf.last().unwrap(),
        e_free,
        5e-3,
    );
}

/// The placement map beside the busbars: the best position is near the bars, and the EMF
/// falls with height above the middle bar.
#[test]
fn busbar_placement_map_finds_the_strong_field_near_the_bars() {
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("map");
    let o = fluxpick(&[
        "map",
        case("busbar-survey.toml").to_str().unwrap(),
        "--pickup",
        case("rod-uniform-field.toml").to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let map: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("map.json")).unwrap()).unwrap();
    let pts = map["points"].as_array().unwrap();
    let best = pts
        .iter()
        .max_by(|a, b| {
            a["emf_best_v"]
                .as_f64()
                .unwrap()
                .total_cmp(&b["emf_best_v"].as_f64().unwrap())
        })
        .unwrap();
    let (bx, by) = (best["x_m"].as_f64().unwrap(), best["y_m"].as_f64().unwrap());
    assert!(bx.abs() < 0.13 && by.abs() < 0.06, "best at ({bx}, {by})");
    let column: Vec<(f64, f64)> = pts
        .iter()
        .filter(|p| p["x_m"].as_f64().unwrap().abs() < 1e-9 && p["y_m"].as_f64().unwrap() > 0.03)
        .map(|p| {
            (
                p["y_m"].as_f64().unwrap(),
                p["emf_best_v"].as_f64().unwrap(),
            )
        })
        .collect();
    assert!(column.len() > 5);
    for w in column.windows(2) {
        assert!(
            w[1].0 > w[0].0 && w[1].1 < w[0].1,
            "EMF above the middle bar: {column:?}"
        );
    }
}
