//! The whole case's estimated mesh against [`MAX_ESTIMATED_TRIANGLES`].

use super::{fmt_g, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::Case;
use crate::case::raw::RawCase;

/// Largest estimated triangle count ([`crate::case::estimated_elements`]) a case may ask for:
/// about twenty times the largest mesh of the benchmarks (954k triangles). A guard against
/// slips such as a domain in m with mesh sizes meant in mm (a 2e9 mm square domain at mesh
/// size 1 mm was still meshing after 60 s in a trial); not a measured capacity.
pub const MAX_ESTIMATED_TRIANGLES: f64 = 2e7;

/// Refuses a case whose estimated mesh exceeds [`MAX_ESTIMATED_TRIANGLES`], pointing at the
/// mesh size of the entry that contributes most.
pub(super) fn check_mesh_size(cx: &Ctx<'_>, raw: &RawCase, case: &Case) -> Result<()> {
    use crate::case::summary::Share;
    let shares = crate::case::summary::element_shares(case);
    let total: f64 = shares.iter().map(|s| s.1).sum();
    if total.is_finite() && total <= MAX_ESTIMATED_TRIANGLES {
        return Ok(());
    }
    let (who, _) = shares
        .iter()
        .fold((Share::Air, f64::NEG_INFINITY), |best, s| {
            if s.1 > best.1 {
                *s
            } else {
                best
            }
        });
    let own = match who {
        Share::Air => None,
        Share::Part(i) => raw.parts[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("part[{i}].mesh_size"))),
        Share::Conductor(i) => raw.conductors[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("conductor[{i}].mesh_size"))),
        Share::Coil(i) => raw.coils[i]
            .get_ref()
            .mesh_size
            .as_ref()
            .map(|m| (m.span(), format!("coil[{i}].mesh_size"))),
    };
    let (span, key) = own.unwrap_or_else(|| {
        (
            raw.domain.get_ref().mesh_size.span(),
            "domain.mesh_size".to_string(),
        )
    });
    Err(cx.err(
        K::OutOfRange,
        Some(span),
        &key,
        format!(
            "this mesh size would give about {} triangles, more than the {} a case may ask for",
            fmt_g(total.round()),
            fmt_g(MAX_ESTIMATED_TRIANGLES)
        ),
        format!(
            "use a larger mesh size or a smaller domain (lengths are in {}: check \
             `model.length_unit`)",
            cx.unit_name
        ),
    ))
}
