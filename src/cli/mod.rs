//! The command-line interface: argument parsing (clap), error rendering (miette) and exit
//! status (0 success, 2 bad case file or arguments, 1 failed solve).

use std::path::{Path, PathBuf};

use clap::{CommandFactory, Parser, Subcommand};

mod commands;
mod runtime;
mod sweep;
pub mod ui;

use crate::case::{load_case, summary as case_summary, Case};
use crate::output;
use crate::pipeline::{run, StudyError};
use crate::settings::Settings;
use ui::{Level, Ui};

#[derive(Parser, Debug)]
#[command(
    name = "fluxpick",
    version,
    about = "Field solver for inductive pickups beside power conductors",
    after_help = AFTER_HELP
)]
pub struct Cli {
    /// Print only errors (and the JSON asked for with --json).
    #[arg(long, short = 'q', global = true, conflicts_with = "verbose")]
    pub quiet: bool,
    /// Print more: what each stage is doing, on standard error.
    #[arg(long, short = 'v', global = true)]
    pub verbose: bool,
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
    /// Refine the mesh until every figure's estimated relative error is below X (e.g.
    /// 0.005), for every solve of the command (overrides model.accuracy).
    #[arg(long, global = true, value_name = "X")]
    pub accuracy: Option<f64>,
}

/// The end of `fluxpick --help`: a first session.
const AFTER_HELP: &str = "\
Getting started:
  fluxpick new rod --out rod.toml          # a commented starter case (also: feeder, three-phase, coaxial)
  fluxpick check rod.toml                  # validate it, with warnings for suspicious input
  fluxpick solve rod.toml --out out/rod --plot
  fluxpick explain fill_factor             # what a case-file key means
Guide: docs/guide.md; every case-file key: docs/case-reference.md";

#[derive(Subcommand, Debug)]
pub enum Command {
    /// Validate a case file and print what it describes.
    ///
    /// Example: fluxpick check cases/rod-uniform-field.toml
    Check {
        case: PathBuf,
        /// Print the summary, warnings and any error as JSON on standard output.
        #[arg(long)]
        json: bool,
    },
    /// Mesh a case and write DIR/mesh.vtu with statistics.
    ///
    /// Example: fluxpick mesh cases/rod-uniform-field.toml --out out/rod
    Mesh {
        case: PathBuf,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// Print the mesh statistics as JSON on standard output.
        #[arg(long)]
        json: bool,
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
        /// Also write the assembled magnetostatic system as Matrix Market files:
        /// DIR/system-matrix.mtx (the stiffness K), DIR/system-rhs.mtx (one column per
        /// winding at 1 A, then the applied field) and DIR/system-unknowns.csv (the column
        /// names and each unknown's node). At 50/60 Hz: K without the eddy-current terms.
        #[arg(long)]
        matrix_market: bool,
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
        /// Print the sweep record (sweep.json) on standard output.
        #[arg(long)]
        json: bool,
    },
    /// Join the sweep.json files of several shards into one sweep (csv, json, plots).
    ///
    /// Example: fluxpick merge out/shard1 out/shard2 --out out/sweep
    Merge {
        #[arg(required = true)]
        dirs: Vec<PathBuf>,
        #[arg(long, value_name = "DIR")]
        out: PathBuf,
        /// Print the merged record (sweep.json) on standard output.
        #[arg(long)]
        json: bool,
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
        /// Print the map record (map.json) on standard output.
        #[arg(long)]
        json: bool,
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
        /// Print the ranked rows as JSON on standard output.
        #[arg(long)]
        json: bool,
    },
    /// Write a commented starter case for a common job; it runs as written and its comments
    /// say what to change.
    ///
    /// Kinds: rod (a ferrite-rod pickup characterised in a uniform field), feeder (a pickup
    /// beside a go-and-return feeder), three-phase (a pickup beside a three-phase busbar set
    /// near a steel wall), coaxial (two coaxial coils for 50/60 Hz power transfer).
    ///
    /// Example: fluxpick new rod --out rod.toml && fluxpick solve rod.toml --out out/rod
    New {
        /// What to model.
        #[arg(value_parser = clap::builder::PossibleValuesParser::new(
            crate::starters::STARTERS.iter().map(|s| s.kind)))]
        kind: String,
        /// Where to write the case (default: KIND.toml here; `-` for standard output).
        #[arg(long, value_name = "FILE")]
        out: Option<PathBuf>,
        /// Replace FILE if it exists.
        #[arg(long)]
        force: bool,
    },
    /// Explain a case-file key: type, unit, default, allowed values, an example and what it
    /// means (the same entry as docs/case-reference.md). Without KEY, list every key.
    ///
    /// Example: fluxpick explain model.accuracy   (also: explain mesh_size, explain "[[coil]]")
    Explain {
        /// A dotted key (`part.mesh_size`, `materials.ferrite.mu_r`) or a bare name.
        key: Option<String>,
    },
    /// Print a shell completion script.
    ///
    /// Example: fluxpick completions bash > ~/.local/share/bash-completion/completions/fluxpick
    Completions {
        /// The shell to complete in.
        shell: clap_complete::Shell,
    },
    /// Print the manual page (roff); with --out DIR, write DIR/fluxpick.1 and one page per
    /// command.
    ///
    /// Example: fluxpick manpage > fluxpick.1 && man ./fluxpick.1
    Manpage {
        /// Write the pages into this folder instead of printing the main one.
        #[arg(long, value_name = "DIR")]
        out: Option<PathBuf>,
    },
}

fn parse_shard(s: &str) -> Option<(usize, usize)> {
    let (k, n) = s.split_once('/')?;
    let (k, n) = (k.trim().parse().ok()?, n.trim().parse().ok()?);
    (n >= 1 && (1..=n).contains(&k)).then_some((k, n))
}

fn load(ui: &Ui, path: &Path) -> Result<Case, i32> {
    crate::note!(ui, "reading {}", path.display());
    load_case(path).map_err(|e| {
        if ui.json {
            print_json(&serde_json::json!({
                "file": path.display().to_string(),
                "ok": false,
                "error": case_error_json(&e),
            }));
        }
        eprintln!("{:?}", miette::Report::new(e));
        2
    })
}

/// A case error as JSON: where it is, what is wrong and how to fix it.
fn case_error_json(e: &crate::case::CaseError) -> serde_json::Value {
    let (line, column) = e
        .line_col()
        .map_or((None, None), |(l, c)| (Some(l), Some(c)));
    serde_json::json!({
        "kind": format!("{:?}", e.kind),
        "file": e.file_name(),
        "line": line,
        "column": column,
        "key": e.key,
        "message": e.message,
        "help": e.help_text(),
    })
}

fn print_json(v: &impl serde::Serialize) {
    println!("{}", serde_json::to_string_pretty(v).unwrap_or_default());
}

/// Prints the warnings of `crate::lint` for a case (standard error, not with --quiet).
fn print_lint(ui: &Ui, path: &Path, c: &Case) -> Vec<crate::lint::Warning> {
    let warnings = crate::lint::lint(c);
    for w in &warnings {
        ui.warn(&path.display().to_string(), w);
    }
    warnings
}

/// How to get past a failed study, for the line after the error.
fn study_help(e: &StudyError) -> &'static str {
    use crate::build::BuildError as B;
    match e {
        StudyError::Build(B::OpposedSymmetryEdges(..)) => {
            "keep the symmetry [[edge]] on one side only and leave the opposite side open"
        }
        StudyError::Build(B::AxisymmetricDomainOffAxis(_)) => {
            "start the domain at the axis: rect = { min = [0, z0], max = [r1, z1] }"
        }
        StudyError::Build(B::DomainShape) => {
            "give [domain] a rect = { min = [..], max = [..] } or a circle = { center = [..], radius = R }"
        }
        StudyError::Curve(..) => {
            "check the material's B-H points: they start at [0, 0] and rise in both H and B"
        }
        StudyError::Newton(_) => {
            "check the model at lower currents or a weaker field, refine the mesh in the saturating parts, or give a smoother B-H curve"
        }
        StudyError::Mesh(_) => {
            "look for shapes that nearly touch or mesh sizes far smaller than the domain; `fluxpick mesh CASE --out DIR` writes the mesh to look at"
        }
        StudyError::Hidden(_) => {
            "move it, remove it, or list it after the entries that cover it (later entries are drawn over earlier ones)"
        }
        StudyError::Limit(_) => {
            "coarsen the mesh (larger mesh_size, a smaller domain) or raise the limit with --max-triangles / --max-memory"
        }
        StudyError::Physics(_) => {
            "give every region a path to a fixed potential: a Dirichlet or open boundary, and conductors that touch no floating island"
        }
        StudyError::Solve(_) => {
            "try a coarser mesh to see whether the model itself solves, and check materials and currents for extreme values"
        }
    }
}

fn io_fail(what: &str, path: &Path, e: std::io::Error) -> i32 {
    eprintln!("error: cannot write {what} {}: {e}", path.display());
    1
}

/// Exit status of a failed study: 2 for a case the program cannot take, 1 for a failed solve.
fn study_exit_code(e: &StudyError) -> i32 {
    match e {
        StudyError::Build(_) | StudyError::Hidden(_) | StudyError::Curve(..) => 2,
        StudyError::Limit(_) => 2,
        StudyError::Newton(_) | StudyError::Mesh(_) | StudyError::Solve(_) => 1,
        // no reference: the case as written cannot be solved; the others failed numerically
        StudyError::Physics(crate::sanity::PhysicsError::NoReference { .. }) => 2,
        StudyError::Physics(_) => 1,
    }
}

fn study_fail(case: &Path, e: StudyError) -> i32 {
    eprintln!("error: {}: {e}\n  help: {}", case.display(), study_help(&e));
    study_exit_code(&e)
}

/// Prints a command's error and returns its exit status.
fn run_fail(e: crate::error::RunError) -> i32 {
    use crate::error::RunError;
    match e {
        RunError::Case(c) => {
            eprintln!("{:?}", miette::Report::new(*c));
            2
        }
        RunError::Input(m) => {
            eprintln!("error: {m}");
            2
        }
        RunError::Study { file, source } => {
            eprintln!("error: {file}: {source}");
            study_exit_code(&source)
        }
        RunError::Write(m) => {
            eprintln!("error: {m}");
            1
        }
    }
}

/// Runs the CLI on the process arguments; returns the exit status.
pub fn main() -> i32 {
    // first: the signal handling must be in place before any other thread starts
    crate::interrupt::install();
    ui::init_error_rendering();
    let cli = match Cli::try_parse() {
        Ok(c) => c,
        Err(e) => {
            let code = if e.use_stderr() { 2 } else { 0 };
            let _ = e.print();
            return code;
        }
    };
    let ui = Ui {
        level: if cli.quiet {
            Level::Quiet
        } else if cli.verbose {
            Level::Verbose
        } else {
            Level::Normal
        },
        json: match &cli.command {
            Command::Check { json, .. }
            | Command::Mesh { json, .. }
            | Command::Solve { json, .. }
            | Command::Sweep { json, .. }
            | Command::Merge { json, .. }
            | Command::Map { json, .. }
            | Command::Compare { json, .. } => *json,
            _ => false,
        },
    };
    let settings = match runtime::settings_from_cli(&cli) {
        Ok(s) => s,
        Err(code) => return code,
    };
    match execute(cli, &ui, &settings) {
        Ok(()) => 0,
        Err(code) => code,
    }
}

fn execute(cli: Cli, ui: &Ui, settings: &Settings) -> Result<(), i32> {
    match cli.command {
        Command::Check { case, json } => check(ui, case, json),
        Command::Mesh { case, out, json } => mesh(ui, settings, case, out, json),
        Command::Solve {
            case,
            out,
            json,
            plot,
            matrix_market,
        } => {
            solve(ui, settings, &case, &out, json, plot)?;
            if matrix_market {
                export_system(ui, settings, &case, &out)?;
            }
            Ok(())
        }
        Command::Sweep {
            case,
            out,
            shard,
            plot,
            json: _,
            resume,
        } => sweep::sweep_command(ui, settings, case, out, shard, plot, resume),
        Command::Merge { dirs, out, json: _ } => sweep::merge(ui, dirs, out),
        Command::Map {
            survey,
            pickup,
            out,
            probe,
            axis,
            best,
            json: _,
        } => commands::map(
            ui,
            settings,
            &survey,
            &pickup,
            probe.as_deref(),
            axis,
            best,
            &out,
        ),
        Command::Compare {
            cases,
            rank,
            out,
            json: _,
        } => commands::compare(ui, settings, &cases, &rank, out.as_deref()),
        Command::New { kind, out, force } => new_case(ui, &kind, out, force),
        Command::Explain { key } => explain(key.as_deref()),
        Command::Completions { shell } => {
            clap_complete::generate(
                shell,
                &mut Cli::command(),
                "fluxpick",
                &mut std::io::stdout(),
            );
            Ok(())
        }
        Command::Manpage { out } => manpage(ui, out.as_deref()),
    }
}

/// `fluxpick check`: validates a case and prints what it describes.
fn check(ui: &Ui, case: PathBuf, json: bool) -> Result<(), i32> {
    let c = load(ui, &case)?;
    let model = crate::build::Model::new(&c).map_err(|e| study_fail(&case, e.into()))?;
    ui.out(&case_summary(&c));
    crate::say!(
        ui,
        "open boundary: {}",
        if model.spec.exterior_image {
            "exterior image (Kelvin inversion)"
        } else {
            "no"
        }
    );
    if ui.verbose() {
        for (k, v) in &c.parameters {
            crate::note!(ui, "parameter {k} = {v}");
        }
    }
    let warnings = print_lint(ui, &case, &c);
    // Sweep values that would not resolve on their own (warned, not fatal: a sweep
    // may run past where a winding fits).
    let mut sweep_problems = Vec::new();
    if !c.sweeps.is_empty() {
        if let Ok((raw, text)) = crate::case::load(&case) {
            let src = crate::case::SourceInfo::new(case.display().to_string(), text);
            for e in crate::case::check_sweep_points(&raw, &src, &c) {
                ui.warn(
                    &case.display().to_string(),
                    &crate::lint::Warning {
                        key: e.key.clone(),
                        message: e.message.clone(),
                        help: e.help_text().unwrap_or("").to_string(),
                    },
                );
                sweep_problems.push(case_error_json(&e));
            }
        }
    }
    if json {
        print_json(&serde_json::json!({
            "file": case.display().to_string(),
            "ok": true,
            "title": c.title,
            "symmetry": format!("{:?}", c.symmetry).to_lowercase(),
            "frequency_hz": c.frequency,
            "parts": c.parts.iter().map(|p| &p.name).collect::<Vec<_>>(),
            "conductors": c.conductors.iter().map(|p| &p.name).collect::<Vec<_>>(),
            "coils": c.coils.iter().map(|p| &p.name).collect::<Vec<_>>(),
            "sweep_points": c.sweeps.iter().map(|s| s.values.len()).product::<usize>(),
            "estimated_triangles": crate::case::estimated_elements(&c).round(),
            "open_boundary": model.spec.exterior_image,
            "warnings": warnings,
            "sweep_point_problems": sweep_problems,
        }));
    }
    Ok(())
}

/// `fluxpick mesh`: meshes a case and writes mesh.vtu.
fn mesh(ui: &Ui, settings: &Settings, case: PathBuf, out: PathBuf, json: bool) -> Result<(), i32> {
    let c = load(ui, &case)?;
    let model = crate::build::Model::new(&c).map_err(|e| study_fail(&case, e.into()))?;
    let t0 = std::time::Instant::now();
    let mesh =
        crate::pipeline::mesh_model(&c, &model, settings).map_err(|e| study_fail(&case, e))?;
    let secs = t0.elapsed().as_secs_f64();
    let _writing = crate::interrupt::WriteGuard::new();
    std::fs::create_dir_all(&out).map_err(|e| io_fail("folder", &out, e))?;
    let path = out.join("mesh.vtu");
    output::write_mesh_vtu(&path, &c, &model, &mesh).map_err(|e| io_fail("mesh", &path, e))?;
    let stats = mesh.stats();
    let names = model.region_names(&c);
    if json {
        print_json(&serde_json::json!({
            "file": case.display().to_string(),
            "mesh_vtu": path.display().to_string(),
            "seconds": secs,
            "nodes": stats.nodes,
            "triangles": stats.triangles,
            "min_angle_deg": stats.min_angle_deg,
            "mean_min_angle_deg": stats.mean_min_angle_deg,
            "regions": names.iter().zip(&stats.regions).map(|(n, r)| serde_json::json!({
                "name": n,
                "triangles": r.triangles,
                "area_m2": r.area,
                "max_edge_m": r.max_edge,
                "min_angle_deg": r.min_angle_deg,
            })).collect::<Vec<_>>(),
        }));
    }
    crate::say!(ui,
        "{} nodes, {} triangles in {:.2} s; smallest angle {:.1}°, mean of the smallest angles {:.1}°",
        stats.nodes, stats.triangles, secs, stats.min_angle_deg, stats.mean_min_angle_deg
    );
    crate::say!(
        ui,
        "{:<20} {:>10} {:>14} {:>12} {:>10}",
        "region",
        "triangles",
        "area (m²)",
        "max edge (m)",
        "min angle"
    );
    for (name, r) in names.iter().zip(&stats.regions) {
        crate::say!(
            ui,
            "{name:<20} {:>10} {:>14.6e} {:>12.4e} {:>9.1}°",
            r.triangles,
            r.area,
            r.max_edge,
            r.min_angle_deg
        );
    }
    crate::say!(ui, "wrote {}", path.display());
    Ok(())
}

/// `fluxpick solve`: solves a case and writes results.json, field.vtu and a summary.
fn solve(
    ui: &Ui,
    settings: &Settings,
    case: &Path,
    out: &Path,
    json: bool,
    plot: bool,
) -> Result<(), i32> {
    let c = load(ui, case)?;
    print_lint(ui, case, &c);
    crate::note!(
        ui,
        "solving: {} parts, {} conductors, {} coils, about {:.0} triangles",
        c.parts.len(),
        c.conductors.len(),
        c.coils.len(),
        crate::case::estimated_elements(&c)
    );
    let spinner = runtime::spinner("solving");
    let r = run(&c, settings).map_err(|e| study_fail(case, e))?;
    drop(spinner);
    crate::note!(ui, "writing {}", out.display());
    let _writing = crate::interrupt::WriteGuard::new();
    std::fs::create_dir_all(out).map_err(|e| io_fail("folder", out, e))?;
    let vtu = out.join("field.vtu");
    output::write_field_vtu(&vtu, &c, &r).map_err(|e| io_fail("field", &vtu, e))?;
    if plot {
        let svg = out.join("field.svg");
        fluxpick_postproc::atomic_write(&svg, crate::picture::field_svg(&r, 720).as_bytes())
            .map_err(|e| io_fail("picture", &svg, e))?;
    }
    let res = out.join("results.json");
    output::write_results_json(&res, &r.results).map_err(|e| io_fail("results", &res, e))?;
    if json {
        print_json(&r.results);
    } else {
        ui.out(&output::summary(&r.results));
        crate::say!(ui, "wrote {} and {}", res.display(), vtu.display());
    }
    Ok(())
}

/// `solve --matrix-market`: the case's assembled magnetostatic system as Matrix Market
/// files (each written whole or not at all) and the names of its columns and unknowns.
fn export_system(ui: &Ui, settings: &Settings, case: &Path, out: &Path) -> Result<(), i32> {
    let c = load(ui, case)?;
    let sys = crate::pipeline::static_system(&c, settings).map_err(|e| study_fail(case, e))?;
    let (mut k, mut f) = (Vec::new(), Vec::new());
    sys.write_matrix_market(&mut k, &mut f).map_err(|e| {
        eprintln!("error: cannot write the system: {e}");
        1
    })?;
    let mut unknowns = format!(
        "# right-hand-side columns: {}\nunknown,x_m,y_m\n",
        sys.columns.join(", ")
    );
    for (i, p) in sys.unknown_points.iter().enumerate() {
        unknowns += &format!("{},{:e},{:e}\n", i + 1, p[0], p[1]);
    }
    let _writing = crate::interrupt::WriteGuard::new();
    for (name, bytes) in [
        ("system-matrix.mtx", k),
        ("system-rhs.mtx", f),
        ("system-unknowns.csv", unknowns.into_bytes()),
    ] {
        let p = out.join(name);
        fluxpick_postproc::atomic_write(&p, &bytes).map_err(|e| io_fail("system", &p, e))?;
    }
    crate::say!(
        ui,
        "wrote {0}/system-matrix.mtx ({1} unknowns), system-rhs.mtx ({2} columns) and system-unknowns.csv",
        out.display(),
        sys.unknown_points.len(),
        sys.columns.len()
    );
    Ok(())
}

/// `fluxpick new`: writes a starter case, refusing to replace a file unless `force`.
fn new_case(ui: &Ui, kind: &str, out: Option<PathBuf>, force: bool) -> Result<(), i32> {
    let Some(starter) = crate::starters::find(kind) else {
        eprintln!("error: no starter `{kind}`");
        return Err(2);
    };
    let out = out.unwrap_or_else(|| PathBuf::from(format!("{kind}.toml")));
    if out == Path::new("-") {
        print!("{}", starter.text);
        return Ok(());
    }
    if out.exists() && !force {
        eprintln!(
            "error: {} already exists; not replacing it\n  help: pass --force to replace it, or choose another name with --out FILE",
            out.display()
        );
        return Err(2);
    }
    if let Some(dir) = out.parent().filter(|d| !d.as_os_str().is_empty()) {
        std::fs::create_dir_all(dir).map_err(|e| io_fail("folder", dir, e))?;
    }
    fluxpick_postproc::atomic_write(&out, starter.text.as_bytes())
        .map_err(|e| io_fail("case", &out, e))?;
    let stem = out
        .file_stem()
        .map_or("case".into(), |s| s.to_string_lossy().into_owned());
    crate::say!(ui,
        "wrote {} ({}).\nNext: read its comments, then\n  fluxpick check {}\n  fluxpick solve {} --out out/{stem} --plot",
        out.display(),
        starter.about,
        out.display(),
        out.display()
    );
    Ok(())
}

/// `fluxpick explain`: one key's reference entry, or the list of keys.
fn explain(key: Option<&str>) -> Result<(), i32> {
    use crate::case::schema::{lookup, render_terminal, Lookup};
    let Some(key) = key else {
        print!("{}", crate::case::schema::key_list());
        return Ok(());
    };
    match lookup(key) {
        Lookup::Found(entries) => {
            let texts: Vec<String> = entries.iter().map(|d| render_terminal(d)).collect();
            print!("{}", texts.join("\n"));
            Ok(())
        }
        Lookup::NotFound(near) => {
            match near {
                Some(n) => eprintln!(
                    "error: no case-file key `{key}`\n  help: did you mean `{n}`? (`fluxpick explain` lists every key)"
                ),
                None => eprintln!(
                    "error: no case-file key `{key}`\n  help: `fluxpick explain` lists every key"
                ),
            }
            Err(2)
        }
    }
}

/// `fluxpick manpage`: the roff page on standard output, or every page into a folder.
fn manpage(ui: &Ui, out: Option<&Path>) -> Result<(), i32> {
    let cmd = Cli::command();
    let render = |c: clap::Command| -> Result<Vec<u8>, i32> {
        let mut buf = Vec::new();
        clap_mangen::Man::new(c).render(&mut buf).map_err(|e| {
            eprintln!("error: cannot render the manual page: {e}");
            1
        })?;
        Ok(buf)
    };
    let Some(dir) = out else {
        use std::io::Write as _;
        let page = render(cmd)?;
        let _ = std::io::stdout().write_all(&page);
        return Ok(());
    };
    std::fs::create_dir_all(dir).map_err(|e| io_fail("folder", dir, e))?;
    let mut pages = vec![("fluxpick.1".to_string(), render(cmd.clone())?)];
    for sub in cmd.get_subcommands() {
        // clap names are `&'static str` without its `string` feature; one leak per page of a
        // one-shot command.
        let name: &'static str = Box::leak(format!("fluxpick-{}", sub.get_name()).into_boxed_str());
        let page = render(sub.clone().name(name))?;
        pages.push((format!("{name}.1"), page));
    }
    for (name, page) in &pages {
        let p = dir.join(name);
        fluxpick_postproc::atomic_write(&p, page).map_err(|e| io_fail("manual page", &p, e))?;
    }
    crate::say!(
        ui,
        "wrote {} manual pages into {}",
        pages.len(),
        dir.display()
    );
    Ok(())
}
