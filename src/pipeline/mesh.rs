//! The mesh stage: the model's mesh, refused first when the case is over the run's limits.

use fluxpick_mesh::{Mesh, SizeMap};

use crate::build::Model;
use crate::case::Case;
use crate::settings::Settings;

use super::StudyError;

/// Meshes a model (refined to `map` when given), naming the entry when a mesh error
/// concerns one; the limits are checked first.
pub fn mesh(
    case: &Case,
    model: &Model,
    settings: &Settings,
    map: Option<&SizeMap>,
) -> Result<Mesh, StudyError> {
    match map {
        None => mesh_model(case, model, settings),
        Some(m) => Ok(fluxpick_mesh::generate_refined(&model.spec, m)?),
    }
}

/// Meshes a model as the case sizes it, after the limits' check.
pub fn mesh_model(case: &Case, model: &Model, settings: &Settings) -> Result<Mesh, StudyError> {
    crate::limits::check(case, &settings.limits)?;
    fluxpick_mesh::generate(&model.spec).map_err(|e| match e {
        fluxpick_mesh::MeshError::EmptyRegion { region } => StudyError::Hidden(
            model
                .region_names(case)
                .get(region + 1)
                .cloned()
                .unwrap_or_else(|| format!("region {region}")),
        ),
        e => StudyError::Mesh(e),
    })
}
