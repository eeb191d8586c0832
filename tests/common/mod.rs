//! Shared helpers of the integration tests: run the real binary on a case, read its
//! results, and analytic reference formulas (each naming its source; values checked against
//! docs/references.md in `reference_formulas_match_published_values`).
#![allow(dead_code)]

pub mod vtu;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

pub const MU0: f64 = 4.0e-7 * std::f64::consts::PI;
pub const PI: f64 = std::f64::consts::PI;

pub fn bin() -> PathBuf {
    PathBuf::from(env!("CARGO_BIN_EXE_fluxpick"))
}

pub fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

/// Runs `fluxpick ARGS` and returns its output.
pub fn fluxpick(args: &[&str]) -> Output {
    Command::new(bin())
        .args(args)
        .output()
        .expect("run fluxpick")
}

/// Writes `text` as `name` in a fresh temporary folder; returns (folder, case path).
pub fn write_case(name: &str, text: &str) -> (tempfile::TempDir, PathBuf) {
    let dir = tempfile::tempdir().expect("tempdir");
    let p = dir.path().join(name);
    std::fs::write(&p, text).expect("write case");
    (dir, p)
}

/// Solves a case file into `out` and returns results.json parsed.
pub fn solve(case: &Path, out: &Path) -> serde_json::Value {
    let o = fluxpick(&[
        "solve",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(
        o.status.success(),
        "solve {} failed: {}\n{}",
        case.display(),
        String::from_utf8_lossy(&o.stderr),
        String::from_utf8_lossy(&o.stdout)
    );
    let text = std::fs::read_to_string(out.join("results.json")).expect("results.json");
    serde_json::from_str(&text).expect("valid json")
}

/// Solves case text in a temporary folder.
pub fn solve_text(text: &str) -> serde_json::Value {
    let (dir, p) = write_case("case.toml", text);
    solve(&p, &dir.path().join("out"))
}

/// Value at a dotted path (numeric indices allowed).
pub fn get(v: &serde_json::Value, path: &str) -> f64 {
    let mut cur = v;
    for k in path.split('.') {
        cur = match k.parse::<usize>() {
            Ok(i) if cur.is_array() => &cur[i],
            _ => &cur[k],
        };
    }
    cur.as_f64()
        .unwrap_or_else(|| panic!("{path} is not a number: {cur}"))
}

pub fn assert_rel(name: &str, got: f64, want: f64, tol: f64) {
    let e = (got - want).abs() / want.abs();
    eprintln!("{name}: got {got:.7e}, reference {want:.7e}, relative error {e:.2e}");
    assert!(
        e <= tol,
        "{name}: got {got}, reference {want}, relative error {e:.3e} > {tol}"
    );
}

/// Complete elliptic integrals K(m), E(m) with parameter m = k² by the arithmetic-geometric
/// mean (Abramowitz & Stegun 17.6).
pub fn ellipk_e(m: f64) -> (f64, f64) {
    let mut a = 1.0;
    let mut b = (1.0 - m).sqrt();
    let mut c = m.sqrt();
    let mut sum = 0.5 * c * c;
    let mut p = 0.5;
    for _ in 0..60 {
        let an = 0.5 * (a + b);
        let bn = (a * b).sqrt();
        c = 0.5 * (a - b);
        a = an;
        b = bn;
        p *= 2.0;
        sum += p * c * c;
        if c.abs() < 1e-17 {
            break;
        }
    }
    let k = PI / (2.0 * a);
    (k, k * (1.0 - sum))
}

/// Vector potential A_φ of a circular loop of radius a carrying I at (ρ, z) (Smythe 1950;
/// Jackson, Classical Electrodynamics, eq. 5.37).
pub fn loop_a_phi(a: f64, i: f64, rho: f64, z: f64) -> f64 {
    let m = 4.0 * a * rho / ((a + rho).powi(2) + z * z);
    let k = m.sqrt();
    let (kk, ee) = ellipk_e(m);
    MU0 * i / (PI * k) * (a / rho).sqrt() * ((1.0 - m / 2.0) * kk - ee)
}

/// Mutual inductance of coaxial loops a, b at axial distance d (Maxwell, Treatise §701).
pub fn maxwell_mutual(a: f64, b: f64, d: f64) -> f64 {
    let m = 4.0 * a * b / ((a + b).powi(2) + d * d);
    let k = m.sqrt();
    let (kk, ee) = ellipk_e(m);
    MU0 * (a * b).sqrt() * ((2.0 / k - k) * kk - 2.0 / k * ee)
}

/// Nagaoka's coefficient of a single-layer solenoid of radius a and length l (Nagaoka 1909),
/// k² = 4a²/(4a² + l²): k_N = 4/(3π k') [(k'²/k²)(K − E) + E − k].
pub fn nagaoka(a: f64, l: f64) -> f64 {
    let m = 4.0 * a * a / (4.0 * a * a + l * l);
    let k = m.sqrt();
    let kp = (1.0 - m).sqrt();
    let (kk, ee) = ellipk_e(m);
    4.0 / (3.0 * PI * kp) * ((1.0 - m) / m * (kk - ee) + ee - k)
}

/// Demagnetising factor of a prolate spheroid, aspect m = c/a > 1 (Osborn, Phys. Rev. 67,
/// 351, 1945).
pub fn osborn_prolate(m: f64) -> f64 {
    let s = (m * m - 1.0).sqrt();
    (m / s * (m + s).ln() - 1.0) / (m * m - 1.0)
}
