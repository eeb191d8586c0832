//! Solve-speed benchmark: the standard cases at about 50k, 200k and 1M unknowns (and 2M
//! with `2m`), each solved in a child process of its own so that its peak memory is its
//! own:
//!
//! * `planar`: a round wire in open air (Ampère: B = μ0 I/(2πr) at r = 100 mm);
//! * `axi`: a prolate spheroid of aspect 5, μr 1000, in a uniform axial field (Osborn
//!   1945: B_in/B0 = 17.6164);
//! * `eddy`: a solid aluminium wire, r = 20 mm, 1000 A at 60 Hz (R_ac/R_dc from the Bessel
//!   solution, Ramo, Whinnery & Van Duzer §5.13).
//!
//! Each row: seconds for mesh, assemble, factor, solve, post-process and write (results.json
//! and field.vtu), the total, unknowns per second end to end, peak resident memory and the
//! figure's relative error against its reference. Then the fitted exponents of time and
//! memory against unknowns per case (the scaling table of README's performance section).
//!
//! Also `wall` (three bars beside a steel wall at 50 Hz, ~256k unknowns, and a frequency
//! sweep with the symbolic analysis kept) and `sweep` (a 50-point axisymmetric sweep).
//!
//! `cargo bench --bench solve_speed` (all but 2m), or with filters:
//! `cargo bench --bench solve_speed -- 200k eddy` (rows whose name contains every word).

use std::time::Instant;

use fluxpick::case::load_case;
use fluxpick::pipeline::run;

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

/// Solid aluminium wire, r = 20 mm, σ = 3.5e7 S/m, 1000 A rms at 60 Hz (δ = 10.98 mm).
fn wire60(h_air: f64, h_wire: f64) -> String {
    format!(
        r#"
[model]
title = "bench 60 Hz wire"
symmetry = "planar"
frequency = 60
[domain]
circle = {{ center = [0, 0], radius = 250 }}
boundary = "open"
mesh_size = {h_air}
[materials.alu]
conductivity = 3.5e7
[[conductor]]
name = "wire"
material = "alu"
circle = {{ center = [0, 0], radius = 20 }}
current = 1000
kind = "solid"
mesh_size = {h_wire}
skin_mesh_size = {h_wire}
"#
    )
}

/// R_ac/R_dc of a round wire: Re[(ka/2) J0(ka)/J1(ka)] with k = (1 − j)/δ (e^{jωt}
/// phasors; Ramo, Whinnery & Van Duzer, "Fields and Waves in Communication Electronics",
/// §5.13). J0 and J1 by their power series (solver/tests/eddy.rs checks the same series
/// against mpmath).
fn wire_ac_dc_ratio(a: f64, sigma: f64, f: f64) -> f64 {
    use num_complex::Complex64 as C;
    let bessel_j = |n: u32, z: C| -> C {
        let h = z / 2.0;
        let mut term = if n == 0 { C::new(1.0, 0.0) } else { h };
        let mut sum = term;
        for m in 1..200 {
            term = term * (-h * h) / (m as f64 * (m + n) as f64);
            sum += term;
            if term.norm() < 1e-18 * sum.norm() {
                break;
            }
        }
        sum
    };
    let delta = (1.0 / (std::f64::consts::PI * f * fluxpick_solver::MU0 * sigma)).sqrt();
    let ka = C::new(1.0, -1.0) * (a / delta);
    (ka / 2.0 * bessel_j(0, ka) / bessel_j(1, ka)).re
}

/// The standard cases: (name, case text, figure, reference) per size.
fn standard(size: &str) -> Vec<(String, String, &'static str, f64)> {
    // (planar h_air, h_wire), (axi h_air, h_core), (eddy h_air, h_wire)
    let (p, a, e) = match size {
        "50k" => ((7.0, 1.8), (4.0, 1.0), (9.0, 0.9)),
        "200k" => ((3.5, 0.9), (2.0, 0.5), (4.2, 0.42)),
        "1m" => ((1.57, 0.4), (0.9, 0.225), (1.8, 0.184)),
        "2m" => ((1.1, 0.28), (0.63, 0.16), (1.26, 0.126)),
        _ => unreachable!("size"),
    };
    vec![
        (
            format!("planar-{size}"),
            planar(p.0, p.1),
            "wire",
            2e-7 * 100.0 / 0.1,
        ),
        (format!("axi-{size}"), axi(a.0, a.1), "spheroid", 17.6164),
        (
            format!("eddy-{size}"),
            wire60(e.0, e.1),
            "rac",
            wire_ac_dc_ratio(0.02, 3.5e7, 60.0),
        ),
    ]
}

/// Peak resident set size of this process (VmHWM), in MB.
fn peak_rss_mb() -> f64 {
    std::fs::read_to_string("/proc/self/status")
        .ok()
        .and_then(|s| {
            s.lines()
                .find(|l| l.starts_with("VmHWM:"))
                .and_then(|l| l.split_whitespace().nth(1)?.parse::<f64>().ok())
        })
        .map(|kb| kb / 1024.0)
        .unwrap_or(f64::NAN)
}

/// One standard case in this process: prints one machine-readable line
/// `ROW name unknowns triangles mesh asm factor solve post write total rss error`.
fn one(name: &str) {
    let size = name.rsplit('-').next().unwrap();
    let (name, text, figure, reference) = standard(size)
        .into_iter()
        .find(|c| c.0 == name)
        .expect("known case");
    let dir = std::env::temp_dir().join(format!("fluxpick-bench-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join(format!("{name}.toml"));
    std::fs::write(&path, &text).unwrap();
    let case = load_case(&path).expect("bench case");
    let t0 = Instant::now();
    let r = run(&case, &Default::default()).expect("bench solve");
    let t1 = Instant::now();
    fluxpick::output::write_results_json(&dir.join("results.json"), &r.results).unwrap();
    fluxpick::output::write_field_vtu(&dir.join("field.vtu"), &case, &r).unwrap();
    let write = t1.elapsed().as_secs_f64();
    let total = t0.elapsed().as_secs_f64();
    let s = &r.results.solve;
    let value = match figure {
        "wire" => {
            let b = r.results.probes["p"].b_t[0].expect("probe inside");
            b[0].hypot(b[1])
        }
        "rac" => r.results.conductors["wire"]
            .ac_dc_ratio
            .value
            .expect("a ratio at 60 Hz"),
        _ => r.results.parts["spheroid"].b_mean_t.value / 1e-3,
    };
    println!(
        "ROW {name} {} {} {} {} {} {} {} {write} {total} {} {}",
        r.results.mesh.unknowns,
        r.results.mesh.triangles,
        s.mesh_s,
        s.assemble_s,
        s.factor_s,
        s.solve_s,
        s.post_s,
        peak_rss_mb(),
        (value - reference).abs() / reference
    );
    let _ = std::fs::remove_dir_all(&dir);
}

struct Row {
    name: String,
    unknowns: f64,
    total: f64,
    rss: f64,
}

/// Runs `one(name)` in a child process and prints its row.
fn child(name: &str) -> Option<Row> {
    let exe = std::env::current_exe().unwrap();
    let out = std::process::Command::new(exe)
        .env("FLUXPICK_BENCH_ONE", name)
        .output()
        .expect("run the benchmark child");
    let text = String::from_utf8_lossy(&out.stdout);
    let Some(line) = text.lines().find(|l| l.starts_with("ROW ")) else {
        println!(
            "{name:<12} failed: {}",
            String::from_utf8_lossy(&out.stderr).trim()
        );
        return None;
    };
    let f: Vec<&str> = line.split_whitespace().collect();
    let x = |i: usize| f[i].parse::<f64>().unwrap();
    println!(
        "{:<12} {:>9} {:>9} | {:>6.2} {:>6.2} {:>6.2} {:>6.2} {:>6.2} {:>6.2} | {:>6.2} | {:>9.0} | {:>7.0} | {:>8.1e}",
        f[1],
        f[2],
        f[3],
        x(4),
        x(5),
        x(6),
        x(7),
        x(8),
        x(9),
        x(10),
        x(2) / x(10),
        x(11),
        x(12)
    );
    Some(Row {
        name: f[1].to_string(),
        unknowns: x(2),
        total: x(10),
        rss: x(11),
    })
}

/// Least-squares slope of log y against log x.
fn exponent(pts: &[(f64, f64)]) -> f64 {
    let n = pts.len() as f64;
    let (mx, my) = pts.iter().fold((0.0, 0.0), |(a, b), (x, y)| {
        (a + x.ln() / n, b + y.ln() / n)
    });
    let (num, den) = pts.iter().fold((0.0, 0.0), |(a, b), (x, y)| {
        let dx = x.ln() - mx;
        (a + dx * (y.ln() - my), b + dx * dx)
    });
    num / den
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
    let r = run(&case, &Default::default()).expect("bench solve");
    let total = t0.elapsed().as_secs_f64();
    let s = &r.results.solve;
    println!(
        "{:<24} {:>9} unknowns {:>9} tri | mesh {:>6.2} asm {:>6.2} factor {:>6.2} solve {:>6.2} post {:>6.2} | total {:>6.2} s | {} GMRES iterations",
        "wall-eddy",
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
        materials: model.materials(&case),
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
    let rec = fluxpick::sweep::run_sweep(&raw, &src, &case, None, &Default::default(), &|| ());
    let secs = t0.elapsed().as_secs_f64();
    let failed = rec.points.iter().filter(|p| p.error.is_some()).count();
    println!(
        "sweep 50-point axisymmetric L/D study: {secs:.2} s, {:.2} points/s, {failed} failed (goal: under 30 s)",
        rec.points.len() as f64 / secs
    );
}

/// The planar benchmark's second-order space and pattern at mesh sizes `h` (air, wire), with
/// a symmetric diagonally dominant matrix on it (positive definite on any pattern).
fn planar_pattern(
    h: (f64, f64),
) -> (
    fluxpick_solver::Discretisation,
    fluxpick_solver::assembly::Pattern,
    Vec<f64>,
) {
    use fluxpick_solver::assembly::Pattern;
    use fluxpick_solver::{Discretisation, Formulation, Order};
    let dir = std::env::temp_dir().join(format!("fluxpick-bench-pattern-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let path = dir.join("p.toml");
    std::fs::write(&path, planar(h.0, h.1)).unwrap();
    let case = load_case(&path).expect("bench case");
    let _ = std::fs::remove_dir_all(&dir);
    let model = fluxpick::build::Model::new(&case).unwrap();
    let mesh = fluxpick_mesh::generate(&model.spec).unwrap();
    let d = Discretisation::new(
        &mesh,
        Formulation::Planar,
        Order::Quadratic,
        &model.dirichlet,
    );
    let p = Pattern::new(&d);
    let mut values = vec![0.0; p.nnz()];
    for j in 0..p.n {
        let off = (p.col_ptr[j + 1] - p.col_ptr[j] - 1) as f64;
        for k in p.col_ptr[j]..p.col_ptr[j + 1] {
            values[k] = if p.row_idx[k] == j { off + 0.5 } else { -1.0 };
        }
    }
    (d, p, values)
}

/// Triangular-solve cost of a block of right-hand sides against the same number of single
/// columns, on the factor of a positive definite matrix on a ~250k-unknown second-order
/// pattern.
fn block_bench() {
    use fluxpick_solver::linsolve::CholeskyAnalysis;
    let (_, p, values) = planar_pattern((3.2, 0.8));
    let a = CholeskyAnalysis::new(&p).unwrap();
    let t0 = Instant::now();
    let f = a.factor(&p, &values).unwrap();
    let factor = t0.elapsed().as_secs_f64();
    for k in [1, 2, 4, 8, 16] {
        let rhs: Vec<Vec<f64>> = (0..k).map(|c| vec![1.0 + c as f64; p.n]).collect();
        let t0 = Instant::now();
        for b in &rhs {
            f.solve(std::slice::from_ref(b));
        }
        let single = t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        f.solve(&rhs);
        let block = t0.elapsed().as_secs_f64();
        println!(
            "block solve, {} unknowns (factor {factor:.2} s): {k:>2} columns one by one {single:.3} s, as one block {block:.3} s ({:.1}x)",
            p.n,
            single / block
        );
    }
}

/// The two fill-reducing orderings on the 1M-unknown planar pattern: seconds for the ordering
/// with the symbolic analysis, values in the factor, seconds for the numeric factorisation.
fn order_bench() {
    use fluxpick_solver::linsolve::CholeskyAnalysis;
    use fluxpick_solver::ordering::nested_dissection;
    let (d, p, values) = planar_pattern((1.57, 0.4));
    for name in ["minimum degree", "nested dissection"] {
        let t0 = Instant::now();
        let a = if name == "minimum degree" {
            CholeskyAnalysis::new(&p).unwrap()
        } else {
            CholeskyAnalysis::with_ordering(&p, nested_dissection(&d).unwrap()).unwrap()
        };
        let symbolic = t0.elapsed().as_secs_f64();
        let t0 = Instant::now();
        let f = a.factor(&p, &values).unwrap();
        let numeric = t0.elapsed().as_secs_f64();
        drop(f);
        println!(
            "ordering, {} unknowns: {name:<17} ordering+symbolic {symbolic:.2} s, factor values {:.1}M, numeric {numeric:.2} s",
            p.n,
            a.factor_nnz() as f64 / 1e6
        );
    }
}

/// The prolate spheroid solved to a relative accuracy of 0.1 % by the adaptive loop and by
/// uniform refinement (`model.refinement`), from the same coarse start.
fn adapt_bench() {
    // Osborn (1945): demagnetising factor of a prolate spheroid of aspect m
    let m: f64 = 5.0;
    let s = (m * m - 1.0).sqrt();
    let n = (m / s * (m + s).ln() - 1.0) / (m * m - 1.0);
    let want = 1000.0 / (1.0 + 999.0 * n);
    let dir = std::env::temp_dir().join(format!("fluxpick-bench-adapt-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    for mode in ["adaptive", "uniform"] {
        let text = axi(20.0, 5.0).replacen(
            "[model]\n",
            &format!("[model]\naccuracy = 1e-3\nrefinement = \"{mode}\"\n"),
            1,
        );
        let path = dir.join(format!("{mode}.toml"));
        std::fs::write(&path, text).unwrap();
        let case = load_case(&path).expect("bench case");
        let t0 = Instant::now();
        let r = run(&case, &Default::default()).expect("bench solve");
        let secs = t0.elapsed().as_secs_f64();
        let acc = r.results.accuracy.as_ref().expect("accuracy report");
        for (k, p) in acc.refinement.iter().enumerate() {
            let f = p.figures["parts.spheroid.b_mean_t"] / 1e-3;
            println!(
                "spheroid to 0.1 %, {mode:<8} pass {}: {:>8} unknowns {:>6.2} s, estimate {:.2e}, true error {:.2e}",
                k + 1,
                p.unknowns,
                p.seconds,
                p.estimates.get("parts.spheroid.b_mean_t").copied().unwrap_or(f64::NAN),
                (f - want).abs() / want
            );
        }
        let last = acc.refinement.last().unwrap();
        let f = last.figures["parts.spheroid.b_mean_t"] / 1e-3;
        println!(
            "spheroid to 0.1 %, {mode:<8}: {} ({}), {} unknowns in the last pass, {secs:.2} s in all, true error {:.2e}",
            if acc.reached { "reached" } else { "not reached" },
            acc.stopped,
            last.unknowns,
            (f - want).abs() / want
        );
    }
    let _ = std::fs::remove_dir_all(&dir);
}

fn main() {
    if let Ok(name) = std::env::var("FLUXPICK_BENCH_ONE") {
        one(&name);
        return;
    }
    let filter: Vec<String> = std::env::args()
        .skip(1)
        .filter(|a| !a.starts_with("--"))
        .map(|a| a.to_lowercase())
        .collect();
    let want = |n: &str| filter.is_empty() || filter.iter().all(|f| n.contains(f.as_str()));
    let sizes = if filter.iter().any(|f| f == "2m") {
        vec!["50k", "200k", "1m", "2m"]
    } else {
        vec!["50k", "200k", "1m"]
    };
    let mut names = Vec::new();
    for size in &sizes {
        for (name, ..) in standard(size) {
            if filter.is_empty()
                || filter
                    .iter()
                    .all(|f| name.contains(f.as_str()) || f == "2m")
            {
                names.push(name);
            }
        }
    }
    if !names.is_empty() {
        println!(
            "machine: {} threads; seconds per stage; peak RSS in MB; error of the figure vs its reference",
            rayon::current_num_threads()
        );
        println!(
            "{:<12} {:>9} {:>9} | {:>6} {:>6} {:>6} {:>6} {:>6} {:>6} | {:>6} | {:>9} | {:>7} | {:>8}",
            "case", "unknowns", "triangles", "mesh", "asm", "factor", "solve", "post", "write",
            "total", "unknowns/s", "RSS MB", "error"
        );
    }
    let rows: Vec<Row> = names.iter().filter_map(|n| child(n)).collect();
    for kind in ["planar", "axi", "eddy"] {
        let pts: Vec<&Row> = rows.iter().filter(|r| r.name.starts_with(kind)).collect();
        if pts.len() >= 2 {
            let t: Vec<(f64, f64)> = pts.iter().map(|r| (r.unknowns, r.total)).collect();
            let m: Vec<(f64, f64)> = pts.iter().map(|r| (r.unknowns, r.rss)).collect();
            println!(
                "{kind}: time ∝ n^{:.2}, memory ∝ n^{:.2} over {:.0}k to {:.0}k unknowns",
                exponent(&t),
                exponent(&m),
                pts[0].unknowns / 1e3,
                pts[pts.len() - 1].unknowns / 1e3
            );
        }
    }
    if want("wall") {
        eddy_bench();
    }
    if want("sweep") {
        sweep_bench();
    }
    if want("block") {
        block_bench();
    }
    if want("adapt") {
        adapt_bench();
    }
    if want("order") {
        order_bench();
    }
}
