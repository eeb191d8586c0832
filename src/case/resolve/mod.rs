//! Raw → typed: evaluates expressions, applies the length unit, fills defaults and checks
//! every rule of the format, each failure pointing at the offending value.
//!
//! One module per table of the file, resolved in this order (an error names the first
//! failing value in it): [`parameters`], [`model`] (`[model]`), [`domain`] (`[domain]`,
//! `[[edge]]`), [`background`], [`materials`], [`parts`], [`conductors`], [`coils`],
//! [`circuit`], [`probes`], [`sweeps`], then the whole case's mesh [`budget`]. Shared by
//! all: [`values`] (numbers, expressions, lengths, points), [`shapes`] (shape keys and the
//! placement checks), [`names`] (the names parts, conductors and coils share) and
//! [`toml_errors`] (serde errors before any of this).

use std::collections::BTreeMap;

use super::error::{CaseError, CaseErrorKind as K};
use super::model::*;
use super::raw::*;
use super::SourceInfo;

mod background;
mod budget;
mod circuit;
mod coils;
mod conductors;
mod domain;
mod materials;
mod model;
mod names;
mod parameters;
mod parts;
mod probes;
mod shapes;
mod sweeps;
mod toml_errors;
mod values;

pub(super) use toml_errors::serde_error;
use values::{eval_expr, sp};

type Result<T> = std::result::Result<T, CaseError>;

/// What every table's resolver needs: the source (for errors), the parameter values, the
/// length unit and the symmetry.
struct Ctx<'a> {
    src: &'a SourceInfo,
    params: BTreeMap<String, f64>,
    unit: f64,
    unit_name: &'static str,
    axisym: bool,
}

/// Compact number formatting: up to 6 significant digits, no trailing zeros.
pub(super) fn fmt_g(x: f64) -> String {
    if x == 0.0 {
        return "0".into();
    }
    let a = x.abs();
    if (1e-4..1e7).contains(&a) {
        let decimals = (5 - a.log10().floor() as i32).max(0) as usize;
        let s = format!("{x:.decimals$}");
        if s.contains('.') {
            s.trim_end_matches('0').trim_end_matches('.').to_string()
        } else {
            s
        }
    } else {
        let s = format!("{x:.5e}");
        match s.split_once('e') {
            Some((m, e)) if m.contains('.') => {
                format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.'))
            }
            _ => s,
        }
    }
}

fn unit_name(u: RawLengthUnit) -> &'static str {
    match u {
        RawLengthUnit::Mm => "mm",
        RawLengthUnit::Cm => "cm",
        RawLengthUnit::M => "m",
        RawLengthUnit::In => "in",
    }
}

pub(super) fn resolve(
    raw: &RawCase,
    src: &SourceInfo,
    overrides: &BTreeMap<String, f64>,
) -> Result<Case> {
    let params = parameters::resolve_parameters(raw, src, overrides)?;
    let m = raw.model.get_ref();
    let unit = m
        .length_unit
        .as_ref()
        .map_or(RawLengthUnit::Mm, |u| *u.get_ref());
    let symmetry = match m.symmetry.get_ref() {
        RawSymmetry::Planar => Symmetry::Planar,
        RawSymmetry::Axisymmetric => Symmetry::Axisymmetric,
    };
    let cx = Ctx {
        src,
        params,
        unit: unit.metres(),
        unit_name: unit_name(unit),
        axisym: symmetry == Symmetry::Axisymmetric,
    };

    let settings = model::resolve_model(&cx, m)?;
    let domain = domain::resolve_domain(&cx, raw)?;
    model::check_quasistatic(&cx, m, settings.frequency, &domain)?;
    let background = match &raw.background {
        None => None,
        Some(b) => Some(background::resolve_background(&cx, b)?),
    };
    let materials = materials::resolve_materials(&cx, &raw.materials)?;
    let mut names = names::Names::default();
    let parts = parts::resolve_parts(&cx, raw, &materials, &mut names, &domain)?;
    let mut carriers = Vec::new();
    let conductors =
        conductors::resolve_conductors(&cx, raw, &materials, &mut names, &domain, &mut carriers)?;
    let coils = coils::resolve_coils(&cx, raw, &mut names, &domain, &mut carriers)?;
    let circuit = match &raw.circuit {
        None => None,
        Some(c) => Some(circuit::resolve_circuit(&cx, c, &coils)?),
    };
    let probes = probes::resolve_probes(&cx, &raw.probes)?;
    let sweeps = sweeps::resolve_sweeps(&cx, &raw.sweeps)?;

    if conductors.is_empty() && coils.is_empty() && background.is_none() {
        return Err(cx.err(
            K::MissingKey,
            sp(&raw.model),
            "conductor",
            "the case has no source of field: no [[conductor]], no [[coil]] and no [background]",
            "add a [[conductor]] with a current, a [[coil]] (its inductance is computed even \
             when it carries no current), or a [background] field",
        ));
    }
    let case = Case {
        title: settings.title,
        symmetry,
        frequency: settings.frequency,
        depth: settings.depth,
        element_order: settings.element_order,
        accuracy: settings.accuracy,
        max_triangles: settings.max_triangles,
        uniform_refinement: settings.uniform_refinement,
        length_unit_m: cx.unit,
        parameters: cx.params.clone(),
        domain,
        background,
        air: materials::builtin_id(&materials, AIR),
        materials,
        parts,
        conductors,
        coils,
        circuit,
        probes,
        sweeps,
    };
    budget::check_mesh_size(&cx, raw, &case)?;
    Ok(case)
}
