//! Solve-speed benchmark: planar and axisymmetric static cases at about 200k and 1M
//! unknowns; prints seconds per stage (mesh, assemble, factor, solve, post), unknowns per
//! second end to end, and the figure's error against its analytic reference.
//!
//! `cargo bench --bench solve_speed` (all sizes) or `cargo bench --bench solve_speed -- small`.

use std::time::Instant;

use fluxpick::case::load_case;
use fluxpick::study::run;

/// Planar round wire (Ampère: B = μ0 I/(2πr) at r = 100 mm, 200 µT for 100 A).
fn planar(h_air: f64, h_wire: f64) -> String {
    format!(
        r#"
[model]
title = "bench planar wire"
symmetry = "planar"
[domain]
circle = {{ center = [0, 0], radius = 250 }}
boundary = "open"
mesh_size = {h_air}
[[conductor]]
name = "wire"
circle = {{ center = [0, 0], radius = 10 }}
current = 100
kind = "stranded"
mesh_size = {h_wire}
[[probe]]
name = "p"
line = {{ from = [100, 0], to = [100, 0.001], points = 2 }}
"#
    )
}

/// Axisymmetric prolate spheroid, aspect 5, μr 1000 (Osborn 1945: B_in/B0 = 17.6164).
fn axi(h_air: f64, h_core: f64) -> String {
    format!(
        r#"
[model]
title = "bench spheroid"
symmetry = "axisymmetric"
[domain]
rect = {{ min = [0, -120], max = [120, 120] }}
boundary = "open"
mesh_size = {h_air}
[background]
b = 1.0e-3
direction = [0, 1]
[materials.core]
mu_r = 1000
[[part]]
name = "spheroid"
material = "core"
ellipse = {{ center = [0, 0], semi_axes = [10, 50] }}
mesh_size = {h_core}
"#
    )
}

fn bench(name: &str, text: &str, figure: &str, reference: f64) {
    let dir = std::env::temp_dir().join(format!("fluxpick-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("{name}.toml"));
    std::fs::write(&path, text).unwrap();
    let case = load_case(&path).expect("bench case");
    let t0 = Instant::now();
    let r = run(&case).expect("bench solve");
    let total = t0.elapsed().as_secs_f64();
    let s = &r.results.solve;
    let value = match figure {
        "wire" => {
            let b = r.results.probes["p"].b_t[0].expect("probe inside");
            b[0].hypot(b[1])
        }
        _ => r.results.parts["spheroid"].b_mean_t / 1e-3,
    };
    println!(
        "{name:<24} {:>9} unknowns {:>9} tri | mesh {:>6.2} asm {:>6.2} factor {:>6.2} solve {:>6.2} post {:>6.2} | total {:>6.2} s | {:>9.0} unknowns/s | error {:.2e}",
        r.results.mesh.unknowns,
        r.results.mesh.triangles,
        s.mesh_s,
        s.assemble_s,
        s.factor_s,
        s.solve_s,
        s.post_s,
        total,
        r.results.mesh.unknowns as f64 / total,
        (value - reference).abs() / reference
    );
    let _ = std::fs::remove_dir_all(&dir);
}

fn main() {
    let filter: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .collect();
    let want = |n: &str| filter.is_empty() || filter.iter().any(|f| n.contains(f.as_str()));
    let wire = 2e-7 * 100.0 / 0.1;
    if want("small") {
        bench("planar-small", &planar(2.0, 0.5), "wire", wire);
        bench("axi-small", &axi(1.4, 0.35), "spheroid", 17.6164);
    }
    if want("large") {
        bench("planar-large", &planar(0.9, 0.25), "wire", wire);
        bench("axi-large", &axi(0.63, 0.16), "spheroid", 17.6164);
    }
}
