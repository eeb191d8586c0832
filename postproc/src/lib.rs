//! fluxpick-postproc: what a solved field means to a pickup designer.
//!
//! Integrals (energy, mean and peak |B| per region, flux linkage, inductance by the flux and
//! the energy routes), probes, the winding and wire figures, and output files (VTK `.vtu`,
//! written atomically). No case-file or CLI types.
//!
//! ```
//! use fluxpick_postproc::probe::line_points;
//! let p = line_points([0.0, 0.0], [1.0, 2.0], 3);
//! assert_eq!(p[1], [0.5, 1.0]);
//! ```

pub mod circuit;
pub mod figures;
pub mod probe;
pub mod vtk;
pub mod wire;

use std::io::Write;
use std::path::Path;

/// Writes `bytes` to a temporary file beside `path`, then renames it into place, so that a
/// failed or interrupted run never leaves a half-written file under the final name.
pub fn atomic_write(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let tmp = dir.join(format!(".{name}.tmp{}", std::process::id()));
    let result = (|| {
        let mut f = std::fs::File::create(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    }
    result
}
