//! The repository's Markdown documents link only to files that exist in it: README.md,
//! DEVELOPERS.md and docs/*.md, every relative link (anchors stripped) resolved against the
//! linking file's folder. Web links are not followed.

mod common;

use std::path::Path;

/// The targets of the inline links `[text](target)` of a Markdown text, outside code spans
/// and fenced blocks.
fn link_targets(text: &str) -> Vec<String> {
    let mut out = Vec::new();
    let mut fenced = false;
    for line in text.lines() {
        if line.trim_start().starts_with("```") {
            fenced = !fenced;
            continue;
        }
        if fenced {
            continue;
        }
        // drop code spans, which may hold `](` as text
        let plain: String = line.split('`').step_by(2).collect();
        let mut rest = plain.as_str();
        while let Some(i) = rest.find("](") {
            rest = &rest[i + 2..];
            if let Some(end) = rest.find(')') {
                out.push(rest[..end].to_string());
                rest = &rest[end..];
            }
        }
    }
    out
}

#[test]
fn document_links_resolve() {
    let repo = common::repo();
    let mut files = vec![repo.join("README.md"), repo.join("DEVELOPERS.md")];
    for e in std::fs::read_dir(repo.join("docs")).unwrap() {
        let p = e.unwrap().path();
        if p.extension().is_some_and(|x| x == "md") {
            files.push(p);
        }
    }
    let mut checked = 0;
    let mut broken = Vec::new();
    for f in &files {
        let text = std::fs::read_to_string(f).unwrap();
        let dir = f.parent().unwrap_or(Path::new("."));
        for t in link_targets(&text) {
            if t.contains("://") || t.starts_with('#') || t.starts_with("mailto:") {
                continue;
            }
            let path = t.split('#').next().unwrap_or_default();
            checked += 1;
            if !dir.join(path).exists() {
                broken.push(format!("{}: {t}", f.display()));
            }
        }
    }
    eprintln!("{} files, {checked} relative links", files.len());
    assert!(
        checked >= 10,
        "only {checked} relative links found: is the parser right?"
    );
    assert!(broken.is_empty(), "broken links:\n{}", broken.join("\n"));
}

#[test]
fn link_parser_finds_links_outside_code() {
    let t = "see [a](docs/a.md#x) and `[b](no.md)`\n```\n[c](no.md)\n```\n[d](https://x/y)";
    assert_eq!(link_targets(t), vec!["docs/a.md#x", "https://x/y"]);
}
