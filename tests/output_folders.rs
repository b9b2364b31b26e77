//! Output folders are written whole or not at all (`file::folder`): a re-run replaces the old
//! folder whole (no stale file from before), `--out` naming a regular file is refused by name
//! and the file left alone, and a run stopped by SIGTERM leaves the old folder or the new one
//! and no temporary folder (common practice: write beside, rename into place).

use std::path::{Path, PathBuf};
use std::process::Command;

fn scratch(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-folders-{}-{tag}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

fn network() -> String {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    root.join("networks/photoswitch.toml").display().to_string()
}

fn names(dir: &Path) -> Vec<String> {
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().file_name().to_string_lossy().to_string())
        .collect();
    v.sort();
    v
}

fn simulate(dir: &Path, out: &str, extra: &[&str]) -> std::process::Output {
    let net = network();
    let mut args = vec!["simulate", net.as_str(), "--until", "10 min", "--out", out];
    args.extend_from_slice(extra);
    Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(dir)
        .args(&args)
        .output()
        .unwrap()
}

#[test]
fn a_rerun_replaces_the_folder_whole() {
    let dir = scratch("rerun");
    std::fs::create_dir_all(dir.join("run")).unwrap();
    std::fs::write(dir.join("run/old-notes.csv"), "from an earlier run").unwrap();
    let out = simulate(&dir, "run", &[]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert_eq!(
        names(&dir.join("run")),
        [
            "concentrations.csv",
            "concentrations.svg",
            "photons.csv",
            "photons.svg",
            "summary.json"
        ]
    );
    assert_eq!(names(&dir), ["run"], "no temporary folder beside it");
}

#[test]
fn out_naming_a_regular_file_is_refused_by_name() {
    let dir = scratch("file");
    std::fs::write(dir.join("results.txt"), "keep me").unwrap();
    let out = simulate(&dir, "results.txt", &[]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("results.txt") && err.contains("existing file"), "{err}");
    assert!(!err.contains("os error"), "{err}");
    assert_eq!(std::fs::read_to_string(dir.join("results.txt")).unwrap(), "keep me");
    assert_eq!(names(&dir), ["results.txt"]);
}

#[cfg(unix)]
#[test]
fn sigterm_leaves_the_old_folder_or_the_new_one_and_no_temporary() {
    let dir = scratch("sigterm");
    std::fs::create_dir_all(dir.join("run")).unwrap();
    std::fs::write(dir.join("run/summary.json"), "old").unwrap();
    let net = network();
    // Many output points, so the run spends time writing; stopped at several moments.
    for delay_ms in [50u64, 300, 800] {
        let mut child = Command::new(env!("CARGO_BIN_EXE_photoledger"))
            .current_dir(&dir)
            .args([
                "simulate", &net, "--until", "10 min", "--points", "200000", "--out", "run",
            ])
            .stdout(std::process::Stdio::null())
            .stderr(std::process::Stdio::null())
            .spawn()
            .unwrap();
        std::thread::sleep(std::time::Duration::from_millis(delay_ms));
        let _ = Command::new("kill").args(["-TERM", &child.id().to_string()]).status();
        let status = child.wait().unwrap();
        assert_ne!(status.code(), Some(101), "no panic");
        assert_eq!(
            names(&dir),
            ["run"],
            "after {delay_ms} ms: no temporary folder beside it"
        );
        let inside = names(&dir.join("run"));
        let old = inside == ["summary.json"] && std::fs::read_to_string(dir.join("run/summary.json")).unwrap() == "old";
        let new = inside
            == [
                "concentrations.csv",
                "concentrations.svg",
                "photons.csv",
                "photons.svg",
                "summary.json",
            ];
        assert!(old || new, "after {delay_ms} ms the folder holds {inside:?}");
        if new {
            // Start again from the old folder for the next stop.
            std::fs::remove_dir_all(dir.join("run")).unwrap();
            std::fs::create_dir_all(dir.join("run")).unwrap();
            std::fs::write(dir.join("run/summary.json"), "old").unwrap();
        }
    }
}

/// `photoledger ARGS` in `dir`.
fn photoledger(dir: &Path, args: &[&str]) -> std::process::Output {
    Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

fn pool() -> String {
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    root.join("networks/prebiotic-pool.toml").display().to_string()
}

/// A few samples of the bundled pool network's `[[uncertain]]` values, chain only.
fn uncertainty_args<'a>(net: &'a str, extra: &[&'a str]) -> Vec<&'a str> {
    let mut v = vec!["uncertainty", net, "--samples", "4", "--seed", "3"];
    v.extend_from_slice(extra);
    v
}

#[test]
fn uncertainty_replaces_its_folder_whole_and_refuses_a_file() {
    let dir = scratch("uncertainty");
    let net = pool();
    std::fs::create_dir_all(dir.join("u/histograms")).unwrap();
    std::fs::write(dir.join("u/histograms/a value no longer drawn.svg"), "old").unwrap();
    std::fs::write(dir.join("u/old-notes.txt"), "from an earlier run").unwrap();
    let out = photoledger(&dir, &uncertainty_args(&net, &["--out", "u"]));
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let inside = names(&dir.join("u"));
    assert!(!inside.contains(&"old-notes.txt".to_string()), "{inside:?}");
    for f in ["samples.csv", "samples.json", "summary.json", "summary.txt"] {
        assert!(inside.contains(&f.to_string()), "{inside:?}");
    }
    assert!(
        !names(&dir.join("u/histograms")).contains(&"a value no longer drawn.svg".to_string()),
        "a histogram of the earlier run is left among the new ones"
    );
    assert_eq!(names(&dir), ["u"], "no temporary folder beside it");
    // --out onto a file: refused by name, the file left alone.
    std::fs::write(dir.join("u.txt"), "keep me").unwrap();
    let out = photoledger(&dir, &uncertainty_args(&net, &["--out", "u.txt"]));
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("u.txt") && err.contains("existing file") && !err.contains("os error"),
        "{err}"
    );
    assert_eq!(std::fs::read_to_string(dir.join("u.txt")).unwrap(), "keep me");
}

#[test]
fn uncertainty_shards_share_a_folder_and_merge_elsewhere() {
    let dir = scratch("shards");
    let net = pool();
    // Two jobs of one run write into one folder: each adds its shard, neither removes the other.
    for k in ["1/2", "2/2"] {
        let out = photoledger(&dir, &uncertainty_args(&net, &["--shard", k, "--out", "parts"]));
        assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    }
    assert_eq!(names(&dir.join("parts")), ["shard-1-of-2.json", "shard-2-of-2.json"]);
    let shards = ["parts/shard-1-of-2.json", "parts/shard-2-of-2.json"];
    // Merging into the shards' own folder would replace it whole, shards and all: refused.
    let mut args = vec!["uncertainty", "merge"];
    args.extend_from_slice(&shards);
    args.extend_from_slice(&["--out", "parts"]);
    let out = photoledger(&dir, &args);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("--out parts") && err.contains("shard"), "{err}");
    assert_eq!(names(&dir.join("parts")), ["shard-1-of-2.json", "shard-2-of-2.json"]);
    // Elsewhere: the whole run's report, equal to the single run's.
    let n = args.len();
    args[n - 1] = "merged";
    let out = photoledger(&dir, &args);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    let single = photoledger(&dir, &uncertainty_args(&net, &["--out", "single"]));
    assert_eq!(single.status.code(), Some(0));
    let read = |p: &str| std::fs::read_to_string(dir.join(p)).unwrap();
    assert_eq!(read("merged/samples.csv"), read("single/samples.csv"));
    // A shard onto a file is refused by name too (was "File exists (os error 17)").
    std::fs::write(dir.join("file"), "keep me").unwrap();
    let out = photoledger(&dir, &uncertainty_args(&net, &["--shard", "1/2", "--out", "file"]));
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(err.contains("existing file") && !err.contains("os error"), "{err}");
    let mut left = names(&dir);
    left.retain(|n| n.starts_with('.'));
    assert!(left.is_empty(), "temporaries left: {left:?}");
}

/// An invented molecule, cm⁻¹.
const FREQUENCIES: &str = "# invented molecule, cm-1\n[reactant]\n3000 1500 1000\n800 500 300 200\n\
    [transition state]\n3000 1500 1000 800 300 200\n700i\n";

#[test]
fn barrier_tables_replace_their_folder_whole_and_refuse_a_file() {
    let dir = scratch("barrier");
    std::fs::write(dir.join("f.txt"), FREQUENCIES).unwrap();
    std::fs::create_dir_all(dir.join("k")).unwrap();
    std::fs::write(dir.join("k/k_of_e-old.csv"), "from an earlier run").unwrap();
    let table = |out: &str| {
        photoledger(
            &dir,
            &[
                "barrier",
                "--frequencies",
                "f.txt",
                "--barrier",
                "60 kJ/mol",
                "--energy-range",
                "0 kJ/mol..200 kJ/mol",
                "--points",
                "21",
                "--out",
                out,
            ],
        )
    };
    let out = table("k");
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert_eq!(names(&dir.join("k")), ["k_of_e.csv", "k_of_e.svg", "summary.json"]);
    std::fs::write(dir.join("k.csv"), "keep me").unwrap();
    let out = table("k.csv");
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(2), "{err}");
    assert!(
        err.contains("k.csv") && err.contains("existing file") && !err.contains("os error"),
        "{err}"
    );
    assert_eq!(std::fs::read_to_string(dir.join("k.csv")).unwrap(), "keep me");
    assert_eq!(names(&dir), ["f.txt", "k", "k.csv"]);
}

#[test]
fn levels_replaces_its_folder_whole() {
    let dir = scratch("levels");
    let root = PathBuf::from(env!("CARGO_MANIFEST_DIR"));
    std::fs::create_dir_all(dir.join("lv")).unwrap();
    std::fs::write(dir.join("lv/scores-old.csv"), "from an earlier run").unwrap();
    let net = root.join("networks/diene-two-funnels.toml").display().to_string();
    let data = root.join("demo-data/levels/products.csv").display().to_string();
    let out = photoledger(&dir, &["levels", &net, "--data", &data, "--out", "lv"]);
    assert_eq!(out.status.code(), Some(0), "{}", String::from_utf8_lossy(&out.stderr));
    assert_eq!(
        names(&dir.join("lv")),
        ["observables.csv", "scores.csv", "summary.json"]
    );
    assert_eq!(names(&dir), ["lv"]);
}
