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
pub mod design;
pub mod errors;
pub mod estimated;
pub mod fields;
pub mod figures;
pub mod probe;
pub mod vtk;
pub mod wire;

use std::io::Write;
use std::path::Path;

/// Temporary files made so far by this process (part of each temporary name).
static TEMP_COUNTER: std::sync::atomic::AtomicU64 = std::sync::atomic::AtomicU64::new(0);

/// Writes `bytes` to a temporary file beside `path`, then renames it into place, so that a
/// failed or interrupted run never leaves a half-written file under the final name.
///
/// The temporary file is `.NAME.tmp-PID-K` in the same folder (so the rename stays within
/// one file system), K counting the temporary files of this process: two threads or two
/// processes writing the same path never share a temporary file, and the last rename wins
/// whole. It is created new (never truncating another's), synced before the rename, and
/// removed if anything fails. The folder is synced after the rename where the platform
/// allows it, so the new name survives a power cut.
pub fn atomic_write(path: &Path, bytes: &[u8]) -> std::io::Result<()> {
    let dir = path
        .parent()
        .filter(|p| !p.as_os_str().is_empty())
        .unwrap_or(Path::new("."));
    let name = path
        .file_name()
        .map(|n| n.to_string_lossy().into_owned())
        .unwrap_or_default();
    let k = TEMP_COUNTER.fetch_add(1, std::sync::atomic::Ordering::Relaxed);
    let tmp = dir.join(format!(".{name}.tmp-{}-{k}", std::process::id()));
    let result = (|| {
        let mut f = std::fs::OpenOptions::new()
            .write(true)
            .create_new(true)
            .open(&tmp)?;
        f.write_all(bytes)?;
        f.sync_all()?;
        drop(f);
        std::fs::rename(&tmp, path)
    })();
    if result.is_err() {
        let _ = std::fs::remove_file(&tmp);
    } else if let Ok(d) = std::fs::File::open(dir) {
        // best effort: not every platform can sync a folder
        let _ = d.sync_all();
    }
    result
}

#[cfg(test)]
mod tests {
    use super::atomic_write;

    /// Eight threads write different 1 MB payloads to one path at once, five times each:
    /// every write succeeds, the file always holds one payload whole, and no temporary file
    /// is left behind.
    #[test]
    fn concurrent_writers_never_mix() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("out.bin");
        let payloads: Vec<Vec<u8>> = (0..8u8).map(|i| vec![i; 1 << 20]).collect();
        std::thread::scope(|s| {
            for p in &payloads {
                let path = &path;
                s.spawn(move || {
                    for _ in 0..5 {
                        atomic_write(path, p).unwrap();
                    }
                });
            }
        });
        let got = std::fs::read(&path).unwrap();
        assert!(payloads.contains(&got), "the file mixes payloads");
        let names: Vec<String> = std::fs::read_dir(dir.path())
            .unwrap()
            .map(|e| e.unwrap().file_name().to_string_lossy().into_owned())
            .collect();
        assert_eq!(names, vec!["out.bin".to_string()]);
    }

    /// A write into a folder that does not exist fails and leaves nothing.
    #[test]
    fn failed_write_leaves_nothing() {
        let dir = tempfile::tempdir().unwrap();
        let path = dir.path().join("missing").join("out.txt");
        assert!(atomic_write(&path, b"x").is_err());
        assert_eq!(std::fs::read_dir(dir.path()).unwrap().count(), 0);
    }
}
