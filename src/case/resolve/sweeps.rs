//! `[[sweep]]`: parameters varied over a list or a range of values, alone or in groups.

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::{nearest, CaseErrorKind as K};
use crate::case::model::Sweep;
use crate::case::raw::RawSweep;

pub(super) fn resolve_sweeps(cx: &Ctx<'_>, raw: &[Spanned<RawSweep>]) -> Result<Vec<Sweep>> {
    let mut sweeps: Vec<Sweep> = Vec::new();
    for (i, s) in raw.iter().enumerate() {
        sweeps.push(resolve_sweep(cx, s, &format!("sweep[{i}]"), &sweeps)?);
    }
    Ok(sweeps)
}

fn resolve_sweep(
    cx: &Ctx<'_>,
    s: &Spanned<RawSweep>,
    path: &str,
    earlier: &[Sweep],
) -> Result<Sweep> {
    let v = s.get_ref();
    let p = v.parameter.get_ref();
    let key = format!("{path}.parameter");
    if !cx.params.contains_key(p) {
        let help = match nearest(p, cx.params.keys().map(String::as_str)) {
            Some(m) => format!("did you mean `{m}`? A sweep varies a [parameters] entry"),
            None => format!("add `{p} = ...` to [parameters] and use it in the geometry"),
        };
        return Err(cx.err(
            K::BadSweep,
            sp(&v.parameter),
            &key,
            format!("`{p}` is not in [parameters]"),
            help,
        ));
    }
    if earlier.iter().any(|e| &e.parameter == p) {
        return Err(cx.err(
            K::DuplicateName,
            sp(&v.parameter),
            &key,
            format!("`{p}` is already swept by an earlier [[sweep]]"),
            "give its values in one [[sweep]] entry",
        ));
    }
    let values = match (&v.values, &v.from, &v.to, &v.steps) {
        (Some(vals), None, None, None) => {
            if vals.get_ref().is_empty() {
                return Err(cx.err(
                    K::BadSweep,
                    sp(vals),
                    &format!("{path}.values"),
                    "the sweep has no values",
                    "list at least one value",
                ));
            }
            let mut out = Vec::new();
            for (i, x) in vals.get_ref().iter().enumerate() {
                out.push(cx.num(x, &format!("{path}.values[{i}]"))?);
            }
            out
        }
        (None, Some(from), Some(to), Some(steps)) => {
            let a = cx.num(from, &format!("{path}.from"))?;
            let b = cx.num(to, &format!("{path}.to"))?;
            let n = cx.count(steps, &format!("{path}.steps"), 2, "the number of steps")?;
            (0..n)
                .map(|i| a + (b - a) * i as f64 / (n - 1) as f64)
                .collect()
        }
        _ => {
            return Err(cx.err(
                K::BadSweep,
                sp(s),
                path,
                "a sweep needs `values`, or all of `from`, `to` and `steps` (not both forms)",
                "write values = [50, 100, 150] or from = 50, to = 200, steps = 7 \
                 (steps = number of values, both ends included)",
            ))
        }
    };
    let group = v.group.as_ref().map(|g| g.get_ref().clone());
    if let (Some(g), Some(gs)) = (&group, &v.group) {
        if let Some(e) = earlier.iter().find(|e| e.group.as_ref() == Some(g)) {
            if e.values.len() != values.len() {
                return Err(cx.err(
                    K::BadSweep,
                    sp(gs),
                    &format!("{path}.group"),
                    format!(
                        "group `{g}` moves its parameters together, but `{}` has {} values and `{p}` has {}",
                        e.parameter,
                        e.values.len(),
                        values.len()
                    ),
                    "give every sweep of a group the same number of values",
                ));
            }
        }
    }
    Ok(Sweep {
        parameter: p.clone(),
        values,
        group,
    })
}
