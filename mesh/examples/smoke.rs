use fluxpick_mesh::*;
use std::time::Instant;
fn main() {
    let spec = MeshSpec {
        outer: Outer::Rect {
            min: [0.0, -600.0],
            max: [600.0, 600.0],
        },
        background_max_edge: 40.0,
        regions: vec![
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
        ],
        clip_at_axis: true,
        exterior_image: false,
        params: MeshParams::default(),
    };
    let t = Instant::now();
    let m = generate(&spec).unwrap();
    println!("{:?} tris {}", t.elapsed(), m.triangles.len());
    let st = m.stats();
    println!(
        "min {:.2} mean {:.2}",
        st.min_angle_deg, st.mean_min_angle_deg
    );
    for r in &st.regions {
        println!("{:?}", r);
    }
    println!("{:?}", m.check_invariants(&spec));
    println!("{:?}", expected_region_areas(&spec));
    let spec2 = MeshSpec {
        outer: Outer::Disk {
            center: [0.0, 0.0],
            radius: 700.0,
            cuts: Cuts::default(),
        },
        exterior_image: true,
        ..spec
    };
    let m = generate(&spec2).unwrap();
    let st = m.stats();
    println!(
        "disk tris {} min {:.2} ident {}",
        st.triangles,
        st.min_angle_deg,
        m.identified.len()
    );
    for r in &st.regions {
        println!("{:?}", r);
    }
    println!("{:?}", m.check_invariants(&spec2));
}
