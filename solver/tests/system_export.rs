//! The assembled static system as sprs matrices and its Matrix Market export, read back with
//! sprs's own reader (`sprs::io::read_matrix_market`, the reference here).

use fluxpick_mesh::{generate, Cuts, MeshParams, MeshSpec, Outer, RegionInput, Shape};
use fluxpick_solver::{
    static_system, Formulation, Order, Problem, RegionMaterial, SolverSetup, Spread, Winding,
    WindingRegion,
};
use sprs::CsMat;

/// A planar disk with an exterior image (glued unknowns), a steel rod, two windings and an
/// applied field.
fn mesh() -> fluxpick_mesh::Mesh {
    generate(&MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: 0.1,
            cuts: Cuts::default(),
        },
        background_max_edge: 0.02,
        regions: vec![
            RegionInput {
                shape: Shape::Circle {
                    center: [0.03, 0.0],
                    radius: 0.01,
                },
                max_edge: Some(0.004),
                skin_edge: None,
            },
            RegionInput {
                shape: Shape::Rect {
                    min: [-0.04, -0.01],
                    max: [-0.02, 0.01],
                },
                max_edge: Some(0.004),
                skin_edge: None,
            },
        ],
        clip_at_axis: false,
        exterior_image: true,
        params: MeshParams::default(),
    })
    .unwrap()
}

fn problem(mesh: &fluxpick_mesh::Mesh) -> Problem<'_> {
    let stranded = |region, turns| WindingRegion {
        region,
        turns,
        spread: Spread::Uniform,
    };
    Problem {
        mesh,
        formulation: Formulation::Planar,
        order: Order::Quadratic,
        materials: vec![
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(800.0, 0.0),
            RegionMaterial::from_mu_r(1.0, 0.0),
            RegionMaterial::from_mu_r(1.0, 0.0),
        ],
        windings: vec![
            Winding {
                name: "coil".into(),
                regions: vec![stranded(2, 40.0)],
            },
            Winding {
                name: "rod".into(),
                regions: vec![stranded(1, 1.0)],
            },
        ],
        background: Some([2e-4, -1e-4]),
        dirichlet: vec![],
    }
}

#[test]
fn matrix_market_export_reads_back_identically_with_sprs() {
    let mesh = mesh();
    let p = problem(&mesh);
    let system = static_system(&p).unwrap();
    let n = system.matrix.rows();
    assert!(n > 100, "{n} unknowns");
    assert_eq!(system.matrix.cols(), n);
    assert!(system.matrix.is_csc());
    assert_eq!(system.rhs.shape(), (n, 3));
    assert_eq!(system.columns, ["coil", "rod", "background"]);
    assert_eq!(system.unknown_points.len(), n);
    assert!(system
        .unknown_points
        .iter()
        .flatten()
        .all(|v| v.is_finite()));

    let dir = tempfile::tempdir().unwrap();
    let (kp, fp) = (dir.path().join("K.mtx"), dir.path().join("F.mtx"));
    system.write_matrix_market_files(&kp, &fp).unwrap();
    let k: CsMat<f64> = sprs::io::read_matrix_market::<f64, usize, _>(&kp)
        .unwrap()
        .to_csc();
    let f: CsMat<f64> = sprs::io::read_matrix_market::<f64, usize, _>(&fp)
        .unwrap()
        .to_csc();
    // same structure and every value bit for bit (Rust prints shortest round-trip decimals)
    assert_eq!(k.shape(), system.matrix.shape());
    assert_eq!(k.indptr(), system.matrix.indptr());
    assert_eq!(k.indices(), system.matrix.indices());
    let bits = |m: &CsMat<f64>| m.data().iter().map(|v| v.to_bits()).collect::<Vec<_>>();
    assert_eq!(bits(&k), bits(&system.matrix));
    assert_eq!(f.shape(), system.rhs.shape());
    assert_eq!(f.indptr(), system.rhs.indptr());
    assert_eq!(f.indices(), system.rhs.indices());
    assert_eq!(bits(&f), bits(&system.rhs));

    // the writer form writes the same text
    let (mut kb, mut fb) = (Vec::new(), Vec::new());
    system.write_matrix_market(&mut kb, &mut fb).unwrap();
    assert_eq!(kb, std::fs::read(&kp).unwrap());
    assert_eq!(fb, std::fs::read(&fp).unwrap());

    // a folder that does not exist is an error naming the file, not a panic
    let missing = dir.path().join("no-such-folder").join("K.mtx");
    let err = system.write_matrix_market_files(&missing, &fp).unwrap_err();
    assert!(err.to_string().contains("no-such-folder"), "{err}");
}

/// The exported system is the one the solver solves: with sprs's own product, K x = F for
/// faer's solution of every column (x read from the fields at the unknowns' nodes).
#[test]
fn exported_system_is_the_solved_one() {
    let mesh = mesh();
    let p = problem(&mesh);
    let setup = SolverSetup::new(&p).unwrap();
    let system = setup.static_system(&p.materials).unwrap();
    let sol = setup.solve_static(&p.materials).unwrap();
    let d = setup.discretisation();
    let n = setup.n_dofs();
    let image = d.exterior.as_ref().unwrap().region;
    for (j, name) in system.columns.iter().enumerate() {
        let field = match j {
            0 | 1 => &sol.unit[j],
            _ => sol.background.as_ref().unwrap(),
        };
        // the unknown is the reaction: the background field holds A_b + reaction on the
        // domain's nodes (the image's nodes carry the reaction alone)
        let mut x = vec![0.0; n];
        for c in 0..d.n_cells() {
            for &node in d.cell(c) {
                let dof = d.node_dof[node as usize];
                if dof == u32::MAX {
                    continue;
                }
                let mut v = field.a[node as usize];
                if j == 2 && d.cell_region[c] != image {
                    v -= fluxpick_solver::statics::background_potential(
                        d.formulation,
                        p.background.unwrap(),
                        d.points[node as usize],
                    );
                }
                x[dof as usize] = v;
            }
        }
        let mut kx = vec![0.0; n];
        for (i, v) in (&system.matrix * &as_csvec(&x)).iter() {
            kx[i] = *v;
        }
        let fcol: Vec<f64> = (0..n)
            .map(|i| *system.rhs.get(i, j).unwrap_or(&0.0))
            .collect();
        let num: f64 = kx
            .iter()
            .zip(&fcol)
            .map(|(a, b)| (a - b) * (a - b))
            .sum::<f64>()
            .sqrt();
        let den: f64 = fcol.iter().map(|v| v * v).sum::<f64>().sqrt();
        assert!(den > 0.0, "{name}: zero right-hand side");
        eprintln!("{name}: {n} unknowns, |Kx - F|/|F| = {:.2e}", num / den);
        // well below the direct solve's own acceptance (linsolve::RESIDUAL_TOLERANCE, 1e-8);
        // about 1e-12 was seen here
        assert!(num / den < 1e-10, "{name}: |Kx - F|/|F| = {:e}", num / den);
    }
}

/// x as an sprs sparse vector (for sprs's matrix-vector product).
fn as_csvec(x: &[f64]) -> sprs::CsVec<f64> {
    let idx: Vec<usize> = (0..x.len()).collect();
    sprs::CsVec::new(x.len(), idx, x.to_vec())
}
