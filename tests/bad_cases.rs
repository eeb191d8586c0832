//! Every file in tests/bad-cases/ through the real binary: `fluxpick check FILE` and
//! `fluxpick solve FILE --out DIR` must refuse it with exit status 2, name the file and the
//! key (and `FILE:LINE:` for case errors), print no panic, and leave no output behind.
//!
//! Each file starts with one of two headers:
//!
//! - `# expect: KIND KEY`: a case error of kind KIND (`CaseErrorKind`, checked by the library
//!   test `bad_case_files_fail_where_they_say` in case_parse.rs) at key path KEY, pointing at
//!   the line marked `# <- here`. Both commands exit 2.
//! - `# expect-solve: exit N, message contains "TEXT"`: the file passes validation and is
//!   refused only when meshed (a part wholly covered by later ones). `check`, which does not
//!   mesh, exits 0; `solve` exits N with TEXT in its message.
//!
//! Further lines `# stderr: TEXT` name text that standard error must contain (a nearest-key
//! suggestion, a message). Standard error is compared with its whitespace collapsed and
//! miette's `│` gutter removed, since long messages wrap.

mod common;

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

use fluxpick::case::CaseErrorKind;

#[derive(Debug)]
enum Expect {
    Case {
        kind: String,
        key: String,
        line: usize,
    },
    Solve {
        exit: i32,
        contains: String,
    },
}

#[derive(Debug)]
struct BadCase {
    /// The file name, as the binary is given it (run in the bad-cases folder).
    name: String,
    expect: Expect,
    stderr: Vec<String>,
}

fn bad_cases_dir() -> PathBuf {
    common::repo().join("tests/bad-cases")
}

fn parse_header(path: &Path) -> BadCase {
    let text = std::fs::read_to_string(path).unwrap();
    let name = path.file_name().unwrap().to_str().unwrap().to_string();
    let first = text.lines().next().unwrap_or("");
    let expect = if let Some(rest) = first.strip_prefix("# expect: ") {
        let mut words = rest.split_whitespace();
        let kind = words.next().expect("`# expect: KIND KEY`").to_string();
        let key = words.next().unwrap_or("").to_string();
        let marked: Vec<usize> = text
            .lines()
            .enumerate()
            .filter(|(_, l)| l.contains("# <- here"))
            .map(|(i, _)| i + 1)
            .collect();
        assert_eq!(marked.len(), 1, "{name}: mark exactly one line `# <- here`");
        Expect::Case {
            kind,
            key,
            line: marked[0],
        }
    } else if let Some(rest) = first.strip_prefix("# expect-solve: exit ") {
        let (code, rest) = rest.split_once(", message contains \"").unwrap_or_else(|| {
            panic!("{name}: write `# expect-solve: exit N, message contains \"TEXT\"`")
        });
        Expect::Solve {
            exit: code.trim().parse().expect("exit status"),
            contains: rest.strip_suffix('"').expect("closing quote").to_string(),
        }
    } else {
        panic!("{name}: the first line must be `# expect: KIND KEY` or `# expect-solve: ...`");
    };
    let stderr = text
        .lines()
        .filter_map(|l| l.strip_prefix("# stderr: "))
        .map(str::to_string)
        .collect();
    BadCase {
        name,
        expect,
        stderr,
    }
}

fn all_bad_cases() -> Vec<BadCase> {
    let mut paths: Vec<PathBuf> = std::fs::read_dir(bad_cases_dir())
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    paths.sort();
    paths.iter().map(|p| parse_header(p)).collect()
}

/// Runs the binary in `dir` (so that file names stay short and messages do not wrap inside
/// them).
fn run_in(dir: &Path, args: &[&str]) -> Output {
    Command::new(common::bin())
        .current_dir(dir)
        .args(args)
        .output()
        .expect("run fluxpick")
}

/// Standard error with whitespace collapsed and miette's gutter removed.
fn flat(stderr: &[u8]) -> String {
    String::from_utf8_lossy(stderr)
        .split_whitespace()
        .filter(|w| *w != "│")
        .collect::<Vec<_>>()
        .join(" ")
}

/// What is wrong with one command's output, if anything.
fn problems(case: &BadCase, command: &str, o: &Output, want_exit: i32) -> Vec<String> {
    let err = flat(&o.stderr);
    let mut out = Vec::new();
    let mut need = |ok: bool, what: String| {
        if !ok {
            out.push(format!("{} ({command}): {what}", case.name));
        }
    };
    need(
        o.status.code() == Some(want_exit),
        format!("exit status {:?}, expected {want_exit}", o.status.code()),
    );
    for bad in ["panicked", "RUST_BACKTRACE"] {
        need(!err.contains(bad), format!("panic text `{bad}` in stderr"));
    }
    if want_exit == 0 {
        return out;
    }
    // Errors that teach: every refusal says how to fix it (issue 11).
    need(
        err.contains("help:"),
        "stderr has no `help:` line saying how to fix it".into(),
    );
    let n = &case.name;
    need(
        err.contains(&format!(" {n}:")) || err.contains(&format!("[{n}:")),
        "stderr does not name the file".into(),
    );
    match &case.expect {
        Expect::Case { key, line, .. } => {
            need(
                err.contains(&format!("`{key}`")),
                format!("stderr does not name the key `{key}`"),
            );
            need(
                err.contains(&format!("[{n}:{line}:")),
                format!("stderr does not point at {n}:{line}:"),
            );
        }
        Expect::Solve { contains, .. } => need(
            err.contains(contains.as_str()),
            format!("stderr does not contain {contains:?}"),
        ),
    }
    for s in &case.stderr {
        need(
            err.contains(s.as_str()),
            format!("stderr does not contain {s:?}"),
        );
    }
    if !out.is_empty() {
        out.push(format!("    stderr was: {err}"));
    }
    out
}

#[test]
fn every_bad_case_is_refused_by_check_and_solve() {
    let cases = all_bad_cases();
    assert!(cases.len() >= 40, "only {} bad cases", cases.len());
    let dir = bad_cases_dir();
    let mut failures = Vec::new();
    for case in &cases {
        let check_exit = match case.expect {
            Expect::Case { .. } => 2,
            Expect::Solve { .. } => 0,
        };
        let o = run_in(&dir, &["check", &case.name]);
        failures.extend(problems(case, "check", &o, check_exit));

        let tmp = tempfile::tempdir().unwrap();
        let out = tmp.path().join("out");
        let o = run_in(&dir, &["solve", &case.name, "--out", out.to_str().unwrap()]);
        let solve_exit = match case.expect {
            Expect::Case { .. } => 2,
            Expect::Solve { exit, .. } => exit,
        };
        failures.extend(problems(case, "solve", &o, solve_exit));
        let left: Vec<_> = std::fs::read_dir(tmp.path())
            .unwrap()
            .map(|e| e.unwrap().path())
            .collect();
        if !left.is_empty() {
            failures.push(format!("{} (solve): left behind {left:?}", case.name));
        }
    }
    // Neither command may write into the case folder either.
    let untouched: Vec<_> = std::fs::read_dir(&dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_none_or(|x| x != "toml"))
        .collect();
    assert!(
        untouched.is_empty(),
        "output in tests/bad-cases: {untouched:?}"
    );
    assert!(
        failures.is_empty(),
        "{} problems:\n{}",
        failures.len(),
        failures.join("\n")
    );
    eprintln!("{} bad cases refused by check and solve", cases.len());
}

/// Every kind of case error that a case file can cause has a file in the corpus. The match
/// has no wildcard, so a new kind fails to compile here until it is listed.
#[test]
fn corpus_covers_every_error_kind() {
    use CaseErrorKind as K;
    let from_a_file = |k: K| match k {
        K::Syntax
        | K::UnknownKey
        | K::MissingKey
        | K::WrongType
        | K::ShapeKeys
        | K::UnknownMaterial
        | K::DuplicateName
        | K::NotPositive
        | K::OutOfRange
        | K::Axisymmetry
        | K::OutsideDomain
        | K::UndefinedName
        | K::NotFinite
        | K::BadExpression
        | K::WindingDoesNotFit
        | K::UnknownGauge
        | K::BadEdge
        | K::BadSweep
        | K::BadPolygon
        | K::Overlap => true,
        // An unreadable file: `missing_case_file_is_refused` below.
        K::Io => false,
        // Raised for a parameter override that names no parameter; the CLI has no way to
        // pass overrides, so no case file can cause it.
        K::UnknownOverride => false,
    };
    let all = [
        K::Io,
        K::Syntax,
        K::UnknownKey,
        K::MissingKey,
        K::WrongType,
        K::ShapeKeys,
        K::UnknownMaterial,
        K::DuplicateName,
        K::NotPositive,
        K::OutOfRange,
        K::Axisymmetry,
        K::OutsideDomain,
        K::UndefinedName,
        K::NotFinite,
        K::BadExpression,
        K::WindingDoesNotFit,
        K::UnknownGauge,
        K::BadEdge,
        K::BadSweep,
        K::BadPolygon,
        K::Overlap,
        K::UnknownOverride,
    ];
    let cases = all_bad_cases();
    let covered: Vec<&str> = cases
        .iter()
        .filter_map(|c| match &c.expect {
            Expect::Case { kind, .. } => Some(kind.as_str()),
            Expect::Solve { .. } => None,
        })
        .collect();
    let missing: Vec<String> = all
        .iter()
        .filter(|k| from_a_file(**k))
        .map(|k| format!("{k:?}"))
        .filter(|k| !covered.contains(&k.as_str()))
        .collect();
    assert!(missing.is_empty(), "no bad case file for {missing:?}");
    for k in &covered {
        assert!(
            all.iter().any(|a| format!("{a:?}") == *k),
            "unknown kind {k} in a header"
        );
    }
}

#[test]
fn missing_case_file_is_refused() {
    let tmp = tempfile::tempdir().unwrap();
    let case = tmp.path().join("no-such-case.toml");
    let out = tmp.path().join("out");
    for args in [
        vec!["check", case.to_str().unwrap()],
        vec![
            "solve",
            case.to_str().unwrap(),
            "--out",
            out.to_str().unwrap(),
        ],
    ] {
        let o = common::fluxpick(&args);
        let err = flat(&o.stderr);
        assert_eq!(o.status.code(), Some(2), "{args:?}: {err}");
        assert!(err.contains("no-such-case.toml"), "{err}");
        assert!(err.contains("cannot read the case file"), "{err}");
        assert!(!err.contains("panicked"), "{err}");
    }
    assert!(!out.exists());
}
