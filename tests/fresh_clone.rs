//! The tool runs from a fresh clone with only README's commands.
//!
//! The test clones its own checkout (`git clone`, so only committed files come along) into a
//! temporary folder and runs README.md's fenced `sh` blocks there, in order. Two kinds of
//! block are not run, and the test says so: the test command (`cargo test`, which is what is
//! running now), the cluster job script (it starts with `#!/bin/sh` and `#SBATCH` lines and
//! needs a Slurm scheduler) and the optional fuzzing commands (`cargo +nightly fuzz`, a nightly
//! toolchain and ten minutes per target).
//!
//! To stay fast the build uses its own target folder seeded with hard links to this build's
//! compiled crates, and the clone's files are dated before them, so that cargo reuses them
//! (see the comment at the seeding); the clone's binary cannot replace the one the other
//! tests run. Crates that the tests' dev-dependencies build with other features than a build
//! of the binary alone are rebuilt in the clone (DEVELOPERS.md, "Building and testing").

mod common;

use std::path::Path;
use std::process::Command;

/// The fenced `sh` blocks of a Markdown text.
fn sh_blocks(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur: Option<String> = None;
    for line in text.lines() {
        let t = line.trim_start();
        match &mut cur {
            None if t.starts_with("```") && t[3..].trim() == "sh" => cur = Some(String::new()),
            Some(b) if t.starts_with("```") => {
                out.push(std::mem::take(b));
                cur = None;
            }
            Some(b) => {
                b.push_str(line);
                b.push('\n');
            }
            None => {}
        }
    }
    out
}

/// Hard-links (or copies, across file systems) a folder tree.
fn link_tree(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let (src, dst) = (e.path(), to.join(e.file_name()));
        if src.is_dir() {
            link_tree(&src, &dst);
        } else if std::fs::hard_link(&src, &dst).is_err() {
            let _ = std::fs::copy(&src, &dst);
        }
    }
}

/// Sets the modification time of every file under `dir` (but `.git`) to `t`.
fn set_mtimes(dir: &Path, t: std::time::SystemTime) {
    for e in std::fs::read_dir(dir).unwrap() {
        let e = e.unwrap();
        let p = e.path();
        if p.is_dir() {
            if e.file_name() != ".git" {
                set_mtimes(&p, t);
            }
        } else if let Ok(f) = std::fs::File::options().append(true).open(&p) {
            let _ = f.set_modified(t);
        }
    }
}

/// Whether README's block is one this test runs (see the module comment).
fn runnable(block: &str) -> bool {
    !block.contains("cargo test")
        && !block.starts_with("#!")
        && !block.contains("cargo +nightly fuzz")
}

#[test]
fn readme_commands_work_in_a_fresh_clone() {
    let repo = common::repo();
    let tmp = tempfile::tempdir().unwrap();
    let clone = tmp.path().join("fluxpick");
    let o = Command::new("git")
        .args(["clone", "--quiet", "--no-local"])
        .arg(&repo)
        .arg(&clone)
        .output()
        .expect("git");
    assert!(
        o.status.success(),
        "git clone: {}",
        String::from_utf8_lossy(&o.stderr)
    );

    // Seed a target folder with this build's compiled crates, and date the clone's files
    // before them, so that cargo reuses what this build compiled (cargo decides freshness by
    // modification times). A source file the clone lacks still makes cargo rebuild, from the
    // clone's files, and fail; an uncommitted edit in this checkout is not seen (the reused
    // crates are built from it), which cannot happen in CI's clean clone.
    set_mtimes(
        &clone,
        std::time::SystemTime::UNIX_EPOCH + std::time::Duration::from_secs(978_307_200),
    );
    let target = tmp.path().join("target");
    let ours = common::bin().parent().unwrap().to_path_buf(); // .../target/release
    for sub in ["deps", "build", ".fingerprint"] {
        if ours.join(sub).is_dir() {
            link_tree(&ours.join(sub), &target.join("release").join(sub));
        }
    }

    let readme = std::fs::read_to_string(clone.join("README.md")).unwrap();
    let blocks = sh_blocks(&readme);
    let run: Vec<&String> = blocks.iter().filter(|b| runnable(b)).collect();
    let skipped = blocks.len() - run.len();
    eprintln!(
        "README has {} sh blocks; running {}, skipping {skipped} (the test command, the cluster script, fuzzing)",
        blocks.len(),
        run.len()
    );
    assert!(
        run.iter().any(|b| b.contains("cargo run")),
        "README should show how to build and run"
    );
    assert!(skipped <= 3, "README has blocks this test does not run");
    for block in run {
        let o = Command::new("bash")
            .args(["-euo", "pipefail", "-c", block])
            .current_dir(&clone)
            .env("CARGO_TARGET_DIR", &target)
            .env("NO_COLOR", "1")
            .output()
            .expect("bash");
        assert!(
            o.status.success(),
            "README block failed in a fresh clone:\n{block}\nstdout:\n{}\nstderr:\n{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        );
        // What README says a solve writes.
        for line in block.lines().filter(|l| l.contains(" solve ")) {
            let words: Vec<&str> = line.split_whitespace().collect();
            for word in words.windows(2).filter(|w| w[0] == "--out") {
                let dir = clone.join(word[1]);
                assert!(
                    dir.join("results.json").is_file(),
                    "no {}/results.json",
                    word[1]
                );
                assert!(dir.join("field.vtu").is_file(), "no {}/field.vtu", word[1]);
            }
        }
    }
    // The worked example README quotes is what the quick start printed (its EMF line).
    let emf_line = readme
        .lines()
        .find(|l| l.trim_start().starts_with("flux linkage") && l.contains("EMF"))
        .expect("README quotes the worked example's EMF line");
    let o = Command::new(target.join("release/fluxpick"))
        .args([
            "solve",
            "cases/rod-uniform-field.toml",
            "--out",
            "out/rod-check",
        ])
        .current_dir(&clone)
        .output()
        .unwrap();
    let now = String::from_utf8_lossy(&o.stdout);
    // Compared without the error estimates (` ± 0.02 %`), which README may not quote.
    let plain = |l: &str| {
        let w: Vec<&str> = l.split_whitespace().collect();
        let mut out = Vec::new();
        let mut i = 0;
        while i < w.len() {
            if w[i] == "±" {
                i += 3;
                continue;
            }
            out.push(w[i]);
            i += 1;
        }
        out.join(" ")
    };
    assert!(
        now.lines().any(|l| plain(l) == plain(emf_line)),
        "README quotes {emf_line:?}; the build prints:\n{now}"
    );
}
