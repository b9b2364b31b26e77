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
