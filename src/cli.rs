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
    /// Worker threads (default: all cores). Results do not depend on it.
    #[arg(long, global = true, value_name = "N")]
    pub threads: Option<usize>,
    /// Refuse, before meshing, a case estimated to need more than N triangles.
    #[arg(long, global = true, value_name = "N")]
    pub max_triangles: Option<u64>,
    /// Memory a solve may plan to use, in GB (default: 80 % of the memory available).
    #[arg(long, global = true, value_name = "GB")]
    pub max_memory: Option<f64>,
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
        /// Also write DIR/field.svg: |B| shading, flux lines and outlines.
        #[arg(long)]
        plot: bool,
    },
    /// Solve every point of the case's [[sweep]] entries: DIR/sweep.csv, DIR/sweep.json
    /// and SVG plots of the main figures against each swept parameter.
    ///
    /// Example: fluxpick sweep cases/rod-uniform-field.toml --out out/rod-sweep
    Sweep {
        case: PathBuf,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// Run only shard K of N (every N-th point from the K-th), e.g. --shard 2/4, to
        /// spread a sweep over several machines; join the results with `fluxpick merge`.
        #[arg(long, value_name = "K/N")]
        shard: Option<String>,
        /// A figure to plot by its dotted key (repeatable), e.g. --plot coils.pickup.emf_v;
        /// default: each coil's EMF, equivalent area, inductance, Q and matched power and
        /// each part's peak |B|.
        #[arg(long, value_name = "KEY")]
        plot: Vec<String>,
        /// Continue an interrupted sweep in DIR: points already finished (its
        /// points.partial.jsonl) are not solved again.
        #[arg(long)]
        resume: bool,
    },
    /// Join the sweep.json files of several shards into one sweep (csv, json, plots).
    ///
    /// Example: fluxpick merge out/shard1 out/shard2 --out out/sweep
    Merge {
        #[arg(required = true)]
        dirs: Vec<PathBuf>,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
    },
    /// Placement map: a pickup (axisymmetric case in a uniform axial field) placed at every
    /// point of a probe of a planar survey case (conductors, steel): EMF and matched power
    /// for the best and for a fixed orientation, with the best positions.
    ///
    /// Example: fluxpick map cases/busbar-survey.toml --pickup cases/rod-uniform-field.toml --out out/map
    Map {
        survey: PathBuf,
        #[arg(long, value_name = "CASE")]
        pickup: PathBuf,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// The survey probe to map over (default: its first).
        #[arg(long)]
        probe: Option<String>,
        /// Fixed orientation of the pickup's axis, degrees from +x.
        #[arg(long, default_value_t = 90.0)]
        axis: f64,
        /// How many best positions to list.
        #[arg(long, default_value_t = 5)]
        best: usize,
    },
    /// Solve several cases (e.g. core variants) and rank them side by side.
    ///
    /// Example: fluxpick compare a.toml b.toml --rank matched_power_w --out out/cmp
    Compare {
        #[arg(required = true)]
        cases: Vec<PathBuf>,
        /// Coil figure to rank by (descending), e.g. emf_v, q, power_per_gram_w.
        #[arg(long, default_value = "matched_power_w")]
        rank: String,
        /// Also write DIR/compare.md and DIR/compare.csv.
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
    },
}

fn parse_shard(s: &str) -> Option<(usize, usize)> {
    let (k, n) = s.split_once('/')?;
    let (k, n) = (k.trim().parse().ok()?, n.trim().parse().ok()?);
    (n >= 1 && (1..=n).contains(&k)).then_some((k, n))
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
    if let Err(code) =
        crate::runtime::settings_from_cli(cli.threads, cli.max_triangles, cli.max_memory)
    {
        return code;
    }
    crate::interrupt::install();
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
            let _writing = crate::interrupt::WriteGuard::new();
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
        Command::Solve {
            case,
            out,
            json,
            plot,
        } => {
            let c = load(&case)?;
            let spinner = crate::runtime::spinner("solving");
            let r = run(&c).map_err(|e| study_fail(&case, e))?;
            drop(spinner);
            let _writing = crate::interrupt::WriteGuard::new();
            std::fs::create_dir_all(&out).map_err(|e| io_fail("folder", &out, e))?;
            let vtu = out.join("field.vtu");
            output::write_field_vtu(&vtu, &c, &r).map_err(|e| io_fail("field", &vtu, e))?;
            if plot {
                let svg = out.join("field.svg");
                fluxpick_postproc::atomic_write(
                    &svg,
                    crate::picture::field_svg(&r, 720).as_bytes(),
                )
                .map_err(|e| io_fail("picture", &svg, e))?;
            }
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
        Command::Sweep {
            case,
            out,
            shard,
            plot,
            resume,
        } => {
            let shard = match shard.as_deref().map(|s| (s, parse_shard(s))) {
                None => None,
                Some((_, Some(k))) => Some(k),
                Some((s, None)) => {
                    eprintln!("error: --shard {s}: write K/N with 1 <= K <= N, e.g. --shard 2/4");
                    return Err(2);
                }
            };
            let (raw, text) = crate::case::load(&case).map_err(|e| {
                eprintln!("{:?}", miette::Report::new(e));
                2
            })?;
            let src = crate::case::SourceInfo::new(case.display().to_string(), text);
            let c = crate::case::resolve(&raw, &src, &Default::default()).map_err(|e| {
                eprintln!("{:?}", miette::Report::new(e));
                2
            })?;
            if c.sweeps.is_empty() {
                eprintln!(
                    "error: {}: the case has no [[sweep]] entry; add one, e.g.\n  [[sweep]]\n  parameter = \"L\"\n  values = [50, 100, 150]",
                    case.display()
                );
                return Err(2);
            }
            crate::sweep::run_resumable(&out, &raw, &src, &c, shard, resume, &plot)
        }
        Command::Merge { dirs, out } => {
            let mut recs = Vec::new();
            for d in &dirs {
                let p = d.join("sweep.json");
                let text = std::fs::read_to_string(&p).map_err(|e| {
                    eprintln!("error: cannot read {}: {e}", p.display());
                    2
                })?;
                let rec: crate::sweep::SweepRecord = serde_json::from_str(&text).map_err(|e| {
                    eprintln!("error: {}: not a sweep record: {e}", p.display());
                    2
                })?;
                recs.push(rec);
            }
            let rec = crate::sweep::merge(&recs).map_err(|e| {
                eprintln!("error: {e}");
                2
            })?;
            if rec.points.len() < rec.total_points {
                eprintln!(
                    "note: {} of {} points present (shards missing?)",
                    rec.points.len(),
                    rec.total_points
                );
            }
            finish_sweep(&out, &rec, &[], 0.0)
        }
        Command::Map {
            survey,
            pickup,
            out,
            probe,
            axis,
            best,
        } => crate::map::run(&survey, &pickup, probe.as_deref(), axis, best, &out),
        Command::Compare { cases, rank, out } => crate::compare::run(&cases, &rank, out.as_deref()),
    }
}

/// Writes a sweep's files and prints what it did; exit 1 when any point failed.
pub(crate) fn finish_sweep(
    out: &Path,
    rec: &crate::sweep::SweepRecord,
    plot: &[String],
    secs: f64,
) -> Result<(), i32> {
    let keys = if plot.is_empty() {
        crate::sweep::default_plot_keys(rec)
    } else {
        plot.to_vec()
    };
    let plots = crate::sweep::write_outputs(out, rec, &keys, "case units").map_err(|e| {
        eprintln!("error: {e}");
        1
    })?;
    let failed: Vec<&crate::sweep::PointResult> =
        rec.points.iter().filter(|p| p.error.is_some()).collect();
    if secs > 0.0 {
        println!(
            "{} points in {secs:.1} s ({:.2} points/s), {} failed",
            rec.points.len(),
            rec.points.len() as f64 / secs,
            failed.len()
        );
    } else {
        println!("{} points, {} failed", rec.points.len(), failed.len());
    }
    println!(
        "wrote {}/sweep.csv, sweep.json and {} plots",
        out.display(),
        plots.len()
    );
    for c in crate::sweep::saturation_crossings(rec) {
        println!(
            "{} reaches {:.0} % at {} = {:.4}",
            c.figure,
            100.0 * c.level,
            c.parameter,
            c.value
        );
    }
    for p in &failed {
        eprintln!(
            "point {} ({:?}) failed: {}",
            p.index,
            p.parameters,
            p.error.as_deref().unwrap_or("")
        );
    }
    if failed.is_empty() {
        Ok(())
    } else {
        Err(1)
    }
}
