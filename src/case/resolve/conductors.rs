//! `[[conductor]]`: regions with an imposed total current.

use super::materials::{builtin_id, material_ref};
use super::names::Names;
use super::shapes::Carrier;
use super::{Ctx, Result};
use crate::case::model::{Conductor, ConductorKind, Domain, Material, COPPER};
use crate::case::raw::{RawCase, RawConductorKind};

pub(super) fn resolve_conductors(
    cx: &Ctx<'_>,
    raw: &RawCase,
    materials: &[Material],
    names: &mut Names,
    domain: &Domain,
    carriers: &mut Vec<Carrier>,
) -> Result<Vec<Conductor>> {
    let mut conductors = Vec::new();
    for (i, c) in raw.conductors.iter().enumerate() {
        let path = format!("conductor[{i}]");
        let v = c.get_ref();
        let name = names.check(cx, &v.name, &format!("{path}.name"))?;
        let material = match &v.material {
            None => builtin_id(materials, COPPER),
            Some(m) => material_ref(cx, materials, m, &format!("{path}.material"))?,
        };
        let (shape, span) = cx.shape(v.shape_keys(), &path, c.span(), "the conductor")?;
        cx.check_placement(&shape, &span, &path, domain)?;
        cx.check_overlap(&shape, &span, &path, carriers)?;
        carriers.push(Carrier {
            shape: shape.clone(),
            span,
            key: path.clone(),
            name: name.clone(),
        });
        let current = cx.num(&v.current, &format!("{path}.current"))?;
        let phase_deg = v
            .phase
            .as_ref()
            .map_or(Ok(0.0), |p| cx.num(p, &format!("{path}.phase")))?;
        let kind = match v.kind.as_ref().map(|k| *k.get_ref()) {
            None | Some(RawConductorKind::Solid) => ConductorKind::Solid,
            Some(RawConductorKind::Stranded) => ConductorKind::Stranded,
        };
        let mesh_size = cx.opt_mesh_size(&v.mesh_size, &format!("{path}.mesh_size"))?;
        let skin_mesh_size =
            cx.opt_mesh_size(&v.skin_mesh_size, &format!("{path}.skin_mesh_size"))?;
        conductors.push(Conductor {
            name,
            material,
            shape,
            current,
            phase_deg,
            kind,
            mesh_size,
            skin_mesh_size,
        });
    }
    Ok(conductors)
}
