//! Solve-speed benchmark: planar and axisymmetric static cases at about 200k (`small`)
//! and 1M (`large`) unknowns; prints seconds per stage (mesh, assemble, factor, solve, post), unknowns per
//! second end to end, and the figure's error against its analytic reference.
//!
//! Then a planar eddy-current case (three bars beside a steel wall) at about 200k unknowns
//! end to end, and a 10-point frequency sweep that keeps the symbolic analysis
//! (`HarmonicPlan`) against fresh solves.
//!
//! `cargo bench --bench solve_speed` (all) or `cargo bench --bench solve_speed -- small`
//! (also `large`, `eddy`, `sweep`: a 50-point axisymmetric sweep, points per second).

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

/// Three copper bars at 630 A in three phases beside a 3 mm steel wall (μr 200, 5 MS/m).
fn eddy(h_air: f64) -> String {
    format!(
        r#"
[model]
title = "bench eddy"
symmetry = "planar"
frequency = 50
[domain]
circle = {{ center = [0, 60], radius = 400 }}
boundary = "open"
mesh_size = {h_air}
[materials.steel]
mu_r = 200
conductivity = 5e6
[[part]]
name = "wall"
material = "steel"
rect = {{ min = [-200, 150], max = [200, 153] }}
[[conductor]]
name = "L1"
rect = {{ min = [-85, -20], max = [-75, 20] }}
current = 630
[[conductor]]
name = "L2"
rect = {{ min = [-5, -20], max = [5, 20] }}
current = 630
phase = -120
[[conductor]]
name = "L3"
rect = {{ min = [75, -20], max = [85, 20] }}
current = 630
phase = 120
"#
    )
}

fn eddy_bench() {
    use fluxpick::build::Model;
    use fluxpick_solver::{solve_harmonic, HarmonicPlan, Problem};
    let dir = std::env::temp_dir().join(format!("fluxpick-bench-eddy-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("eddy.toml");
    std::fs::write(&path, eddy(5.8)).unwrap();
    let case = load_case(&path).expect("bench case");
    let t0 = Instant::now();
    let r = run(&case).expect("bench solve");
    let total = t0.elapsed().as_secs_f64();
    let s = &r.results.solve;
    println!(
        "{:<24} {:>9} unknowns {:>9} tri | mesh {:>6.2} asm {:>6.2} factor {:>6.2} solve {:>6.2} post {:>6.2} | total {:>6.2} s | {} GMRES iterations",
        "planar-eddy",
        r.results.mesh.unknowns,
        r.results.mesh.triangles,
        s.mesh_s,
        s.assemble_s,
        s.factor_s,
        s.solve_s,
        s.post_s,
        total,
        s.krylov_iterations.unwrap_or(0)
    );
    // Frequency sweep on the same mesh.
    let model = Model::new(&case).unwrap();
    let mesh = fluxpick_mesh::generate(&model.spec).unwrap();
    let problem = Problem {
        mesh: &mesh,
        formulation: model.formulation,
        order: model.order,
        materials: model.materials(&case).unwrap(),
        windings: model.windings(&case),
        background: None,
        dirichlet: model.dirichlet.clone(),
    };
    let t0 = Instant::now();
    let plan = HarmonicPlan::new(&problem).unwrap();
    let plan_s = t0.elapsed().as_secs_f64();
    let freqs: Vec<f64> = (0..10).map(|k| 20.0 * 1.3f64.powi(k)).collect();
    let mut iters = Vec::new();
    let mut times = Vec::new();
    for &f in &freqs {
        let t0 = Instant::now();
        let sol = plan.solve(f).unwrap();
        times.push(t0.elapsed().as_secs_f64());
        iters.push(sol.krylov_iterations);
    }
    println!(
        "frequency sweep {:.0}–{:.0} Hz, {} unknowns: plan (pattern, element matrices, symbolic analysis) {plan_s:.2} s once; per frequency {:?} s; GMRES iterations {iters:?}",
        freqs[0],
        freqs[9],
        plan.n_dofs(),
        times.iter().map(|t| (t * 100.0).round() / 100.0).collect::<Vec<_>>()
    );
    for k in [0, 9] {
        let t0 = Instant::now();
        solve_harmonic(&problem, freqs[k]).unwrap();
        let fresh = t0.elapsed().as_secs_f64();
        println!(
            "  at {:.0} Hz: fresh solve {fresh:.2} s vs {:.2} s from the plan (saves {:.0} %)",
            freqs[k],
            times[k],
            100.0 * (1.0 - times[k] / fresh)
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// 50 points of the rod L/D study (axisymmetric, default accuracy), in parallel.
fn sweep_bench() {
    let text = std::fs::read_to_string("cases/rod-aspect-study.toml").expect("example case");
    let text = text.replace(
        "values = [2, 3, 5, 8, 12, 20]",
        "from = 2\nto = 20\nsteps = 50",
    );
    let src = fluxpick::case::SourceInfo::new("rod-aspect-study (50 points)", text.clone());
    let raw = fluxpick::case::parse_str("rod-aspect-study", &text).expect("parse");
    let case = fluxpick::case::resolve(&raw, &src, &Default::default()).expect("resolve");
    let t0 = Instant::now();
    let rec = fluxpick::sweep::run_sweep(&raw, &src, &case, None, false);
    let secs = t0.elapsed().as_secs_f64();
    let failed = rec.points.iter().filter(|p| p.error.is_some()).count();
    println!(
        "sweep 50-point axisymmetric L/D study: {secs:.2} s, {:.2} points/s, {failed} failed (goal: under 30 s)",
        rec.points.len() as f64 / secs
    );
}

fn main() {
    let filter: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .collect();
    let want = |n: &str| filter.is_empty() || filter.iter().any(|f| n.contains(f.as_str()));
    let wire = 2e-7 * 100.0 / 0.1;
    if want("small") {
        bench("planar-200k", &planar(3.5, 0.9), "wire", wire);
        bench("axi-200k", &axi(2.0, 0.5), "spheroid", 17.6164);
    }
    if want("large") {
        bench("planar-1M", &planar(1.57, 0.4), "wire", wire);
        bench("axi-1M", &axi(0.9, 0.225), "spheroid", 17.6164);
    }
    if want("eddy") {
        eddy_bench();
    }
    if want("sweep") {
        sweep_bench();
    }
}
