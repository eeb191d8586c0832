//! Warnings for case files that are legal but probably not what the author meant.
//!
//! `fluxpick check` and `fluxpick solve` print them on standard error; they never stop a run.
//! Each warning names the entry (by the same key path as errors, `part[1]`) and says what to
//! do about it. The thresholds are rules of thumb (common practice, no source). The starters
//! pass without warnings. Four of the example cases in `cases/` draw the open-boundary
//! warning, a conservative rule: enlarging rod-uniform-field's box from 300 to 700 mm
//! changed its EMF by 4e-6 (relative) when measured.

use serde::Serialize;

use crate::case::{BoundaryKind, Case, DomainSide, MaterialId, Shape, Symmetry};
use fluxpick_mesh::BBox;

/// A part counts as a magnetic core (for the "far from any source" check) from this relative
/// permeability up, or when it has a B-H curve.
pub const CORE_MU_R: f64 = 10.0;
/// A core is "far" from the field's sources when the gap to the nearest one exceeds this many
/// times the larger of the core's and the source's size: its field there is then a small
/// fraction of the field near the source (a line current's field falls as 1/r, a pair's as
/// 1/r²). Rule of thumb, no source.
pub const FAR_FACTOR: f64 = 10.0;
/// An open boundary should be at least this many times the largest part's size away from
/// every part, conductor and coil (the issue's rule; common practice for truncated domains,
/// no source). The exterior image makes the boundary exact, but it is meshed at the air's
/// mesh size, so fields that still vary fast at the boundary are resolved coarsely.
pub const OPEN_BOUNDARY_FACTOR: f64 = 3.0;

/// One warning.
#[derive(Clone, Debug, PartialEq, Serialize)]
pub struct Warning {
    /// Key path of the entry concerned (`part[1]`, `domain`).
    pub key: String,
    /// What looks wrong.
    pub message: String,
    /// What to do about it.
    pub help: String,
}

impl std::fmt::Display for Warning {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(f, "`{}`: {}\n  help: {}", self.key, self.message, self.help)
    }
}

/// Name of the file's length unit, for messages.
fn unit_name(case: &Case) -> &'static str {
    let u = case.length_unit_m;
    if (u - 1e-3).abs() < 1e-12 {
        "mm"
    } else if (u - 1e-2).abs() < 1e-12 {
        "cm"
    } else if (u - 0.0254).abs() < 1e-12 {
        "in"
    } else {
        "m"
    }
}

/// A length in metres as a number in the file's unit (4 significant digits).
fn value(case: &Case, m: f64) -> String {
    let v = m / case.length_unit_m;
    let digits = (3 - v.abs().max(1e-300).log10().floor() as i32).clamp(0, 12) as usize;
    let s = format!("{v:.digits$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

/// A length in metres shown in the file's unit.
fn show(case: &Case, m: f64) -> String {
    format!("{} {}", value(case, m), unit_name(case))
}

/// One region of the case: key path, name, shape, own mesh size, and the largest edge at its
/// surface when it carries eddy currents.
struct Region<'a> {
    key: String,
    name: &'a str,
    shape: &'a Shape,
    mesh_size: Option<f64>,
    skin_size: Option<f64>,
}

/// The edge the mesher uses at the surface of a conductive region at f > 0 (the skin layer of
/// `crate::build`): `own`, or a third of the skin depth (a sixth at element order 1).
fn skin_size(case: &Case, material: MaterialId, own: Option<f64>) -> Option<f64> {
    let m = case.material(material);
    if case.frequency <= 0.0 || m.conductivity <= 0.0 {
        return None;
    }
    let depth = crate::build::skin_depth(case.frequency, m.mu_r, m.conductivity);
    let fraction = crate::build::skin_fraction(case.element_order);
    Some(own.unwrap_or(depth * fraction))
}

fn regions(case: &Case) -> Vec<Region<'_>> {
    let mut out = Vec::new();
    for (i, p) in case.parts.iter().enumerate() {
        out.push(Region {
            key: format!("part[{i}]"),
            name: &p.name,
            shape: &p.shape,
            mesh_size: p.mesh_size,
            skin_size: skin_size(case, p.material, p.skin_mesh_size),
        });
    }
    for (i, c) in case.conductors.iter().enumerate() {
        out.push(Region {
            key: format!("conductor[{i}]"),
            name: &c.name,
            shape: &c.shape,
            mesh_size: c.mesh_size,
            skin_size: skin_size(case, c.material, c.skin_mesh_size),
        });
    }
    for (i, c) in case.coils.iter().enumerate() {
        let shapes = c.window.shapes();
        let many = shapes.len() > 1;
        for (j, (s, _)) in shapes.into_iter().enumerate() {
            out.push(Region {
                key: if many {
                    format!("coil[{i}].sides[{j}]")
                } else {
                    format!("coil[{i}]")
                },
                name: &c.name,
                shape: s,
                mesh_size: c.mesh_size,
                skin_size: None,
            });
        }
    }
    out
}

/// Size of a shape: the larger side of its bounding box (clipped at the axis when
/// axisymmetric, where a core on the axis is [0, D/2] wide).
fn size(shape: &Shape) -> f64 {
    let BBox { min: lo, max: hi } = shape.bbox();
    (hi[0] - lo[0]).max(hi[1] - lo[1])
}

/// Gap between two bounding boxes (0 when they touch or overlap).
fn gap(a: &Shape, b: &Shape) -> f64 {
    let BBox { min: alo, max: ahi } = a.bbox();
    let BBox { min: blo, max: bhi } = b.bbox();
    let dx = (blo[0] - ahi[0]).max(alo[0] - bhi[0]).max(0.0);
    let dy = (blo[1] - ahi[1]).max(alo[1] - bhi[1]).max(0.0);
    dx.hypot(dy)
}

/// Distance from a shape to the open part of the outer boundary, if any of it is open.
fn open_boundary_gap(case: &Case, shape: &Shape) -> Option<f64> {
    if case.domain.boundary != BoundaryKind::Open {
        return None;
    }
    match &case.domain.shape {
        Shape::Circle { center, radius } => Some(radius - shape.max_distance_from(*center)),
        Shape::Rect { min, max } => {
            let BBox { min: lo, max: hi } = shape.bbox();
            let axi = case.symmetry == Symmetry::Axisymmetric;
            let has_edge = |s: DomainSide| case.domain.edges.iter().any(|(d, _)| *d == s);
            let mut best: Option<f64> = None;
            let mut offer = |open: bool, d: f64| {
                if open {
                    best = Some(best.map_or(d, |b: f64| b.min(d)));
                }
            };
            offer(!axi && !has_edge(DomainSide::Left), lo[0] - min[0]);
            offer(!has_edge(DomainSide::Right), max[0] - hi[0]);
            offer(!has_edge(DomainSide::Bottom), lo[1] - min[1]);
            offer(!has_edge(DomainSide::Top), max[1] - hi[1]);
            best
        }
        _ => None,
    }
}

/// The warnings for a resolved case.
pub fn lint(case: &Case) -> Vec<Warning> {
    let mut out = Vec::new();
    let regs = regions(case);

    // A mesh size larger than the region it meshes (a skin layer refines conductive ones).
    for r in &regs {
        let h = r.mesh_size.unwrap_or(case.domain.mesh_size);
        let own = r.mesh_size.is_some() || r.skin_size.is_some_and(|s| s < h);
        let h = r.skin_size.map_or(h, |s| h.min(s));
        let width = r.shape.smallest_extent();
        if h > width {
            out.push(Warning {
                key: r.key.clone(),
                message: format!(
                    "`{}`: its mesh size ({}{}) is larger than its narrowest width ({}), so it \
                     gets only an element or two across",
                    r.name,
                    show(case, h),
                    if !own { ", the domain's" } else { "" },
                    show(case, width)
                ),
                help: format!(
                    "set `mesh_size = {}` (a quarter of its width) or less in this entry",
                    value(case, width / 4.0)
                ),
            });
        }
    }

    // A magnetic core far from every source of field.
    if case.background.is_none() {
        let mut sources: Vec<(String, &Shape)> = Vec::new();
        for c in &case.conductors {
            if c.current != 0.0 {
                sources.push((format!("conductor `{}`", c.name), &c.shape));
            }
        }
        for c in &case.coils {
            if c.current != 0.0 {
                for (s, _) in c.window.shapes() {
                    sources.push((format!("coil `{}`", c.name), s));
                }
            }
        }
        for (i, p) in case.parts.iter().enumerate() {
            let m = case.material(p.material);
            let magnetic = m.mu_r >= CORE_MU_R || m.bh.is_some();
            if !magnetic || sources.is_empty() {
                continue;
            }
            let nearest = sources
                .iter()
                .map(|(n, s)| (n, gap(&p.shape, s), size(s)))
                .min_by(|a, b| a.1.total_cmp(&b.1));
            if let Some((who, d, s_size)) = nearest {
                let scale = size(&p.shape).max(s_size);
                if d > FAR_FACTOR * scale {
                    out.push(Warning {
                        key: format!("part[{i}]"),
                        message: format!(
                            "`{}` is {} from the nearest source of field ({who}), more than {} \
                             times its size: it will see little field",
                            p.name,
                            show(case, d),
                            FAR_FACTOR
                        ),
                        help: format!(
                            "check its coordinates and `model.length_unit` (now {}); move it \
                             nearer, or add a [background] field to characterise it alone",
                            unit_name(case)
                        ),
                    });
                }
            }
        }
    }

    // An open boundary close to the model.
    let largest = regs
        .iter()
        .map(|r| (r, size(r.shape)))
        .max_by(|a, b| a.1.total_cmp(&b.1));
    if let Some((big, big_size)) = largest {
        let closest = regs
            .iter()
            .filter_map(|r| open_boundary_gap(case, r.shape).map(|g| (r, g)))
            .min_by(|a, b| a.1.total_cmp(&b.1));
        if let Some((r, g)) = closest {
            if g < OPEN_BOUNDARY_FACTOR * big_size {
                out.push(Warning {
                    key: "domain".into(),
                    message: format!(
                        "the open boundary is {} from `{}`, less than {} times the largest \
                         entry (`{}`, {}); the condition itself is exact, but the air beyond \
                         it is meshed as coarsely as domain.mesh_size",
                        show(case, g.max(0.0)),
                        r.name,
                        OPEN_BOUNDARY_FACTOR,
                        big.name,
                        show(case, big_size)
                    ),
                    help: format!(
                        "if the figures matter, solve once with [domain] enlarged so that \
                         everything is at least {} from its open sides and compare (a coarse \
                         domain.mesh_size keeps the cost down)",
                        show(case, OPEN_BOUNDARY_FACTOR * big_size)
                    ),
                });
            }
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A planar case: one conductor at the origin, a ferrite part, an open circle domain.
    fn case(part: &str, domain_radius: f64, domain_mesh: f64) -> Case {
        let text = format!(
            r#"
[model]
symmetry = "planar"
[domain]
circle = {{ center = [0, 0], radius = {domain_radius} }}
boundary = "open"
mesh_size = {domain_mesh}
[materials.ferrite]
mu_r = 2000
[[conductor]]
name = "bar"
circle = {{ center = [0, 0], radius = 5 }}
current = 100
mesh_size = 1
[[part]]
name = "core"
material = "ferrite"
{part}
"#
        );
        crate::case::load_case_str("lint.toml", &text).unwrap()
    }

    fn keys(w: &[Warning]) -> Vec<String> {
        w.iter()
            .map(|w| format!("{}: {}", w.key, w.message))
            .collect()
    }

    #[test]
    fn a_reasonable_case_has_no_warnings() {
        let w = lint(&case(
            "rect = { center = [30, 0], size = [20, 4] }\nmesh_size = 1",
            200.0,
            20.0,
        ));
        assert!(w.is_empty(), "{:?}", keys(&w));
    }

    #[test]
    fn mesh_size_larger_than_the_part() {
        let w = lint(&case(
            "rect = { center = [30, 0], size = [20, 4] }",
            200.0,
            20.0,
        ));
        assert_eq!(w.len(), 1, "{:?}", keys(&w));
        assert_eq!(w[0].key, "part[0]");
        assert!(
            w[0].message.contains("20 mm, the domain's"),
            "{}",
            w[0].message
        );
        assert!(w[0].help.contains("mesh_size = 1"), "{}", w[0].help);
    }

    #[test]
    fn a_skin_layer_counts_as_fine_mesh() {
        // A 2 mm steel plate at 50 Hz meshed at 20 mm inside: its surfaces get a third of
        // the 2.25 mm skin depth, so it is resolved across its thickness.
        let text = r#"
[model]
symmetry = "planar"
frequency = 50
[domain]
circle = { center = [0, 0], radius = 300 }
mesh_size = 20
[materials.steel]
mu_r = 200
conductivity = 5e6
[[conductor]]
name = "bar"
circle = { center = [0, 0], radius = 5 }
current = 100
mesh_size = 2
[[part]]
name = "plate"
material = "steel"
rect = { center = [0, 40], size = [60, 2] }
"#;
        let c = crate::case::load_case_str("skin.toml", text).unwrap();
        let w = lint(&c);
        assert!(w.is_empty(), "{:?}", keys(&w));
        let static_case = text.replace("frequency = 50", "frequency = 0");
        let c = crate::case::load_case_str("skin.toml", &static_case).unwrap();
        assert_eq!(lint(&c).len(), 1, "at 0 Hz there is no skin layer");
    }

    #[test]
    fn core_far_from_every_source() {
        // 20 mm core 600 mm from a 10 mm conductor: 30 times the core's size.
        let w = lint(&case(
            "rect = { center = [620, 0], size = [20, 4] }\nmesh_size = 1",
            2000.0,
            50.0,
        ));
        assert_eq!(w.len(), 1, "{:?}", keys(&w));
        assert!(
            w[0].message.contains("from the nearest source"),
            "{}",
            w[0].message
        );
        // At 100 mm (5 times its size) it is not far.
        let w = lint(&case(
            "rect = { center = [110, 0], size = [20, 4] }\nmesh_size = 1",
            400.0,
            50.0,
        ));
        assert!(w.is_empty(), "{:?}", keys(&w));
    }

    #[test]
    fn open_boundary_close_to_the_model() {
        // The core's corner (40, 2) is 59.95 from the boundary at radius 100, less than 3 x 20.
        let w = lint(&case(
            "rect = { center = [30, 0], size = [20, 4] }\nmesh_size = 1",
            100.0,
            20.0,
        ));
        assert_eq!(w.len(), 1, "{:?}", keys(&w));
        assert_eq!(w[0].key, "domain");
        assert!(
            w[0].message.contains("59.95 mm from `core`"),
            "{}",
            w[0].message
        );
    }
}
