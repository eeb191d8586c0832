//! Manufactured-solution convergence tests (method of manufactured solutions, e.g. Roache,
//! "Verification and Validation in Computational Science and Engineering", 1998): a chosen
//! exact potential, its source computed by hand from the strong form, and the observed order
//! of the L2 errors of A and B fitted over four meshes. Theory for Lagrange order p:
//! ‖A − A_h‖ ~ h^(p+1), ‖B − B_h‖ ~ h^p (standard a-priori estimates, e.g. Ciarlet 1978).

use std::f64::consts::PI;

use fluxpick_mesh::{BoundaryEdge, Mesh, Side};
use fluxpick_solver::quadrature::DEGREE6;
use fluxpick_solver::{solve_static_with, Field, Formulation, Order, Problem, RegionMaterial};

/// Structured triangulation of [x0,x1]×[y0,y1] with n×n squares, alternating diagonals.
pub fn square_mesh(x0: f64, x1: f64, y0: f64, y1: f64, n: usize) -> Mesh {
    let mut points = Vec::new();
    for j in 0..=n {
        for i in 0..=n {
            points.push([
                x0 + (x1 - x0) * i as f64 / n as f64,
                y0 + (y1 - y0) * j as f64 / n as f64,
            ]);
        }
    }
    let id = |i: usize, j: usize| (j * (n + 1) + i) as u32;
    let mut triangles = Vec::new();
    for j in 0..n {
        for i in 0..n {
            let (a, b, c, d) = (id(i, j), id(i + 1, j), id(i + 1, j + 1), id(i, j + 1));
            if (i + j) % 2 == 0 {
                triangles.push([a, b, c]);
                triangles.push([a, c, d]);
            } else {
                triangles.push([a, b, d]);
                triangles.push([b, c, d]);
            }
        }
    }
    let mut boundary_edges = Vec::new();
    for k in 0..n {
        boundary_edges.push(BoundaryEdge {
            nodes: [id(k, 0), id(k + 1, 0)],
            side: Side::Bottom,
        });
        boundary_edges.push(BoundaryEdge {
            nodes: [id(n, k), id(n, k + 1)],
            side: Side::Right,
        });
        boundary_edges.push(BoundaryEdge {
            nodes: [id(k + 1, n), id(k, n)],
            side: Side::Top,
        });
        boundary_edges.push(BoundaryEdge {
            nodes: [id(0, k + 1), id(0, k)],
            side: Side::Left,
        });
    }
    let nt = triangles.len();
    Mesh {
        points,
        triangles,
        triangle_region: vec![0; nt],
        boundary_edges,
        region_count: 1,
        exterior: None,
        identified: vec![],
    }
}

/// L2 errors (weighted by w: 1 planar, 2πr axisymmetric) of A and B.
fn errors(f: &Field, a: &dyn Fn([f64; 2]) -> f64, b: &dyn Fn([f64; 2]) -> [f64; 2]) -> (f64, f64) {
    let (mut ea, mut eb) = (0.0, 0.0);
    for c in 0..f.disc.n_cells() {
        f.quadrature(c, &DEGREE6, |v, dv| {
            ea += (v.a - a(v.x)).powi(2) * dv;
            let be = b(v.x);
            eb += ((v.b[0] - be[0]).powi(2) + (v.b[1] - be[1]).powi(2)) * dv;
        });
    }
    (ea.sqrt(), eb.sqrt())
}

/// Least-squares slope of log(e) against log(h).
fn slope(h: &[f64], e: &[f64]) -> f64 {
    let n = h.len() as f64;
    let x: Vec<f64> = h.iter().map(|v| v.ln()).collect();
    let y: Vec<f64> = e.iter().map(|v| v.ln()).collect();
    let mx = x.iter().sum::<f64>() / n;
    let my = y.iter().sum::<f64>() / n;
    let sxy: f64 = x.iter().zip(&y).map(|(a, b)| (a - mx) * (b - my)).sum();
    let sxx: f64 = x.iter().map(|a| (a - mx) * (a - mx)).sum();
    sxy / sxx
}

struct Mms {
    formulation: Formulation,
    a: fn([f64; 2]) -> f64,
    b: fn([f64; 2]) -> [f64; 2],
    j: fn([f64; 2]) -> f64,
}

fn run(m: &Mms, order: Order, ns: &[usize]) -> (Vec<f64>, Vec<f64>, Vec<f64>) {
    let (mut hs, mut eas, mut ebs) = (vec![], vec![], vec![]);
    for &n in ns {
        let mesh = square_mesh(0.0, 1.0, 0.0, 1.0, n);
        let p = Problem {
            mesh: &mesh,
            formulation: m.formulation,
            order,
            materials: vec![RegionMaterial {
                nu: 1.0,
                sigma: 0.0,
            }],
            windings: vec![],
            background: None,
            dirichlet: vec![Side::Left, Side::Right, Side::Bottom, Side::Top],
        };
        let src = m.j;
        let sol = solve_static_with(&p, &[&src]).expect("solve");
        let (ea, eb) = errors(&sol.distributed[0], &m.a, &m.b);
        hs.push(1.0 / n as f64);
        eas.push(ea);
        ebs.push(eb);
    }
    (hs, eas, ebs)
}

/// Planar: A = sin(πx) sin(πy), ν = 1, J = −∇²A = 2π² A; B = (∂A/∂y, −∂A/∂x).
fn planar() -> Mms {
    Mms {
        formulation: Formulation::Planar,
        a: |x| (PI * x[0]).sin() * (PI * x[1]).sin(),
        b: |x| {
            [
                PI * (PI * x[0]).sin() * (PI * x[1]).cos(),
                -PI * (PI * x[0]).cos() * (PI * x[1]).sin(),
            ]
        },
        j: |x| 2.0 * PI * PI * (PI * x[0]).sin() * (PI * x[1]).sin(),
    }
}

/// Axisymmetric: A = r sin(πr) sin(πz) (zero on the axis and the box), ν = 1.
/// Strong form −∂z²A − ∂r[(1/r)∂r(rA)] = J gives J = sin(πz)[2π² r sin(πr) − 3π cos(πr)]
/// (derived by hand); B_r = −∂A/∂z, B_z = (1/r)∂(rA)/∂r = sin(πz)[2 sin(πr) + πr cos(πr)].
fn axisymmetric() -> Mms {
    Mms {
        formulation: Formulation::Axisymmetric,
        a: |x| x[0] * (PI * x[0]).sin() * (PI * x[1]).sin(),
        b: |x| {
            let (r, z) = (x[0], x[1]);
            [
                -r * (PI * r).sin() * PI * (PI * z).cos(),
                (PI * z).sin() * (2.0 * (PI * r).sin() + PI * r * (PI * r).cos()),
            ]
        },
        j: |x| {
            let (r, z) = (x[0], x[1]);
            (PI * z).sin() * (2.0 * PI * PI * r * (PI * r).sin() - 3.0 * PI * (PI * r).cos())
        },
    }
}

fn assert_orders(
    name: &str,
    m: &Mms,
    order: Order,
    p: f64,
    ns: &[usize],
    ceiling_a: f64,
    ceiling_b: f64,
) {
    let (h, ea, eb) = run(m, order, ns);
    let (sa, sb) = (slope(&h, &ea), slope(&h, &eb));
    eprintln!("{name}: errors A {ea:?} B {eb:?}, orders {sa:.3} {sb:.3}");
    assert!(
        (sa - (p + 1.0)).abs() <= 0.15,
        "{name}: order of A {sa}, expected {}",
        p + 1.0
    );
    assert!(
        (sb - p).abs() <= 0.15,
        "{name}: order of B {sb}, expected {p}"
    );
    assert!(
        ea[ea.len() - 1] < ceiling_a,
        "{name}: finest A error {}",
        ea[ea.len() - 1]
    );
    assert!(
        eb[eb.len() - 1] < ceiling_b,
        "{name}: finest B error {}",
        eb[eb.len() - 1]
    );
}

#[test]
fn planar_p1_converges_at_orders_2_and_1() {
    assert_orders(
        "planar P1",
        &planar(),
        Order::Linear,
        1.0,
        &[8, 16, 32, 64],
        1e-3,
        0.1,
    );
}

#[test]
fn planar_p2_converges_at_orders_3_and_2() {
    assert_orders(
        "planar P2",
        &planar(),
        Order::Quadratic,
        2.0,
        &[4, 8, 16, 32],
        1e-4,
        5e-3,
    );
}

#[test]
fn axisymmetric_p1_converges_at_orders_2_and_1() {
    assert_orders(
        "axi P1",
        &axisymmetric(),
        Order::Linear,
        1.0,
        &[8, 16, 32, 64],
        2e-3,
        0.2,
    );
}

#[test]
fn axisymmetric_p2_converges_at_orders_3_and_2() {
    assert_orders(
        "axi P2",
        &axisymmetric(),
        Order::Quadratic,
        2.0,
        &[4, 8, 16, 32],
        2e-4,
        1e-2,
    );
}

/// The A/r term is part of the axisymmetric curl: a uniform axial field B_z = B0 has
/// A = B0 r/2 (docs/physics.md, "Sources"). With the potential held at B0 r/2 on the box, the solution must
/// be exactly that and B_z exactly B0 everywhere (P1 and P2 both represent A ∝ r).
#[test]
fn axisymmetric_uniform_field_is_exact() {
    let mesh = square_mesh(0.0, 1.0, -0.5, 0.5, 6);
    for order in [Order::Linear, Order::Quadratic] {
        let p = Problem {
            mesh: &mesh,
            formulation: Formulation::Axisymmetric,
            order,
            materials: vec![RegionMaterial::from_mu_r(1.0, 0.0)],
            windings: vec![],
            background: Some([0.0, 1e-3]),
            dirichlet: vec![Side::Left, Side::Right, Side::Bottom, Side::Top],
        };
        let sol = fluxpick_solver::solve_static(&p).unwrap();
        let f = sol.background.unwrap();
        for x in [[0.3, 0.1], [0.05, -0.4], [0.9, 0.45], [0.0, 0.0]] {
            let v = f.at(x).unwrap();
            assert!(
                (v.b[1] - 1e-3).abs() < 1e-15 && v.b[0].abs() < 1e-15,
                "{x:?}: {:?}",
                v.b
            );
        }
    }
}
