//! The records of a sweep: its points, what each gave, and the CSV table of them.

use std::collections::BTreeMap;

use serde::{Deserialize, Serialize};

/// One point of a sweep: its index in the full grid and the parameter values.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Point {
    pub index: usize,
    pub parameters: BTreeMap<String, f64>,
}

/// What a point gave: its scalar figures by dotted key, or the error that stopped it.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct PointResult {
    pub index: usize,
    pub parameters: BTreeMap<String, f64>,
    pub figures: Option<BTreeMap<String, f64>>,
    pub error: Option<String>,
}

/// The whole of a sweep (or of one shard of it), as written to `sweep.json`.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct SweepRecord {
    pub title: String,
    /// Swept parameters in file order.
    pub parameters: Vec<String>,
    /// Points in the full grid.
    pub total_points: usize,
    pub points: Vec<PointResult>,
}

/// Where a figure first reaches a level along a one-parameter sweep (linear interpolation
/// between neighbouring points), e.g. the source current at which a core's peak flux
/// density reaches 80 % of its saturation.
#[derive(Clone, Debug, PartialEq, Serialize, Deserialize)]
pub struct Crossing {
    pub figure: String,
    pub level: f64,
    pub parameter: String,
    pub value: f64,
}

/// The figure columns of a record: every key any point has, sorted.
pub fn figure_keys(rec: &SweepRecord) -> Vec<String> {
    let mut keys: Vec<String> = rec
        .points
        .iter()
        .filter_map(|p| p.figures.as_ref())
        .flat_map(|f| f.keys().cloned())
        .collect();
    keys.sort();
    keys.dedup();
    keys
}

/// `sweep.csv`: one row per point, the parameters, then every figure by dotted key, then
/// `error` (empty when the point solved).
pub fn csv_text(rec: &SweepRecord) -> Result<String, super::SweepError> {
    use super::SweepError;
    let keys = figure_keys(rec);
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header = vec!["point".to_string()];
    header.extend(rec.parameters.iter().cloned());
    header.extend(keys.iter().cloned());
    header.push("error".into());
    w.write_record(&header).map_err(SweepError::encode)?;
    for p in &rec.points {
        let mut row = vec![p.index.to_string()];
        for name in &rec.parameters {
            row.push(
                p.parameters
                    .get(name)
                    .map_or(String::new(), |v| format!("{v}")),
            );
        }
        for k in &keys {
            row.push(
                p.figures
                    .as_ref()
                    .and_then(|f| f.get(k))
                    .map_or(String::new(), |v| format!("{v:e}")),
            );
        }
        row.push(p.error.clone().unwrap_or_default().replace('\n', " "));
        w.write_record(&row).map_err(SweepError::encode)?;
    }
    let bytes = w.into_inner().map_err(SweepError::encode)?;
    String::from_utf8(bytes).map_err(SweepError::encode)
}
