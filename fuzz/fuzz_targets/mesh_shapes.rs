//! Fuzz target: the mesher on random arrangements of shapes.
//!
//! The input bytes are decoded (with `arbitrary`) into an outer boundary and up to eight
//! shapes on a coarse grid, so that shapes often touch, share edges, overlap, nest or
//! cross the axis, with a few raw floating-point values (NaN, infinities, huge and tiny
//! numbers). Sizes are kept such that a valid arrangement meshes in well under a second.
//! `generate` must return a mesh that passes `check_invariants`, or a `MeshError`; a
//! panic, a hang or running out of memory is a finding. `cargo fuzz fmt mesh_shapes FILE`
//! prints the `MeshSpec` an input decodes to.
#![no_main]

use arbitrary::{Arbitrary, Unstructured};
use fluxpick_mesh::{generate, Cuts, MeshParams, MeshSpec, Outer, RegionInput, Shape};
use libfuzzer_sys::fuzz_target;

/// One coordinate: mostly on a grid of 1 (so that shapes meet exactly), sometimes on a fine
/// grid of 1/256, rarely any f64 at all.
#[derive(Arbitrary, Debug, Clone, Copy)]
enum Coord {
    Grid(i8),
    Fine(i16),
    Raw(f64),
}

impl Coord {
    fn value(self) -> f64 {
        match self {
            Coord::Grid(v) => v as f64,
            Coord::Fine(v) => v as f64 / 256.0,
            Coord::Raw(v) => v,
        }
    }
}

/// A length: a positive grid value, or any f64.
#[derive(Arbitrary, Debug, Clone, Copy)]
enum Len {
    Grid(u8),
    Raw(f64),
}

impl Len {
    fn value(self) -> f64 {
        match self {
            Len::Grid(v) => v as f64 * 0.5,
            Len::Raw(v) => v,
        }
    }
}

/// An element size as a fraction of the domain's extent: 1/2 down to about 1/150.
#[derive(Arbitrary, Debug, Clone, Copy)]
enum Size {
    Fraction(u8),
    Raw(f64),
}

impl Size {
    fn value(self, extent: f64) -> f64 {
        match self {
            Size::Fraction(v) => extent / (2.0 + (v as f64) * 148.0 / 255.0),
            Size::Raw(v) => v,
        }
    }
}

#[derive(Arbitrary, Debug)]
enum ShapeIn {
    Rect(Coord, Coord, Coord, Coord),
    Circle(Coord, Coord, Len),
    Ellipse(Coord, Coord, Len, Len),
    Annulus(Coord, Coord, Len, Len),
    Polygon(Vec<(Coord, Coord)>),
}

#[derive(Arbitrary, Debug)]
struct RegionIn {
    shape: ShapeIn,
    max_edge: Option<Size>,
    skin_edge: Option<Size>,
}

#[derive(Arbitrary, Debug)]
enum OuterIn {
    Rect(Coord, Coord, Coord, Coord),
    Disk(Coord, Coord, Len, u8),
}

#[derive(Arbitrary, Debug)]
struct Raw {
    outer: OuterIn,
    background: Size,
    regions: Vec<RegionIn>,
    clip_at_axis: bool,
    exterior_image: bool,
    /// 20° to 33° (28° is the default)
    angle: u8,
    /// 1.1 to 2.0 (1.3 is the default)
    grading: u8,
}

const MAX_REGIONS: usize = 8;
const MAX_POLYGON_POINTS: usize = 12;

fn shape(s: &ShapeIn) -> Shape {
    let p = |x: Coord, y: Coord| [x.value(), y.value()];
    match s {
        ShapeIn::Rect(a, b, c, d) => Shape::Rect {
            min: p(*a, *b),
            max: p(*c, *d),
        },
        ShapeIn::Circle(x, y, r) => Shape::Circle {
            center: p(*x, *y),
            radius: r.value(),
        },
        ShapeIn::Ellipse(x, y, a, b) => Shape::Ellipse {
            center: p(*x, *y),
            semi_axes: [a.value(), b.value()],
        },
        ShapeIn::Annulus(x, y, a, b) => Shape::Annulus {
            center: p(*x, *y),
            inner: a.value(),
            outer: b.value(),
        },
        ShapeIn::Polygon(v) => Shape::Polygon(
            v.iter()
                .take(MAX_POLYGON_POINTS)
                .map(|(x, y)| p(*x, *y))
                .collect(),
        ),
    }
}

fn spec(raw: &Raw) -> MeshSpec {
    let (outer, extent) = match &raw.outer {
        OuterIn::Rect(a, b, c, d) => {
            let (min, max) = ([a.value(), b.value()], [c.value(), d.value()]);
            let extent = (max[0] - min[0]).abs().max((max[1] - min[1]).abs());
            (Outer::Rect { min, max }, extent)
        }
        OuterIn::Disk(x, y, r, cuts) => (
            Outer::Disk {
                center: [x.value(), y.value()],
                radius: r.value(),
                cuts: Cuts {
                    left: cuts & 1 != 0,
                    right: cuts & 2 != 0,
                    bottom: cuts & 4 != 0,
                    top: cuts & 8 != 0,
                },
            },
            2.0 * r.value().abs(),
        ),
    };
    MeshSpec {
        outer,
        background_max_edge: raw.background.value(extent),
        regions: raw
            .regions
            .iter()
            .take(MAX_REGIONS)
            .map(|r| RegionInput {
                shape: shape(&r.shape),
                max_edge: r.max_edge.map(|s| s.value(extent)),
                skin_edge: r.skin_edge.map(|s| s.value(extent)),
            })
            .collect(),
        clip_at_axis: raw.clip_at_axis,
        exterior_image: raw.exterior_image,
        params: MeshParams {
            min_angle_deg: 20.0 + 13.0 * raw.angle as f64 / 255.0,
            grading: 1.1 + 0.9 * raw.grading as f64 / 255.0,
            // about 400 MB of triangulation: within libFuzzer's 2 GB limit
            max_vertices: 2_000_000,
        },
    }
}

/// The fuzzer's input: decoded raw choices, shown as the spec they make.
struct Input(MeshSpec);

impl std::fmt::Debug for Input {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "{:#?}", self.0)
    }
}

impl<'a> Arbitrary<'a> for Input {
    fn arbitrary(u: &mut Unstructured<'a>) -> arbitrary::Result<Self> {
        Ok(Input(spec(&Raw::arbitrary(u)?)))
    }
}

fuzz_target!(|input: Input| {
    let spec = &input.0;
    if let Ok(mesh) = generate(spec) {
        if let Err(e) = mesh.check_invariants(spec) {
            panic!("mesh invariant broken: {e}");
        }
    }
});
