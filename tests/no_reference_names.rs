//! House rule: the engine earns every result from the model and the data. Nothing in
//! `engine/` or `rules/` may name a reference problem (and so could special-case it).

mod common;

use std::path::Path;

fn walk(dir: &Path, out: &mut Vec<std::path::PathBuf>) {
    let Ok(rd) = std::fs::read_dir(dir) else {
        return;
    };
    for e in rd.flatten() {
        let p = e.path();
        if p.is_dir() {
            walk(&p, out);
        } else {
            out.push(p);
        }
    }
}

fn words(text: &str) -> impl Iterator<Item = String> + '_ {
    text.split(|c: char| !c.is_ascii_alphanumeric())
        .filter(|w| !w.is_empty())
        .map(|w| w.to_ascii_lowercase())
}

#[test]
fn engine_and_rules_name_no_reference_problem() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let names: Vec<String> = common::strd::PROBLEMS
        .iter()
        .map(|n| n.to_ascii_lowercase())
        .collect();
    let mut files = Vec::new();
    walk(&root.join("engine"), &mut files);
    walk(&root.join("rules"), &mut files);
    assert!(
        files.len() > 10,
        "expected to scan the engine's files, found {}",
        files.len()
    );
    let mut hits = Vec::new();
    for f in &files {
        let Ok(text) = std::fs::read_to_string(f) else {
            continue;
        };
        for w in words(&text) {
            if names.contains(&w) {
                hits.push(format!("{}: {}", f.display(), w));
            }
        }
    }
    println!(
        "scanned {} files for {} reference-problem names: {} hits",
        files.len(),
        names.len(),
        hits.len()
    );
    assert!(
        hits.is_empty(),
        "reference-problem names in engine/ or rules/: {:?}",
        hits
    );
}

#[test]
fn the_scan_would_catch_a_name() {
    // The check above must be able to fail: the same word splitting finds a planted name.
    let planted = "let x = 1; // tuned for Misra1a";
    assert!(words(planted).any(|w| w == "misra1a"));
}
