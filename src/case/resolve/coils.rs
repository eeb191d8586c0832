//! `[[coil]]`: windings, their wire, and the window (axisymmetric) or sides (planar) their
//! turns pass through, which must hold the copper.

use std::ops::Range;

use fluxpick_postproc::wire;
use toml::Spanned;

use super::names::Names;
use super::shapes::Carrier;
use super::{fmt_g, sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::{Coil, CoilWindow, Domain, Shape, Wire};
use crate::case::raw::{RawCase, RawCoil};

/// Default fill factor when a coil gives none: common practice for random-wound enamelled
/// round wire (0.5–0.7), no source.
pub const DEFAULT_FILL_FACTOR: f64 = 0.6;
/// Default winding temperature, °C: the copper resistivity reference temperature (IEC 60028).
pub const DEFAULT_TEMPERATURE_C: f64 = 20.0;

/// One side of a coil's window: its shape, the span and key path of its shape key, and its
/// sense.
type Side = (Shape, Range<usize>, String, f64);

pub(super) fn resolve_coils(
    cx: &Ctx<'_>,
    raw: &RawCase,
    names: &mut Names,
    domain: &Domain,
    carriers: &mut Vec<Carrier>,
) -> Result<Vec<Coil>> {
    let mut coils = Vec::new();
    for (i, c) in raw.coils.iter().enumerate() {
        let path = format!("coil[{i}]");
        let name = names.check(cx, &c.get_ref().name, &format!("{path}.name"))?;
        coils.push(resolve_coil(cx, c, &path, name, domain, carriers)?);
    }
    Ok(coils)
}

fn resolve_coil(
    cx: &Ctx<'_>,
    c: &Spanned<RawCoil>,
    path: &str,
    name: String,
    domain: &Domain,
    carriers: &mut Vec<Carrier>,
) -> Result<Coil> {
    let v = c.get_ref();
    let turns = cx.positive(&v.turns, &format!("{path}.turns"), "the number of turns")?;
    let wire = coil_wire(cx, v, path)?;
    let fill_factor = match &v.fill_factor {
        None => DEFAULT_FILL_FACTOR,
        Some(f) => {
            let x = cx.num(f, &format!("{path}.fill_factor"))?;
            if !(x > 0.0 && x <= 1.0) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(f),
                    &format!("{path}.fill_factor"),
                    format!("the fill factor must be in (0, 1] (got {x})"),
                    "it is copper area / window area: typically 0.5 to 0.7 for round wire",
                ));
            }
            x
        }
    };
    let temperature_c = match &v.temperature {
        None => DEFAULT_TEMPERATURE_C,
        Some(t) => {
            let x = cx.num(t, &format!("{path}.temperature"))?;
            if x <= -273.15 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(t),
                    &format!("{path}.temperature"),
                    format!("the temperature {x} °C is below absolute zero"),
                    "give the winding temperature in °C",
                ));
            }
            x
        }
    };
    let current = v
        .current
        .as_ref()
        .map_or(Ok(0.0), |x| cx.num(x, &format!("{path}.current")))?;
    let phase_deg = v
        .phase
        .as_ref()
        .map_or(Ok(0.0), |x| cx.num(x, &format!("{path}.phase")))?;
    let mesh_size = cx.opt_mesh_size(&v.mesh_size, &format!("{path}.mesh_size"))?;

    let mut windows = coil_windows(cx, c, path)?;
    for (shape, span, key, _) in &windows {
        cx.check_placement(shape, span, key, domain)?;
        cx.check_overlap(shape, span, key, carriers)?;
        carriers.push(Carrier {
            shape: shape.clone(),
            span: span.clone(),
            key: key.clone(),
            name: name.clone(),
        });
    }
    check_fit(cx, v, path, turns, &wire, fill_factor, &windows)?;
    let window = if v.sides.is_some() {
        CoilWindow::Sides(windows.into_iter().map(|w| (w.0, w.3)).collect())
    } else {
        CoilWindow::Single(windows.remove(0).0)
    };
    Ok(Coil {
        name,
        turns,
        wire,
        fill_factor,
        temperature_c,
        current,
        phase_deg,
        window,
        mesh_size,
    })
}

/// The wire: an AWG gauge (`wire = "awgNN"`) or a bare diameter.
fn coil_wire(cx: &Ctx<'_>, v: &RawCoil, path: &str) -> Result<Wire> {
    let wire = match (&v.wire, &v.wire_diameter) {
        (Some(w), None) => {
            let g = w.get_ref().trim();
            let Some(n) = wire::parse_gauge(g) else {
                return Err(cx.err(
                    K::UnknownGauge,
                    sp(w),
                    &format!("{path}.wire"),
                    format!("unknown wire gauge \"{g}\""),
                    format!(
                        "write \"awgNN\" with NN from {} to {}, e.g. \"awg30\", or give \
                         wire_diameter (bare copper, in length units)",
                        wire::AWG_MIN,
                        wire::AWG_MAX
                    ),
                ));
            };
            Wire {
                awg: Some(n),
                diameter: wire::awg_diameter_m(n),
            }
        }
        (None, Some(d)) => Wire {
            awg: None,
            diameter: cx.pos_len(d, &format!("{path}.wire_diameter"), "the wire diameter")?,
        },
        (Some(_), Some(d)) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(d),
                &format!("{path}.wire_diameter"),
                "a coil has both `wire` and `wire_diameter`",
                "give one of them",
            ))
        }
        (None, None) => {
            return Err(cx.err(
                K::MissingKey,
                sp(&v.name),
                &format!("{path}.wire"),
                "a coil needs `wire` (\"awgNN\") or `wire_diameter`",
                "add wire = \"awg30\" or wire_diameter = 0.25 (length units)",
            ))
        }
    };
    Ok(wire)
}

/// The coil's window (one shape key, axisymmetric) or its sides (planar, or several
/// windows in series), each with its sense.
fn coil_windows(cx: &Ctx<'_>, c: &Spanned<RawCoil>, path: &str) -> Result<Vec<Side>> {
    let v = c.get_ref();
    let keys = v.shape_keys();
    let has_shape = keys.rect.is_some()
        || keys.circle.is_some()
        || keys.ellipse.is_some()
        || keys.annulus.is_some()
        || keys.polygon.is_some();
    // (shape, span, key path) per side, plus the sense.
    let mut windows: Vec<Side> = Vec::new();
    match (&v.sides, has_shape) {
        (Some(sides), true) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(sides),
                &format!("{path}.sides"),
                "a coil has both a shape key and `sides`",
                "give one window shape (axisymmetric) or `sides` (planar), not both",
            ))
        }
        (None, true) => {
            if !cx.axisym {
                let (_, span) = cx.shape(keys, path, c.span(), "the coil")?;
                return Err(cx.err(
                    K::ShapeKeys,
                    Some(span),
                    path,
                    "a planar coil needs `sides` (the go and return sides), not one window",
                    "write sides = [ { rect = { ... }, sense = 1 }, { rect = { ... }, sense = -1 } ]",
                ));
            }
            let (shape, span) = cx.shape(keys, path, c.span(), "the coil")?;
            windows.push((shape, span, path.to_string(), 1.0));
        }
        (Some(sides), false) => {
            if sides.get_ref().is_empty() {
                return Err(cx.err(
                    K::ShapeKeys,
                    sp(sides),
                    &format!("{path}.sides"),
                    "`sides` is empty",
                    "give the go and return sides, each with a shape and sense = 1 or -1",
                ));
            }
            for (j, s) in sides.get_ref().iter().enumerate() {
                let sk = format!("{path}.sides[{j}]");
                let sv = s.get_ref();
                let (shape, span) = cx.shape(sv.shape_keys(), &sk, s.span(), "the coil side")?;
                let sense = cx.num(&sv.sense, &format!("{sk}.sense"))?;
                if sense != 1.0 && sense != -1.0 {
                    return Err(cx.err(
                        K::OutOfRange,
                        sp(&sv.sense),
                        &format!("{sk}.sense"),
                        format!("the sense must be 1 or -1 (got {sense})"),
                        "1 for current going in, -1 for current coming back",
                    ));
                }
                windows.push((shape, span, sk, sense));
            }
            let both = windows.iter().any(|w| w.3 > 0.0) && windows.iter().any(|w| w.3 < 0.0);
            if !(cx.axisym || both) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(sides),
                    &format!("{path}.sides"),
                    "a planar coil needs at least one side with sense = 1 and one with sense = -1",
                    "the turns go in through one side and come back through the other",
                ));
            }
        }
        (None, false) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(c),
                path,
                "the coil has no window",
                if cx.axisym {
                    "give one window shape, e.g. rect = { min = [r0, z0], max = [r1, z1] }"
                } else {
                    "give sides = [ { rect = { ... }, sense = 1 }, { rect = { ... }, sense = -1 } ]"
                },
            ))
        }
    }
    Ok(windows)
}

/// Does the copper fit? All the turns pass through every side.
fn check_fit(
    cx: &Ctx<'_>,
    v: &RawCoil,
    path: &str,
    turns: f64,
    wire: &Wire,
    fill_factor: f64,
    windows: &[Side],
) -> Result<()> {
    let copper = turns * std::f64::consts::PI * wire.diameter * wire.diameter / 4.0;
    let (smallest, _) = windows.iter().map(|w| (w.0.area(cx.axisym), w)).fold(
        (f64::INFINITY, None),
        |acc, (a, w)| {
            if a < acc.0 {
                (a, Some(w))
            } else {
                acc
            }
        },
    );
    if copper > fill_factor * smallest {
        let u2 = cx.unit * cx.unit;
        let fit = wire::turns_that_fit(smallest, wire.diameter, fill_factor).floor();
        return Err(cx.err(
            K::WindingDoesNotFit,
            sp(&v.turns),
            &format!("{path}.turns"),
            format!(
                "{} turns of {} mm wire need {} {}² of copper, but the window holds only \
                 {} × {} {}² = {} {}²",
                fmt_g(turns),
                fmt_g(wire.diameter * 1e3),
                fmt_g(copper / u2),
                cx.unit_name,
                fmt_g(fill_factor),
                fmt_g(smallest / u2),
                cx.unit_name,
                fmt_g(fill_factor * smallest / u2),
                cx.unit_name
            ),
            format!(
                "at most {} turns fit: use fewer turns, thinner wire, a larger window or a \
                 higher fill_factor",
                fmt_g(fit)
            ),
        ));
    }
    Ok(())
}
