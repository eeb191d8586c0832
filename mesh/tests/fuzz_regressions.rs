//! Inputs the fuzzer found (`fuzz/`, target `mesh_shapes`) that once hung, panicked or ran
//! out of memory, kept as the specs they decode to (`cargo fuzz fmt mesh_shapes FILE`). The
//! raw inputs are in `fuzz/regressions/mesh_shapes/`; `cargo fuzz run mesh_shapes FILE`
//! replays one. Each must now end in a mesh that passes the invariant check or in a typed
//! error, quickly.

use fluxpick_mesh::{generate, MeshError, MeshParams, MeshSpec, Outer};

fn outcome(spec: &MeshSpec) -> Result<(), MeshError> {
    let mesh = generate(spec)?;
    mesh.check_invariants(spec)
        .unwrap_or_else(|e| panic!("invariant broken: {e}"));
    Ok(())
}

/// timeout-bee3bf1d…: a 4.7e304 × 101 rectangle with a background size of 2.3e304. The
/// short sides vanish in the snap tolerance (1e-9 of the diagonal) and refinement towards
/// the angle limit ran for minutes. Now refused as too thin a domain.
#[test]
fn absurdly_thin_domain_is_refused() {
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [-4.66264172881018e304, -101.0],
            max: [0.0, 0.0],
        },
        background_max_edge: 2.33132086440509e304,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams {
            min_angle_deg: 20.0,
            grading: 1.1,
            ..MeshParams::default()
        },
    };
    assert!(matches!(outcome(&spec), Err(MeshError::BadDomain { .. })));
}

/// The aspect limit itself: 1e5 : 1 is accepted (and meshes), just past it is refused.
#[test]
fn domain_aspect_limit() {
    let spec = |len: f64| MeshSpec {
        outer: Outer::Rect {
            min: [0.0, 0.0],
            max: [len, 1.0],
        },
        background_max_edge: 1.0,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams::default(),
    };
    assert_eq!(outcome(&spec(1e3)), Ok(()));
    assert!(matches!(
        outcome(&spec(1.01 * fluxpick_mesh::MAX_DOMAIN_ASPECT)),
        Err(MeshError::BadDomain { .. })
    ));
}

/// crash-d50919d3…: a disk of radius 7.66e-322 (subnormal) at (-0.52, 4). The snap
/// tolerance underflowed to 0 and a bucket key overflowed (i64::MAX + 1, a panic with
/// overflow checks). Now refused as too small for its place; keys saturate besides.
#[test]
fn subnormal_domain_is_refused() {
    let spec = MeshSpec {
        outer: Outer::Disk {
            center: [-0.5234375, 4.0],
            radius: 7.66e-322,
            cuts: Default::default(),
        },
        background_max_edge: 7.66e-322,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams {
            min_angle_deg: 20.0,
            grading: 1.1,
            ..MeshParams::default()
        },
    };
    assert!(matches!(outcome(&spec), Err(MeshError::BadDomain { .. })));
    // a millimetre-sized disk 5 m from the origin still meshes (1e-4 of the distance is
    // 0.5 mm)
    let ok = MeshSpec {
        outer: Outer::Disk {
            center: [5.0, 0.0],
            radius: 1e-3,
            cuts: Default::default(),
        },
        background_max_edge: 2e-4,
        ..spec
    };
    assert_eq!(outcome(&ok), Ok(()));
}

/// oom-80a57382…: a quarter disk of radius 109.5 with a background size of 6.6e-322. Its
/// boundary was bisected towards 2^40 points per segment and the run passed 2 GB. Now
/// refused before any work: the estimate (infinite here) exceeds `max_vertices`.
#[test]
fn subnormal_element_size_is_refused_before_meshing() {
    let spec = MeshSpec {
        outer: Outer::Disk {
            center: [-8.0, -11.0],
            radius: 109.5,
            cuts: fluxpick_mesh::Cuts {
                left: false,
                right: true,
                bottom: true,
                top: false,
            },
        },
        background_max_edge: 6.6e-322,
        regions: vec![],
        clip_at_axis: false,
        exterior_image: false,
        params: MeshParams {
            min_angle_deg: 20.0,
            grading: 1.1,
            ..MeshParams::default()
        },
    };
    assert!(matches!(
        outcome(&spec),
        Err(MeshError::TooManyVertices { .. })
    ));
    // a finite but too fine size: refused with the estimate, not meshed
    let fine = MeshSpec {
        background_max_edge: 0.01,
        params: MeshParams {
            max_vertices: 1_000_000,
            ..MeshParams::default()
        },
        ..spec.clone()
    };
    match outcome(&fine) {
        Err(MeshError::TooManyVertices { estimate, limit }) => {
            assert_eq!(limit, 1_000_000);
            assert!(estimate > 1e8, "{estimate}");
        }
        other => panic!("{other:?}"),
    }
}
