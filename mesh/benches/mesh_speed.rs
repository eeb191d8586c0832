//! Meshing speed: a rod-pickup-like arrangement (core, coil window, a conductor) meshed to
//! about 200k and 1M triangles. Prints triangles, seconds, triangles per second and the
//! quality reached. Run with `cargo bench -p fluxpick-mesh --bench mesh_speed`.
//! Goal (issue 2): 1M quality triangles in under 5 s on the 2-core reference machine.

use fluxpick_mesh::{generate, MeshParams, MeshSpec, Outer, RegionInput, Shape};
use std::time::Instant;

fn spec(scale: f64) -> MeshSpec {
    let r = |min: [f64; 2], max: [f64; 2], h: f64| RegionInput {
        shape: Shape::Rect { min, max },
        max_edge: Some(h * scale),
        skin_edge: None,
    };
    MeshSpec {
        outer: Outer::Rect {
            min: [0.0, -300.0],
            max: [300.0, 300.0],
        },
        background_max_edge: 6.0 * scale,
        regions: vec![
            r([0.0, -100.0], [17.5, 100.0], 1.0),
            r([18.0, -90.0], [28.0, 90.0], 1.0),
            RegionInput {
                shape: Shape::Circle {
                    center: [0.0, -200.0],
                    radius: 10.0,
                },
                max_edge: Some(1.0 * scale),
                skin_edge: None,
            },
        ],
        clip_at_axis: true,
        exterior_image: false,
        params: MeshParams::default(),
    }
}

fn main() {
    println!(
        "{:>10} {:>10} {:>9} {:>12} {:>9} {:>9}",
        "target", "triangles", "seconds", "tri/s", "min_deg", "mean_deg"
    );
    for (target, scale) in [(200_000usize, 0.52), (1_000_000, 0.226)] {
        let s = spec(scale);
        let t = Instant::now();
        let m = generate(&s).expect("mesh");
        let secs = t.elapsed().as_secs_f64();
        let st = m.stats();
        println!(
            "{:>10} {:>10} {:>9.2} {:>12.0} {:>9.2} {:>9.2}",
            target,
            m.triangles.len(),
            secs,
            m.triangles.len() as f64 / secs,
            st.min_angle_deg,
            st.mean_min_angle_deg
        );
    }
}
