//! The command line's exit codes and its manners with closed pipes, run on the binary itself:
//! a closed standard output ends a command quietly (exit 0, no panic); every error begins
//! "error:" on standard error with the code of README's table; `plan` and `plan --in` agree on
//! the code of an unreachable target; `ledger` on a network with no end is invalid input.

use std::path::{Path, PathBuf};
use std::process::{Command, Output, Stdio};

const BIN: &str = env!("CARGO_BIN_EXE_photoledger");

/// A scratch folder for one test, with the crate's `networks/` and `demo-data/` linked in, so
/// the commands' default output folders land there and not in the crate.
fn scratch(name: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-exit-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    for d in ["networks", "demo-data"] {
        std::os::unix::fs::symlink(root.join(d), dir.join(d)).unwrap();
    }
    dir
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(BIN).args(args).current_dir(dir).output().unwrap()
}

fn code(o: &Output) -> i32 {
    o.status.code().expect("ended by a signal")
}

fn stderr(o: &Output) -> String {
    String::from_utf8_lossy(&o.stderr).into_owned()
}

/// Run `args` with standard output a pipe whose reading end is closed before the program
/// starts, so its first write finds the pipe closed (what `| true` does, and `| head` once head
/// has its lines). Returns the exit code and standard error.
fn with_closed_stdout(dir: &Path, args: &[&str]) -> (i32, String) {
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let o = Command::new(BIN)
        .args(args)
        .current_dir(dir)
        .stdout(Stdio::from(writer))
        .stderr(Stdio::piped())
        .output()
        .unwrap();
    (code(&o), stderr(&o))
}

#[test]
fn a_closed_stdout_ends_every_command_quietly_with_0() {
    let dir = scratch("pipe");
    let commands: &[&[&str]] = &[
        &["check", "networks/photoswitch.toml"],
        &["simulate", "networks/photoswitch.toml", "--until", "2 h"],
        &["simulate", "networks/photoswitch.toml", "--until", "2 h", "--json"],
        &["ledger", "networks/prebiotic-pool.toml"],
        &["plan", "networks/flow-cyclization.toml", "--target", "product > 80 %"],
        &["barrier", "--window", "1 h", "--temperature", "298.15 K"],
        &["barrier", "networks/flow-cyclization.toml", "--window", "10 min"],
        &["diagram", "networks/photoswitch.toml", "--dot"],
        &[
            "actinometer",
            "ferrioxalate",
            "--delta-a",
            "0.600 ± 0.006",
            "--irradiated",
            "3 mL",
            "--aliquot",
            "0.5 mL",
            "--total",
            "10 mL",
            "--time",
            "120 s",
            "--wavelength",
            "365 nm",
        ],
        &["--help"],
    ];
    for args in commands {
        let (c, err) = with_closed_stdout(&dir, args);
        assert!(
            !err.contains("panicked") && !err.contains("Broken pipe"),
            "{args:?}: {err}"
        );
        assert_eq!(c, 0, "{args:?}: {err}");
    }
    // The files are still written: the command finishes its work.
    assert!(dir.join("photoswitch-simulate/summary.json").exists());
    assert!(dir.join("flow-cyclization-plan/summary.json").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn a_closed_stderr_keeps_the_exit_code() {
    let dir = scratch("stderr");
    let (reader, writer) = std::io::pipe().unwrap();
    drop(reader);
    let o = Command::new(BIN)
        .args(["check", "networks/no-such-file.toml"])
        .current_dir(&dir)
        .stderr(Stdio::from(writer))
        .output()
        .unwrap();
    assert_eq!(code(&o), 3);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn every_error_begins_error_with_the_code_of_its_kind() {
    let dir = scratch("errors");
    std::fs::write(dir.join("bad.toml"), "[conditions]\ntemperature = \"298\"\n").unwrap();
    let cases: &[(&[&str], i32)] = &[
        // invalid input
        (&["check", "bad.toml"], 1),
        // usage: clap's own, and the commands' own
        (&["simulate", "networks/photoswitch.toml", "--no-such-option"], 2),
        (&["simulate", "networks/photoswitch.toml", "--method", "euler"], 2),
        (
            &["check", "networks/photoswitch.toml", "--set", "conditions.colour=3"],
            2,
        ),
        (
            &[
                "plan",
                "networks/photoswitch.toml",
                "--target",
                "Z-azo > 30 %",
                "--in",
                "3 parsecs",
            ],
            2,
        ),
        // a file that cannot be read
        (&["check", "networks/no-such-file.toml"], 3),
    ];
    for (args, want) in cases {
        let o = run(&dir, args);
        let err = stderr(&o);
        assert_eq!(code(&o), *want, "{args:?}: {err}");
        assert!(err.starts_with("error:"), "{args:?}: {err}");
        assert!(o.stdout.is_empty(), "{args:?}");
    }
    let _ = std::fs::remove_dir_all(&dir);
}

/// A closed photoswitch (invented): E and Z interconvert by light and heat, nothing else.
const NO_END: &str = r#"
[about]
name = "closed switch"
invented = true

[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "LED"
kind = "line"
wavelength = "365 nm"
power = "10 mW"

[[species]]
name = "E"
initial = "50 µM"
epsilon = { at = "365 nm", value = "20000 L/(mol cm)" }

[[species]]
name = "Z"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }

[[photo]]
equation = "E -> Z"
quantum_yield = 0.2

[[thermal]]
equation = "Z -> E"
rate = { k = "1e-3 /s" }
"#;

#[test]
fn ledger_on_a_closed_switch_answers_with_its_photostationary_state() {
    let dir = scratch("noend");
    std::fs::write(dir.join("closed.toml"), NO_END).unwrap();
    let o = run(&dir, &["ledger", "closed.toml"]);
    assert_eq!(code(&o), 0, "{}", stderr(&o));
    let out = String::from_utf8_lossy(&o.stdout);
    assert!(out.contains("one molecule that never ends"), "{out}");
    assert!(out.contains("mean first passage"), "{out}");
    assert!(dir.join("closed-ledger/summary.json").exists());
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn ledger_on_a_network_where_only_part_of_the_start_can_end_is_invalid_input_that_says_what_to_do() {
    let dir = scratch("partend");
    let text = format!(
        "{NO_END}\n[[species]]\nname = \"X\"\ninitial = \"1 µM\"\n[[species]]\nname = \"Y\"\n\
         [[thermal]]\nequation = \"X -> Y\"\nrate = {{ k = \"1 /s\" }}\n"
    );
    std::fs::write(dir.join("part.toml"), text).unwrap();
    let o = run(&dir, &["ledger", "part.toml"]);
    let err = stderr(&o);
    assert_eq!(code(&o), 1, "{err}");
    assert!(err.starts_with("error: part.toml: no end state"), "{err}");
    assert!(err.contains("name a product"), "{err}");
    // The same network simulates: it is valid, only the single-molecule question has no answer.
    assert_eq!(code(&run(&dir, &["simulate", "part.toml", "--until", "1 min"])), 0);
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn an_unreachable_target_has_one_code_with_and_without_in() {
    let dir = scratch("unreachable");
    // The photoswitch's photostationary state holds far less than 90 % Z.
    let base = ["plan", "networks/photoswitch.toml", "--target", "Z-azo > 90 %"];
    let plain = run(&dir, &base);
    let within = run(&dir, &[&base[..], &["--in", "30 s"]].concat());
    for o in [&plain, &within] {
        assert_eq!(code(o), 5, "{}", stderr(o));
        assert!(!stderr(o).contains("error:"), "an answer, not an error: {}", stderr(o));
    }
    assert!(String::from_utf8_lossy(&plain.stdout).contains("at best"));
    assert!(String::from_utf8_lossy(&within.stdout).contains("not reachable"));
    // A reachable one exits 0.
    let ok = run(&dir, &["plan", "networks/photoswitch.toml", "--target", "Z-azo > 30 %"]);
    assert_eq!(code(&ok), 0, "{}", stderr(&ok));
    let _ = std::fs::remove_dir_all(&dir);
}

#[test]
fn every_command_given_a_target_answers_not_reachable_with_5() {
    let dir = scratch("targets");
    let out = |o: &Output| String::from_utf8_lossy(&o.stdout).into_owned();
    // plan --sweep: no point reaches the photoswitch's 90 % Z (photostationary) -> 5, each
    // point marked; a sweep where some points reach it -> 0, the others named.
    let none = run(
        &dir,
        &[
            "plan",
            "networks/photoswitch.toml",
            "--target",
            "Z-azo > 90 %",
            "--sweep",
            "power=1mW..100mW:3",
        ],
    );
    assert_eq!(code(&none), 5, "{}", stderr(&none));
    assert_eq!(
        out(&none).matches("unreachable (photostationary)").count(),
        3,
        "{}",
        out(&none)
    );
    assert!(out(&none).contains("NOT REACHABLE at any point"), "{}", out(&none));
    let some = run(
        &dir,
        &[
            "plan",
            "networks/photoswitch.toml",
            "--target",
            "Z-azo > 30 %",
            "--sweep",
            "power=1uW..100mW:3",
        ],
    );
    assert_eq!(code(&some), 0, "{}", stderr(&some));
    assert!(out(&some).contains("not reached at 1 of 3 points"), "{}", out(&some));
    // simulate --stop-when: a condition not met within --until -> 5 (the run is still written).
    let missed = run(
        &dir,
        &[
            "simulate",
            "networks/photoswitch.toml",
            "--until",
            "10 min",
            "--stop-when",
            "Z-azo > 45 µM",
        ],
    );
    assert_eq!(code(&missed), 5, "{}", stderr(&missed));
    assert!(out(&missed).contains("NOT REACHED"), "{}", out(&missed));
    assert!(dir.join("photoswitch-simulate/summary.json").exists());
    let met = run(
        &dir,
        &[
            "simulate",
            "networks/photoswitch.toml",
            "--until",
            "10 min",
            "--stop-when",
            "Z-azo > 10 µM",
        ],
    );
    assert_eq!(code(&met), 0, "{}", stderr(&met));
    // report --target: the page is written and the code says the target is not reachable.
    let rep = run(
        &dir,
        &[
            "report",
            "networks/photoswitch.toml",
            "--target",
            "Z-azo > 90 %",
            "-o",
            "r.html",
        ],
    );
    assert_eq!(code(&rep), 5, "{}", stderr(&rep));
    assert!(dir.join("r.html").exists());
    assert!(out(&rep).contains("NOT REACHABLE"), "{}", out(&rep));
    // uncertainty --target: no sample reaches 90 % product within an hour -> 5.
    let unc = run(
        &dir,
        &[
            "uncertainty",
            "networks/prebiotic-pool.toml",
            "--samples",
            "3",
            "--no-chain",
            "--target",
            "product > 90 %",
            "--until",
            "1 h",
        ],
    );
    assert_eq!(code(&unc), 5, "{}", stderr(&unc));
    for o in [&none, &missed, &rep, &unc] {
        assert!(!stderr(o).contains("error:"), "an answer, not an error: {}", stderr(o));
    }
    let _ = std::fs::remove_dir_all(&dir);
}
