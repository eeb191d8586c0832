//! `[materials.NAME]`: the built-ins and the file's own, with their B-H curves (points,
//! a built-in curve or a CSV file), and the references to them by name.

use std::collections::BTreeMap;
use std::path::Path;

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::{nearest, CaseErrorKind as K};
use crate::case::model::{builtin_materials, Material, MaterialId};
use crate::case::raw::{Pt, RawMaterial};

/// Every material, in name order (a [`MaterialId`] is the position): the built-ins,
/// replaced or joined by the file's tables.
pub(super) fn resolve_materials(
    cx: &Ctx<'_>,
    raw: &BTreeMap<String, Spanned<RawMaterial>>,
) -> Result<Vec<Material>> {
    let mut materials = builtin_materials();
    for (name, mat) in raw {
        materials.insert(name.clone(), resolve_material(cx, name, mat)?);
    }
    Ok(materials.into_values().collect())
}

/// The id of a built-in material (always present: a file's table of the same name
/// replaces its values, not its name).
pub(super) fn builtin_id(materials: &[Material], name: &str) -> MaterialId {
    let i = materials.iter().position(|m| m.name == name);
    MaterialId::new(i.expect("the built-in materials are always defined"))
}

fn resolve_material(cx: &Ctx<'_>, name: &str, mat: &Spanned<RawMaterial>) -> Result<Material> {
    let k = format!("materials.{name}");
    let mv = mat.get_ref();
    let mu_r = match &mv.mu_r {
        None => 1.0,
        Some(v) => cx.positive(v, &format!("{k}.mu_r"), "the relative permeability")?,
    };
    let conductivity = match &mv.conductivity {
        None => 0.0,
        Some(v) => {
            let s = cx.num(v, &format!("{k}.conductivity"))?;
            if s < 0.0 {
                return Err(cx.err(
                    K::OutOfRange,
                    sp(v),
                    &format!("{k}.conductivity"),
                    format!("the conductivity must not be negative (got {s})"),
                    "give it in S/m, 0 for an insulator",
                ));
            }
            s
        }
    };
    let b_sat = mv
        .b_sat
        .as_ref()
        .map(|v| cx.positive(v, &format!("{k}.b_sat"), "the saturation flux density"))
        .transpose()?;
    let density = mv
        .density
        .as_ref()
        .map(|v| cx.positive(v, &format!("{k}.density"), "the density"))
        .transpose()?;
    let bh = material_bh(cx, &k, mv)?;
    Ok(Material {
        name: name.to_string(),
        mu_r,
        conductivity,
        bh,
        b_sat,
        density,
    })
}

/// The B-H curve of a material, from one of `bh`, `bh_curve` and `bh_file` (none: linear).
fn material_bh(cx: &Ctx<'_>, k: &str, mv: &RawMaterial) -> Result<Option<Vec<[f64; 2]>>> {
    let from_file = match &mv.bh_file {
        None => None,
        Some(f) => {
            if mv.bh.is_some() || mv.bh_curve.is_some() {
                return Err(cx.err(
                    K::ShapeKeys,
                    sp(f),
                    &format!("{k}.bh_file"),
                    "give one of `bh`, `bh_curve` and `bh_file`",
                    "remove the others",
                ));
            }
            Some(read_bh_file(cx, f, &format!("{k}.bh_file"))?)
        }
    };
    let bh = match (&mv.bh, &mv.bh_curve) {
        _ if from_file.is_some() => from_file,
        (Some(_), Some(named)) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(named),
                &format!("{k}.bh_curve"),
                "give either `bh` (points) or `bh_curve` (a built-in curve), not both",
                "remove one of them",
            ))
        }
        (None, None) => None,
        (Some(curve), None) => Some(resolve_bh(cx, curve, &format!("{k}.bh"))?),
        (None, Some(named)) => Some(builtin_curve(cx, named, k)?),
    };
    Ok(bh)
}

/// One of the built-in B-H curves by name.
fn builtin_curve(cx: &Ctx<'_>, named: &Spanned<String>, k: &str) -> Result<Vec<[f64; 2]>> {
    use fluxpick_solver::bh::typical;
    let pts: &[[f64; 2]] = match named.get_ref().as_str() {
        "mild-steel" => &typical::MILD_STEEL,
        "electrical-steel" => &typical::ELECTRICAL_STEEL,
        "mnzn-ferrite" => &typical::MNZN_FERRITE,
        other => {
            let names = ["mild-steel", "electrical-steel", "mnzn-ferrite"];
            let help = match nearest(other, names.iter().copied()) {
                Some(m) => format!(
                    "did you mean `{m}`? The built-in curves are {}",
                    names.join(", ")
                ),
                None => format!(
                    "the built-in curves are {}; or give `bh` points",
                    names.join(", ")
                ),
            };
            return Err(cx.err(
                K::UnknownKey,
                sp(named),
                &format!("{k}.bh_curve"),
                format!("no built-in B-H curve `{other}`"),
                help,
            ));
        }
    };
    Ok(pts.to_vec())
}

/// A part's or a conductor's material, which must be defined.
pub(super) fn material_ref(
    cx: &Ctx<'_>,
    materials: &[Material],
    m: &Spanned<String>,
    key: &str,
) -> Result<MaterialId> {
    let name = m.get_ref();
    if let Some(i) = materials.iter().position(|k| &k.name == name) {
        return Ok(MaterialId::new(i));
    }
    let material_names: Vec<&str> = materials.iter().map(|k| k.name.as_str()).collect();
    let help = match nearest(name, material_names.iter().copied()) {
        Some(s) => format!("did you mean \"{s}\"? Or define [materials.{name}]"),
        None => format!(
            "define [materials.{name}] or use one of: {}",
            material_names.join(", ")
        ),
    };
    Err(cx.err(
        K::UnknownMaterial,
        sp(m),
        key,
        format!("unknown material \"{name}\""),
        help,
    ))
}

/// Reads a two-column CSV B-H curve (H A/m, B T), relative to the case file, and checks it
/// like `bh`.
fn read_bh_file(cx: &Ctx<'_>, f: &Spanned<String>, key: &str) -> Result<Vec<[f64; 2]>> {
    let base = Path::new(&cx.src.name)
        .parent()
        .map(Path::to_path_buf)
        .unwrap_or_default();
    let path = base.join(f.get_ref());
    let text = std::fs::read_to_string(&path).map_err(|e| {
        cx.err(
            K::Io,
            sp(f),
            key,
            format!("cannot read the B-H file {}: {e}", path.display()),
            "give the path relative to the case file",
        )
    })?;
    let mut pts: Vec<[f64; 2]> = Vec::new();
    for (n, line) in text.lines().enumerate() {
        let line = line.trim();
        if line.is_empty() || line.starts_with('#') {
            continue;
        }
        let cols: Vec<&str> = line.split([',', ';', '\t']).map(str::trim).collect();
        let nums: Option<Vec<f64>> = cols.iter().take(2).map(|c| c.parse().ok()).collect();
        match nums {
            Some(v) if v.len() == 2 && v.iter().all(|x| x.is_finite()) => pts.push([v[0], v[1]]),
            _ if pts.is_empty() && n == 0 => continue, // a header line
            _ => {
                return Err(cx.err(
                    K::WrongType,
                    sp(f),
                    key,
                    format!(
                        "{} line {}: expected two numbers, H (A/m) and B (T)",
                        path.display(),
                        n + 1
                    ),
                    "write one point per line as H,B",
                ))
            }
        }
    }
    let ok = pts.len() >= 3
        && pts[0] == [0.0, 0.0]
        && pts
            .windows(2)
            .all(|w| w[1][0] > w[0][0] && w[1][1] > w[0][1]);
    if !ok {
        return Err(cx.err(
            K::OutOfRange,
            sp(f),
            key,
            format!(
                "the B-H curve in {} must start at 0,0 and have at least 3 points with H and B strictly increasing",
                path.display()
            ),
            "fix the file",
        ));
    }
    Ok(pts)
}

fn resolve_bh(cx: &Ctx<'_>, curve: &Spanned<Vec<Pt>>, key: &str) -> Result<Vec<[f64; 2]>> {
    let mut pts: Vec<[f64; 2]> = Vec::new();
    for (i, p) in curve.get_ref().iter().enumerate() {
        let [h, b] = &p.get_ref().0;
        let q = [
            cx.num(h, &format!("{key}[{i}][0]"))?,
            cx.num(b, &format!("{key}[{i}][1]"))?,
        ];
        let bad_order = pts.last().is_some_and(|l| q[0] <= l[0] || q[1] <= l[1]);
        if q[0] < 0.0 || q[1] < 0.0 || bad_order {
            return Err(cx.err(
                K::OutOfRange,
                sp(p),
                &format!("{key}[{i}]"),
                "B-H points must have H >= 0 and B >= 0, both strictly increasing",
                "list the curve as [[H A/m, B T], ...] from the origin upwards",
            ));
        }
        pts.push(q);
    }
    if pts.len() < 3 {
        return Err(cx.err(
            K::OutOfRange,
            sp(curve),
            key,
            format!("a B-H curve needs at least 3 points (got {})", pts.len()),
            "list the curve as [[0, 0], [H A/m, B T], ...] from the origin upwards",
        ));
    }
    if pts[0] != [0.0, 0.0] {
        return Err(cx.err(
            K::OutOfRange,
            sp(curve),
            &format!("{key}[0]"),
            "a B-H curve must start at the origin",
            "make the first point [0, 0]",
        ));
    }
    Ok(pts)
}
