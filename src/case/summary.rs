//! `fluxpick check`: a human-readable summary of a resolved case, with a rough element count.

use std::fmt::Write as _;

use super::model::*;
use super::resolve::fmt_g;

/// Area of an equilateral triangle of unit edge, √3/4.
const EQUILATERAL_AREA: f64 = 0.433;
/// Quality refinement leaves most triangles smaller than the largest allowed edge; counting
/// twice the equilateral number is a rough allowance for that (and for the grading between
/// fine and coarse regions), not a measured constant.
const REFINEMENT_ALLOWANCE: f64 = 2.0;

fn triangles(area: f64, h: f64) -> f64 {
    REFINEMENT_ALLOWANCE * area / (EQUILATERAL_AREA * h * h)
}

/// Which entry a share of [`estimated_elements`] belongs to.
#[derive(Clone, Copy, Debug, PartialEq, Eq)]
pub(crate) enum Share {
    Air,
    Part(usize),
    Conductor(usize),
    Coil(usize),
}

/// A rough number of triangles: Σ over regions of 2·area / (0.433·h²), h being the region's
/// mesh size (the domain's when it gives none) and 0.433·h² the area of an equilateral
/// triangle of edge h. The air counts as the domain area less every region (overlaps are
/// ignored, so nested regions are counted twice); axisymmetric areas are clipped at r = 0.
/// The open boundary's exterior image, if the solver builds one, is not counted. Good to a
/// factor of about two: a guide for choosing mesh sizes, not a prediction.
pub fn estimated_elements(case: &Case) -> f64 {
    element_shares(case).iter().map(|s| s.1).sum()
}

/// [`estimated_elements`] entry by entry (a coil's sides together), the air last.
pub(crate) fn element_shares(case: &Case) -> Vec<(Share, f64)> {
    let clip = case.symmetry == Symmetry::Axisymmetric;
    let h_air = case.domain.mesh_size;
    let mut regions_area = 0.0;
    let mut out = Vec::new();
    let mut add = |who: Share, shape: &Shape, h: Option<f64>| {
        let a = shape.area(clip);
        regions_area += a;
        out.push((who, triangles(a, h.unwrap_or(h_air).min(h_air))));
    };
    for (i, p) in case.parts.iter().enumerate() {
        add(Share::Part(i), &p.shape, p.mesh_size);
    }
    for (i, c) in case.conductors.iter().enumerate() {
        add(Share::Conductor(i), &c.shape, c.mesh_size);
    }
    for (i, c) in case.coils.iter().enumerate() {
        for (s, _) in c.window.shapes() {
            add(Share::Coil(i), s, c.mesh_size);
        }
    }
    let domain_area = case.domain.shape.area(clip);
    out.push((
        Share::Air,
        triangles((domain_area - regions_area).max(0.0), h_air),
    ));
    out
}

/// One coil's line of [`summary`]: turns, wire, fill, temperature, drive and window.
fn coil_line(c: &Coil, u: f64, unit: &str) -> String {
    let wire = match c.wire.awg {
        Some(n) => format!("AWG {n} ({} mm bare)", fmt_g(c.wire.diameter * 1e3)),
        None => format!("{} mm bare", fmt_g(c.wire.diameter * 1e3)),
    };
    let drive = if c.current == 0.0 {
        "open circuit".to_string()
    } else {
        format!(
            "driven {} A rms at {}°",
            fmt_g(c.current),
            fmt_g(c.phase_deg)
        )
    };
    let window = match &c.window {
        CoilWindow::Single(sh) => shape_text(sh, u, unit),
        CoilWindow::Sides(v) => format!("{} sides", v.len()),
    };
    format!(
        "  {}: {} turns of {wire}, fill {}, {} °C, {drive}, {window}",
        c.name,
        fmt_g(c.turns),
        fmt_g(c.fill_factor),
        fmt_g(c.temperature_c)
    )
}

fn shape_text(s: &Shape, u: f64, unit: &str) -> String {
    let p = |q: [f64; 2]| format!("[{}, {}]", fmt_g(q[0] / u), fmt_g(q[1] / u));
    let l = |x: f64| fmt_g(x / u);
    match s {
        Shape::Rect { min, max } => format!("rect {} to {} {unit}", p(*min), p(*max)),
        Shape::Circle { center, radius } => {
            format!("circle at {} radius {} {unit}", p(*center), l(*radius))
        }
        Shape::Ellipse { center, semi_axes } => format!(
            "ellipse at {} semi-axes {} × {} {unit}",
            p(*center),
            l(semi_axes[0]),
            l(semi_axes[1])
        ),
        Shape::Annulus {
            center,
            inner,
            outer,
        } => {
            format!(
                "annulus at {} radii {}–{} {unit}",
                p(*center),
                l(*inner),
                l(*outer)
            )
        }
        Shape::Polygon(v) => format!("polygon of {} points", v.len()),
    }
}

fn unit_label(u: f64) -> &'static str {
    if u == 1e-3 {
        "mm"
    } else if u == 1e-2 {
        "cm"
    } else if u == 0.0254 {
        "in"
    } else {
        "m"
    }
}

/// Summary for `fluxpick check`: model, parameters, regions, coils, probes, sweeps and the
/// estimated element count (see [`estimated_elements`]). Lengths are shown in the file's unit.
pub fn summary(case: &Case) -> String {
    let u = case.length_unit_m;
    let unit = unit_label(u);
    let mut s = String::new();
    let title = if case.title.is_empty() {
        "(untitled)"
    } else {
        case.title.as_str()
    };
    let _ = writeln!(s, "case: {title}");
    let sym = match case.symmetry {
        Symmetry::Planar => format!("planar, depth {} {unit}", fmt_g(case.depth / u)),
        Symmetry::Axisymmetric => "axisymmetric [r, z]".to_string(),
    };
    let freq = if case.frequency == 0.0 {
        "0 Hz (magnetostatic)".to_string()
    } else {
        format!("{} Hz", fmt_g(case.frequency))
    };
    let _ = writeln!(
        s,
        "model: {sym}; {freq}; element order {}; lengths in {unit}",
        match case.element_order {
            Order::Linear => 1,
            Order::Quadratic => 2,
        }
    );
    if !case.parameters.is_empty() {
        let list: Vec<String> = case
            .parameters
            .iter()
            .map(|(k, v)| format!("{k} = {}", fmt_g(*v)))
            .collect();
        let _ = writeln!(s, "parameters: {}", list.join(", "));
    }
    let bnd = match case.domain.boundary {
        BoundaryKind::Open => "open",
        BoundaryKind::Fixed => "fixed",
    };
    let _ = writeln!(
        s,
        "domain: {}, {bnd} boundary, mesh size {} {unit}",
        shape_text(&case.domain.shape, u, unit),
        fmt_g(case.domain.mesh_size / u)
    );
    for (side, kind) in &case.domain.edges {
        let _ = writeln!(s, "  edge {side:?}: {kind:?}");
    }
    if let Some(b) = &case.background {
        let _ = writeln!(
            s,
            "background: {} µT rms along [{}, {}], phase {}°",
            fmt_g(b.b * 1e6),
            fmt_g(b.direction[0]),
            fmt_g(b.direction[1]),
            fmt_g(b.phase_deg)
        );
    }
    let mat = |id: MaterialId| {
        let m = case.material(id);
        format!(
            "{} (μr {}, σ {} S/m)",
            m.name,
            fmt_g(m.mu_r),
            fmt_g(m.conductivity)
        )
    };
    let _ = writeln!(s, "parts: {}", case.parts.len());
    for p in &case.parts {
        let _ = writeln!(
            s,
            "  {}: {}, {}",
            p.name,
            mat(p.material),
            shape_text(&p.shape, u, unit)
        );
    }
    let _ = writeln!(s, "conductors: {}", case.conductors.len());
    for c in &case.conductors {
        let _ = writeln!(
            s,
            "  {}: {} A rms at {}°, {}, {}, {}",
            c.name,
            fmt_g(c.current),
            fmt_g(c.phase_deg),
            match c.kind {
                crate::case::ConductorKind::Solid => "solid",
                crate::case::ConductorKind::Stranded => "stranded",
            },
            mat(c.material),
            shape_text(&c.shape, u, unit)
        );
    }
    let _ = writeln!(s, "coils: {}", case.coils.len());
    for c in &case.coils {
        let _ = writeln!(s, "{}", coil_line(c, u, unit));
    }
    if let Some(c) = &case.circuit {
        let load = match c.load {
            Load::Matched => "matched load".to_string(),
            Load::Resistance(r) => format!("load {} Ω", fmt_g(r)),
        };
        let _ = writeln!(
            s,
            "circuit: coil {}, tuning {}, {load}",
            case.coil(c.coil).name,
            match c.tuning {
                crate::case::Tuning::Series => "series",
                crate::case::Tuning::Parallel => "parallel",
                crate::case::Tuning::None => "none",
            }
        );
    }
    if !case.probes.is_empty() {
        let names: Vec<&str> = case.probes.iter().map(|p| p.name.as_str()).collect();
        let _ = writeln!(s, "probes: {}", names.join(", "));
    }
    for sw in &case.sweeps {
        let _ = writeln!(s, "sweep: {} over {} values", sw.parameter, sw.values.len());
    }
    let _ = writeln!(
        s,
        "estimated elements: about {}",
        fmt_g(estimated_elements(case).round())
    );
    s
}
