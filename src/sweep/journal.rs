//! The journal of a sweep in progress, `DIR/points.partial.jsonl`: what lets an interrupted
//! sweep keep its finished points and resume (`fluxpick sweep ... --resume`).
//!
//! Line 1 is a header naming the sweep (a fingerprint of the case text, the swept
//! parameters, the number of points and the shard); every later line is one finished point
//! ([`PointResult`] as JSON), appended and synced to disk (`fsync`) as soon as the point is
//! done, so a kill loses at most the points in flight. While the sweep runs, `DIR/sweep.csv`
//! is rewritten (atomically) from the finished points at most once a second, so it is always
//! a valid CSV of the points done so far (up to the last second); the complete outputs are
//! written at the end and the journal removed.
//!
//! On resume the header must match the case and the shard; a last line cut short by a kill
//! is dropped. A point that failed is a finished point (its error is recorded and it is not
//! solved again); an interrupted point was never recorded and is solved again.

use std::collections::BTreeMap;
use std::fs::File;
use std::io::Write;
use std::path::{Path, PathBuf};
use std::sync::Mutex;
use std::time::{Duration, Instant};

use serde::{Deserialize, Serialize};

use super::record::{csv_text, PointResult, SweepRecord};
use super::SweepError;
use fluxpick_postproc::atomic_write;

/// File name of the journal inside the sweep's output folder.
pub const JOURNAL_FILE: &str = "points.partial.jsonl";
/// Journal format version (the header's `fluxpick_sweep_journal`).
const VERSION: u32 = 1;
/// Least time between two rewrites of `sweep.csv` during a sweep.
const CSV_INTERVAL: Duration = Duration::from_secs(1);

/// What identifies a sweep: the journal's first line.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Header {
    pub fluxpick_sweep_journal: u32,
    /// FNV-1a 64 of the case file's text, in hex.
    pub case_fingerprint: String,
    pub title: String,
    pub parameters: Vec<String>,
    pub total_points: usize,
    pub shard: Option<(usize, usize)>,
}

impl Header {
    pub fn new(
        case_text: &str,
        title: &str,
        parameters: Vec<String>,
        total_points: usize,
        shard: Option<(usize, usize)>,
    ) -> Self {
        Header {
            fluxpick_sweep_journal: VERSION,
            case_fingerprint: format!("{:016x}", fnv1a(case_text.as_bytes())),
            title: title.to_string(),
            parameters,
            total_points,
            shard,
        }
    }
}

/// FNV-1a, 64 bits: a stable fingerprint (std's hashers may change between releases).
fn fnv1a(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for &b in bytes {
        h ^= u64::from(b);
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

struct State {
    file: File,
    done: BTreeMap<usize, PointResult>,
    last_csv: Option<Instant>,
}

/// An open journal: appends finished points, keeps `sweep.csv` current.
pub struct Journal {
    header: Header,
    dir: PathBuf,
    path: PathBuf,
    state: Mutex<State>,
}

/// How a journal was opened.
#[derive(Clone, Debug, PartialEq)]
pub enum Opened {
    /// A new journal (no earlier one, or `--resume` not asked).
    Fresh { discarded_earlier: bool },
    /// Resumed: `points` finished points read back, `torn` damaged lines dropped.
    Resumed { points: usize, torn: usize },
}

impl Journal {
    /// Opens the journal in `dir` (created if needed). With `resume`, an existing journal of
    /// the same sweep is read back; one of another sweep is an error. Without it, any
    /// existing journal is replaced.
    pub fn open(dir: &Path, header: Header, resume: bool) -> Result<(Journal, Opened), SweepError> {
        std::fs::create_dir_all(dir).map_err(SweepError::io("create", dir))?;
        let path = dir.join(JOURNAL_FILE);
        let existing = match std::fs::read_to_string(&path) {
            Ok(t) => Some(t),
            Err(e) if e.kind() == std::io::ErrorKind::NotFound => None,
            Err(e) => return Err(SweepError::io("read", &path)(e)),
        };
        let mut done = BTreeMap::new();
        let mut torn = 0;
        let opened = match (&existing, resume) {
            (Some(text), true) => {
                let mut lines = text.split_inclusive('\n');
                let first = lines.next().unwrap_or("");
                let old: Header = serde_json::from_str(first.trim_end()).map_err(|e| {
                    SweepError::NotAJournal {
                        path: path.clone(),
                        reason: e.to_string(),
                    }
                })?;
                if old != header {
                    return Err(SweepError::OtherSweep { path: path.clone() });
                }
                for line in lines {
                    // a line without its newline was cut short by a kill
                    let parsed = line
                        .strip_suffix('\n')
                        .and_then(|l| serde_json::from_str::<PointResult>(l).ok());
                    match parsed {
                        Some(p) if p.index < header.total_points => {
                            done.insert(p.index, p);
                        }
                        _ => torn += 1,
                    }
                }
                Opened::Resumed {
                    points: done.len(),
                    torn,
                }
            }
            (earlier, _) => Opened::Fresh {
                discarded_earlier: earlier.is_some(),
            },
        };
        // (re)write the journal whole: the header and the points kept, then append
        let mut text = serde_json::to_string(&header).map_err(SweepError::encode)? + "\n";
        for p in done.values() {
            text += &(serde_json::to_string(p).map_err(SweepError::encode)? + "\n");
        }
        atomic_write(&path, text.as_bytes()).map_err(SweepError::io("write", &path))?;
        let file = std::fs::OpenOptions::new()
            .append(true)
            .open(&path)
            .map_err(SweepError::io("open", &path))?;
        Ok((
            Journal {
                header,
                dir: dir.to_path_buf(),
                path,
                state: Mutex::new(State {
                    file,
                    done,
                    last_csv: None,
                }),
            },
            opened,
        ))
    }

    /// Indices of the points already finished.
    pub fn done_indices(&self) -> Vec<usize> {
        self.lock().done.keys().copied().collect()
    }

    fn lock(&self) -> std::sync::MutexGuard<'_, State> {
        // a panic while holding the lock cannot leave the map half-updated: recover it
        self.state.lock().unwrap_or_else(|e| e.into_inner())
    }

    /// Appends a finished point and syncs it to disk; rewrites `sweep.csv` when the last
    /// rewrite is more than a second old.
    pub fn record(&self, p: PointResult) -> Result<(), SweepError> {
        let line = serde_json::to_string(&p).map_err(SweepError::encode)? + "\n";
        let mut st = self.lock();
        st.file
            .write_all(line.as_bytes())
            .and_then(|()| st.file.sync_data())
            .map_err(SweepError::io("append to", &self.path))?;
        st.done.insert(p.index, p);
        if st.last_csv.is_none_or(|t| t.elapsed() >= CSV_INTERVAL) {
            let rec = self.record_of(&st.done);
            let csv = csv_text(&rec)?;
            let path = self.dir.join("sweep.csv");
            atomic_write(&path, csv.as_bytes()).map_err(SweepError::io("write", &path))?;
            st.last_csv = Some(Instant::now());
        }
        Ok(())
    }

    fn record_of(&self, done: &BTreeMap<usize, PointResult>) -> SweepRecord {
        SweepRecord {
            title: self.header.title.clone(),
            parameters: self.header.parameters.clone(),
            total_points: self.header.total_points,
            points: done.values().cloned().collect(),
        }
    }

    /// The sweep record of every finished point, by index.
    pub fn record_so_far(&self) -> SweepRecord {
        self.record_of(&self.lock().done)
    }

    /// Removes the journal (after the complete outputs are written).
    pub fn finish(self) -> Result<(), SweepError> {
        drop(self.state);
        std::fs::remove_file(&self.path).map_err(SweepError::io("remove", &self.path))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn point(i: usize) -> PointResult {
        PointResult {
            index: i,
            parameters: BTreeMap::from([("L".to_string(), 10.0 * i as f64 + 0.1)]),
            figures: Some(BTreeMap::from([("x".to_string(), 1.0 / 3.0 + i as f64)])),
            error: None,
        }
    }

    fn header(text: &str) -> Header {
        Header::new(text, "t", vec!["L".into()], 5, None)
    }

    #[test]
    fn resume_reads_back_points_and_drops_a_torn_line() {
        let dir = tempfile::tempdir().unwrap();
        let (j, o) = Journal::open(dir.path(), header("case"), false).unwrap();
        assert_eq!(
            o,
            Opened::Fresh {
                discarded_earlier: false
            }
        );
        j.record(point(0)).unwrap();
        j.record(point(3)).unwrap();
        drop(j);
        // a kill in the middle of an append
        let path = dir.path().join(JOURNAL_FILE);
        let mut f = std::fs::OpenOptions::new()
            .append(true)
            .open(&path)
            .unwrap();
        f.write_all(b"{\"index\":4,\"param").unwrap();
        drop(f);
        let (j, o) = Journal::open(dir.path(), header("case"), true).unwrap();
        assert_eq!(o, Opened::Resumed { points: 2, torn: 1 });
        assert_eq!(j.done_indices(), vec![0, 3]);
        assert_eq!(j.record_so_far().points, vec![point(0), point(3)]);
        // sweep.csv was written and parses, one row per point so far
        let csv = std::fs::read_to_string(dir.path().join("sweep.csv")).unwrap();
        assert_eq!(csv.lines().count(), 2, "header and the first point: {csv}");
        j.record(point(1)).unwrap();
        drop(j);
        let (j, _) = Journal::open(dir.path(), header("case"), true).unwrap();
        assert_eq!(j.done_indices(), vec![0, 1, 3]);
        j.finish().unwrap();
        assert!(!path.exists());
    }

    #[test]
    fn another_sweep_is_refused_and_fresh_start_discards() {
        let dir = tempfile::tempdir().unwrap();
        let (j, _) = Journal::open(dir.path(), header("case"), false).unwrap();
        j.record(point(2)).unwrap();
        drop(j);
        let e = Journal::open(dir.path(), header("changed case"), true)
            .err()
            .unwrap();
        assert!(matches!(e, SweepError::OtherSweep { .. }), "{e}");
        assert!(e.to_string().contains("another sweep"), "{e}");
        let (j, o) = Journal::open(dir.path(), header("changed case"), false).unwrap();
        assert_eq!(
            o,
            Opened::Fresh {
                discarded_earlier: true
            }
        );
        assert!(j.done_indices().is_empty());
    }
}
