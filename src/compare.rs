//! `fluxpick compare`: several cases (core variants, placements) solved and laid side by
//! side, ranked by a coil figure.

use std::fmt::Write as _;
use std::path::Path;

use rayon::prelude::*;

use crate::error::RunError;
use crate::format::eng;
use crate::pipeline::{self, Results};
use crate::settings::Settings;
use fluxpick_postproc::atomic_write;

/// One case's line of the comparison.
#[derive(serde::Serialize)]
pub struct Row {
    pub file: String,
    pub coil: String,
    pub figures: Option<Results>,
    pub error: Option<String>,
}

/// The coil a comparison is about: the `[circuit]` coil, else the first open-circuit one,
/// else the first.
fn chosen_coil(case: &crate::case::Case) -> Option<String> {
    if let Some(c) = &case.circuit {
        return Some(case.coil(c.coil).name.clone());
    }
    case.coils
        .iter()
        .find(|c| c.current == 0.0)
        .or(case.coils.first())
        .map(|c| c.name.clone())
}

const COLUMNS: [(&str, &str); 13] = [
    ("emf_v", "EMF"),
    ("inductance_h", "L"),
    ("resistance_ohm", "R"),
    ("q", "Q"),
    ("tuning_capacitance_f", "C tune"),
    ("matched_power_w", "P matched"),
    ("capacitor_voltage_v", "V cap"),
    ("core_mass_kg", "core"),
    ("copper_mass_kg", "copper"),
    ("power_per_gram_w", "P/g"),
    ("power_per_cm3_w", "P/cm³"),
    ("core_peak_b_t", "core B peak"),
    ("equivalent_area_m2", "eq. area"),
];

fn unit(key: &str) -> &'static str {
    match key {
        "emf_v" | "capacitor_voltage_v" => "V",
        "inductance_h" => "H",
        "resistance_ohm" => "Ω",
        "tuning_capacitance_f" => "F",
        "matched_power_w" | "power_per_gram_w" | "power_per_cm3_w" => "W",
        "core_mass_kg" | "copper_mass_kg" => "g",
        "core_peak_b_t" => "T",
        "equivalent_area_m2" => "m²",
        _ => "",
    }
}

/// A coil figure of a row by key (masses in grams; core peak B over the core's parts).
fn value(row: &Row, key: &str) -> Option<f64> {
    let r = row.figures.as_ref()?;
    let c = r.coils.get(&row.coil)?;
    match key {
        "core_peak_b_t" => c
            .core_parts
            .iter()
            .filter_map(|p| r.parts.get(p))
            .map(|p| p.b_peak_t)
            .reduce(f64::max),
        "core_mass_kg" => c.core_mass_kg.map(|m| m * 1e3),
        "copper_mass_kg" => Some(c.copper_mass_kg * 1e3),
        "resistance_ohm" => Some(c.resistance_ohm + c.eddy_resistance_ohm),
        _ => {
            let v = serde_json::to_value(c).ok()?;
            v.get(key)?.as_f64()
        }
    }
}

fn cell(row: &Row, key: &str) -> String {
    match (value(row, key), key) {
        (None, _) => "-".into(),
        (Some(q), "q") => format!("{q:.1}"),
        (Some(v), k) => eng(v, unit(k)),
    }
}

/// A comparison: the rows ranked by `rank_by`, highest first.
#[derive(serde::Serialize)]
pub struct CompareRecord {
    pub rank_by: String,
    pub rows: Vec<Row>,
}

impl CompareRecord {
    /// Rows whose case failed to solve.
    pub fn failed(&self) -> impl Iterator<Item = &Row> {
        self.rows.iter().filter(|r| r.error.is_some())
    }
}

/// Loads `cases`, solves them in parallel and ranks them by the coil figure `rank`.
pub fn compare(
    cases: &[std::path::PathBuf],
    rank: &str,
    settings: &Settings,
) -> Result<CompareRecord, RunError> {
    let mut loaded = Vec::new();
    for p in cases {
        let c = crate::case::load_case(p)?;
        let coil = chosen_coil(&c)
            .ok_or_else(|| RunError::Input(format!("{}: no [[coil]] to compare", p.display())))?;
        loaded.push((p.display().to_string(), coil, c));
    }
    let rank_known = COLUMNS.iter().any(|(k, _)| *k == rank)
        || matches!(
            rank,
            "flux_linkage_wb" | "eddy_resistance_ohm" | "load_power_w"
        );
    if !rank_known {
        let names: Vec<&str> = COLUMNS.iter().map(|c| c.0).collect();
        let near = crate::case::error::nearest(rank, names.iter().copied())
            .map_or(String::new(), |m| format!("did you mean `--rank {m}`? "));
        return Err(RunError::Input(format!(
            "--rank {rank}: not a coil figure\n  help: {near}use one of {}",
            names.join(", ")
        )));
    }
    let mut rows: Vec<Row> = loaded
        .par_iter()
        .map(|(file, coil, c)| match pipeline::run(c, settings) {
            Ok(r) => Row {
                file: file.clone(),
                coil: coil.clone(),
                figures: Some(r.results),
                error: None,
            },
            Err(e) => Row {
                file: file.clone(),
                coil: coil.clone(),
                figures: None,
                error: Some(e.to_string()),
            },
        })
        .collect();
    // rank: descending, missing values last, ties in the given order
    rows.sort_by(|a, b| match (value(a, rank), value(b, rank)) {
        (Some(x), Some(y)) => y.total_cmp(&x),
        (Some(_), None) => std::cmp::Ordering::Less,
        (None, Some(_)) => std::cmp::Ordering::Greater,
        (None, None) => std::cmp::Ordering::Equal,
    });
    Ok(CompareRecord {
        rank_by: rank.to_string(),
        rows,
    })
}

/// The comparison as a terminal table.
pub fn table(rec: &CompareRecord) -> String {
    let mut t = String::new();
    let _ = write!(t, "{:<4} {:<28} {:<10}", "rank", "case", "coil");
    for (_, h) in COLUMNS {
        let _ = write!(t, " {h:>11}");
    }
    t.push('\n');
    for (i, r) in rec.rows.iter().enumerate() {
        let name = Path::new(&r.file)
            .file_name()
            .map_or(r.file.clone(), |n| n.to_string_lossy().into_owned());
        let _ = write!(t, "{:<4} {:<28} {:<10}", i + 1, name, r.coil);
        for (k, _) in COLUMNS {
            let _ = write!(t, " {:>11}", cell(r, k));
        }
        t.push('\n');
    }
    t
}

/// Writes `DIR/compare.md` and `DIR/compare.csv`.
pub fn write_files(dir: &Path, rec: &CompareRecord) -> Result<(), RunError> {
    std::fs::create_dir_all(dir)
        .map_err(|e| RunError::Write(format!("cannot create {}: {e}", dir.display())))?;
    let mut md = String::from("| rank | case | coil |");
    for (k, h) in COLUMNS {
        let u = unit(k);
        let _ = write!(
            md,
            " {h}{} |",
            if u.is_empty() {
                String::new()
            } else {
                format!(" ({u})")
            }
        );
    }
    md.push_str("\n|---|---|---|");
    md.push_str(&"---:|".repeat(COLUMNS.len()));
    md.push('\n');
    let mut w = csv::Writer::from_writer(Vec::new());
    let mut header = vec!["rank".to_string(), "case".into(), "coil".into()];
    header.extend(COLUMNS.iter().map(|c| c.0.to_string()));
    header.push("error".into());
    let _ = w.write_record(&header);
    for (i, r) in rec.rows.iter().enumerate() {
        let _ = write!(md, "| {} | {} | {} |", i + 1, r.file, r.coil);
        let mut line = vec![(i + 1).to_string(), r.file.clone(), r.coil.clone()];
        for (k, _) in COLUMNS {
            let _ = write!(md, " {} |", cell(r, k));
            line.push(value(r, k).map_or(String::new(), |v| format!("{v:e}")));
        }
        md.push('\n');
        line.push(r.error.clone().unwrap_or_default());
        let _ = w.write_record(&line);
    }
    let csv = w.into_inner().unwrap_or_default();
    let write = |name: &str, bytes: &[u8]| {
        atomic_write(&dir.join(name), bytes)
            .map_err(|e| RunError::Write(format!("cannot write {}: {e}", dir.join(name).display())))
    };
    write("compare.md", md.as_bytes())?;
    write("compare.csv", &csv)
}
