//! `[[part]]`: passive regions (cores, steel, shields, spacers).

use super::materials::material_ref;
use super::names::Names;
use super::{Ctx, Result};
use crate::case::model::{Domain, Material, Part};
use crate::case::raw::RawCase;

pub(super) fn resolve_parts(
    cx: &Ctx<'_>,
    raw: &RawCase,
    materials: &[Material],
    names: &mut Names,
    domain: &Domain,
) -> Result<Vec<Part>> {
    let mut parts = Vec::new();
    for (i, p) in raw.parts.iter().enumerate() {
        let path = format!("part[{i}]");
        let pv = p.get_ref();
        let name = names.check(cx, &pv.name, &format!("{path}.name"))?;
        let material = material_ref(cx, materials, &pv.material, &format!("{path}.material"))?;
        let (shape, span) = cx.shape(pv.shape_keys(), &path, p.span(), "the part")?;
        cx.check_placement(&shape, &span, &path, domain)?;
        let mesh_size = cx.opt_mesh_size(&pv.mesh_size, &format!("{path}.mesh_size"))?;
        let skin_mesh_size =
            cx.opt_mesh_size(&pv.skin_mesh_size, &format!("{path}.skin_mesh_size"))?;
        parts.push(Part {
            name,
            material,
            shape,
            mesh_size,
            skin_mesh_size,
        });
    }
    Ok(parts)
}
