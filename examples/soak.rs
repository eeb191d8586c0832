//! Soak run: many solves of random valid cases (seeded), checking that none crashes, that
//! every figure of every result is finite, and that memory stays flat.
//!
//! ```sh
//! nice -n 10 cargo run --release --example soak -- [SOLVES] [SEED]   # default 500, 1
//! ```
//!
//! Cases come from two templates with random numbers in ranges that keep them valid (the
//! winding always fits its window): an axisymmetric ferrite rod pickup in a uniform axial
//! field, sometimes with a conductive washer (eddy currents) or a saturating B-H curve at
//! 0 Hz; and a planar rod pickup beside a feeder pair, solid or stranded, with a steel
//! plate sometimes. Every 50 solves it prints the resident memory now (VmRSS) and at its
//! peak (VmHWM): a leak shows as VmRSS growing from one report to the next. It exits with
//! status 1 on the first failed solve or non-finite figure. The cases are invented demo
//! data.

use std::time::Instant;

/// SplitMix64: a small seeded generator (no dependency, same numbers on every platform).
struct Rng(u64);

impl Rng {
    fn next(&mut self) -> u64 {
        self.0 = self.0.wrapping_add(0x9e37_79b9_7f4a_7c15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xbf58_476d_1ce4_e5b9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94d0_49bb_1331_11eb);
        z ^ (z >> 31)
    }
    /// Uniform in [lo, hi).
    fn range(&mut self, lo: f64, hi: f64) -> f64 {
        lo + (hi - lo) * (self.next() >> 11) as f64 / (1u64 << 53) as f64
    }
    fn pick<'a, T>(&mut self, v: &'a [T]) -> &'a T {
        &v[(self.next() % v.len() as u64) as usize]
    }
    fn chance(&mut self, p: f64) -> bool {
        self.range(0.0, 1.0) < p
    }
}

/// Turns that fill `frac` of a window of `area_mm2` with AWG 30 at a fill factor of 0.6
/// (0.3 mm enamelled diameter: common practice, no source).
fn turns(area_mm2: f64, frac: f64) -> f64 {
    (area_mm2 * 0.6 / (0.3 * 0.3) * frac).floor().max(10.0)
}

fn axisymmetric(r: &mut Rng) -> String {
    let freq = *r.pick(&[0.0, 50.0, 60.0]);
    let d = r.range(4.0, 25.0);
    let l = r.range(3.0 * d, 12.0 * d);
    let build = r.range(2.0, 8.0);
    let margin = r.range(0.05, 0.2) * l;
    let n = turns(build * (l - 2.0 * margin), r.range(0.1, 0.8));
    let half = r.range(1.5, 3.0) * l;
    let h = (d / 4.0).clamp(0.8, 3.0);
    let mu = r.range(200.0, 3000.0);
    let saturating = freq == 0.0 && r.chance(0.3);
    let material = if saturating {
        "bh_curve = \"mnzn-ferrite\"".to_string()
    } else {
        format!("mu_r = {mu}")
    };
    let boundary = r.pick(&["open", "fixed"]);
    let mut text = format!(
        r#"
[model]
title = "soak axisymmetric"
symmetry = "axisymmetric"
frequency = {freq}
length_unit = "mm"
[domain]
rect = {{ min = [0, {lo}], max = [{half}, {half}] }}
boundary = "{boundary}"
mesh_size = {air}
[background]
b = {b}
direction = [0, 1]
[materials.core]
{material}
[[part]]
name = "rod"
material = "core"
rect = {{ min = [0, {zl}], max = [{rr}, {zh}] }}
mesh_size = {h}
[[coil]]
name = "pickup"
turns = {n}
wire = "awg30"
fill_factor = 0.6
current = 0
rect = {{ min = [{c0}, {cl}], max = [{c1}, {ch}] }}
mesh_size = {h}
"#,
        lo = -half,
        air = half / 8.0,
        b = r.range(1e-7, 1e-4),
        zl = -l / 2.0,
        zh = l / 2.0,
        rr = d / 2.0,
        c0 = d / 2.0 + 0.5,
        c1 = d / 2.0 + 0.5 + build,
        cl = -l / 2.0 + margin,
        ch = l / 2.0 - margin,
    );
    if freq > 0.0 && r.chance(0.4) {
        // an aluminium washer below the rod: eddy currents
        let z = -l / 2.0 - r.range(2.0, 20.0);
        text += &format!(
            r#"
[materials.alu]
mu_r = 1
conductivity = 3.5e7
[[part]]
name = "washer"
material = "alu"
rect = {{ min = [0, {z0}], max = [{w}, {z}] }}
mesh_size = {h}
"#,
            z0 = z - 2.0,
            w = d * r.range(0.8, 2.5),
        );
    }
    text
}

fn planar(r: &mut Rng) -> String {
    let freq = *r.pick(&[0.0, 50.0, 60.0]);
    let i = r.range(50.0, 2000.0);
    let s = r.range(30.0, 120.0);
    let a = r.range(3.0, 0.3 * s);
    let x0 = r.range(s + 40.0, 300.0);
    let d = r.range(6.0, 20.0);
    let l = r.range(4.0 * d, 10.0 * d);
    let w = r.range(2.0, 6.0);
    let n = turns(w * (l - 20.0), r.range(0.1, 0.8));
    let kind = r.pick(&["solid", "stranded"]);
    let kind_line = if *kind == "solid" {
        "kind = \"solid\"\nmaterial = \"copper\""
    } else {
        "kind = \"stranded\""
    };
    let radius = 2.0 * (x0 + l);
    let mut text = format!(
        r#"
[model]
title = "soak planar"
symmetry = "planar"
frequency = {freq}
length_unit = "mm"
depth = {depth}
[domain]
circle = {{ center = [{cx}, 0], radius = {radius} }}
boundary = "open"
mesh_size = {air}
[materials.ferrite]
mu_r = {mu}
[[part]]
name = "rod"
material = "ferrite"
rect = {{ center = [{x0}, 0], size = [{l}, {d}] }}
mesh_size = {hr}
[[conductor]]
name = "go"
{kind_line}
circle = {{ center = [0, {sp}], radius = {a} }}
current = {i}
mesh_size = {hc}
[[conductor]]
name = "return"
{kind_line}
circle = {{ center = [0, {sm}], radius = {a} }}
current = {mi}
mesh_size = {hc}
[[coil]]
name = "pickup"
turns = {n}
wire = "awg30"
fill_factor = 0.6
sides = [
  {{ rect = {{ min = [{u0}, {v0}], max = [{u1}, {v1}] }}, sense = 1 }},
  {{ rect = {{ min = [{u0}, {mv1}], max = [{u1}, {mv0}] }}, sense = -1 }},
]
mesh_size = {hr}
"#,
        depth = r.range(100.0, 2000.0),
        cx = x0 / 2.0,
        air = radius / 8.0,
        mu = r.range(200.0, 3000.0),
        hr = (d / 4.0).clamp(1.0, 3.0),
        sp = s / 2.0,
        sm = -s / 2.0,
        mi = -i,
        hc = (a / 3.0).clamp(0.8, 3.0),
        u0 = x0 - l / 2.0 + 10.0,
        u1 = x0 + l / 2.0 - 10.0,
        v0 = d / 2.0 + 0.5,
        v1 = d / 2.0 + 0.5 + w,
        mv0 = -d / 2.0 - 0.5,
        mv1 = -d / 2.0 - 0.5 - w,
    );
    if r.chance(0.4) {
        // a steel plate behind the pair, conductive (eddy currents at 50/60 Hz)
        text += &format!(
            r#"
[materials.plate]
mu_r = {mu}
conductivity = 5e6
[[part]]
name = "plate"
material = "plate"
rect = {{ center = [{xp}, 0], size = [4, {hp}] }}
mesh_size = 1.5
"#,
            mu = r.range(50.0, 500.0),
            xp = -s / 2.0 - a - r.range(10.0, 40.0),
            hp = s + 2.0 * a + 40.0,
        );
    }
    text
}

/// (VmRSS, VmHWM) of this process in MB.
fn memory_mb() -> (f64, f64) {
    let status = std::fs::read_to_string("/proc/self/status").unwrap_or_default();
    let field = |name: &str| {
        status
            .lines()
            .find(|l| l.starts_with(name))
            .and_then(|l| l.split_whitespace().nth(1))
            .and_then(|v| v.parse::<f64>().ok())
            .map_or(f64::NAN, |kb| kb / 1024.0)
    };
    (field("VmRSS:"), field("VmHWM:"))
}

fn main() {
    let mut args = std::env::args().skip(1);
    let solves: usize = args.next().and_then(|a| a.parse().ok()).unwrap_or(500);
    let seed: u64 = args.next().and_then(|a| a.parse().ok()).unwrap_or(1);
    let mut rng = Rng(seed);
    let t0 = Instant::now();
    let (mut eddy, mut newton, mut triangles) = (0, 0, 0usize);
    println!("soak: {solves} solves, seed {seed}");
    println!(
        "{:>6} {:>9} {:>10} {:>10} {:>12}",
        "solves", "seconds", "RSS MB", "peak MB", "mean tris"
    );
    for k in 1..=solves {
        let text = if rng.chance(0.5) {
            axisymmetric(&mut rng)
        } else {
            planar(&mut rng)
        };
        let name = format!("soak-{seed}-{k}.toml");
        let case = match fluxpick::case::load_case_str(&name, &text) {
            Ok(c) => c,
            Err(e) => {
                eprintln!(
                    "solve {k}: the generated case is invalid:\n{}\n{text}",
                    e.render_plain()
                );
                std::process::exit(1);
            }
        };
        eddy += usize::from(fluxpick::pipeline::has_eddy_currents(&case));
        let run = match fluxpick::pipeline::run(&case, &Default::default()) {
            Ok(r) => r,
            Err(e) => {
                eprintln!("solve {k} failed: {e}\n{text}");
                std::process::exit(1);
            }
        };
        newton += usize::from(run.results.solve.newton_iterations.is_some());
        triangles += run.results.mesh.triangles;
        let bad = fluxpick::sanity::non_finite_numbers(&run.results);
        if !bad.is_empty() {
            eprintln!("solve {k}: non-finite figures {bad:?}\n{text}");
            std::process::exit(1);
        }
        drop(run);
        if k % 50 == 0 || k == solves {
            let (rss, peak) = memory_mb();
            println!(
                "{k:>6} {:>9.1} {rss:>10.1} {peak:>10.1} {:>12}",
                t0.elapsed().as_secs_f64(),
                triangles / k
            );
        }
    }
    println!(
        "done: {solves} solves ({eddy} with eddy currents, {newton} saturating Newton solves), no failure, every figure finite; mean {} triangles per solve, {:.1} s in all",
        triangles / solves,
        t0.elapsed().as_secs_f64()
    );
}
