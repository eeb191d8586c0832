use fluxpick_mesh::*;
use std::time::Instant;
fn main() {
    let all = vec![
        RegionInput {
            shape: Shape::Rect {
                min: [0.0, -75.0],
                max: [12.5, 75.0],
            },
            max_edge: Some(1.5),
        },
        RegionInput {
            shape: Shape::Circle {
                center: [0.0, -250.0],
                radius: 8.0,
            },
            max_edge: Some(1.0),
        },
        RegionInput {
            shape: Shape::Rect {
                min: [13.0, -70.0],
                max: [20.5, 70.0],
            },
            max_edge: Some(1.0),
        },
    ];
    let which: Vec<usize> = std::env::args()
        .skip(1)
        .map(|a| a.parse().unwrap())
        .collect();
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [0.0, -600.0],
            max: [600.0, 600.0],
        },
        background_max_edge: 40.0,
        regions: which.iter().map(|&i| all[i].clone()).collect(),
        clip_at_axis: true,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let t = Instant::now();
    let m = generate(&spec);
    match m {
        Ok(m) => {
            let st = m.stats();
            println!(
                "{:?} tris {} min {:.2}",
                t.elapsed(),
                m.triangles.len(),
                st.min_angle_deg
            );
            println!("{:?}", m.check_invariants(&spec));
        }
        Err(e) => println!("{:?} {e:?}", t.elapsed()),
    }
}
