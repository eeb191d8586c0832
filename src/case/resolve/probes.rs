//! `[[probe]]`: lines and grids where the field is sampled.

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::CaseErrorKind as K;
use crate::case::model::{Probe, ProbeKind};
use crate::case::raw::RawProbe;

pub(super) fn resolve_probes(cx: &Ctx<'_>, raw: &[Spanned<RawProbe>]) -> Result<Vec<Probe>> {
    let mut probes: Vec<Probe> = Vec::new();
    for (i, p) in raw.iter().enumerate() {
        let probe = resolve_probe(cx, p, &format!("probe[{i}]"), &probes)?;
        probes.push(probe);
    }
    Ok(probes)
}

fn resolve_probe(
    cx: &Ctx<'_>,
    p: &Spanned<RawProbe>,
    path: &str,
    probes: &[Probe],
) -> Result<Probe> {
    let v = p.get_ref();
    let name = v.name.get_ref().trim().to_string();
    if let Some(j) = probes.iter().position(|q| q.name == name) {
        return Err(cx.err(
            K::DuplicateName,
            sp(&v.name),
            &format!("{path}.name"),
            format!("the probe name \"{name}\" is already used by probe[{j}]"),
            "probes need distinct names: rename one",
        ));
    }
    let kind = match (&v.line, &v.grid) {
        (Some(l), None) => {
            let k = format!("{path}.line");
            let lv = l.get_ref();
            let from = cx.point(&lv.from, &format!("{k}.from"))?;
            let to = cx.point(&lv.to, &format!("{k}.to"))?;
            if from == to {
                return Err(cx.err(
                    K::NotPositive,
                    sp(&lv.to),
                    &format!("{k}.to"),
                    "the probe line has zero length",
                    "give different `from` and `to` points",
                ));
            }
            let points = cx.count(
                &lv.points,
                &format!("{k}.points"),
                2,
                "the number of points",
            )?;
            ProbeKind::Line { from, to, points }
        }
        (None, Some(g)) => {
            let k = format!("{path}.grid");
            let gv = g.get_ref();
            let min = cx.point(&gv.min, &format!("{k}.min"))?;
            let max = cx.point(&gv.max, &format!("{k}.max"))?;
            if max[0] <= min[0] || max[1] <= min[1] {
                return Err(cx.err(
                    K::NotPositive,
                    sp(&gv.max),
                    &format!("{k}.max"),
                    "the probe grid has zero or negative extent",
                    "make each `max` coordinate larger than the matching `min` one",
                ));
            }
            let [nx, ny] = &gv.points.get_ref().0;
            let points = [
                cx.count(nx, &format!("{k}.points[0]"), 2, "the number of points")?,
                cx.count(ny, &format!("{k}.points[1]"), 2, "the number of points")?,
            ];
            ProbeKind::Grid { min, max, points }
        }
        (Some(_), Some(g)) => {
            return Err(cx.err(
                K::ShapeKeys,
                sp(g),
                &format!("{path}.grid"),
                "a probe has both `line` and `grid`",
                "give one of them per probe",
            ))
        }
        (None, None) => {
            return Err(cx.err(
                K::MissingKey,
                sp(p),
                path,
                "a probe needs `line` or `grid`",
                "add line = { from = [..], to = [..], points = N } or \
                 grid = { min = [..], max = [..], points = [nx, ny] }",
            ))
        }
    };
    Ok(Probe { name, kind })
}
