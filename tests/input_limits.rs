//! Files the user names, read within limits: only regular files (a FIFO or `/dev/zero` would
//! block or grow without end), UTF-8 with the place of the first bad byte, a byte-order mark
//! skipped everywhere, and line numbers that stay right deep into a large table (they are now
//! counted incrementally, so loading is linear in the file's length).
//!
//! Every network here is invented. RFC 3629 (UTF-8) defines the byte-order mark U+FEFF as
//! EF BB BF and says a reader may strip it (§6); the rest is common practice.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};
use std::sync::mpsc;
use std::time::Duration;

fn scratch(tag: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-input-limits-{}-{tag}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    dir
}

/// Run the binary with `args` in `dir`; a run that takes over 60 s is a failure (a hang).
fn run(dir: &Path, args: &[&str]) -> Output {
    let (tx, rx) = mpsc::channel();
    let mut cmd = Command::new(env!("CARGO_BIN_EXE_photoledger"));
    cmd.current_dir(dir)
        .args(args)
        .stdout(std::process::Stdio::piped())
        .stderr(std::process::Stdio::piped());
    let child = cmd.spawn().unwrap();
    let id = child.id();
    std::thread::spawn(move || {
        let _ = tx.send(child.wait_with_output());
    });
    match rx.recv_timeout(Duration::from_secs(60)) {
        Ok(out) => out.unwrap(),
        Err(_) => {
            let _ = Command::new("kill").args(["-9", &id.to_string()]).status();
            panic!("photoledger {args:?} did not finish in 60 s");
        }
    }
}

fn network(epsilon: &str) -> String {
    format!(
        "# invented\n[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\n\
         [[light]]\nkind = \"line\"\nwavelength = \"320 nm\"\npower = \"10 mW\"\n\
         [[species]]\nname = \"A\"\ninitial = \"50 uM\"\nepsilon = {epsilon}\n\
         [[species]]\nname = \"B\"\nproduct = true\n[[photo]]\nequation = \"A -> B\"\nquantum_yield = 0.3\n"
    )
}

#[cfg(unix)]
#[test]
fn a_fifo_as_the_network_file_is_refused_not_waited_on() {
    let dir = scratch("fifo");
    let fifo = dir.join("net.toml");
    assert!(Command::new("mkfifo").arg(&fifo).status().unwrap().success());
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(3), "{err}");
    assert!(
        err.contains("net.toml") && err.contains("FIFO") && err.contains("regular file"),
        "{err}"
    );
}

#[cfg(unix)]
#[test]
fn a_device_as_a_table_is_refused_at_the_field_that_names_it() {
    let dir = scratch("device");
    std::fs::write(dir.join("net.toml"), network("{ file = \"/dev/zero\" }")).unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("species \"A\".epsilon.file") && err.contains("a device"),
        "{err}"
    );
}

#[test]
fn text_that_is_not_utf8_is_placed_by_line_and_column() {
    let dir = scratch("latin1");
    // "25 °C" saved as Latin-1: the degree sign is the single byte B0.
    std::fs::write(dir.join("net.toml"), b"[conditions]\ntemperature = \"25 \xb0C\"\n").unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(err.contains("net.toml:2:19") && err.contains("not UTF-8"), "{err}");
}

#[test]
fn a_byte_order_mark_is_skipped_in_networks_tables_and_frequency_files() {
    let dir = scratch("bom");
    let bom = "\u{feff}";
    std::fs::write(
        dir.join("eps.csv"),
        format!("{bom}# invented absorption\nwavelength (nm), epsilon (L/(mol cm))\n300, 100\n340, 200\n"),
    )
    .unwrap();
    std::fs::write(
        dir.join("net.toml"),
        format!("{bom}{}", network("{ file = \"eps.csv\" }")),
    )
    .unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    assert!(
        out.status.success(),
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    let text = format!("{bom}[reactant]\n3050\n1610\n1180\n820\n");
    let f = photoledger::file::frequencies::parse_text(Path::new("f.txt"), text.trim_start_matches(bom));
    assert!(f.is_ok());
    std::fs::write(dir.join("f.txt"), &text).unwrap();
    assert!(photoledger::file::frequencies::read(&dir.join("f.txt")).is_ok());
}

#[test]
fn line_numbers_stay_right_deep_into_a_large_table() {
    let dir = scratch("deep");
    let mut csv =
        String::from("# invented, with comments and blank lines on the way\nwavelength (nm), epsilon (L/(mol cm))\n");
    let mut line = 2;
    for i in 0..50_000 {
        if i % 1000 == 0 {
            csv.push_str("\n# a comment\n");
            line += 2;
        }
        csv.push_str(&format!("{}, 100\n", 250.0 + i as f64 * 1e-3));
        line += 1;
    }
    csv.push_str("299.99999, lots\n");
    line += 1;
    std::fs::write(dir.join("eps.csv"), csv).unwrap();
    std::fs::write(dir.join("net.toml"), network("{ file = \"eps.csv\" }")).unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains(&format!("line {line}")) || err.contains(&format!(":{line}")),
        "want line {line}: {err}"
    );
}

/// `photoledger ARGS` on the bundled photoswitch with one `--set`: exit code and both streams.
fn on_photoswitch(command: &str, set: &str) -> (Option<i32>, String) {
    let root = Path::new(env!("CARGO_MANIFEST_DIR"));
    let out = run(root, &[command, "networks/photoswitch.toml", "--set", set]);
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.code(), text)
}

#[test]
fn values_that_would_overflow_later_are_refused_at_check_naming_their_field() {
    for (set, field) in [
        ("conditions.temperature=1e308 K", "conditions.temperature"),
        (
            "thermal.thermal Z to E.barrier=-1e10 kcal/mol",
            "thermal.thermal Z to E.barrier",
        ),
        ("species.E-azo.initial=1e308 M", "species.E-azo.initial"),
        ("light.UV LED.power=1e308 W", "light.UV LED.power"),
    ] {
        for command in ["check", "ledger", "diagram"] {
            let (code, text) = on_photoswitch(command, set);
            assert_eq!(code, Some(1), "{command} --set {set}: {text}");
            assert!(
                text.contains(field) && text.contains("error"),
                "{command} --set {set}: {text}"
            );
            assert!(!text.lines().any(|l| l.starts_with("valid:")), "{text}");
        }
    }
}

#[test]
fn finite_but_implausible_values_are_warned_about() {
    for (set, words) in [
        ("conditions.temperature=1e6 K", "above any solution photochemistry"),
        ("conditions.volume=1e-300 L", "beyond any continuous lamp or laser"),
        ("conditions.path_length=1e300 m", "the light is gone within nanometres"),
    ] {
        let (code, text) = on_photoswitch("check", set);
        assert_eq!(code, Some(0), "{set}: {text}");
        assert!(text.contains("warning") && text.contains(words), "{set}: {text}");
    }
    // A mistyped table point of 1e18 L/(mol cm) (no molecule reaches 1e6).
    let dir = scratch("eps-point");
    std::fs::write(
        dir.join("net.toml"),
        network(
            "{ wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[300, 1000], [320, 1e18], [340, 1000]] }",
        ),
    )
    .unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert!(
        err.contains("species \"A\".epsilon") && err.contains("more than any known molecule"),
        "{err}"
    );
    // The bundled networks stay free of these warnings.
    for f in [
        "photoswitch",
        "photoswitch-side-product",
        "prebiotic-pool",
        "flow-cyclization",
    ] {
        let root = Path::new(env!("CARGO_MANIFEST_DIR"));
        let out = run(root, &["check", &format!("networks/{f}.toml")]);
        let err = String::from_utf8_lossy(&out.stderr);
        assert!(!err.contains("warning"), "{f}: {err}");
    }
}

/// Run from the crate root; exit code and both streams.
fn at_root(args: &[&str]) -> (Option<i32>, String) {
    let out = run(Path::new(env!("CARGO_MANIFEST_DIR")), args);
    let text = format!(
        "{}{}",
        String::from_utf8_lossy(&out.stdout),
        String::from_utf8_lossy(&out.stderr)
    );
    (out.status.code(), text)
}

#[test]
fn options_out_of_range_are_refused_naming_the_option_and_the_range() {
    let net = "networks/photoswitch.toml";
    for (args, words) in [
        (vec!["simulate", net, "--until", "-1 h"], vec!["--until", "positive"]),
        (vec!["report", net, "--until", "-2 h"], vec!["--until", "positive"]),
        (
            vec!["simulate", net, "--until", "1 h", "--points", "0"],
            vec!["--points", "2 to 1000000"],
        ),
        (
            vec!["simulate", net, "--until", "1 h", "--points", "100000000"],
            vec!["--points", "2 to 1000000"],
        ),
        (
            vec!["simulate", net, "--until", "1 h", "--rtol", "10"],
            vec!["--rtol", "1e-14 to 0.1"],
        ),
        (
            vec![
                "barrier",
                "--window",
                "1 h",
                "--temperature",
                "298 K",
                "--transmission",
                "1e308",
            ],
            vec!["--transmission", "(0, 1]"],
        ),
    ] {
        let (code, text) = at_root(&args);
        assert_eq!(code, Some(2), "{args:?}: {text}");
        for w in words {
            assert!(text.contains(w), "{args:?} should say {w}: {text}");
        }
    }
}

#[test]
fn barrier_windows_no_barrier_can_express_are_refused_not_printed_as_inf() {
    // Eyring: k = κ kT/h exp(−ΔG‡/RT) (Eyring, J. Chem. Phys. 3, 107, 1935); κkT/h is
    // 6.2e12 s⁻¹ at 298 K, so no thermal step has a half-life below about 0.11 ps.
    let (code, text) = at_root(&["barrier", "--window", "1e-300 s", "--temperature", "298 K"]);
    assert_eq!(code, Some(2), "{text}");
    assert!(text.contains("even with no barrier"), "{text}");
    let (code, text) = at_root(&["barrier", "--window", "1 h", "--temperature", "1e308 K"]);
    assert_eq!(code, Some(2), "{text}");
    // A very long window is a very high, finite barrier: RT ln(kT/(h k)) with k = ln 2 / 1e300 s.
    let (code, text) = at_root(&["barrier", "--window", "1e300 s", "--temperature", "298 K"]);
    assert_eq!(code, Some(0), "{text}");
    assert!(!text.contains("inf") && !text.contains("NaN"), "{text}");
    assert!(text.contains("1785 kJ/mol"), "{text}");
}

#[test]
fn a_runaway_name_is_refused_without_echoing_it() {
    let dir = scratch("long-name");
    let long = "S".repeat(10_000_000);
    let text = network("{ at = \"320 nm\", value = \"5000 L/(mol cm)\" }")
        .replace("name = \"B\"", &format!("name = \"{long}\""));
    std::fs::write(dir.join("net.toml"), text).unwrap();
    let out = run(&dir, &["simulate", "net.toml", "--until", "1 h", "--out", "o"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{}", &err[..err.len().min(400)]);
    assert!(
        err.contains("10000000 characters long") && err.contains("at most 200"),
        "{}",
        &err[..err.len().min(400)]
    );
    assert!(err.len() < 10_000, "the message repeats the name: {} bytes", err.len());
    assert!(!dir.join("o").exists(), "no output folder for an invalid network");
}

#[test]
fn a_leading_minus_reaches_the_option_that_refuses_it_by_name() {
    // clap took "-0.5" or "-10 cm-1" for a flag: "unexpected argument '-1' found".
    let (net, pool) = ("networks/photoswitch.toml", "networks/prebiotic-pool.toml");
    let dir = scratch("minus");
    std::fs::write(
        dir.join("f.txt"),
        "# invented molecule, cm-1\n[reactant]\n3000 1500 1000\n800 500 300 200\n\
         [transition state]\n3000 1500 1000 800 300 200\n700i\n",
    )
    .unwrap();
    let f = dir.join("f.txt").display().to_string();
    let thermal = ["barrier", "--window", "1 h", "--temperature", "298 K"];
    let table = ["barrier", "--frequencies", &f, "--barrier", "60 kJ/mol"];
    let hot = [
        "barrier",
        "--energy",
        "250 kJ/mol",
        "--frequencies",
        &f,
        "--cooling",
        "10 ps",
    ];
    let cases: Vec<(Vec<&str>, &str)> = vec![
        ([&thermal[..], &["--probability", "-0.5"]].concat(), "--probability"),
        ([&hot[..], &["--grain", "-10 cm-1"]].concat(), "grain"),
        (
            [&table[..], &["--energy-range", "-1 kJ/mol..200 kJ/mol"]].concat(),
            "--energy-range",
        ),
        (vec!["uncertainty", pool, "--samples", "-3"], "--samples"),
        (vec!["uncertainty", pool, "--samples", "4", "--seed", "-1"], "--seed"),
        (vec!["ledger", net, "--max-photons", "-1"], "--max-photons"),
        (vec!["ledger", net, "--at", "-1 h"], "--at"),
        (vec!["plan", net, "--target", "Z-azo > 30 %", "--in", "-1 h"], "--in"),
        (
            vec!["plan", net, "--target", "Z-azo > 30 %", "--horizon", "-1 d"],
            "--horizon",
        ),
        (
            vec!["simulate", net, "--until", "1 h", "--sun-hours", "-3"],
            "--sun-hours",
        ),
        (
            vec!["simulate", net, "--until", "1 h", "--sun-scale", "-1"],
            "--sun-scale",
        ),
    ];
    // An imaginary frequency written with a minus, as frequency files may: the same factor.
    let (code, minus) = at_root(&[&thermal[..], &["--tunnelling", "-1200 cm-1"]].concat());
    assert_eq!(code, Some(0), "{minus}");
    let (_, plus) = at_root(&[&thermal[..], &["--tunnelling", "1200 cm-1"]].concat());
    assert!(
        minus.contains("κ = 2.3986") && plus.contains("κ = 2.3986"),
        "{minus}{plus}"
    );
    for (args, option) in cases {
        let (code, text) = at_root(&args);
        assert_eq!(code, Some(2), "{args:?}: {text}");
        assert!(
            text.contains(option) && !text.contains("unexpected argument"),
            "{args:?} should name {option}: {text}"
        );
    }
}

#[test]
fn samples_beyond_the_limit_are_refused_not_an_abort() {
    // 1e11 samples made `uncertainty` ask for 8 TB and abort (exit 134).
    let (code, text) = at_root(&[
        "uncertainty",
        "networks/prebiotic-pool.toml",
        "--samples",
        "100000000000",
    ]);
    assert_eq!(code, Some(2), "{text}");
    assert!(text.contains("--samples") && text.contains("1 to 1000000"), "{text}");
}

#[test]
fn barrier_options_that_overflow_in_si_units_are_refused_by_name() {
    // 1e308 kJ/mol is 1e311 J/mol, past the largest double: it printed "energy: inf J/mol must
    // be positive", and a 1e160 cm-1 tunnelling frequency (an infinite Wigner factor) "transmission coefficient: inf".
    let dir = scratch("barrier-overflow");
    std::fs::write(
        dir.join("f.txt"),
        "# invented molecule, cm-1\n[reactant]\n3000 1500 1000\n800 500 300 200\n\
         [transition state]\n3000 1500 1000 800 300 200\n700i\n",
    )
    .unwrap();
    for (args, words) in [
        (
            vec![
                "barrier",
                "--energy",
                "1e308 kJ/mol",
                "--frequencies",
                "f.txt",
                "--cooling",
                "10 ps",
            ],
            vec!["--energy", "too large"],
        ),
        (
            vec![
                "barrier",
                "--window",
                "1 h",
                "--temperature",
                "298 K",
                "--tunnelling",
                "1e160 cm-1",
            ],
            vec!["--tunnelling", "not finite"],
        ),
        (
            vec![
                "barrier",
                "--energy",
                "250 kJ/mol",
                "--frequencies",
                "f.txt",
                "--cooling",
                "10 ps",
                "--grain",
                "1e300 cm-1",
            ],
            vec!["smaller than half the grain"],
        ),
    ] {
        let out = run(&dir, &args);
        let text = format!(
            "{}{}",
            String::from_utf8_lossy(&out.stdout),
            String::from_utf8_lossy(&out.stderr)
        );
        assert_eq!(out.status.code(), Some(2), "{args:?}: {text}");
        for w in words {
            assert!(text.contains(w), "{args:?} should say {w}: {text}");
        }
        assert!(!text.contains("inf ") && text.len() < 1000, "{args:?}: {text}");
    }
}

#[test]
fn a_table_over_the_size_limit_is_refused_at_its_field_with_the_limit() {
    let dir = scratch("huge");
    // A sparse file one byte over 256 MiB: no disk is used, and nothing is read.
    let f = std::fs::File::create(dir.join("eps.csv")).unwrap();
    f.set_len(256 * 1024 * 1024 + 1).unwrap();
    std::fs::write(dir.join("net.toml"), network("{ file = \"eps.csv\" }")).unwrap();
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(1), "{err}");
    assert!(
        err.contains("species \"A\".epsilon.file") && err.contains("256 MiB"),
        "{err}"
    );
}

#[test]
fn a_spectrometer_export_of_300000_rows_loads_well_within_the_hang_limit() {
    // Loading is linear (scripts/loading_scale.py: 1 M rows in about 2 s on a release build);
    // before, every row recounted the lines above it and 100,000 rows took 59 s, so 300,000
    // took many minutes. The bound here is the 60 s hang limit of `run`, far above either
    // build's time now.
    let dir = scratch("export");
    let mut csv = String::from("wavelength (nm), epsilon (L/(mol cm))\n");
    for i in 0..300_000 {
        let wl = 250.0 + 200.0 * i as f64 / 299_999.0;
        csv.push_str(&format!(
            "{wl:.7}, {:.6}\n",
            8000.0 * (-((wl - 320.0) / 30.0).powi(2)).exp()
        ));
    }
    std::fs::write(dir.join("eps.csv"), csv).unwrap();
    std::fs::write(dir.join("net.toml"), network("{ file = \"eps.csv\" }")).unwrap();
    let start = std::time::Instant::now();
    let out = run(&dir, &["check", "--quiet", "net.toml"]);
    assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
    assert!(start.elapsed() < Duration::from_secs(60));
}
