//! Same-mesh runner for the side-by-side with the peer pipeline (`scripts/bench-vs-peer`).
//!
//! Reads a mesh saved by the peer (`peer.py --save-mesh FILE`: plain text, `nodes N`, N lines
//! `x y` in metres, `triangles M`, M lines `i j k region`, 0-based), solves the peer's problem
//! on exactly that mesh with fluxpick's library crates at element order 1 or 2 (order 2 adds
//! a node at every edge midpoint: the same straight-sided triangles), times the stages and
//! prints one JSON line on standard output: timings, unknowns, peak memory after each stage,
//! the figure, its analytic reference and the relative error. Progress goes to standard
//! error.
//!
//! ```text
//! cargo run --release --example peer_mesh -- --case C --mesh c.mesh --order 2
//! cargo run --release --example peer_mesh -- --case BS --reference-only
//! ```
//!
//! Problems (SI; the peer's region attributes 0 far air, 1 near air, 2 conductor, 3 bar or
//! core; every boundary edge of the mesh is held, as the peer holds it):
//!
//! * `A0` planar: a round conductor (r = 5 mm) with 1 A at the origin, A = 0 on the square of
//!   half-width 2 m, the "bar" region 200 × 35 mm centred at (0, 254 mm) is air. Figure
//!   `Bmag_avg_bar`: the mean |B| over the bar (an integral, so its error falls smoothly
//!   with the mesh size, unlike a point value). Reference: the exact field of the truncated
//!   problem (sine series below) averaged over the bar. Also in `info`: the peer's primary
//!   figure `B_ctr`, |B| at the bar's centre node as the area-weighted mean over the cells
//!   sharing the node of each cell's B there (for first order the peer's own estimator).
//! * `A` the same with the bar's μr = 2000, the same figure; it has no analytic reference
//!   (null in the output).
//! * `BS` axisymmetric: a prolate spheroid, semi-axes 20 mm (radial) and 100 mm (axial),
//!   μr 1000, in a uniform axial 1 µT, A_φ = B0 r/2 on the mesh's box (r ≤ 1 m, |z| ≤ 1 m;
//!   4 m with the peer's `--box 4`). Figure `Bz_mid_avg` = 2 A_φ(a, 0)/(a B0), the mean B_z
//!   over the mid-plane disk of the spheroid over B0 (the peer's figure). Reference: the
//!   uniform interior field of the spheroid in open space; the box's truncation is part of
//!   the error, as in the peer's table (about 4.7e-4 relative for the 1 m box and 7e-6 for
//!   4 m by docs/references.md's estimate (2/3)(a²c/R³)·B_in/B0).
//! * `C` planar at 60 Hz: a solid aluminium wire, r = 20 mm, σ = 3.5e7 S/m, a total current
//!   imposed, A = 0 on the circle of 200 mm. Figure `Rac_Rdc`: loss / (I² R_dc) with
//!   R_dc = 1/(σ S), S the area of the mesh's conductor polygon. Reference: the Bessel
//!   solution (independent of the outer radius: the field inside depends on the total
//!   current only).

use std::f64::consts::{PI, TAU};
use std::path::{Path, PathBuf};
use std::time::Instant;

use clap::Parser;
use fluxpick_mesh::{renumber_hilbert, BoundaryEdge, Mesh, Side};
use fluxpick_solver::element::Geometry;
use fluxpick_solver::{
    solve_static, Field, Formulation, HarmonicPlan, Order, Problem, RegionMaterial, Spread,
    Winding, WindingRegion, MU0,
};
use num_complex::Complex64 as C64;
use serde_json::{json, Value};

#[derive(Parser, Debug)]
#[command(about = "Solve the peer's problem on the peer's saved mesh with fluxpick")]
struct Args {
    /// The peer's case: A0, A, BS or C.
    #[arg(long)]
    case: String,
    /// The mesh file written by `peer.py --save-mesh`.
    #[arg(long, required_unless_present = "reference_only")]
    mesh: Option<PathBuf>,
    /// Element order, 1 or 2.
    #[arg(long, default_value_t = 1)]
    order: u8,
    /// Print only the case's reference value (as JSON) and exit.
    #[arg(long)]
    reference_only: bool,
}

// ---------------------------------------------------------------------------------------------
// the peer's geometry and materials (peer.py, README), SI units
// ---------------------------------------------------------------------------------------------
const A_HALF_WIDTH: f64 = 2.0; // square box half-width (A, A0)
const A_BAR_CENTRE: f64 = 0.254; // bar centre height (A, A0)
const A_BAR_WIDTH: f64 = 0.200;
const A_BAR_THICKNESS: f64 = 0.035;
const A_CURRENT: f64 = 1.0; // A
const BS_A: f64 = 0.020; // spheroid radial semi-axis
const BS_C: f64 = 0.100; // spheroid axial semi-axis
const BS_MU_R: f64 = 1000.0;
const BS_B0: f64 = 1e-6; // T
const C_RADIUS: f64 = 0.020;
const C_SIGMA: f64 = 3.5e7;
const C_FREQ: f64 = 60.0;
const C_CURRENT: f64 = 1000.0; // A rms (the ratio does not depend on it: linear problem)

const REGION_CONDUCTOR: u32 = 2;
const REGION_BAR: u32 = 3;

// ---------------------------------------------------------------------------------------------
// analytic references
// ---------------------------------------------------------------------------------------------

/// B at (x, y), y > 0, of a line current I at the origin inside the square [−L, L]² with
/// A = 0 on its sides (the exact solution of the peer's truncated problem A0).
///
/// Dirichlet Green's function of the square by a sine series in x (separation of variables;
/// e.g. Morse & Feshbach, "Methods of Theoretical Physics", 1953, ch. 7 [memory: chapter]):
/// with X = x + L, a = 2L, k = nπ/a and the source at X0 = L, y0 = 0,
/// A = μ0 I (2/a) Σ_n sin(kX) sin(kX0) G_n(y), G_n = sinh(k(y0 + L)) sinh(k(L − y)) /
/// (k sinh(2kL)) for y > y0; B = (∂A/∂y, −∂A/∂x). Only odd n remain (sin(kX0) = ±1), and
/// each term is written with decaying exponentials, e^{−k(y − y0)} times factors near 1.
/// For L → ∞ the sum tends to μ0 I/(2π r) (Ampère): checked in the tests below, with the
/// peer's own value from a lattice of image currents.
fn box_line_current_field(current: f64, half_width: f64, x: f64, y: f64) -> [f64; 2] {
    let a = 2.0 * half_width;
    let l = half_width;
    let big_x = x + l;
    let (mut bx, mut by) = (0.0, 0.0);
    let mut n = 1u32;
    loop {
        let k = f64::from(n) * PI / a;
        let sign = if n % 4 == 1 { 1.0 } else { -1.0 }; // sin(nπ/2), n odd
        let (p, q, s) = (k * l, k * (l - y), 2.0 * k * l);
        let decay = (-k * y).exp() / (2.0 * (1.0 - (-2.0 * s).exp())) * (1.0 - (-2.0 * p).exp());
        let ch = decay * (1.0 + (-2.0 * q).exp()); // sinh p cosh q / sinh s
        let sh = decay * (1.0 - (-2.0 * q).exp()); // sinh p sinh q / sinh s
        bx -= sign * (k * big_x).sin() * ch;
        by -= sign * (k * big_x).cos() * sh;
        if ch < 1e-18 * (bx.abs() + by.abs()) {
            break;
        }
        n += 2;
    }
    let c = 2.0 * MU0 * current / a;
    [c * bx, c * by]
}

/// Gauss–Legendre nodes and weights on [−1, 1] (Newton on P_n; Golub & Welsch give the same
/// rule by eigenvalues).
fn gauss_legendre(n: usize) -> Vec<(f64, f64)> {
    (0..n)
        .map(|i| {
            let mut x = (PI * (i as f64 + 0.75) / (n as f64 + 0.5)).cos();
            let mut dp = 1.0;
            for _ in 0..100 {
                let (mut p0, mut p1) = (1.0, x);
                for k in 2..=n {
                    let p2 = ((2 * k - 1) as f64 * x * p1 - (k - 1) as f64 * p0) / k as f64;
                    p0 = p1;
                    p1 = p2;
                }
                dp = n as f64 * (x * p1 - p0) / (x * x - 1.0);
                let dx = p1 / dp;
                x -= dx;
                if dx.abs() < 1e-16 {
                    break;
                }
            }
            (x, 2.0 / ((1.0 - x * x) * dp * dp))
        })
        .collect()
}

/// Mean |B| over the peer's bar (200 × 35 mm centred at (0, 254 mm)) for A0, by a 24 × 24
/// Gauss–Legendre rule over the exact field (smooth there: the source is 236 mm away).
fn box_bar_mean_b() -> f64 {
    let g = gauss_legendre(24);
    let mut sum = 0.0;
    for &(u, wu) in &g {
        for &(v, wv) in &g {
            let b = box_line_current_field(
                A_CURRENT,
                A_HALF_WIDTH,
                0.5 * A_BAR_WIDTH * u,
                A_BAR_CENTRE + 0.5 * A_BAR_THICKNESS * v,
            );
            sum += wu * wv / 4.0 * b[0].hypot(b[1]);
        }
    }
    sum
}

/// Demagnetising factor of a prolate spheroid along its long axis, m = c/a > 1:
/// N = [m/√(m²−1) · ln(m + √(m²−1)) − 1]/(m² − 1) (Osborn, "Demagnetizing factors of the
/// general ellipsoid", Phys. Rev. 67, 351 (1945); Stoner, Phil. Mag. 36, 803 (1945)).
/// docs/references.md tabulates N = 0.0558210 for m = 5.
fn prolate_demag(c: f64, a: f64) -> f64 {
    let m = c / a;
    let s = (m * m - 1.0).sqrt();
    (m / s * (m + s).ln() - 1.0) / (m * m - 1.0)
}

/// B_in/B0 of a linear spheroid in a uniform axial field: μr/(1 + N(μr − 1)) (the interior
/// field of an ellipsoid is uniform; same sources). 17.6164 for m = 5, μr = 1000.
fn spheroid_ratio() -> f64 {
    let n = prolate_demag(BS_C, BS_A);
    BS_MU_R / (1.0 + n * (BS_MU_R - 1.0))
}

/// J_n(z) by its power series Σ (−z²/4)^m (z/2)^n / (m!(m+n)!), adequate for |z| ≲ 10.
fn bessel_j(n: u32, z: C64) -> C64 {
    let h = z / 2.0;
    let mut term = if n == 0 { C64::new(1.0, 0.0) } else { h };
    let mut sum = term;
    for m in 1..300 {
        term = term * (-h * h) / (m as f64 * (m + n) as f64);
        sum += term;
        if term.norm() < 1e-18 * sum.norm() {
            break;
        }
    }
    sum
}

/// R_ac/R_dc of a round solid wire: Re[(ka/2) J0(ka)/J1(ka)], k = (1 − j)/δ, δ = √(2/(ωμ0σ))
/// (e^{jωt} phasors). The internal impedance per metre Z = k J0(ka)/(2πaσ J1(ka)) of the
/// Bessel solution: Ramo, Whinnery & Van Duzer, "Fields and Waves in Communication
/// Electronics", 3rd ed. (1994), §5.13 [memory: section number]; the same formula in
/// Schelkunoff, "The electromagnetic theory of coaxial transmission lines and cylindrical
/// shields", Bell Syst. Tech. J. 13, 532 (1934). Low-frequency check: 1 + (a/δ)⁴/48 − …
fn wire_ratio(a: f64, sigma: f64, f: f64) -> f64 {
    let delta = (2.0 / (TAU * f * MU0 * sigma)).sqrt();
    let ka = C64::new(1.0, -1.0) * (a / delta);
    (ka / 2.0 * bessel_j(0, ka) / bessel_j(1, ka)).re
}

/// (figure name, reference value or None, where the reference comes from).
fn reference(case: &str) -> Result<(&'static str, Option<f64>, &'static str), String> {
    Ok(match case {
        "A0" => (
            "Bmag_avg_bar",
            Some(box_bar_mean_b()),
            "line current in a square with A = 0 (sine series), mean |B| over the bar",
        ),
        "A" => ("Bmag_avg_bar", None, "none (no closed form)"),
        "BS" => (
            "Bz_mid_avg",
            Some(spheroid_ratio()),
            "prolate spheroid B_in/B0 (Osborn 1945)",
        ),
        "C" => (
            "Rac_Rdc",
            Some(wire_ratio(C_RADIUS, C_SIGMA, C_FREQ)),
            "round wire Bessel solution (Ramo, Whinnery & Van Duzer §5.13)",
        ),
        other => return Err(format!("unknown case `{other}` (expected A0, A, BS or C)")),
    })
}

// ---------------------------------------------------------------------------------------------
// the peer's mesh file
// ---------------------------------------------------------------------------------------------

struct PeerMesh {
    points: Vec<[f64; 2]>,
    triangles: Vec<[u32; 3]>,
    region: Vec<u32>,
}

/// Reads the header line `KEY COUNT`.
fn header<'a>(
    lines: &mut impl Iterator<Item = (usize, &'a str)>,
    key: &str,
    path: &Path,
) -> Result<usize, String> {
    let (n, l) = lines
        .next()
        .ok_or_else(|| format!("{}: ends before `{key}`", path.display()))?;
    let mut w = l.split_whitespace();
    match (w.next(), w.next().map(str::parse::<usize>), w.next()) {
        (Some(k), Some(Ok(v)), None) if k == key => Ok(v),
        _ => Err(format!(
            "{}:{}: expected `{key} COUNT`, found `{l}`",
            path.display(),
            n + 1
        )),
    }
}

fn read_peer_mesh(path: &Path) -> Result<PeerMesh, String> {
    let text = std::fs::read_to_string(path)
        .map_err(|e| format!("{}: cannot read: {e}", path.display()))?;
    let mut lines = text.lines().enumerate();
    let at = |n: usize, what: &str| format!("{}:{}: {what}", path.display(), n + 1);
    let nn = header(&mut lines, "nodes", path)?;
    let mut points = Vec::with_capacity(nn);
    for _ in 0..nn {
        let (n, l) = lines
            .next()
            .ok_or_else(|| format!("{}: ends inside the node list", path.display()))?;
        let v: Vec<f64> = l
            .split_whitespace()
            .map(str::parse::<f64>)
            .collect::<Result<_, _>>()
            .map_err(|e| at(n, &format!("node `{l}`: {e}")))?;
        if v.len() != 2 || !v.iter().all(|x| x.is_finite()) {
            return Err(at(
                n,
                &format!("node `{l}`: expected two finite numbers `x y`"),
            ));
        }
        points.push([v[0], v[1]]);
    }
    let nt = header(&mut lines, "triangles", path)?;
    let mut triangles = Vec::with_capacity(nt);
    let mut region = Vec::with_capacity(nt);
    for _ in 0..nt {
        let (n, l) = lines
            .next()
            .ok_or_else(|| format!("{}: ends inside the triangle list", path.display()))?;
        let v: Vec<u32> = l
            .split_whitespace()
            .map(str::parse::<u32>)
            .collect::<Result<_, _>>()
            .map_err(|e| at(n, &format!("triangle `{l}`: {e}")))?;
        if v.len() != 4 {
            return Err(at(n, &format!("triangle `{l}`: expected `i j k region`")));
        }
        let mut t = [v[0], v[1], v[2]];
        if t.iter().any(|&i| i as usize >= nn) {
            return Err(at(n, &format!("triangle `{l}`: node index out of 0..{nn}")));
        }
        let p = t.map(|i| points[i as usize]);
        let det =
            (p[1][0] - p[0][0]) * (p[2][1] - p[0][1]) - (p[2][0] - p[0][0]) * (p[1][1] - p[0][1]);
        if det == 0.0 || !det.is_finite() {
            return Err(at(n, &format!("triangle `{l}` has no area")));
        }
        if det < 0.0 {
            t.swap(1, 2); // counter-clockwise, as the solver expects
        }
        triangles.push(t);
        region.push(v[3]);
    }
    if let Some((n, l)) = lines.find(|(_, l)| !l.trim().is_empty()) {
        return Err(at(
            n,
            &format!("unexpected text after the triangles: `{l}`"),
        ));
    }
    Ok(PeerMesh {
        points,
        triangles,
        region,
    })
}

/// The fluxpick mesh of the peer's triangles: every edge of a single triangle is a
/// boundary edge (tagged `Side::Arc`, all held), region ids are the peer's attributes.
fn to_mesh(p: PeerMesh) -> Mesh {
    let key = |a: u32, b: u32| (u64::from(a.min(b)) << 32) | u64::from(a.max(b));
    let mut edges: Vec<(u64, [u32; 2])> = p
        .triangles
        .iter()
        .flat_map(|t| [(t[0], t[1]), (t[1], t[2]), (t[2], t[0])].map(|(a, b)| (key(a, b), [a, b])))
        .collect();
    edges.sort_unstable_by_key(|e| e.0);
    let mut boundary_edges = Vec::new();
    let mut i = 0;
    while i < edges.len() {
        let mut j = i + 1;
        while j < edges.len() && edges[j].0 == edges[i].0 {
            j += 1;
        }
        if j - i == 1 {
            boundary_edges.push(BoundaryEdge {
                nodes: edges[i].1,
                side: Side::Arc,
            });
        }
        i = j;
    }
    let region_count = p.region.iter().copied().max().unwrap_or(0) as usize + 1;
    Mesh {
        points: p.points,
        triangles: p.triangles,
        triangle_region: p.region,
        boundary_edges,
        region_count,
        exterior: None,
        identified: vec![],
    }
}

fn node_at(mesh: &Mesh, x: [f64; 2]) -> Result<usize, String> {
    let (i, d) = mesh
        .points
        .iter()
        .enumerate()
        .map(|(i, p)| (i, (p[0] - x[0]).hypot(p[1] - x[1])))
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .ok_or("empty mesh")?;
    if d > 1e-9 {
        return Err(format!(
            "no mesh node at ({}, {}) (nearest {d:.3e} m away)",
            x[0], x[1]
        ));
    }
    Ok(i)
}

/// Area-weighted mean over the cells sharing vertex `node` of each cell's B at that vertex.
fn patch_b(field: &Field, node: usize) -> [f64; 2] {
    let d = &*field.disc;
    let (mut bx, mut by, mut area) = (0.0, 0.0, 0.0);
    for c in 0..d.n_cells() {
        let cell = d.cell(c);
        if let Some(k) = cell[..3].iter().position(|&v| v as usize == node) {
            let mut l = [0.0; 3];
            l[k] = 1.0;
            let g = Geometry::new(d.vertices(c));
            let b = field.at_cell(c, l).b;
            bx += b[0] * g.area;
            by += b[1] * g.area;
            area += g.area;
        }
    }
    [bx / area, by / area]
}

fn secs(t: Instant) -> f64 {
    t.elapsed().as_secs_f64()
}

/// Peak resident set size of this process so far (VmHWM, Linux), in MB; None elsewhere.
fn peak_rss_mb() -> Option<f64> {
    let s = std::fs::read_to_string("/proc/self/status").ok()?;
    let kb: f64 = s
        .lines()
        .find(|l| l.starts_with("VmHWM:"))?
        .split_whitespace()
        .nth(1)?
        .parse()
        .ok()?;
    Some(kb / 1024.0)
}

fn run(args: &Args) -> Result<Value, String> {
    let case = args.case.as_str();
    let (figure, refv, ref_source) = reference(case)?;
    if args.reference_only {
        return Ok(json!({"case": case, "figure": figure, "reference": refv,
                         "reference_source": ref_source}));
    }
    let order = match args.order {
        1 => Order::Linear,
        2 => Order::Quadratic,
        o => return Err(format!("--order {o}: expected 1 or 2")),
    };
    let path = args.mesh.as_ref().expect("clap requires --mesh");
    let t_all = Instant::now();
    let t0 = Instant::now();
    let raw = read_peer_mesh(path)?;
    let read_s = secs(t0);
    let rss_read = peak_rss_mb();
    let triangles = raw.triangles.len();
    let t0 = Instant::now();
    let mut mesh = to_mesh(raw);
    renumber_hilbert(&mut mesh);
    let renumber_s = secs(t0);
    eprintln!(
        "peer_mesh {case}: {} nodes, {triangles} triangles, {} boundary edges; read {read_s:.2} s",
        mesh.points.len(),
        mesh.boundary_edges.len()
    );
    let needed = 1 + REGION_BAR as usize;
    if case != "C" && mesh.region_count < needed {
        return Err(format!(
            "{}: case {case} needs region attribute {REGION_BAR}, the mesh has 0..{}",
            path.display(),
            mesh.region_count - 1
        ));
    }
    let air = RegionMaterial::from_mu_r(1.0, 0.0);
    let mut materials = vec![air; mesh.region_count];
    let formulation = if case == "BS" {
        Formulation::Axisymmetric
    } else {
        Formulation::Planar
    };
    let mut windings = vec![];
    let mut background = None;
    match case {
        "A" => materials[REGION_BAR as usize] = RegionMaterial::from_mu_r(2000.0, 0.0),
        "BS" => {
            materials[REGION_BAR as usize] = RegionMaterial::from_mu_r(BS_MU_R, 0.0);
            background = Some([0.0, BS_B0]);
        }
        "C" => {
            if mesh.region_count <= REGION_CONDUCTOR as usize {
                return Err(format!(
                    "{}: case C needs region attribute {REGION_CONDUCTOR}",
                    path.display()
                ));
            }
            materials[REGION_CONDUCTOR as usize] = RegionMaterial::from_mu_r(1.0, C_SIGMA);
        }
        _ => {}
    }
    if case != "BS" {
        windings.push(Winding {
            name: "wire".into(),
            regions: vec![WindingRegion {
                region: REGION_CONDUCTOR,
                turns: 1.0,
                spread: if case == "C" {
                    Spread::Solid
                } else {
                    Spread::Uniform
                },
            }],
        });
    }
    let problem = Problem {
        mesh: &mesh,
        formulation,
        order,
        materials,
        windings,
        background,
        dirichlet: vec![Side::Arc],
    };

    let mut out = json!({
        "tool": "fluxpick", "runner": "peer_mesh", "case": case, "order": args.order,
        "mesh": path.display().to_string(), "triangles": triangles,
        "threads": rayon::current_num_threads(),
    });
    let rss_solve;
    let (value, times, extra) = if case == "C" {
        let t0 = Instant::now();
        let plan = HarmonicPlan::new(&problem).map_err(|e| e.to_string())?;
        let plan_s = secs(t0);
        eprintln!(
            "peer_mesh C: {} unknowns, plan (assembly, symbolic analysis) {plan_s:.2} s; solving",
            plan.n_dofs()
        );
        let t0 = Instant::now();
        let sol = plan.solve(C_FREQ).map_err(|e| e.to_string())?;
        let solve_wall = secs(t0);
        rss_solve = peak_rss_mb();
        let t = sol.timings;
        eprintln!(
            "peer_mesh C: factor {:.2} s, GMRES {:.2} s ({} iterations over {} solves)",
            t.factor, t.solve, sol.krylov_iterations, sol.krylov_solves
        );
        let t0 = Instant::now();
        let d = &sol.disc;
        let area: f64 = (0..d.n_cells())
            .filter(|&c| d.cell_region[c] == REGION_CONDUCTOR)
            .map(|c| Geometry::new(d.vertices(c)).area)
            .sum();
        // loss per metre at 1 A rms is R_ac per metre; the problem is linear in the current
        let loss = sol.region_losses(&sol.unit[0], &sol.unit_psi[0])[REGION_CONDUCTOR as usize];
        let ratio = loss * C_SIGMA * area;
        let post_s = secs(t0);
        let assemble = t.setup + t.assemble;
        let factor = t.symbolic + t.factor;
        let other = (plan_s + solve_wall) - (assemble + factor + t.solve);
        out["unknowns"] = json!(plan.n_dofs());
        out["nnz"] = json!(sol.nnz);
        (
            ratio,
            (assemble, factor, t.solve, other, post_s),
            json!({"krylov_iterations": sol.krylov_iterations, "krylov_solves": sol.krylov_solves,
                   "max_residual": sol.max_residual, "current_a": C_CURRENT,
                   "conductor_area_rel_err": area / (PI * C_RADIUS * C_RADIUS) - 1.0}),
        )
    } else {
        let t0 = Instant::now();
        let sol = solve_static(&problem).map_err(|e| e.to_string())?;
        let wall = secs(t0);
        rss_solve = peak_rss_mb();
        let t = sol.timings;
        let t0 = Instant::now();
        let mut extra = json!({"max_residual": sol.max_residual});
        let value = match case {
            "A0" | "A" => {
                let f = &sol.unit[0];
                let (mut s, mut area) = (0.0, 0.0);
                for c in (0..f.disc.n_cells()).filter(|&c| f.disc.cell_region[c] == REGION_BAR) {
                    f.quadrature(c, &fluxpick_solver::quadrature::DEGREE5, |v, dv| {
                        s += v.b[0].hypot(v.b[1]) * dv;
                        area += dv;
                    });
                }
                // also the peer's B_ctr estimator at the bar's centre node, with its reference
                let node = node_at(&mesh, [0.0, A_BAR_CENTRE])?;
                let b = patch_b(f, node);
                extra["B_ctr"] = json!(b[0].hypot(b[1]) * A_CURRENT);
                if case == "A0" {
                    let e = box_line_current_field(A_CURRENT, A_HALF_WIDTH, 0.0, A_BAR_CENTRE);
                    extra["B_ctr_reference"] = json!(e[0].hypot(e[1]));
                }
                s / area * A_CURRENT
            }
            _ => {
                let node = node_at(&mesh, [BS_A, 0.0])?;
                let f = sol.background.as_ref().ok_or("no background field")?;
                2.0 * f.a[node] / BS_A / BS_B0
            }
        };
        let post_s = secs(t0);
        let assemble = t.setup + t.assemble;
        let factor = t.symbolic + t.factor;
        let other = wall - (assemble + factor + t.solve);
        out["unknowns"] = json!(sol.disc.n_dofs);
        out["nnz"] = json!(sol.nnz);
        (value, (assemble, factor, t.solve, other, post_s), extra)
    };
    let (assemble, factor, solve, other, post) = times;
    out["times"] = json!({
        "read": read_s, "renumber": renumber_s, "assemble": assemble, "factor": factor,
        "solve": solve, "solver_other": other, "post": post, "total": secs(t_all),
    });
    // peak memory after each stage (monotone: the stage that raised it shows)
    out["peak_rss_mb"] = json!({"read": rss_read, "solve": rss_solve, "post": peak_rss_mb()});
    out["figure"] = json!(figure);
    out["value"] = json!(value);
    out["reference"] = json!(refv);
    out["reference_source"] = json!(ref_source);
    out["rel_err"] = json!(refv.map(|r| (value - r) / r.abs()));
    out["info"] = extra;
    Ok(out)
}

fn main() {
    let args = Args::parse();
    match run(&args) {
        Ok(v) => println!("{v}"),
        Err(e) => {
            eprintln!("error: {e}");
            std::process::exit(1);
        }
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// The sine series agrees with the peer's image-lattice sums (peer.py
    /// `air_field_rect_box`, M = 60, printed as `reference_box`: B_ctr 7.874620901637907e-7 T,
    /// Bmag_avg_bar 7.694863267286445e-7 T) and, for a large box, with Ampère's μ0 I/(2π r)
    /// off the axis too.
    #[test]
    fn box_reference() {
        let b = box_line_current_field(1.0, 2.0, 0.0, 0.254);
        assert!(b[1].abs() < 1e-12 * b[0].abs(), "{b:?}");
        assert!((-b[0] / 7.874620901637907e-7 - 1.0).abs() < 1e-7, "{b:?}");
        let m = box_bar_mean_b();
        assert!((m / 7.694863267286445e-7 - 1.0).abs() < 1e-7, "{m:e}");
        let (x, y): (f64, f64) = (0.07, 0.25);
        let r = x.hypot(y);
        let big = box_line_current_field(1.0, 300.0, x, y);
        let open = [-MU0 / TAU * y / (r * r), MU0 / TAU * x / (r * r)];
        for k in 0..2 {
            assert!(
                (big[k] - open[k]).abs() < 1e-5 * open[0].hypot(open[1]),
                "{big:?} {open:?}"
            );
        }
    }

    /// The Gauss–Legendre rule integrates x^46 exactly (24 points: degree 47).
    #[test]
    fn gauss_rule() {
        let g = gauss_legendre(24);
        let s: f64 = g.iter().map(|(x, w)| w * x.powi(46)).sum();
        assert!((s - 2.0 / 47.0).abs() < 1e-14, "{s}");
        assert!((g.iter().map(|p| p.1).sum::<f64>() - 2.0).abs() < 1e-14);
    }

    /// Osborn's N for m = 5 and the ratio at μr 1000 (docs/references.md's table).
    #[test]
    fn spheroid_reference() {
        assert!((prolate_demag(0.1, 0.02) - 0.0558210).abs() < 5e-8);
        assert!((spheroid_ratio() - 17.6164).abs() < 1e-4);
    }

    /// The wire ratio against its low-frequency expansion 1 + (a/δ)⁴/48 (a/δ small) and
    /// the peer's scipy value 1.1941780351152338 (peer.py `wire_exact`, scipy.special.jv).
    #[test]
    fn wire_reference() {
        let r = wire_ratio(C_RADIUS, C_SIGMA, C_FREQ);
        assert!((r - 1.1941780351152338).abs() < 1e-12, "{r}");
        let low = wire_ratio(0.001, C_SIGMA, C_FREQ);
        let delta = (2.0 / (TAU * C_FREQ * MU0 * C_SIGMA)).sqrt();
        let x = 0.001 / delta;
        assert!((low - (1.0 + x.powi(4) / 48.0)).abs() < 1e-9);
    }
}
