//! The command line behaves as conventional tools do: `--help` with an example for every
//! command, shell completions, a manual page, `--quiet` and `--verbose`, `--json` on every
//! command that reports, and no colour codes when standard error is not a terminal or when
//! `NO_COLOR` is set. (The coloured case itself needs a terminal and is not tested here.)

mod common;

use std::path::Path;
use std::process::{Command, Output};

use clap::CommandFactory;
use common::fluxpick;

fn run_in(dir: &Path, args: &[&str], envs: &[(&str, &str)]) -> Output {
    let mut c = Command::new(common::bin());
    c.current_dir(dir).args(args);
    for (k, v) in envs {
        c.env(k, v);
    }
    c.output().expect("run fluxpick")
}

fn ok(o: &Output, what: &str) -> String {
    assert!(
        o.status.success(),
        "{what}: {}\n{}",
        String::from_utf8_lossy(&o.stderr),
        String::from_utf8_lossy(&o.stdout)
    );
    String::from_utf8_lossy(&o.stdout).into_owned()
}

fn json(o: &Output, what: &str) -> serde_json::Value {
    let out = ok(o, what);
    serde_json::from_str(&out).unwrap_or_else(|e| panic!("{what}: not JSON ({e}):\n{out}"))
}

#[test]
fn every_command_has_help_with_an_example() {
    let cli = fluxpick::cli::Cli::command();
    let mut n = 0;
    for sub in cli.get_subcommands() {
        let name = sub.get_name();
        if name == "help" {
            continue;
        }
        let text = ok(&fluxpick(&[name, "--help"]), name);
        assert!(
            text.contains("Example:"),
            "`{name} --help` has no example:\n{text}"
        );
        n += 1;
    }
    assert!(n >= 11, "only {n} commands");
    let top = ok(&fluxpick(&["--help"]), "--help");
    assert!(
        top.contains("Getting started") && top.contains("--quiet") && top.contains("--verbose")
    );
}

#[test]
fn completions_and_manual_page() {
    let bash = ok(&fluxpick(&["completions", "bash"]), "completions bash");
    assert!(
        bash.contains("_fluxpick") && bash.contains("complete"),
        "{bash}"
    );
    let zsh = ok(&fluxpick(&["completions", "zsh"]), "completions zsh");
    assert!(zsh.starts_with("#compdef fluxpick"));
    let man = ok(&fluxpick(&["manpage"]), "manpage");
    assert!(
        man.contains(".TH fluxpick"),
        "{}",
        &man[..man.len().min(300)]
    );
    let dir = tempfile::tempdir().unwrap();
    let d = dir.path().join("man");
    ok(
        &fluxpick(&["manpage", "--out", d.to_str().unwrap()]),
        "manpage --out",
    );
    for page in [
        "fluxpick.1",
        "fluxpick-solve.1",
        "fluxpick-new.1",
        "fluxpick-explain.1",
    ] {
        assert!(d.join(page).is_file(), "{page} missing");
    }
}

#[test]
fn quiet_verbose_json_and_no_colour() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    ok(&run_in(dir, &["new", "rod"], &[]), "new rod");
    ok(&run_in(dir, &["new", "feeder"], &[]), "new feeder");

    // --quiet: nothing on standard output, the files all the same.
    let o = run_in(dir, &["--quiet", "solve", "rod.toml", "--out", "q"], &[]);
    assert_eq!(ok(&o, "quiet solve"), "");
    assert!(dir.join("q/results.json").is_file());
    // --verbose: progress on standard error.
    let o = run_in(dir, &["--verbose", "check", "rod.toml"], &[]);
    ok(&o, "verbose check");
    assert!(String::from_utf8_lossy(&o.stderr).contains("reading rod.toml"));

    // --json on every command that reports: one JSON document on standard output.
    let v = json(&run_in(dir, &["check", "rod.toml", "--json"], &[]), "check");
    assert_eq!(v["ok"], true);
    let v = json(
        &run_in(dir, &["mesh", "rod.toml", "--out", "m", "--json"], &[]),
        "mesh",
    );
    assert!(v["triangles"].as_u64().unwrap() > 1000);
    let v = json(
        &run_in(dir, &["solve", "rod.toml", "--out", "s", "--json"], &[]),
        "solve",
    );
    assert!(v["coils"]["pickup"]["emf_v"].as_f64().unwrap() > 0.0);
    let v = json(
        &run_in(dir, &["sweep", "rod.toml", "--out", "w", "--json"], &[]),
        "sweep",
    );
    assert_eq!(v["points"].as_array().unwrap().len(), 3);
    let v = json(
        &run_in(dir, &["merge", "w", "--out", "w2", "--json"], &[]),
        "merge",
    );
    assert_eq!(v["points"].as_array().unwrap().len(), 3);
    let v = json(
        &run_in(dir, &["compare", "rod.toml", "rod.toml", "--json"], &[]),
        "compare",
    );
    assert_eq!(v["rows"].as_array().unwrap().len(), 2);
    let v = json(
        &run_in(
            dir,
            &[
                "map",
                "feeder.toml",
                "--pickup",
                "rod.toml",
                "--out",
                "p",
                "--json",
            ],
            &[],
        ),
        "map",
    );
    assert!(!v["points"].as_array().unwrap().is_empty());

    // A bad case with --json: the error as JSON, exit status 2.
    std::fs::write(
        dir.join("bad.toml"),
        std::fs::read_to_string(dir.join("rod.toml"))
            .unwrap()
            .replace("fill_factor = 0.6", "fill_factr = 0.6"),
    )
    .unwrap();
    let o = run_in(dir, &["check", "bad.toml", "--json"], &[]);
    assert_eq!(o.status.code(), Some(2));
    let v: serde_json::Value = serde_json::from_slice(&o.stdout).unwrap();
    assert_eq!(v["ok"], false);
    assert_eq!(v["error"]["key"], "coil[0].fill_factr");
    assert!(v["error"]["help"].as_str().unwrap().contains("fill_factor"));
    assert!(v["error"]["line"].as_u64().unwrap() > 1);

    // No colour codes off a terminal (standard error is a pipe here), nor with NO_COLOR, for
    // errors (miette) and warnings alike.
    std::fs::write(
        dir.join("warn.toml"),
        std::fs::read_to_string(dir.join("rod.toml"))
            .unwrap()
            .replace(
                "mesh_size = 1.5             # finer than",
                "mesh_size = 30 # finer than",
            ),
    )
    .unwrap();
    for envs in [&[][..], &[("NO_COLOR", "1")][..]] {
        let o = run_in(dir, &["check", "warn.toml"], envs);
        let err = String::from_utf8_lossy(&o.stderr);
        assert!(err.contains("warning"), "{err}");
        assert!(!err.contains('\u{1b}'), "colour codes in {err:?}");
        let o = run_in(dir, &["check", "bad.toml"], envs);
        assert!(!String::from_utf8_lossy(&o.stderr).contains('\u{1b}'));
    }
}

#[test]
fn misspelt_option_values_get_the_closest_one() {
    let tmp = tempfile::tempdir().unwrap();
    let dir = tmp.path();
    ok(&run_in(dir, &["new", "rod"], &[]), "new rod");
    ok(&run_in(dir, &["new", "feeder"], &[]), "new feeder");
    let o = run_in(
        dir,
        &["compare", "rod.toml", "--rank", "matched_powr_w"],
        &[],
    );
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(
        err.contains("did you mean `--rank matched_power_w`?"),
        "{err}"
    );
    let o = run_in(
        dir,
        &[
            "map",
            "feeder.toml",
            "--pickup",
            "rod.toml",
            "--probe",
            "bisectr",
            "--out",
            "m",
        ],
        &[],
    );
    assert_eq!(o.status.code(), Some(2));
    let err = String::from_utf8_lossy(&o.stderr);
    assert!(err.contains("did you mean `--probe bisector`?"), "{err}");
    let o = run_in(dir, &["explain", "fill_factr"], &[]);
    assert_eq!(o.status.code(), Some(2));
    assert!(String::from_utf8_lossy(&o.stderr).contains("coil.fill_factor"));
}
