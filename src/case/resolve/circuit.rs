//! `[circuit]`: how the pickup coil is used (its coil, tuning, load and storage).

use toml::Spanned;

use super::{sp, Ctx, Result};
use crate::case::error::{nearest, CaseErrorKind as K};
use crate::case::model::{Circuit, Coil, CoilId, Load, Storage, Tuning};
use crate::case::raw::{Num, RawCircuit, RawTuning};

pub(super) fn resolve_circuit(
    cx: &Ctx<'_>,
    c: &Spanned<RawCircuit>,
    coils: &[Coil],
) -> Result<Circuit> {
    let v = c.get_ref();
    let coil = match &v.coil {
        Some(n) => {
            let Some(k) = coils.iter().position(|k| &k.name == n.get_ref()) else {
                let help = match nearest(n.get_ref(), coils.iter().map(|k| k.name.as_str())) {
                    Some(s) => format!("did you mean \"{s}\"?"),
                    None => "name one of the [[coil]] entries".into(),
                };
                return Err(cx.err(
                    K::UnknownKey,
                    sp(n),
                    "circuit.coil",
                    format!("no coil is named \"{}\"", n.get_ref()),
                    help,
                ));
            };
            CoilId::new(k)
        }
        None => {
            let open: Vec<usize> = (0..coils.len())
                .filter(|&k| coils[k].current == 0.0)
                .collect();
            match (coils.len(), open.len()) {
                (0, _) => {
                    return Err(cx.err(
                        K::MissingKey,
                        sp(c),
                        "circuit",
                        "[circuit] is given but the case has no [[coil]]",
                        "add a coil, or remove [circuit]",
                    ))
                }
                (1, _) => CoilId::new(0),
                (_, 1) => CoilId::new(open[0]),
                _ => {
                    return Err(cx.err(
                        K::MissingKey,
                        sp(c),
                        "circuit.coil",
                        "several coils could own [circuit]",
                        "add coil = \"NAME\" to [circuit]",
                    ))
                }
            }
        }
    };
    let tuning = match v.tuning.as_ref().map(|t| *t.get_ref()) {
        None | Some(RawTuning::None) => Tuning::None,
        Some(RawTuning::Series) => Tuning::Series,
        Some(RawTuning::Parallel) => Tuning::Parallel,
    };
    let load = match &v.load {
        None => Load::Matched,
        Some(l) if matches!(l.get_ref(), Num::Expr(s) if s.trim() == "matched") => Load::Matched,
        Some(l) => Load::Resistance(cx.positive(l, "circuit.load", "the load resistance")?),
    };
    let storage = match &v.storage {
        None => None,
        Some(s) => {
            let sv = s.get_ref();
            Some(Storage {
                capacitance: cx.positive(
                    &sv.capacitance,
                    "circuit.storage.capacitance",
                    "the capacitance",
                )?,
                voltage: cx.positive(&sv.voltage, "circuit.storage.voltage", "the voltage")?,
            })
        }
    };
    Ok(Circuit {
        coil,
        tuning,
        load,
        storage,
    })
}
