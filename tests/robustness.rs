//! Robustness through the binary (issue 9): an interrupted sweep resumes to the same CSV as
//! an uninterrupted one, results do not depend on the thread count, cases over the resource
//! limits are refused before meshing, and a system with nothing holding the potential is
//! named instead of solved.

mod common;
use common::*;

use std::path::Path;
use std::process::{Command, Stdio};
use std::time::{Duration, Instant};

/// A small axisymmetric rod pickup (invented demo geometry) with a 12-point sweep of the rod
/// length; each point takes a fraction of a second.
const ROD_SWEEP: &str = r#"
[model]
title = "resume rod"
symmetry = "axisymmetric"
frequency = 50
[parameters]
L = 100
[domain]
rect = { min = [0, -200], max = [200, 200] }
boundary = "open"
mesh_size = 25
[background]
b = 1e-6
direction = [0, 1]
[materials.ferrite]
mu_r = 1000
[[part]]
name = "rod"
material = "ferrite"
rect = { min = [0, "-L/2"], max = [5, "L/2"] }
mesh_size = 1
[[coil]]
name = "pickup"
turns = 500
wire = "awg30"
rect = { min = [5.5, "-L/4"], max = [8, "L/4"] }
mesh_size = 1
[[sweep]]
parameter = "L"
values = [40, 50, 60, 70, 80, 90, 100, 110, 120, 130, 140, 150]
"#;

fn sweep_cmd(case: &Path, out: &Path, more: &[&str]) -> Command {
    let mut c = Command::new(bin());
    c.args([
        "--threads",
        "1",
        "sweep",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ])
    .args(more);
    c
}

/// Finished points in a sweep journal (lines after the header, complete ones only).
fn journal_points(out: &Path) -> usize {
    std::fs::read_to_string(out.join("points.partial.jsonl"))
        .map(|t| t.matches('\n').count().saturating_sub(1))
        .unwrap_or(0)
}

/// Starts the sweep as a child process and waits until `n` points are in its journal.
fn start_and_wait(case: &Path, out: &Path, n: usize) -> std::process::Child {
    let mut child = sweep_cmd(case, out, &[])
        .stdout(Stdio::null())
        .stderr(Stdio::null())
        .spawn()
        .expect("start sweep");
    let t0 = Instant::now();
    while journal_points(out) < n {
        assert!(
            child.try_wait().unwrap().is_none(),
            "the sweep ended before {n} points were done"
        );
        assert!(t0.elapsed() < Duration::from_secs(300), "no progress");
        std::thread::sleep(Duration::from_millis(10));
    }
    child
}

/// Every row of a CSV has the header's number of fields; returns the number of rows.
fn valid_csv_rows(path: &Path) -> usize {
    let mut r = csv::Reader::from_path(path).expect("csv");
    let width = r.headers().expect("header").len();
    let mut rows = 0;
    for rec in r.records() {
        let rec = rec.expect("a whole row");
        assert_eq!(rec.len(), width, "a short row in {}", path.display());
        rows += 1;
    }
    rows
}

#[test]
fn killed_sweep_resumes_to_the_same_csv_as_an_uninterrupted_run() {
    let (dir, case) = write_case("rod.toml", ROD_SWEEP);
    let whole = dir.path().join("whole");
    let o = sweep_cmd(&case, &whole, &[]).output().unwrap();
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    assert!(
        !whole.join("points.partial.jsonl").exists(),
        "the journal is removed when the sweep is complete"
    );
    let expected = std::fs::read(whole.join("sweep.csv")).unwrap();

    // kill -9 once 3 points are done
    let cut = dir.path().join("cut");
    let mut child = start_and_wait(&case, &cut, 3);
    child.kill().unwrap();
    child.wait().unwrap();
    let done = journal_points(&cut);
    assert!(
        (3..12).contains(&done),
        "killed mid-way: {done} of 12 points"
    );
    // what is on disk is a valid CSV of some of the finished points
    let rows = valid_csv_rows(&cut.join("sweep.csv"));
    assert!((1..=done).contains(&rows), "{rows} rows for {done} points");

    let o = sweep_cmd(&case, &cut, &["--resume"]).output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(o.status.success(), "{err}");
    assert!(err.contains("resuming: "), "{err}");
    let resumed: usize = err
        .split("resuming: ")
        .nth(1)
        .and_then(|s| s.split_whitespace().next())
        .and_then(|s| s.parse().ok())
        .expect("count of resumed points");
    assert!((3..12).contains(&resumed), "{err}");
    assert_eq!(
        std::fs::read(cut.join("sweep.csv")).unwrap(),
        expected,
        "resumed sweep.csv differs from the uninterrupted one"
    );
    assert_eq!(
        std::fs::read(cut.join("sweep.json")).unwrap(),
        std::fs::read(whole.join("sweep.json")).unwrap()
    );
    assert!(!cut.join("points.partial.jsonl").exists());
}

#[test]
fn sigterm_stops_a_sweep_cleanly_with_the_finished_points() {
    let (dir, case) = write_case("rod.toml", ROD_SWEEP);
    let out = dir.path().join("out");
    let child = start_and_wait(&case, &out, 2);
    let k = Command::new("kill")
        .args(["-TERM", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(k.success());
    let o = child.wait_with_output().unwrap();
    assert_eq!(o.status.code(), Some(130), "exit status after SIGTERM");
    let done = journal_points(&out);
    assert!(done < 12, "stopped before the end: {done}");
    // the points in flight finished: the CSV holds every point of the journal
    assert_eq!(valid_csv_rows(&out.join("sweep.csv")), done);
    let json: serde_json::Value =
        serde_json::from_str(&std::fs::read_to_string(out.join("sweep.json")).unwrap()).unwrap();
    assert_eq!(json["points"].as_array().unwrap().len(), done);
    // no temporary files left
    for e in std::fs::read_dir(&out).unwrap() {
        let name = e.unwrap().file_name().to_string_lossy().into_owned();
        assert!(!name.contains(".tmp-"), "left behind: {name}");
    }
    // resuming a journal of another case is refused
    std::fs::write(&case, ROD_SWEEP.replace("turns = 500", "turns = 501")).unwrap();
    let o = sweep_cmd(&case, &out, &["--resume"]).output().unwrap();
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("another sweep"));
}

/// results.json without the run times (`solve.*_s`), which differ from run to run.
fn results_without_timings(out: &Path) -> String {
    let text = std::fs::read_to_string(out.join("results.json")).unwrap();
    let mut v: serde_json::Value = serde_json::from_str(&text).unwrap();
    if let Some(solve) = v.get_mut("solve").and_then(|s| s.as_object_mut()) {
        solve.retain(|k, _| !k.ends_with("_s"));
    }
    serde_json::to_string_pretty(&v).unwrap()
}

fn solve_with_threads(case: &Path, out: &Path, threads: &str) -> String {
    let o = fluxpick(&[
        "solve",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--threads",
        threads,
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    results_without_timings(out)
}

/// The same case gives the same results.json bit for bit on 1 and 2 threads and from run to
/// run (run times aside): a static case and an eddy-current case. The numbers are compared
/// as their shortest round-trip decimal text, so equal text means equal bits.
#[test]
fn results_are_identical_across_runs_and_thread_counts() {
    let dir = tempfile::tempdir().unwrap();
    for name in ["rod-uniform-field.toml", "feeder-pair.toml"] {
        let case = repo().join("cases").join(name);
        let one = solve_with_threads(&case, &dir.path().join("a"), "1");
        let two = solve_with_threads(&case, &dir.path().join("b"), "2");
        let again = solve_with_threads(&case, &dir.path().join("c"), "2");
        assert!(one.len() > 500, "{name}: results too short: {one}");
        assert_eq!(one, two, "{name}: 1 vs 2 threads");
        assert_eq!(two, again, "{name}: run to run");
    }
}

#[test]
fn a_case_over_the_limits_is_refused_before_meshing() {
    let case = repo().join("cases/rod-uniform-field.toml");
    let dir = tempfile::tempdir().unwrap();
    let out = dir.path().join("out");
    let run = |extra: &[&str]| {
        let mut args = vec![
            "solve",
            case.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ];
        args.extend_from_slice(extra);
        fluxpick(&args)
    };
    let o = run(&["--max-triangles", "500"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    for want in [
        "triangles",
        "at most 500 triangles (--max-triangles)",
        "multiply every mesh size by at least",
        "--max-memory",
    ] {
        assert!(err.contains(want), "`{want}` missing from: {err}");
    }
    assert!(!out.exists(), "nothing written");
    let o = run(&["--max-memory", "0.001"]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("of memory: --max-memory"), "{err}");
    assert!(!out.exists());
    // `mesh` is refused the same way
    let o = fluxpick(&[
        "mesh",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--max-triangles",
        "500",
    ]);
    assert_eq!(o.status.code(), Some(2));
    // unusable values are refused as arguments
    for bad in [
        ["--max-memory", "-1"],
        ["--max-triangles", "0"],
        ["--threads", "0"],
    ] {
        let o = run(&bad);
        assert_eq!(o.status.code(), Some(2), "{bad:?}");
    }
    // within the limits it solves
    let o = run(&["--max-triangles", "200000", "--max-memory", "4"]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
}

/// Estimated far beyond any memory here (about 1.5e7 triangles, under the case file's own
/// cap of 2e7): refused at once, where meshing it would take minutes.
#[test]
fn a_huge_case_is_refused_by_the_memory_limit() {
    let text = r#"
[model]
symmetry = "planar"
[domain]
rect = { min = [-1000, -1000], max = [1000, 1000] }
boundary = "fixed"
mesh_size = 1.1
[[conductor]]
name = "bar"
rect = { center = [0, 0], size = [40, 10] }
current = 100
"#;
    let (dir, case) = write_case("huge.toml", text);
    let out = dir.path().join("out");
    let o = fluxpick(&[
        "solve",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
        "--max-memory",
        "2",
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    assert!(err.contains("domain.mesh_size"), "{err}");
    assert!(!out.exists());
}

/// A planar box whose four sides are all flux-normal: nothing holds the potential, the
/// matrix is singular. The run stops with exit status 2 naming every region.
#[test]
fn a_domain_with_no_boundary_condition_is_named_not_solved() {
    let text = r#"
[model]
symmetry = "planar"
[domain]
rect = { min = [-100, -100], max = [100, 100] }
boundary = "fixed"
mesh_size = 20
[[edge]]
side = "left"
condition = "flux-normal"
[[edge]]
side = "right"
condition = "flux-normal"
[[edge]]
side = "bottom"
condition = "flux-normal"
[[edge]]
side = "top"
condition = "flux-normal"
[materials.steel]
mu_r = 100
[[part]]
name = "plate"
material = "steel"
rect = { center = [0, 40], size = [60, 6] }
[[conductor]]
name = "bar"
rect = { center = [0, 0], size = [20, 10] }
current = 100
"#;
    let (dir, case) = write_case("float.toml", text);
    let out = dir.path().join("out");
    let o = fluxpick(&[
        "solve",
        case.to_str().unwrap(),
        "--out",
        out.to_str().unwrap(),
    ]);
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(2), "{err}");
    for want in [
        "singular",
        "`air`, `plate`, `bar`",
        "(the whole domain)",
        "flux-parallel",
    ] {
        assert!(err.contains(want), "`{want}` missing from: {err}");
    }
    assert!(!out.exists(), "nothing written");
}

/// Ctrl-C (SIGINT) during a solve of several seconds: exit status 130 and nothing written,
/// not even a temporary file.
#[test]
fn ctrl_c_during_a_solve_stops_without_writing() {
    // the rod example meshed four times finer: about 80k triangles, several seconds
    let text = std::fs::read_to_string(repo().join("cases/rod-uniform-field.toml"))
        .unwrap()
        .replace("mesh_size = 40", "mesh_size = 10")
        .replace("mesh_size = 2", "mesh_size = 0.5");
    let (dir, case) = write_case("rod.toml", &text);
    let out = dir.path().join("out");
    let child = Command::new(bin())
        .args([
            "solve",
            case.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ])
        .stdout(Stdio::null())
        .stderr(Stdio::piped())
        .spawn()
        .unwrap();
    std::thread::sleep(Duration::from_millis(500));
    let k = Command::new("kill")
        .args(["-INT", &child.id().to_string()])
        .status()
        .unwrap();
    assert!(k.success());
    let o = child.wait_with_output().unwrap();
    let err = String::from_utf8_lossy(&o.stderr);
    assert_eq!(o.status.code(), Some(130), "{err}");
    assert!(err.contains("interrupted"), "{err}");
    assert!(!out.exists(), "nothing written");
    let left: Vec<_> = std::fs::read_dir(dir.path())
        .unwrap()
        .map(|e| e.unwrap().file_name())
        .collect();
    assert_eq!(left.len(), 1, "only the case file: {left:?}");
}
