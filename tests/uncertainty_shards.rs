//! The cluster flow README documents for large uncertainty studies, on the built binary: each
//! shard `--shard K/N` run as its own process (as the tasks of a job array are), each into its
//! own folder, then `uncertainty merge`; the merged outputs equal the single run's byte for
//! byte. (`tests/uncertainty_references.rs` checks the same in one process, through the library.)

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

const BIN: &str = env!("CARGO_BIN_EXE_photoledger");

fn scratch() -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-shards-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::os::unix::fs::symlink(
        Path::new(env!("CARGO_MANIFEST_DIR")).join("networks"),
        dir.join("networks"),
    )
    .unwrap();
    dir
}

/// The arguments every task shares: the whole run's size and seed.
const RUN: [&str; 8] = [
    "uncertainty",
    "networks/prebiotic-pool.toml",
    "--samples",
    "10",
    "--seed",
    "11",
    "--until",
    "1 d",
];

#[test]
fn shards_run_as_separate_processes_merge_to_the_single_run_byte_for_byte() {
    let dir = scratch();
    let n = 3;
    // The tasks of the array, started together, each with its own K and folder.
    let tasks: Vec<_> = (1..=n)
        .map(|k| {
            Command::new(BIN)
                .args(RUN)
                .args(["--shard", &format!("{k}/{n}"), "--out", &format!("task-{k}")])
                .current_dir(&dir)
                .stdout(Stdio::piped())
                .stderr(Stdio::piped())
                .spawn()
                .unwrap()
        })
        .collect();
    for t in tasks {
        let o = t.wait_with_output().unwrap();
        assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    }
    // Merge, shards named in any order.
    let mut merge = vec!["uncertainty".to_string(), "merge".into()];
    merge.extend((1..=n).rev().map(|k| format!("task-{k}/shard-{k}-of-{n}.json")));
    merge.extend(["--out".into(), "merged".into()]);
    let o = Command::new(BIN).args(&merge).current_dir(&dir).output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    // The single run.
    let o = Command::new(BIN)
        .args(RUN)
        .args(["--out", "single"])
        .current_dir(&dir)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    for f in ["summary.json", "summary.txt", "samples.csv", "samples.json"] {
        let a = std::fs::read(dir.join("merged").join(f)).unwrap();
        let b = std::fs::read(dir.join("single").join(f)).unwrap();
        assert!(a == b, "{f}: the merged run differs from the single run");
    }
    // Shards gathered in one folder merge by default into that folder's name followed by
    // "-merged", beside it (the shards stay as they are).
    std::fs::create_dir_all(dir.join("shards")).unwrap();
    for k in 1..=n {
        let name = format!("shard-{k}-of-{n}.json");
        std::fs::copy(
            dir.join(format!("task-{k}")).join(&name),
            dir.join("shards").join(&name),
        )
        .unwrap();
    }
    let mut merge = vec!["uncertainty".to_string(), "merge".into()];
    merge.extend((1..=n).map(|k| format!("shards/shard-{k}-of-{n}.json")));
    let o = Command::new(BIN).args(&merge).current_dir(&dir).output().unwrap();
    assert_eq!(o.status.code(), Some(0), "{}", String::from_utf8_lossy(&o.stderr));
    assert_eq!(
        std::fs::read(dir.join("shards-merged/samples.json")).unwrap(),
        std::fs::read(dir.join("single/samples.json")).unwrap()
    );
    assert!(dir.join(format!("shards/shard-1-of-{n}.json")).exists());
    // A missing task is refused, naming what is missing.
    let o = Command::new(BIN)
        .args([
            "uncertainty",
            "merge",
            "task-1/shard-1-of-3.json",
            "task-3/shard-3-of-3.json",
        ])
        .current_dir(&dir)
        .output()
        .unwrap();
    assert_eq!(o.status.code(), Some(2), "{o:?}");
    assert!(String::from_utf8_lossy(&o.stderr).contains("missing"), "{o:?}");
    let _ = std::fs::remove_dir_all(&dir);
}
