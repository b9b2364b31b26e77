//! Every command that reads a network prints each of its warnings once, before its results,
//! however many times it builds the network inside (plans on a schedule, sweeps, fits,
//! uncertainty samples).
//!
//! The network is the bundled photoswitch with one species added that nothing uses (a warning).
//! Standard output and standard error of each run go to one file, so the order is the order
//! a user sees in a terminal.

use std::path::{Path, PathBuf};
use std::process::{Command, Stdio};

const WARNING: &str = "species \"acetonitrile\": nothing produces or consumes it";

/// A fresh folder under the system temp dir, removed when dropped.
struct Scratch {
    dir: PathBuf,
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.dir);
    }
}

/// The run's merged output and exit code.
fn run(dir: &Path, name: &str, args: &[&str]) -> (i32, String) {
    let path = dir.join(format!("{name}.out"));
    let file = std::fs::File::create(&path).expect("create output file");
    let status = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .stdout(Stdio::from(file.try_clone().expect("clone file")))
        .stderr(Stdio::from(file))
        .status()
        .expect("run photoledger");
    (
        status.code().unwrap_or(-1),
        std::fs::read_to_string(&path).expect("read output"),
    )
}

#[test]
fn each_command_prints_each_warning_once_before_its_results() {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let s = Scratch {
        dir: std::env::temp_dir().join(format!("photoledger-warnings-once-{}", std::process::id())),
    };
    let _ = std::fs::remove_dir_all(&s.dir);
    std::fs::create_dir_all(&s.dir).unwrap();
    let text = std::fs::read_to_string(root.join("networks/photoswitch.toml")).unwrap();
    // one uncertain value for `uncertainty`, and the species nothing uses
    let text = text.replacen(
        "[fit]",
        "[[species]]\nname = \"acetonitrile\"\ninitial = \"19 M\"\n\n\
         [[uncertain]]\nkey = \"photo.E to Z.quantum_yield\"\nuniform = [0.1, 0.14]\n\n[fit]",
        1,
    );
    // an end for the single-molecule chain of `ledger`
    let text = text.replacen("name = \"Z-azo\"\n", "name = \"Z-azo\"\nproduct = true\n", 1);
    let net = s.dir.join("switch.toml");
    std::fs::write(&net, text).unwrap();
    let net = net.to_str().unwrap().to_string();
    let out = |n: &str| s.dir.join(n).to_str().unwrap().to_string();
    let data = root
        .join("demo-data/fit/experiments.toml")
        .to_str()
        .unwrap()
        .to_string();
    let target = "Z-azo > 10 %";
    let runs: Vec<(&str, Vec<String>)> = vec![
        ("check", vec!["check".into(), net.clone()]),
        (
            "diagram",
            vec!["diagram".into(), net.clone(), "-o".into(), out("n.svg")],
        ),
        (
            "simulate",
            vec![
                "simulate".into(),
                net.clone(),
                "--until".into(),
                "1 h".into(),
                "--out".into(),
                out("sim"),
            ],
        ),
        (
            "simulate, a schedule",
            vec![
                "simulate".into(),
                net.clone(),
                "--until".into(),
                "2 d".into(),
                "--sun-hours".into(),
                "8".into(),
                "--out".into(),
                out("sim2"),
            ],
        ),
        (
            "plan",
            vec![
                "plan".into(),
                net.clone(),
                "--target".into(),
                target.into(),
                "--out".into(),
                out("p1"),
            ],
        ),
        (
            "plan, a schedule",
            vec![
                "plan".into(),
                net.clone(),
                "--target".into(),
                target.into(),
                "--sun-hours".into(),
                "8".into(),
                "--out".into(),
                out("p2"),
            ],
        ),
        (
            "plan --in",
            vec![
                "plan".into(),
                net.clone(),
                "--target".into(),
                target.into(),
                "--in".into(),
                "1 min".into(),
                "--out".into(),
                out("p3"),
            ],
        ),
        (
            "plan --sweep",
            vec![
                "plan".into(),
                net.clone(),
                "--target".into(),
                target.into(),
                "--sweep".into(),
                "power=10mW..100mW:3".into(),
                "--out".into(),
                out("p4"),
            ],
        ),
        ("ledger", vec!["ledger".into(), net.clone(), "--out".into(), out("l")]),
        (
            "report",
            vec![
                "report".into(),
                net.clone(),
                "--until".into(),
                "1 h".into(),
                "-o".into(),
                out("r.html"),
            ],
        ),
        (
            "barrier",
            vec!["barrier".into(), net.clone(), "--window".into(), "1 h".into()],
        ),
        (
            "uncertainty",
            vec![
                "uncertainty".into(),
                net.clone(),
                "--samples".into(),
                "3".into(),
                "--out".into(),
                out("u"),
            ],
        ),
        (
            "fit",
            vec![
                "fit".into(),
                net.clone(),
                "--data".into(),
                data,
                "--out".into(),
                out("f"),
            ],
        ),
    ];
    for (name, args) in runs {
        let args: Vec<&str> = args.iter().map(String::as_str).collect();
        let (code, text) = run(&s.dir, &name.replace([' ', ','], "-"), &args);
        assert_eq!(code, 0, "{name}: exit {code}\n{text}");
        let n = text.matches(WARNING).count();
        assert_eq!(n, 1, "{name}: the warning printed {n} times\n{text}");
        // before the results: nothing but warnings (and their help lines) ahead of it. `check`
        // describes the network first and gives its verdict last: there the warnings sit just
        // above the verdict they count towards.
        let start = if name == "check" {
            let verdict = text.find("valid: ").expect("a verdict");
            assert!(
                text.find(WARNING).unwrap() < verdict,
                "check: the verdict before the warning\n{text}"
            );
            text[..text.find(WARNING).unwrap()].rfind("\n\n").map_or(0, |i| i + 2)
        } else {
            0
        };
        let before: Vec<&str> = text[start..text.find(WARNING).unwrap()].lines().collect();
        assert!(
            before.iter().all(|l| l.starts_with("warning: ") || l.starts_with("  ")),
            "{name}: results before the warning\n{text}"
        );
        assert!(
            text.lines()
                .any(|l| !l.starts_with("warning: ") && !l.starts_with("  ")),
            "{name}: no results\n{text}"
        );
    }
}
