//! House rules, checked inside `cargo test` so CI has one gate:
//! every library module starts with a `//!` doc comment, no test is
//! marked ignored, and no file in the repository spells out a package
//! registry's host name (the tools reach registries through their clients).

use std::path::{Path, PathBuf};

fn files(dir: &Path, out: &mut Vec<PathBuf>) {
    let Ok(entries) = std::fs::read_dir(dir) else {
        return;
    };
    for e in entries.flatten() {
        let p = e.path();
        let name = p.file_name().and_then(|n| n.to_str()).unwrap_or("");
        if name.starts_with('.') || name == "target" {
            continue;
        }
        if p.is_dir() {
            files(&p, out);
        } else {
            out.push(p);
        }
    }
}

fn repo() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

#[test]
fn every_library_module_has_a_module_doc() {
    let mut all = Vec::new();
    files(&repo().join("harness"), &mut all);
    let missing: Vec<_> = all
        .iter()
        .filter(|p| p.extension().is_some_and(|e| e == "rs"))
        .filter(|p| {
            let text = std::fs::read_to_string(p).unwrap_or_default();
            !text.trim_start().starts_with("//!")
        })
        .collect();
    assert!(
        missing.is_empty(),
        "modules without a `//!` doc comment: {missing:?}"
    );
}

#[test]
fn no_test_is_ignored() {
    let mut all = Vec::new();
    files(&repo().join("tests"), &mut all);
    files(&repo().join("harness"), &mut all);
    let needle = ["#[", "ignore", "]"].concat();
    let hits: Vec<_> = all
        .iter()
        .filter(|p| p.extension().is_some_and(|e| e == "rs"))
        .filter(|p| {
            std::fs::read_to_string(p)
                .unwrap_or_default()
                .contains(&needle)
        })
        .collect();
    assert!(hits.is_empty(), "ignored tests in {hits:?}");
}

#[test]
fn no_registry_host_names_in_the_repository() {
    // Built from pieces so this file does not contain them itself.
    let hosts = [
        ["crates", ".io"].concat(),
        ["pypi", ".org"].concat(),
        ["files.python", "hosted.org"].concat(),
        ["registry.npm", "js.org"].concat(),
        ["deb.deb", "ian.org"].concat(),
    ];
    let mut all = Vec::new();
    files(&repo(), &mut all);
    let mut hits = Vec::new();
    for p in &all {
        if p.file_name().is_some_and(|n| n == "Cargo.lock") {
            continue; // cargo writes the source of every crate there itself
        }
        let Ok(text) = std::fs::read_to_string(p) else {
            continue;
        };
        for h in &hosts {
            if text.contains(h.as_str()) {
                hits.push(format!("{} mentions {h}", p.display()));
            }
        }
    }
    assert!(hits.is_empty(), "{hits:#?}");
}
