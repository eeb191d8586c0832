//! docs/guide.md as a test: every fenced `sh` block runs, in order, in one scratch folder
//! with the repository's `cases/` copied beside it and the built `fluxpick` first on `PATH`;
//! every folder a command writes with `--out` and every file it redirects to must exist
//! afterwards. The summary the guide quotes must be what `solve` prints today, its pictures
//! and links must exist, and every example case in `cases/` must pass `fluxpick check`.

mod common;

use std::path::{Path, PathBuf};
use std::process::Command;

fn guide() -> String {
    std::fs::read_to_string(common::repo().join("docs/guide.md")).expect("docs/guide.md")
}

/// The fenced blocks of a Markdown text whose info string is `lang`.
pub fn fenced_blocks(text: &str, lang: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut cur: Option<String> = None;
    for line in text.lines() {
        let t = line.trim_start();
        match &mut cur {
            None if t.starts_with("```") && t[3..].trim() == lang => cur = Some(String::new()),
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

fn copy_dir(from: &Path, to: &Path) {
    std::fs::create_dir_all(to).unwrap();
    for e in std::fs::read_dir(from).unwrap() {
        let e = e.unwrap();
        let p = e.path();
        if p.is_dir() {
            copy_dir(&p, &to.join(e.file_name()));
        } else {
            std::fs::copy(&p, to.join(e.file_name())).unwrap();
        }
    }
}

/// What a block says it writes: the argument of every `--out` and every `> FILE`.
fn outputs(block: &str) -> Vec<String> {
    let mut out = Vec::new();
    for line in block.lines() {
        let code = line.split(" #").next().unwrap_or("");
        let words: Vec<&str> = code.split_whitespace().collect();
        for w in words.windows(2) {
            if w[0] == "--out" || w[0] == ">" {
                out.push(w[1].to_string());
            }
        }
    }
    out
}

fn path_with_binary() -> String {
    let bin_dir = common::bin().parent().unwrap().to_path_buf();
    let old = std::env::var_os("PATH").unwrap_or_default();
    let mut dirs = vec![bin_dir];
    dirs.extend(std::env::split_paths(&old));
    std::env::join_paths(dirs)
        .unwrap()
        .to_string_lossy()
        .into_owned()
}

#[test]
fn every_command_in_the_guide_runs() {
    let blocks = fenced_blocks(&guide(), "sh");
    assert!(
        blocks.len() >= 8,
        "only {} sh blocks in the guide",
        blocks.len()
    );
    let dir = tempfile::tempdir().unwrap();
    copy_dir(&common::repo().join("cases"), &dir.path().join("cases"));
    let path = path_with_binary();
    for block in &blocks {
        let o = Command::new("bash")
            .args(["-euo", "pipefail", "-c", block])
            .current_dir(dir.path())
            .env("PATH", &path)
            .env("NO_COLOR", "1")
            .output()
            .expect("run bash");
        assert!(
            o.status.success(),
            "guide block failed:\n{block}\nstdout:\n{}\nstderr:\n{}",
            String::from_utf8_lossy(&o.stdout),
            String::from_utf8_lossy(&o.stderr)
        );
        for f in outputs(block) {
            let p = dir.path().join(&f);
            let present = if p.is_dir() {
                std::fs::read_dir(&p).unwrap().next().is_some()
            } else {
                std::fs::metadata(&p).is_ok_and(|m| m.len() > 0)
            };
            assert!(present, "the guide's block wrote nothing to {f}:\n{block}");
        }
    }
    // The summary the guide quotes is what solve prints now (all but the timing line).
    let quoted = fenced_blocks(&guide(), "text")
        .into_iter()
        .find(|b| b.starts_with("Starter: ferrite rod"))
        .expect("the guide quotes the rod starter's summary");
    let o = Command::new(common::bin())
        .args(["solve", "rod.toml", "--out", "out/rod-again"])
        .current_dir(dir.path())
        .output()
        .unwrap();
    let now = String::from_utf8_lossy(&o.stdout);
    for line in quoted.lines().filter(|l| !l.starts_with("time:")) {
        assert!(
            now.lines().any(|l| l == line),
            "the guide quotes {line:?}, solve now prints:\n{now}"
        );
    }
}

#[test]
fn the_guides_pictures_and_links_exist() {
    let text = guide();
    let docs = common::repo().join("docs");
    let mut n = 0;
    for part in text.split("](").skip(1) {
        let target = part.split(')').next().unwrap();
        if target.starts_with("http") || target.starts_with('#') {
            continue;
        }
        let p: PathBuf = docs.join(target.split('#').next().unwrap());
        assert!(
            p.exists(),
            "the guide links to {target}, which does not exist"
        );
        n += 1;
    }
    assert!(n >= 10, "only {n} local links and pictures");
    // Every picture the regeneration script makes is in docs/img.
    let script = std::fs::read_to_string(common::repo().join("scripts/guide-images")).unwrap();
    for word in script.split_whitespace() {
        if let Some(name) = word.strip_prefix("\"$img/") {
            let name = name.trim_end_matches('"');
            if name.contains('$') {
                continue; // one per starter, checked through the guide's links above
            }
            assert!(
                docs.join("img").join(name).exists(),
                "docs/img/{name} missing"
            );
            assert!(
                text.contains(&format!("img/{name}")),
                "img/{name} not in the guide"
            );
        }
    }
}

#[test]
fn every_example_case_passes_check() {
    let mut n = 0;
    for e in std::fs::read_dir(common::repo().join("cases")).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "toml") {
            let o = common::fluxpick(&["check", p.to_str().unwrap()]);
            assert!(
                o.status.success(),
                "{}: {}",
                p.display(),
                String::from_utf8_lossy(&o.stderr)
            );
            n += 1;
        }
    }
    assert!(n >= 5, "only {n} example cases");
}
