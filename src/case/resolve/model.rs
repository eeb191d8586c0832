//! `[model]`: symmetry aside (the context holds it), the frequency, depth, element order,
//! accuracy loop settings and title; and the quasistatic check of the frequency against the
//! domain's size.

use super::{fmt_g, sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use fluxpick_mesh::BBox;

use crate::case::model::{Domain, Order};
use crate::case::raw::{RawModel, RawRefinement};

/// Default planar depth: 1 m (docs/case-format.md).
pub const DEFAULT_DEPTH_M: f64 = 1.0;
/// Speed of light in vacuum, m/s (exact, SI definition of the metre).
const SPEED_OF_LIGHT: f64 = 299_792_458.0;
/// The model neglects displacement current (magnetoquasistatic): the domain must be small
/// against the free-space wavelength. A tenth is the usual "electrically small" rule of
/// thumb, no source.
const MAX_DOMAIN_OVER_WAVELENGTH: f64 = 0.1;

/// The `[model]` settings that go into the case as they are.
pub(super) struct ModelSettings {
    pub title: String,
    pub frequency: f64,
    pub depth: f64,
    pub element_order: Order,
    pub accuracy: Option<f64>,
    pub max_triangles: usize,
    pub uniform_refinement: bool,
}

pub(super) fn resolve_model(cx: &Ctx<'_>, m: &RawModel) -> Result<ModelSettings> {
    let frequency = match &m.frequency {
        None => 0.0,
        Some(f) => {
            let v = cx.num(f, "model.frequency")?;
            if v < 0.0 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(f),
                    "model.frequency",
                    format!("the frequency must not be negative (got {v})"),
                    "give the frequency in Hz, 0 for a magnetostatic case",
                ));
            }
            v
        }
    };
    let depth = match &m.depth {
        None => DEFAULT_DEPTH_M,
        Some(d) => cx.pos_len(d, "model.depth", "the depth")?,
    };
    let element_order = match &m.element_order {
        None => Order::Quadratic,
        Some(o) => {
            let v = cx.num(o, "model.element_order")?;
            if v == 1.0 {
                Order::Linear
            } else if v == 2.0 {
                Order::Quadratic
            } else {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(o),
                    "model.element_order",
                    format!("the element order must be 1 or 2 (got {v})"),
                    "use 2 (the default, quadratic elements) or 1 (linear)",
                ));
            }
        }
    };
    let accuracy = match &m.accuracy {
        None => None,
        Some(a) => {
            let v = cx.num(a, "model.accuracy")?;
            if !(1e-6..=0.5).contains(&v) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(a),
                    "model.accuracy",
                    format!(
                        "the accuracy target is a relative error between 1e-6 and 0.5 (got {v})"
                    ),
                    "write e.g. accuracy = 0.005 for 0.5 %",
                ));
            }
            Some(v)
        }
    };
    let max_triangles = match &m.max_triangles {
        None => crate::case::model::DEFAULT_MAX_TRIANGLES,
        Some(a) => {
            let v = cx.num(a, "model.max_triangles")?;
            if !((100.0..=5e7).contains(&v) && v.fract() == 0.0) {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(a),
                    "model.max_triangles",
                    format!("the element budget must be a whole number from 100 to 5e7 (got {v})"),
                    "write e.g. max_triangles = 500000",
                ));
            }
            v as usize
        }
    };
    let uniform_refinement = m
        .refinement
        .as_ref()
        .is_some_and(|r| *r.get_ref() == RawRefinement::Uniform);
    let title = m
        .title
        .as_ref()
        .map_or_else(String::new, |t| t.get_ref().clone());
    Ok(ModelSettings {
        title,
        frequency,
        depth,
        element_order,
        accuracy,
        max_triangles,
        uniform_refinement,
    })
}

/// Refuses a frequency whose free-space wavelength is not large against the domain.
pub(super) fn check_quasistatic(
    cx: &Ctx<'_>,
    m: &RawModel,
    frequency: f64,
    domain: &Domain,
) -> Result<()> {
    if let Some(f) = m.frequency.as_ref().filter(|_| frequency > 0.0) {
        let BBox { min: lo, max: hi } = domain.shape.bbox();
        let size = (hi[0] - lo[0]).hypot(hi[1] - lo[1]);
        let wavelength = SPEED_OF_LIGHT / frequency;
        if size > MAX_DOMAIN_OVER_WAVELENGTH * wavelength {
            return Err(cx.err(
                K::OutOfRange,
                sp(f),
                "model.frequency",
                format!(
                    "at {} Hz the free-space wavelength ({} m) is not large against the domain \
                     ({} m across): the model neglects displacement current and does not hold",
                    fmt_g(frequency),
                    fmt_g(wavelength),
                    fmt_g(size)
                ),
                format!(
                    "keep the domain below a tenth of the wavelength: here the frequency must \
                     not exceed {} Hz",
                    fmt_g(MAX_DOMAIN_OVER_WAVELENGTH * SPEED_OF_LIGHT / size)
                ),
            ));
        }
    }
    Ok(())
}
