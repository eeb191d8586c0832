//! A field picture for `solve --plot`: |B| shading (logarithmic), flux lines (contours of A
//! in planar form, of r·A in axisymmetric form, where they are the field lines exactly),
//! and the outlines of every part, conductor and coil, as one SVG.
//!
//! At f > 0 the shading is the rms |B| and the flux lines those of the real part of the
//! phasor (the field at the instant t = 0).

use std::collections::HashMap;
use std::fmt::Write as _;

use crate::pipeline::Run;

/// A dark-to-light colour ramp of our own (blue-violet through teal to pale yellow).
pub fn ramp(t: f64) -> (u8, u8, u8) {
    const STOPS: [(f64, [f64; 3]); 5] = [
        (0.0, [28.0, 20.0, 70.0]),
        (0.3, [40.0, 80.0, 150.0]),
        (0.55, [40.0, 150.0, 140.0]),
        (0.8, [170.0, 205.0, 90.0]),
        (1.0, [250.0, 245.0, 190.0]),
    ];
    let t = t.clamp(0.0, 1.0);
    let k = STOPS.iter().position(|s| s.0 >= t).unwrap_or(4).max(1);
    let (a, b) = (STOPS[k - 1], STOPS[k]);
    let u = (t - a.0) / (b.0 - a.0);
    let c = |i: usize| (a.1[i] + u * (b.1[i] - a.1[i])).round() as u8;
    (c(0), c(1), c(2))
}

/// The mesh edges between triangles of different regions (the outlines of every part,
/// conductor and coil side), the exterior image left out.
pub fn region_outlines(m: &fluxpick_mesh::Mesh) -> Vec<([f64; 2], [f64; 2])> {
    let image = m.exterior.as_ref().map(|e| e.region);
    let mut owner: HashMap<(u32, u32), u32> = HashMap::new();
    let mut out = Vec::new();
    for (t, tri) in m.triangles.iter().enumerate() {
        let r = m.triangle_region[t];
        if Some(r) == image {
            continue;
        }
        for k in 0..3 {
            let (a, b) = (tri[k], tri[(k + 1) % 3]);
            let key = (a.min(b), a.max(b));
            match owner.get(&key) {
                Some(&r2) if r2 != r => out.push((m.points[a as usize], m.points[b as usize])),
                Some(_) => {}
                None => {
                    owner.insert(key, r);
                }
            }
        }
    }
    out
}

/// The picture's extent: the parts, conductors and coils with a margin of 60 % of their
/// larger extent each side (the air far away shows little), within the physical domain.
fn view(run: &Run) -> ([f64; 2], [f64; 2]) {
    let d = &run.disc;
    // physical extent
    let (mut lo, mut hi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for c in (0..d.n_cells()).filter(|&c| !d.is_image(c)) {
        for v in d.vertices(c) {
            for k in 0..2 {
                lo[k] = lo[k].min(v[k]);
                hi[k] = hi[k].max(v[k]);
            }
        }
    }
    // The view: the parts, conductors and coils with a margin of 60 % of their larger
    // extent each side (the air far away shows little), within the domain.
    let image = run.mesh.exterior.as_ref().map(|e| e.region);
    let (mut vlo, mut vhi) = ([f64::INFINITY; 2], [f64::NEG_INFINITY; 2]);
    for (t, tri) in run.mesh.triangles.iter().enumerate() {
        let r = run.mesh.triangle_region[t];
        if r == 0 || Some(r) == image {
            continue;
        }
        for &n in tri {
            let p = run.mesh.points[n as usize];
            for k in 0..2 {
                vlo[k] = vlo[k].min(p[k]);
                vhi[k] = vhi[k].max(p[k]);
            }
        }
    }
    if vlo[0].is_finite() {
        let m = 0.6 * (vhi[0] - vlo[0]).max(vhi[1] - vlo[1]);
        for k in 0..2 {
            lo[k] = lo[k].max(vlo[k] - m);
            hi[k] = hi[k].min(vhi[k] + m);
        }
    }
    (lo, hi)
}

/// Flux lines (30 levels of the flux function) by marching squares over the corner samples
/// `psi` of an `nx` × `ny` pixel grid, as one SVG path (empty where the function is flat).
fn flux_lines(psi: &[f64], nx: usize, ny: usize) -> String {
    let mut s = String::new();
    let finite: Vec<f64> = psi.iter().copied().filter(|v| v.is_finite()).collect();
    if let (Some(mn), Some(mx)) = (
        finite.iter().copied().reduce(f64::min),
        finite.iter().copied().reduce(f64::max),
    ) {
        if mx > mn {
            let n_lines = 30;
            let mut path = String::new();
            for l in 1..n_lines {
                let c = mn + (mx - mn) * l as f64 / n_lines as f64;
                for j in 0..ny {
                    for i in 0..nx {
                        let v = [
                            psi[j * (nx + 1) + i],
                            psi[j * (nx + 1) + i + 1],
                            psi[(j + 1) * (nx + 1) + i + 1],
                            psi[(j + 1) * (nx + 1) + i],
                        ];
                        if v.iter().any(|x| !x.is_finite()) {
                            continue;
                        }
                        let corner = [
                            (i as f64, j as f64),
                            (i as f64 + 1.0, j as f64),
                            (i as f64 + 1.0, j as f64 + 1.0),
                            (i as f64, j as f64 + 1.0),
                        ];
                        let mut cross = Vec::with_capacity(4);
                        for k in 0..4 {
                            let (a, b) = (v[k], v[(k + 1) % 4]);
                            if (a < c) != (b < c) {
                                let t = (c - a) / (b - a);
                                let (p, q) = (corner[k], corner[(k + 1) % 4]);
                                cross.push((p.0 + t * (q.0 - p.0), p.1 + t * (q.1 - p.1)));
                            }
                        }
                        for pair in cross.chunks(2) {
                            if let [p, q] = pair {
                                let _ =
                                    write!(path, "M{:.1} {:.1}L{:.1} {:.1}", p.0, p.1, q.0, q.1);
                            }
                        }
                    }
                }
            }
            let _ = writeln!(
                s,
                r#"<path d="{path}" stroke="white" stroke-opacity="0.8" stroke-width="0.8" fill="none"/>"#
            );
        }
    }
    s
}

/// The picture, `width` pixels wide, as SVG text.
pub fn field_svg(run: &Run, width: usize) -> String {
    let d = &run.disc;
    let axi = d.formulation == fluxpick_solver::Formulation::Axisymmetric;
    let (lo, hi) = view(run);
    let (w, h) = (hi[0] - lo[0], hi[1] - lo[1]);
    let nx = width.max(40);
    let ny = ((nx as f64) * h / w).round().max(10.0) as usize;
    let px = w / nx as f64;
    // sample |B| at cell centres and the flux function at cell corners
    let [re, im] = &run.field;
    let mut babs = vec![f64::NAN; nx * ny];
    for j in 0..ny {
        for i in 0..nx {
            let p = [lo[0] + (i as f64 + 0.5) * px, hi[1] - (j as f64 + 0.5) * px];
            if let (Some(a), Some(b)) = (re.at(p), im.at(p)) {
                babs[j * nx + i] =
                    (a.b[0].powi(2) + a.b[1].powi(2) + b.b[0].powi(2) + b.b[1].powi(2)).sqrt();
            }
        }
    }
    let mut psi = vec![f64::NAN; (nx + 1) * (ny + 1)];
    for j in 0..=ny {
        for i in 0..=nx {
            let p = [lo[0] + i as f64 * px, hi[1] - j as f64 * px];
            if let Some(a) = re.at(p) {
                psi[j * (nx + 1) + i] = if axi { p[0] * a.a } else { a.a };
            }
        }
    }
    // log scale between the 2nd and 99.5th percentiles
    let mut vals: Vec<f64> = babs.iter().copied().filter(|v| *v > 0.0).collect();
    vals.sort_by(f64::total_cmp);
    let (b_lo, b_hi) = if vals.is_empty() {
        (1.0, 10.0)
    } else {
        let q = |f: f64| vals[((vals.len() - 1) as f64 * f) as usize];
        let (a, b) = (q(0.02), q(0.995));
        (a, if b > a { b } else { a * 10.0 })
    };
    let (l0, l1) = (b_lo.log10(), b_hi.log10());
    let scale = 1.0; // one SVG unit per pixel
    let (wpx, hpx) = (nx as f64 * scale, ny as f64 * scale);
    let legend_h = 46.0;
    let mut s = String::new();
    let _ = writeln!(
        s,
        r#"<svg xmlns="http://www.w3.org/2000/svg" width="{}" height="{}" viewBox="0 0 {} {}" font-family="sans-serif" font-size="12">"#,
        wpx,
        hpx + legend_h,
        wpx,
        hpx + legend_h
    );
    let _ = writeln!(s, r#"<rect width="100%" height="100%" fill="white"/>"#);
    // shading: runs of equal colour per row (32 levels), drawn without anti-aliasing so that
    // abutting rows leave no hairline seams when the picture is scaled
    let _ = writeln!(s, r#"<g shape-rendering="crispEdges">"#);
    let level = |v: f64| -> Option<usize> {
        (v.is_finite() && v > 0.0)
            .then(|| (((v.log10() - l0) / (l1 - l0)).clamp(0.0, 1.0) * 31.0).round() as usize)
    };
    for j in 0..ny {
        let mut i = 0;
        while i < nx {
            let Some(k) = level(babs[j * nx + i]) else {
                i += 1;
                continue;
            };
            let mut e = i + 1;
            while e < nx && level(babs[j * nx + e]) == Some(k) {
                e += 1;
            }
            let (r, g, b) = ramp(k as f64 / 31.0);
            let _ = writeln!(
                s,
                r#"<rect x="{}" y="{}" width="{}" height="1.02" fill="rgb({r},{g},{b})"/>"#,
                i,
                j,
                e - i
            );
            i = e;
        }
    }
    let _ = writeln!(s, "</g>");
    s += &flux_lines(&psi, nx, ny);
    // outlines: mesh edges between different regions, and the outer boundary
    let mut outline = String::new();
    let m = &run.mesh;
    let to_px = |p: [f64; 2]| ((p[0] - lo[0]) / px, (hi[1] - p[1]) / px);
    let inside = |p: (f64, f64)| p.0 >= -1.0 && p.0 <= wpx + 1.0 && p.1 >= -1.0 && p.1 <= hpx + 1.0;
    for (a, b) in region_outlines(m) {
        let (p, q) = (to_px(a), to_px(b));
        if inside(p) || inside(q) {
            let _ = write!(outline, "M{:.1} {:.1}L{:.1} {:.1}", p.0, p.1, q.0, q.1);
        }
    }
    for e in &m.boundary_edges {
        let (p, q) = (
            to_px(m.points[e.nodes[0] as usize]),
            to_px(m.points[e.nodes[1] as usize]),
        );
        if inside(p) || inside(q) {
            let _ = write!(outline, "M{:.1} {:.1}L{:.1} {:.1}", p.0, p.1, q.0, q.1);
        }
    }
    let _ = writeln!(
        s,
        r#"<path d="{outline}" stroke="black" stroke-width="1.2" fill="none"/>"#
    );
    // legend: colour bar of |B|
    let y0 = hpx + 8.0;
    let bar_w = (wpx * 0.5).min(320.0);
    for k in 0..64 {
        let (r, g, b) = ramp(k as f64 / 63.0);
        let _ = writeln!(
            s,
            r#"<rect x="{:.1}" y="{y0}" width="{:.2}" height="12" fill="rgb({r},{g},{b})"/>"#,
            10.0 + bar_w * k as f64 / 64.0,
            bar_w / 64.0 + 0.3
        );
    }
    let _ = writeln!(
        s,
        r#"<text x="10" y="{:.0}">{}</text><text x="{:.0}" y="{:.0}" text-anchor="end">{}</text><text x="{:.0}" y="{:.0}">|B| (rms, log scale); white: flux lines{}</text>"#,
        y0 + 28.0,
        crate::format::eng(b_lo, "T"),
        10.0 + bar_w,
        y0 + 28.0,
        crate::format::eng(b_hi, "T"),
        20.0 + bar_w,
        y0 + 10.0,
        if axi {
            " (contours of r·A)"
        } else {
            " (contours of A)"
        }
    );
    let _ = writeln!(s, "</svg>");
    s
}
