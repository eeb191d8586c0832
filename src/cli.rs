//! The command-line interface: argument parsing (clap), error rendering (miette) and exit
//! status (0 success, 2 bad case file or arguments, 1 failed solve).

use std::path::{Path, PathBuf};

use clap::{Parser, Subcommand};

use crate::case::{load_case, summary as case_summary, Case};
use crate::output;
use crate::study::{run, StudyError};

#[derive(Parser, Debug)]
#[command(
    name = "fluxpick",
    version,
    about = "Field solver for inductive pickups beside power conductors"
)]
pub struct Cli {
    #[command(subcommand)]
    pub command: Command,
}

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Validate a case file and print what it describes.
    ///
    /// Example: fluxpick check cases/rod-uniform-field.toml
    Check { case: PathBuf },
    /// Mesh a case and write DIR/mesh.vtu with statistics.
    ///
    /// Example: fluxpick mesh cases/rod-uniform-field.toml --out out/rod
    Mesh {
        case: PathBuf,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Solve a case: DIR/results.json, DIR/field.vtu and a summary.
    ///
    /// Example: fluxpick solve cases/rod-uniform-field.toml --out out/rod
    Solve {
        case: PathBuf,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// Also print results.json on standard output.
        #[arg(long)]
        json: bool,
    },
}

fn load(path: &Path) -> Result<Case, i32> {
    load_case(path).map_err(|e| {
        eprintln!("{:?}", miette::Report::new(e));
        2
    })
}

fn io_fail(what: &str, path: &Path, e: std::io::Error) -> i32 {
    eprintln!("error: cannot write {what} {}: {e}", path.display());
    1
}

fn study_fail(case: &Path, e: StudyError) -> i32 {
    eprintln!("error: {}: {e}", case.display());
    e.exit_code()
}

/// Runs the CLI on the process arguments; returns the exit status.
pub fn main() -> i32 {
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    match execute(cli) {
        Ok(()) => 0,
        Err(code) => code,
    }
}

fn execute(cli: Cli) -> Result<(), i32> {
    match cli.command {
        Command::Check { case } => {
            let c = load(&case)?;
            let model = crate::build::Model::new(&c).map_err(|e| study_fail(&case, e.into()))?;
            print!("{}", case_summary(&c));
            println!(
                "open boundary: {}",
                if model.spec.exterior_image {
                    "exterior image (Kelvin inversion)"
                } else {
                    "no"
                }
            );
            Ok(())
        }
        Command::Mesh { case, out } => {
            let c = load(&case)?;
            let model = crate::build::Model::new(&c).map_err(|e| study_fail(&case, e.into()))?;
            let t0 = std::time::Instant::now();
            let mesh = crate::study::mesh_model(&c, &model).map_err(|e| study_fail(&case, e))?;
            let secs = t0.elapsed().as_secs_f64();
            std::fs::create_dir_all(&out).map_err(|e| io_fail("folder", &out, e))?;
            let path = out.join("mesh.vtu");
            output::write_mesh_vtu(&path, &c, &model, &mesh)
                .map_err(|e| io_fail("mesh", &path, e))?;
            let stats = mesh.stats();
            let names = output::region_names(&c, &model);
            println!(
                "{} nodes, {} triangles in {:.2} s; smallest angle {:.1}°, mean of the smallest angles {:.1}°",
                stats.nodes, stats.triangles, secs, stats.min_angle_deg, stats.mean_min_angle_deg
            );
            println!(
                "{:<20} {:>10} {:>14} {:>12} {:>10}",
                "region", "triangles", "area (m²)", "max edge (m)", "min angle"
            );
            for (name, r) in names.iter().zip(&stats.regions) {
                println!(
                    "{name:<20} {:>10} {:>14.6e} {:>12.4e} {:>9.1}°",
                    r.triangles, r.area, r.max_edge, r.min_angle_deg
                );
            }
            println!("wrote {}", path.display());
            Ok(())
        }
        Command::Solve { case, out, json } => {
            let c = load(&case)?;
            let r = run(&c).map_err(|e| study_fail(&case, e))?;
            std::fs::create_dir_all(&out).map_err(|e| io_fail("folder", &out, e))?;
            let vtu = out.join("field.vtu");
            output::write_field_vtu(&vtu, &c, &r).map_err(|e| io_fail("field", &vtu, e))?;
            let res = out.join("results.json");
            output::write_results_json(&res, &r.results)
                .map_err(|e| io_fail("results", &res, e))?;
            if json {
                println!(
                    "{}",
                    serde_json::to_string_pretty(&r.results).unwrap_or_default()
                );
            } else {
                print!("{}", output::summary(&r.results));
                println!("wrote {} and {}", res.display(), vtu.display());
            }
            Ok(())
        }
    }
}
