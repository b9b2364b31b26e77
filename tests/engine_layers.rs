//! The pipeline's layering, checked on the source (`common practice` for a layered design; the
//! project's invariants in DEVELOPERS.md): the engines never hold the loaded file, read files
//! or print. Each engine file is read up to its first `#[cfg(test)]` (tests may parse text).

use std::path::{Path, PathBuf};

const ENGINES: [&str; 8] = [
    "model",
    "kinetics",
    "chain",
    "plan",
    "fit",
    "uncertainty",
    "barrier",
    "levels",
];

/// What an engine's own code must not contain, with why.
const FORBIDDEN: [(&str, &str); 6] = [
    ("Loaded", "holds the loaded file (numbers flow down as typed values)"),
    ("std::fs", "reads or writes files"),
    ("File::open", "reads files"),
    ("println!", "prints"),
    ("eprintln!", "prints"),
    ("print!(", "prints"),
];

fn rust_files(dir: &Path, out: &mut Vec<PathBuf>) {
    for e in std::fs::read_dir(dir).unwrap() {
        let p = e.unwrap().path();
        if p.is_dir() {
            rust_files(&p, out);
        } else if p.extension().is_some_and(|x| x == "rs") && p.file_name().is_some_and(|n| n != "tests.rs") {
            out.push(p);
        }
    }
}

/// Every (file, line, word, why) of `text` up to its first `#[cfg(test)]`, comments left out.
fn offences(path: &Path, text: &str) -> Vec<String> {
    let mut found = Vec::new();
    for (i, line) in text.lines().enumerate() {
        if line.trim_start().starts_with("#[cfg(test)]") {
            break;
        }
        let code = line.split("//").next().unwrap_or("");
        for (word, why) in FORBIDDEN {
            if code.contains(word) {
                found.push(format!("{}:{}: {why}: {}", path.display(), i + 1, line.trim()));
            }
        }
    }
    found
}

#[test]
fn engines_never_hold_the_file_read_files_or_print() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR")).join("src");
    let mut files = Vec::new();
    for e in ENGINES {
        rust_files(&root.join(e), &mut files);
    }
    assert!(files.len() > 40, "only {} engine files found", files.len());
    let found: Vec<String> = files
        .iter()
        .flat_map(|f| offences(f, &std::fs::read_to_string(f).unwrap()))
        .collect();
    assert!(found.is_empty(), "{}", found.join("\n"));
}

#[test]
fn the_scan_sees_a_file_held_and_a_print() {
    let text = "use crate::file::Loaded;\nfn f() { println!(\"x\"); }\n// println! in a comment\n#[cfg(test)]\nmod t { fn g() { println!(); } }\n";
    let found = offences(Path::new("x.rs"), text);
    assert_eq!(found.len(), 2, "{found:?}");
}
