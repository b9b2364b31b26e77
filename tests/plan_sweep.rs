//! `plan --sweep` against single plans.
//!
//! Source: a sweep is defined as the single plan repeated at each swept value, everything else
//! as given (`common practice` for parameter studies). So each point of `plan::sweep::run`
//! must give the time to target of a separate `plan` of the network file with that value set
//! by `--set` (the network read from its file again, as a separate command run would). What is
//! tested, on the bundled photoswitch (`networks/photoswitch.toml`, invented):
//! - a temperature sweep at two points against `--set conditions.temperature=...`;
//! - a concentration sweep at two points against `--set species.E-azo.initial=...`
//!   (the target's level moves with the start, so it is re-read per point);
//! - a power sweep (all sources scaled together) at two points against `--set` of each LED's
//!   power in the file's 20 : 30 ratio;
//! - the points come back in the order of the values, with the values as parsed.
//!
//! Times are compared to 1e-9 relative: the same model integrated with the same options gives
//! the same numbers up to floating-point reassociation in the build.

use photoledger::model::Model;
use photoledger::network::{self, Overrides};
use photoledger::plan::{self, PlanOptions};
use std::path::{Path, PathBuf};

const TARGET: &str = "E-azo < 60 %";

fn file() -> PathBuf {
    Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/photoswitch.toml")
}

/// The time to target of one separate plan with `set` overrides.
fn single(set: &[(&str, String)]) -> f64 {
    let items: Vec<String> = set.iter().map(|(k, v)| format!("{k}={v}")).collect();
    let ov = Overrides::parse(&items).expect("overrides");
    let net = network::load(&file(), &ov).expect("valid");
    let model = Model::compile(&net);
    let t = plan::target::parse(TARGET, &model).expect("target");
    plan::time_to_target(&model, &t, &PlanOptions::default())
        .expect("plan")
        .time
        .expect("reached")
}

/// The times of a sweep of `spec`, and its values.
fn sweep(spec: &str) -> Vec<(f64, f64)> {
    let loaded = photoledger::file::load(&file()).expect("reads");
    let net = network::build(&loaded, &Overrides::none()).expect("valid");
    let model = Model::compile(&net);
    let spec = plan::sweep::parse(spec, &net).expect("spec");
    let base = plan::sweep::Base {
        network: &net,
        model: &model,
    };
    let sw = plan::sweep::run(&base, &spec, TARGET, &|m| m, &PlanOptions::default()).expect("sweep");
    assert_eq!(sw.points.len(), spec.values.len());
    sw.points
        .iter()
        .zip(&spec.values)
        .map(|(p, v)| {
            assert_eq!(p.value, *v, "points keep the order of the values");
            let time = p.plan.as_ref().expect("plan").time.expect("reached");
            (p.value, time)
        })
        .collect()
}

fn close(a: f64, b: f64, what: &str) {
    assert!(
        (a - b).abs() <= 1e-9 * b.abs(),
        "{what}: sweep {a} s vs single plan {b} s"
    );
}

#[test]
fn temperature_sweep_matches_single_plans() {
    let pts = sweep("temperature=10°C..60°C:6");
    for &k in &[1usize, 4] {
        let (v, t) = pts[k];
        close(
            t,
            single(&[("conditions.temperature", format!("{v} K"))]),
            "temperature",
        );
    }
    // The thermal back reaction speeds up with temperature: the times differ along the sweep.
    assert!(pts[0].1 != pts[5].1);
}

#[test]
fn concentration_sweep_matches_single_plans() {
    let pts = sweep("concentration.E-azo=10µM..60µM:5");
    for &k in &[0usize, 3] {
        let (v, t) = pts[k];
        close(
            t,
            single(&[("species.E-azo.initial", format!("{v} M"))]),
            "concentration",
        );
    }
    // More absorber in the cell takes longer to convert the same fraction.
    assert!(pts[4].1 > pts[0].1);
}

#[test]
fn power_sweep_matches_single_plans_with_each_source_set() {
    // The file: UV LED 20 mW + blue LED 30 mW = 50 mW in all.
    let pts = sweep("power=50mW..500mW:3");
    for &k in &[0usize, 2] {
        let (v, t) = pts[k];
        let f = v / 0.05;
        let set = [
            ("light.UV LED.power", format!("{} mW", 20.0 * f)),
            ("light.blue LED.power", format!("{} mW", 30.0 * f)),
        ];
        close(t, single(&set), "power");
    }
}

/// The sweep's points and axis for `spec` on a bundled network with `target`.
fn sweep_points(network_file: &str, spec: &str, target: &str) -> (plan::sweep::SweepAxis, Vec<plan::SweepPoint>) {
    let path = Path::new(env!("CARGO_MANIFEST_DIR")).join(network_file);
    let loaded = photoledger::file::load(&path).expect("reads");
    let net = network::build(&loaded, &Overrides::none()).expect("valid");
    let model = Model::compile(&net);
    let spec = plan::sweep::parse(spec, &net).expect("spec");
    let base = plan::sweep::Base {
        network: &net,
        model: &model,
    };
    let sw = plan::sweep::run(&base, &spec, target, &|m| m, &PlanOptions::default()).expect("sweep");
    (spec.axis, sw.points)
}

/// Every `<text>` of an SVG: (x, y, text-anchor, content).
fn svg_texts(svg: &str) -> Vec<(f64, f64, String, String)> {
    let attr = |tag: &str, name: &str| -> Option<String> {
        let at = tag.find(&format!(" {name}=\""))? + name.len() + 3;
        Some(tag[at..].split('"').next()?.to_string())
    };
    svg.split("<text")
        .skip(1)
        .filter_map(|t| {
            let (tag, rest) = t.split_once('>')?;
            let content = rest.split("</text>").next()?.trim().to_string();
            let x = attr(tag, "x")?.parse().ok()?;
            let y = attr(tag, "y")?.parse().ok()?;
            Some((x, y, attr(tag, "text-anchor").unwrap_or_default(), content))
        })
        .collect()
}

/// The tick labels of both axes: numbers, short, distinct, at least three each, and no two
/// neighbours overlapping (12 px sans-serif: about 7 px a character; stacked labels 12 px high).
fn assert_readable_ticks(svg: &str, what: &str) {
    let texts = svg_texts(svg);
    let numeric = |t: &&(f64, f64, String, String)| t.3.parse::<f64>().is_ok();
    let mut xs: Vec<_> = texts.iter().filter(|t| t.2 == "middle").filter(numeric).collect();
    let mut ys: Vec<_> = texts.iter().filter(|t| t.2 == "end").filter(numeric).collect();
    xs.sort_by(|a, b| a.0.total_cmp(&b.0));
    ys.sort_by(|a, b| a.1.total_cmp(&b.1));
    for (axis, ticks) in [("x", &xs), ("y", &ys)] {
        let labels: Vec<&str> = ticks.iter().map(|t| t.3.as_str()).collect();
        assert!(labels.len() >= 3, "{what}: {axis} axis has {labels:?}");
        assert!(labels.iter().all(|l| l.len() <= 6), "{what}: {axis} labels {labels:?}");
        let mut unique = labels.clone();
        unique.dedup();
        assert_eq!(unique.len(), labels.len(), "{what}: {axis} labels repeat: {labels:?}");
    }
    for w in xs.windows(2) {
        let need = (w[0].3.len() + w[1].3.len()) as f64 * 7.0 / 2.0;
        assert!(
            w[1].0 - w[0].0 >= need,
            "{what}: x labels {} and {} overlap",
            w[0].3,
            w[1].3
        );
    }
    for w in ys.windows(2) {
        assert!(
            w[1].1 - w[0].1 >= 12.0,
            "{what}: y labels {} and {} overlap",
            w[0].3,
            w[1].3
        );
    }
}

/// Source: `common practice` for axis design: every axis names round values, at least three,
/// and its labels never run into each other. A power sweep within one decade (1 to 10 mW) and
/// one over two decades (the README's 10 mW to 1 W), on the bundled flow network (invented).
/// The selectivity plot draws and names only products with a selectivity: the iodohydrin, a
/// co-product of the scavenger, has none against the substrate and no line.
#[test]
fn sweep_plots_label_their_log_axes_with_round_values_that_do_not_overlap() {
    let flow = "networks/flow-cyclization.toml";
    for spec in ["power=1mW..10mW:5", "power=10mW..1W:8"] {
        let (axis, points) = sweep_points(flow, spec, "product > 80 %");
        let svg = photoledger::report::plan::sweep_svg("flow", "product > 80 %", &axis, &points);
        assert_readable_ticks(&svg, &format!("sweep.svg of {spec}"));
        let sel = photoledger::report::plan::selectivity_svg("flow", &axis, &points).expect("two products form");
        let texts: Vec<String> = svg_texts(&sel).into_iter().map(|t| t.3).collect();
        assert!(texts.iter().any(|t| t == "degradate"), "{texts:?}");
        assert!(!texts.iter().any(|t| t == "iodohydrin"), "{texts:?}");
        assert_readable_ticks(&sel, &format!("selectivity.svg of {spec}"));
    }
}

/// The sweep's text as a photochemist reads it: each power with its own unit on the display
/// ladder (19.3 mW, not 0.0193 in a W column), a point that never gets there with the most it
/// reached and when, as `plan` gives it for one point, and no products column when nothing is
/// a product.
#[test]
fn sweep_text_gives_each_value_its_unit_and_each_unreachable_point_its_closest_level() {
    let out = std::process::Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .args(["plan", "networks/photoswitch.toml", "--target", "Z-azo > 45 %"])
        .args(["--sweep", "power=5mW..200mW:3", "--out"])
        .arg(std::env::temp_dir().join(format!("photoledger-sweep-text-{}", std::process::id())))
        .output()
        .unwrap();
    assert_eq!(out.status.code(), Some(5), "not reachable at any point");
    let text = String::from_utf8_lossy(&out.stdout);
    let lines: Vec<&str> = text.lines().collect();
    assert!(lines[0].starts_with("sweep of total power emitted for"), "{text}");
    assert!(lines[1].contains("a yield on E-azo, the limiting reagent"), "{text}");
    assert!(!lines[2].contains("products"), "no product, no column: {text}");
    for (line, power) in lines[3..6].iter().zip(["5 mW", "31.6 mW", "200 mW"]) {
        assert!(line.trim_start().starts_with(power), "{line}");
        assert!(line.contains("unreachable (photostationary): at best 2"), "{line}");
        assert!(
            line.contains(" µM (44"),
            "the closest level also as the target counts it: {line}"
        );
        assert!(line.contains(" %), 99 % of the way there after "), "{line}");
    }
}

/// A concentration sweep that makes another species limiting (the bundled flow cyclization,
/// invented: substrate swept past the 18 mM of iodine) keeps the yield on the file's limiting
/// reagent at every point, so the points' yields and selectivities count against one species
/// (each point read on its own would switch to iodine at 20 mM substrate).
#[test]
fn a_concentration_sweep_keeps_the_yield_on_one_reference() {
    let file = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/flow-cyclization.toml");
    let net = network::load(&file, &Overrides::none()).expect("valid");
    let model = Model::compile(&net);
    let spec = plan::sweep::parse("concentration.substrate=1mM..20mM:3", &net).expect("spec");
    let base = plan::sweep::Base {
        network: &net,
        model: &model,
    };
    let sw = plan::sweep::run(&base, &spec, "product > 50 %", &|m| m, &PlanOptions::default()).expect("sweep");
    for p in &sw.points {
        let pl = p.plan.as_ref().expect("plan");
        match &pl.target.basis {
            plan::target::Basis::YieldOf { reference, .. } => assert_eq!(reference, "substrate", "at {}", p.value),
            b => panic!("{b:?}"),
        }
        assert!(
            (pl.target.level - 0.5 * p.value).abs() <= 1e-15,
            "50 % of the swept substrate"
        );
        for s in pl.products.iter().filter(|s| s.reference.is_some()) {
            assert_eq!(s.reference.as_deref(), Some("substrate"));
        }
    }
    // The last point makes iodine limiting on its own.
    let mut last = net.clone();
    let key = photoledger::network::params::Key::parse(&last, "species.substrate.initial").unwrap();
    photoledger::network::params::set(&mut last, key, 20e-3).unwrap();
    let own = plan::target::parse("product > 50 %", &Model::compile(&last)).unwrap();
    assert!(matches!(own.basis, plan::target::Basis::YieldOf { ref reference, .. } if reference != "substrate"));
}
