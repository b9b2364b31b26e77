//! Every CSV the commands write is RFC 4180 (Shafranov, "Common Format and MIME Type for
//! Comma-Separated Values (CSV) Files", IETF 2005, section 2), also when names hold commas and
//! quotes: a copy of a bundled network whose step is named `E to Z, "fast"` and an experiment
//! named `UV LED, "only"` go through simulate, ledger, plan (single run and sweep), fit,
//! uncertainty and barrier, and each file is parsed back with the `csv` crate's strict reader.

use std::path::{Path, PathBuf};
use std::process::Command;

const STEP: &str = "E to Z, \"fast\"";
const EXPERIMENT: &str = "UV LED, \"only\"";

fn root() -> PathBuf {
    PathBuf::from(env!("CARGO_MANIFEST_DIR"))
}

fn scratch(name: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("photoledger-csv-{name}-{}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

fn run(args: &[&str]) {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .output()
        .expect("runs");
    assert!(
        out.status.success(),
        "photoledger {args:?} failed:\n{}",
        String::from_utf8_lossy(&out.stderr)
    );
}

/// A bundled network with its photochemical step "E to Z" renamed to [`STEP`] (and the keys
/// naming it in `[fit] free`).
fn renamed(network: &str, dir: &Path) -> PathBuf {
    let text = std::fs::read_to_string(root().join("networks").join(network)).unwrap();
    let quoted = STEP.replace('"', "\\\"");
    let text = text
        .replace("name = \"E to Z\"", &format!("name = \"{quoted}\""))
        .replace("\"photo.E to Z.", &format!("\"photo.{quoted}."));
    assert!(text.contains(&quoted), "the step was renamed");
    let p = dir.join(network);
    std::fs::write(&p, text).unwrap();
    p
}

/// Parse `path` strictly and check it against RFC 4180 §2; return the header and records.
fn parse(path: &Path) -> (Vec<String>, Vec<Vec<String>>) {
    let text = std::fs::read_to_string(path).unwrap_or_else(|e| panic!("{}: {e}", path.display()));
    let mut r = csv::ReaderBuilder::new()
        .has_headers(true)
        .flexible(false)
        .from_reader(text.as_bytes());
    let header: Vec<String> = r.headers().unwrap().iter().map(String::from).collect();
    let rows: Vec<Vec<String>> = r
        .records()
        .map(|x| {
            x.unwrap_or_else(|e| panic!("{}: {e}", path.display()))
                .iter()
                .map(String::from)
                .collect()
        })
        .collect();
    assert!(!rows.is_empty(), "{}: no records", path.display());
    // RFC 4180 §2 rule 4: each record has the header's number of fields.
    for (i, row) in rows.iter().enumerate() {
        assert_eq!(row.len(), header.len(), "{} record {}", path.display(), i + 1);
    }
    // RFC 4180 §2 rules 1-2: every record, the last one too, ends in CRLF (these files have no
    // line breaks inside fields, so there is one CRLF per record and no bare LF).
    assert_eq!(text.matches("\r\n").count(), rows.len() + 1, "{}", path.display());
    assert!(
        !text.replace("\r\n", "").contains('\n'),
        "{}: a bare LF",
        path.display()
    );
    // RFC 4180 §2 rules 5-7: the text is exactly the records written back with quotes only
    // around fields holding a comma, quote or line break, inner quotes doubled, CRLF after each.
    let mut w = csv::WriterBuilder::new()
        .quote_style(csv::QuoteStyle::Necessary)
        .terminator(csv::Terminator::CRLF)
        .from_writer(Vec::new());
    w.write_record(&header).unwrap();
    for row in &rows {
        w.write_record(row).unwrap();
    }
    let canonical = String::from_utf8(w.into_inner().unwrap()).unwrap();
    assert_eq!(text, canonical, "{}: not in the RFC 4180 form", path.display());
    // Units stay written out in the header, e.g. "time (s)".
    assert!(
        header.iter().all(|h| !h.trim().is_empty()),
        "{}: an empty header",
        path.display()
    );
    (header, rows)
}

fn column(header: &[String], name: &str) -> usize {
    header
        .iter()
        .position(|h| h == name)
        .unwrap_or_else(|| panic!("no column {name:?} in {header:?}"))
}

fn numbers(rows: &[Vec<String>], col: usize) -> Vec<f64> {
    rows.iter().map(|r| r[col].parse::<f64>().unwrap()).collect()
}

#[test]
fn simulate_and_plan_csvs() {
    let dir = scratch("sim");
    let net = renamed("photoswitch-side-product.toml", &dir);
    let net = net.to_str().unwrap();
    let sim = dir.join("sim");
    run(&["simulate", net, "--until", "10 min", "--out", sim.to_str().unwrap()]);
    let (h, rows) = parse(&sim.join("concentrations.csv"));
    assert_eq!(h[0], "time (s)");
    assert!(h.contains(&"E-azo (mol/L)".to_string()), "{h:?}");
    let t = numbers(&rows, 0);
    assert_eq!(t[0], 0.0);
    assert!((t[t.len() - 1] - 600.0).abs() < 1e-9, "the run ends at 10 min: {t:?}");
    let (h, rows) = parse(&sim.join("photons.csv"));
    assert_eq!(&h[..2], ["time (s)", "incident (einstein)"]);
    assert!(numbers(&rows, 1).last().unwrap() > &0.0);

    let plan = dir.join("plan");
    run(&["plan", net, "--target", "Z-azo > 30 %", "--out", plan.to_str().unwrap()]);
    let (h, _) = parse(&plan.join("concentrations.csv"));
    assert_eq!(h[0], "time (s)");

    let sweep = dir.join("sweep");
    run(&[
        "plan",
        net,
        "--target",
        "Z-azo > 30 %",
        "--sweep",
        "power=10mW..1W:3",
        "--out",
        sweep.to_str().unwrap(),
    ]);
    let (h, rows) = parse(&sweep.join("sweep.csv"));
    assert_eq!(rows.len(), 3);
    assert_eq!(&h[1..4], ["time to target (s)", "reached", "note"]);
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn ledger_csv() {
    let dir = scratch("ledger");
    let net = renamed("photoswitch-side-product.toml", &dir);
    let out = dir.join("ledger");
    run(&["ledger", net.to_str().unwrap(), "--out", out.to_str().unwrap()]);
    let (h, rows) = parse(&out.join("photon_counts.csv"));
    assert_eq!(&h[..2], ["photons absorbed", "probability"]);
    let p: f64 = numbers(&rows, 1).iter().sum();
    assert!(p > 0.0 && p <= 1.0 + 1e-9, "probabilities: {p}");
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn fit_and_uncertainty_csvs_keep_names_with_commas_and_quotes() {
    let dir = scratch("fit");
    let net = renamed("photoswitch.toml", &dir);
    let data = root().join("demo-data/fit");
    let exp = dir.join("experiments.toml");
    std::fs::write(
        &exp,
        format!(
            "[[experiment]]\nname = {:?}\ndata = {:?}\nset = {{ \"light.blue LED.power\" = \"0 mW\" }}\n\n\
             [[experiment]]\nname = \"dark\"\ndata = {:?}\nset = {{ \"light.UV LED.power\" = \"0 mW\", \
             \"light.blue LED.power\" = \"0 mW\", \"species.E-azo.initial\" = \"10 µM\", \
             \"species.Z-azo.initial\" = \"40 µM\" }}\n",
            EXPERIMENT,
            data.join("uv-only.csv").to_str().unwrap(),
            data.join("dark.csv").to_str().unwrap()
        ),
    )
    .unwrap();
    let fit = dir.join("fit");
    run(&[
        "fit",
        net.to_str().unwrap(),
        "--data",
        exp.to_str().unwrap(),
        "--out",
        fit.to_str().unwrap(),
    ]);
    let (h, rows) = parse(&fit.join("residuals.csv"));
    assert_eq!(h.len(), 7, "{h:?}");
    let e = column(&h, "experiment");
    assert!(
        rows.iter().any(|r| r[e] == EXPERIMENT),
        "the experiment name reads back whole"
    );
    assert!(rows.iter().all(|r| r[e] == EXPERIMENT || r[e] == "dark"));
    assert!(
        std::fs::read_to_string(fit.join("residuals.csv"))
            .unwrap()
            .contains("\"UV LED, \"\"only\"\"\""),
        "RFC 4180 §2 rules 6-7: quoted, inner quotes doubled"
    );
    // The residual column is (measured − fitted)/sd of the other columns.
    let (y, f, sd, w) = (
        numbers(&rows, column(&h, "measured (M or fraction)")),
        numbers(&rows, column(&h, "fitted (M or fraction)")),
        numbers(&rows, column(&h, "sd")),
        numbers(&rows, column(&h, "weighted residual")),
    );
    for i in 0..rows.len() {
        assert_eq!(w[i], (y[i] - f[i]) / sd[i], "full precision kept, row {i}");
    }

    let unc = dir.join("unc");
    run(&[
        "uncertainty",
        net.to_str().unwrap(),
        "--from-fit",
        fit.join("fit.json").to_str().unwrap(),
        "--samples",
        "12",
        "--seed",
        "5",
        "--until",
        "10 min",
        "--no-chain",
        "--out",
        unc.to_str().unwrap(),
    ]);
    let (h, rows) = parse(&unc.join("samples.csv"));
    assert_eq!(rows.len(), 12);
    let key = format!("photo.{STEP}.quantum_yield");
    assert!(
        h.iter().any(|c| c.starts_with(&key)),
        "the step name reads back whole in {h:?}"
    );
    assert_eq!(h.last().map(String::as_str), Some("error"));
    let _ = std::fs::remove_dir_all(dir);
}

#[test]
fn barrier_csv() {
    let dir = scratch("barrier");
    let out = dir.join("out");
    let freq = root().join("demo-data/frequencies/flow-product.txt");
    run(&[
        "barrier",
        "--frequencies",
        freq.to_str().unwrap(),
        "--barrier",
        "60 kJ/mol",
        "--energy-range",
        "0 kJ/mol..200 kJ/mol",
        "--points",
        "11",
        "--out",
        out.to_str().unwrap(),
    ]);
    let (h, rows) = parse(&out.join("k_of_e.csv"));
    assert_eq!(h[0], "energy (kJ/mol)");
    assert_eq!(rows.len(), 11);
    let _ = std::fs::remove_dir_all(dir);
}

/// The time-course writer (used to make demo-data/fit) and the data reader agree, quoted names too.
#[test]
fn a_written_time_course_reads_back() {
    use photoledger::file::data::{Experiment, Point, parse_points};
    let point = |species: &str, t: f64| Point {
        time: t,
        species: species.into(),
        value: 2e-6,
        sd: 1e-7,
        is_yield: false,
        weighted: true,
        file: PathBuf::from("x.csv"),
        line: 0,
    };
    let e = Experiment {
        name: EXPERIMENT.into(),
        set: Vec::new(),
        until: None,
        yield_of: None,
        points: vec![point("1,2-diol", 60.0), point("say \"hi\"", 120.0)],
        endpoints: Vec::new(),
    };
    let text = photoledger::report::fit::points_csv(&e, "invented, for a test\nsecond line");
    let back = parse_points(Path::new("x.csv"), &text).unwrap();
    assert_eq!(back.len(), 2);
    for (a, b) in e.points.iter().zip(&back) {
        assert_eq!(a.species, b.species);
        assert!((a.time - b.time).abs() < 1e-9 && (a.value - b.value).abs() < 1e-15);
    }
    assert_eq!(back[1].line, 5, "two comment lines and the header come first");
}
