//! `[background]`: a uniform applied field.

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::Background;
use crate::case::raw::RawBackground;

pub(super) fn resolve_background(cx: &Ctx<'_>, b: &Spanned<RawBackground>) -> Result<Background> {
    let bv = b.get_ref();
    let field = cx.num(&bv.b, "background.b")?;
    if field < 0.0 {
        return Err(cx.err(
            K::OutOfRange,
            sp(&bv.b),
            "background.b",
            format!("the background field must not be negative (got {field})"),
            "give |B| in T rms; reverse `direction` or use phase = 180 instead",
        ));
    }
    let [dx, dy] = &bv.direction.get_ref().0;
    let d = [
        cx.num(dx, "background.direction[0]")?,
        cx.num(dy, "background.direction[1]")?,
    ];
    let n = (d[0] * d[0] + d[1] * d[1]).sqrt();
    if n == 0.0 {
        return Err(cx.err(
            K::NotPositive,
            sp(&bv.direction),
            "background.direction",
            "the direction is the zero vector",
            "give a direction such as [0, 1]",
        ));
    }
    if cx.axisym && d[0].abs() > 1e-9 * n {
        return Err(cx.err(
            K::Axisymmetry,
            sp(&bv.direction),
            "background.direction",
            "an axisymmetric model can only have an axial background field",
            "use direction = [0, 1] (along z); a transverse field needs a planar model",
        ));
    }
    let phase_deg = bv
        .phase
        .as_ref()
        .map_or(Ok(0.0), |p| cx.num(p, "background.phase"))?;
    Ok(Background {
        b: field,
        direction: [d[0] / n, d[1] / n],
        phase_deg,
    })
}
