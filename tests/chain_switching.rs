//! Chains that never end (a closed photoswitch) and switching cycles before loss, against
//! hand-worked chains, closed forms and the kinetics.

mod common;

use photoledger::chain::build::{Light, Settings};
use photoledger::chain::{self, Chain, ChainOptions, Followed, Options, StateKind, closed, cycles};
use photoledger::file::parse_text;
use photoledger::kinetics;
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build as build_network};
use proptest::prelude::*;
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    build_network(&l, &Overrides::none()).expect("valid")
}

fn bundled(name: &str) -> Network {
    let path = format!("{}/networks/{name}", env!("CARGO_MANIFEST_DIR"));
    network(&std::fs::read_to_string(path).expect("bundled network"))
}

fn thin() -> ChainOptions {
    ChainOptions {
        settings: Settings {
            light: Light::Thin,
            concentrations: None,
        },
        sensitivities: false,
        ..ChainOptions::default()
    }
}

fn closed_run(net: &Network, opts: &ChainOptions) -> chain::ClosedRun {
    match chain::follow(&Model::compile(net), net, opts).expect("follows") {
        Followed::Closed(c) => *c,
        Followed::Ends(_) => panic!("expected a chain with no end"),
    }
}

/// The Land of Oz weather chain (states Rain, Nice, Snow): P = [[1/2, 1/4, 1/4], [1/2, 0, 1/2],
/// [1/4, 1/4, 1/2]]. Grinstead & Snell, Introduction to Probability (AMS, 1997), ch. 11,
/// ergodic chains: fixed vector w = (2/5, 1/5, 2/5); mean first passage times
/// M = [[0, 4, 10/3], [8/3, 0, 8/3], [10/3, 4, 0]] (section numbers from memory; worked by
/// hand here too: m_SR = 1 + m_SR/2 + m_NR/4 with m_NR = 1 + m_SR/2 gives m_SR = 10/3,
/// m_NR = 8/3; m_RN = m_SN = 1 + (3/4) m_RN gives 4). Every move counted as a photon with a
/// holding time of 1, so photons, steps and time agree.
fn land_of_oz() -> Chain {
    let mut c = Chain::default();
    for n in ["R", "N", "S"] {
        c.add_state(n, StateKind::Other, false, 1.0);
    }
    let p = [[0.5, 0.25, 0.25], [0.5, 0.0, 0.5], [0.25, 0.25, 0.5]];
    for (i, row) in p.iter().enumerate() {
        for (j, &x) in row.iter().enumerate() {
            if x > 0.0 {
                c.add_move(i, j, x, true);
            }
        }
    }
    c
}

#[test]
fn land_of_oz_fixed_vector_and_mean_first_passages() {
    let c = land_of_oz();
    let s = closed::analyse(&c, &[1.0, 0.0, 0.0]).expect("ergodic");
    let w = [0.4, 0.2, 0.4];
    for (i, wi) in w.iter().enumerate() {
        assert!((s.visits[i] - wi).abs() < 1e-13, "w[{i}] = {}", s.visits[i]);
        // holding 1 everywhere: the time shares are the fixed vector too
        assert!((s.time_share.as_ref().unwrap()[i] - wi).abs() < 1e-13);
    }
    let m = [
        [0.0, 4.0, 10.0 / 3.0],
        [8.0 / 3.0, 0.0, 8.0 / 3.0],
        [10.0 / 3.0, 4.0, 0.0],
    ];
    assert_eq!(s.passages.len(), 6);
    for p in &s.passages {
        assert!((p.photons - m[p.from][p.to]).abs() < 1e-12, "{p:?}");
        assert!((p.time.unwrap() - m[p.from][p.to]).abs() < 1e-12, "{p:?}");
    }
    // Kemeny & Snell, Finite Markov Chains (1960), ch. 4 (Theorem 4.4.7): with the fundamental
    // matrix Z = (I − P + W)⁻¹ of an ergodic chain, m_ij = (z_jj − z_ij) / w_j. Formed densely
    // here, apart from the sparse solves under test.
    let p = nalgebra::Matrix3::new(0.5, 0.25, 0.25, 0.5, 0.0, 0.5, 0.25, 0.25, 0.5);
    let wm = nalgebra::Matrix3::from_fn(|_, j| w[j]);
    let z = (nalgebra::Matrix3::identity() - p + wm).try_inverse().expect("Z");
    for q in &s.passages {
        let (i, j) = (q.from, q.to);
        assert!((q.photons - (z[(j, j)] - z[(i, j)]) / w[j]).abs() < 1e-12);
    }
}

/// E ⇄ Z under one line, no thermal step, optically thin: the photostationary state is
/// [Z]/[E] = ε_E Φ_EZ / (ε_Z Φ_ZE) (IUPAC Glossary of terms used in photochemistry, 3rd ed.,
/// Pure Appl. Chem. 79 (2007) 293, "photostationary state"; the derivation e.g. Klán & Wirz,
/// Photochemistry of Organic Compounds, 2009, `from memory` for the section). Each form needs
/// 1/Φ photons on average to switch (a geometric number of absorptions, `common practice`).
const SWITCH: &str = r#"
[about]
name = "invented switch"
invented = true
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
irradiated_area = "1 cm2"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "1 mW"
[[species]]
name = "E"
initial = "1 nM"
epsilon = { at = "365 nm", value = "12000 L/(mol cm)" }
[[species]]
name = "Z"
epsilon = { at = "365 nm", value = "3000 L/(mol cm)" }
[[photo]]
equation = "E -> Z"
quantum_yield = 0.2
[[photo]]
equation = "Z -> E"
quantum_yield = 0.5
"#;

#[test]
fn photostationary_ratio_of_a_thin_monochromatic_switch() {
    let net = network(SWITCH);
    let c = closed_run(&net, &thin());
    let s = &c.stationary;
    let t = s.time_share.as_ref().expect("times");
    let ratio = t[1] / t[0];
    let want = 12000.0 * 0.2 / (3000.0 * 0.5);
    assert!((ratio / want - 1.0).abs() < 1e-12, "[Z]/[E] {ratio} against {want}");
    let by = |a: usize, b: usize| s.passages.iter().find(|p| p.from == a && p.to == b).unwrap();
    assert!((by(0, 1).photons - 1.0 / 0.2).abs() < 1e-10);
    assert!((by(1, 0).photons - 1.0 / 0.5).abs() < 1e-10);
    // Every change of form is a photochemical step: per event, the mean of the two costs.
    assert!((s.photons_per_switch.unwrap() - 0.5 * (5.0 + 2.0)).abs() < 1e-10);
    assert!((s.light_share.unwrap() - 1.0).abs() < 1e-12);
    // Times: k_abs = σ E per form; E → Z takes 1/(Φ σ_E E) (`common practice`).
    let (h, cl, na) = (6.626_070_15e-34, 299_792_458.0, 6.022_140_76e23);
    let photons_per_cm2_s = 1e-3 * 365e-9 / (h * cl);
    let sigma = |eps: f64| 1000.0 * std::f64::consts::LN_10 * eps / na;
    let t_ez = 1.0 / (0.2 * sigma(12000.0) * photons_per_cm2_s);
    assert!((by(0, 1).time.unwrap() / t_ez - 1.0).abs() < 1e-10);
}

/// A chain where a molecule can end and another part that never ends is still refused: one
/// answer cannot cover both.
#[test]
fn a_start_that_can_end_and_a_closed_cycle_apart_is_refused() {
    let text = format!(
        "{SWITCH}\n[[species]]\nname = \"X\"\ninitial = \"1 nM\"\n[[species]]\nname = \"Y\"\n\
         [[thermal]]\nequation = \"X -> Y\"\nrate = {{ k = \"1 /s\" }}\n"
    );
    let net = network(&text);
    let e = chain::follow(&Model::compile(&net), &net, &thin()).expect_err("refused");
    assert!(e.to_string().contains("no end state"), "{e}");
    // From E alone the molecule never ends: the photostationary answer.
    let from_e = ChainOptions {
        from: Some("E".into()),
        ..thin()
    };
    let c = closed_run(&net, &from_e);
    assert_eq!(c.stationary.class, vec![0, 1]);
}

/// Cycles before loss with a constant loss per cycle: K is geometric, mean (1 − p)/p, variance
/// (1 − p)/p², P(K = n) = (1 − p)ⁿ p (Grinstead & Snell, Introduction to Probability, 1997,
/// ch. 5 and 6, the geometric distribution; `from memory` for the chapters). The bundled
/// side-product switch (invented): each stay in E ends by switching (Φ 0.12) or by loss
/// (Φ 0.0005), Z always comes back, so p = 0.0005 / 0.1205.
#[test]
fn cycles_before_loss_of_the_side_product_switch_are_geometric() {
    let net = bundled("photoswitch-side-product.toml");
    let model = Model::compile(&net);
    let run = chain::run(&model, &net, &ChainOptions::default()).expect("chain");
    let (form, partners) = cycles::form(&run.chain, &run.analysis.visits, None).expect("a cycle");
    assert_eq!(run.chain.states[form].name, "E-azo");
    assert_eq!(partners.len(), 1);
    let c = cycles::cycles(&run.chain, form, partners, &Options::default()).expect("cycles");
    let p: f64 = 0.0005 / 0.1205;
    assert!((c.mean / ((1.0 - p) / p) - 1.0).abs() < 1e-9, "mean {}", c.mean);
    assert!(
        (c.variance / ((1.0 - p) / (p * p)) - 1.0).abs() < 1e-9,
        "var {}",
        c.variance
    );
    for n in [0usize, 1, 10, 240, 1000] {
        let want = (1.0 - p).powi(n as i32) * p;
        assert!((c.distribution[n] / want - 1.0).abs() < 1e-9, "P(K = {n})");
    }
    assert!(!c.truncated && c.tail < 1e-9);
}

/// Two forms sharing one intersection X (a common funnel): A → X and B → X by light; X goes
/// to A (0.5), to B (0.45) or is lost (0.05). A return to A through X only completes a cycle
/// when the molecule came from B. From A it reaches B before loss with 0.45/0.5 = 0.9, from B
/// A with 0.5/0.55; r = 0.9 × 0.5/0.55, K geometric with mean r/(1 − r) (closed form as above).
#[test]
fn cycles_through_a_shared_intersection_count_only_real_round_trips() {
    let mut c = Chain::default();
    let a = c.add_state("A", StateKind::Species(0), false, 1.0);
    let b = c.add_state("B", StateKind::Species(1), false, 1.0);
    let x = c.add_state("X", StateKind::Transient(0), false, 0.0);
    let lost = c.add_state("lost", StateKind::Removed, true, 0.0);
    c.add_move(a, x, 1.0, true);
    c.add_move(b, x, 1.0, true);
    c.add_move(x, a, 0.5, false);
    c.add_move(x, b, 0.45, false);
    c.add_move(x, lost, 0.05, false);
    let (form, partners) = cycles::form(&c, &[10.0, 1.0, 0.0, 0.0], None).expect("a cycle");
    assert_eq!((form, partners.clone()), (a, vec![b]));
    let k = cycles::cycles(&c, form, partners, &Options::default()).expect("cycles");
    let r = 0.9 * 0.5 / 0.55;
    assert!((k.mean - r / (1.0 - r)).abs() < 1e-12, "{}", k.mean);
    assert!((k.variance - r / ((1.0 - r) * (1.0 - r))).abs() < 1e-10);
    assert!((k.distribution[3] - r.powi(3) * (1.0 - r)).abs() < 1e-12);
}

/// A photoswitch-like network (invented, random): E ⇄ Z by light at two lines, optionally a
/// thermal Z → E, 1 nM (optically thin) in 1 mL over 1 cm.
fn random_switch(eps: [f64; 4], phi: [f64; 2], power: [f64; 2], k: Option<f64>) -> String {
    let mut s = format!(
        r#"
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
irradiated_area = "1 cm2"
[[light]]
name = "uv"
kind = "line"
wavelength = "365 nm"
power = "{} mW"
[[light]]
name = "blue"
kind = "line"
wavelength = "450 nm"
power = "{} mW"
[[species]]
name = "E"
initial = "1 nM"
epsilon = {{ wavelength_unit = "nm", unit = "L/(mol cm)", points = [[355, {e0}], [375, {e0}], [440, {e1}], [460, {e1}]] }}
[[species]]
name = "Z"
epsilon = {{ wavelength_unit = "nm", unit = "L/(mol cm)", points = [[355, {z0}], [375, {z0}], [440, {z1}], [460, {z1}]] }}
[[photo]]
equation = "E -> Z"
quantum_yield = {}
[[photo]]
equation = "Z -> E"
quantum_yield = {}
"#,
        power[0],
        power[1],
        phi[0],
        phi[1],
        e0 = eps[0],
        e1 = eps[1],
        z0 = eps[2],
        z1 = eps[3],
    );
    if let Some(k) = k {
        s.push_str(&format!(
            "[[thermal]]\nequation = \"Z -> E\"\nrate = {{ k = \"{k:e} /s\" }}\n"
        ));
    }
    s
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(12))]
    /// In the thin limit every molecule absorbs at its own rate whatever the others do, so the
    /// kinetics are linear and their long-time composition is the chain's photostationary one
    /// (the stationary distribution of the continuous-time chain; Kemeny & Snell, ch. 4).
    #[test]
    fn thin_photostationary_composition_matches_the_kinetics(
        eps in prop::array::uniform4(100.0f64..30000.0),
        phi in prop::array::uniform2(0.01f64..0.9),
        power in prop::array::uniform2(0.1f64..10.0),
        k in prop::option::of(1e-4f64..1e-1),
    ) {
        let net = network(&random_switch(eps, phi, power, k));
        let c = closed_run(&net, &thin());
        let share = c.stationary.time_share.clone().expect("times");
        let slowest = c.stationary.passages.iter().filter_map(|p| p.time).fold(0.0, f64::max);
        let model = Model::compile(&net);
        let tr = kinetics::simulate(&model, &kinetics::Options::until(60.0 * slowest), &mut |_| {})
            .expect("kinetics");
        let y = tr.last();
        let total = y[0] + y[1];
        for i in 0..2 {
            let kin = y[i] / total;
            prop_assert!((kin - share[i]).abs() < 2e-5, "species {}: kinetics {} chain {}", i, kin, share[i]);
        }
    }
}

/// The report of a closed switch (the bundled photoswitch, invented values) gives in its chain
/// section the photostationary state `ledger` prints: the composition, photons per switching
/// event and the first passages, not "does not apply".
#[test]
fn the_report_of_a_closed_switch_gives_its_photostationary_state() {
    use photoledger::report::html::{self, Meta};
    use photoledger::study::{self, StudyOptions};
    use photoledger::units::display;
    let net = bundled("photoswitch.toml");
    let model = Model::compile(&net);
    let s = study::run(&net, &model, &StudyOptions::default()).expect("study");
    assert!(s.chain.is_err(), "no molecule ends");
    let closed = s.closed.as_ref().expect("the photostationary state");
    let shares: f64 = closed.at_start.composition.iter().filter_map(|f| f.time_share).sum();
    assert!((shares - 1.0).abs() < 1e-12, "{shares}");
    // The same numbers as ledger's (chain::follow with the default options).
    let Followed::Closed(c) = chain::follow(&model, &net, &ChainOptions::default()).expect("chain") else {
        panic!("closed")
    };
    let e = c.chain.states.iter().position(|st| st.name == "E-azo").expect("E-azo");
    let e = c
        .stationary
        .class
        .iter()
        .position(|&i| i == e)
        .expect("E-azo in the class");
    let meta = Meta {
        command_line: "photoledger report photoswitch.toml".into(),
        date: "2026-12-03 00:00 UTC".into(),
    };
    let page = html::render(&net, &model, &s, &meta);
    assert!(page.contains("Photostationary composition"), "section present");
    assert!(!page.contains("does not apply to this network"));
    let e_share = display::number(100.0 * c.stationary.time_share.as_ref().expect("holding times")[e]);
    assert!(
        page.contains(&format!("<td>E-azo</td><td class=\"num\">{e_share}</td>")),
        "{e_share}"
    );
    // The rates are those of ledger --at the end of the run: the chain with the light shared at
    // the kinetics' concentrations there.
    let ns = model.n_species();
    let at_end = ChainOptions {
        settings: photoledger::chain::build::Settings {
            concentrations: Some(s.kinetics.last()[..ns].to_vec()),
            ..Default::default()
        },
        ..ChainOptions::default()
    };
    let Followed::Closed(c) = chain::follow(&model, &net, &at_end).expect("chain") else {
        panic!("closed")
    };
    let per_switch = display::number(c.stationary.photons_per_switch.expect("switches"));
    assert!(page.contains(&format!("absorbs {per_switch} photons per switching event")));
}

/// The `ledger` command on the bundled photoswitch: by default the light is shared at the
/// mixture the kinetics settle to, so the composition it prints is the sample's own
/// photostationary state (the mixture `simulate` ends at, to 0.5 points: the settled time is
/// within 1 % of the end); `--at "0 s"` shares it as in the starting mixture, which differs by
/// several points because E and Z absorb the two LEDs differently.
#[test]
fn ledger_on_a_closed_switch_gives_the_sample_photostationary_state_by_default() {
    let bin = env!("CARGO_BIN_EXE_photoledger");
    let file = concat!(env!("CARGO_MANIFEST_DIR"), "/networks/photoswitch.toml");
    let dir = std::env::temp_dir().join(format!("pl-ledger-pss-{}", std::process::id()));
    let json = |args: &[&str]| -> serde_json::Value {
        let out = std::process::Command::new(bin)
            .args(args)
            .args(["--json", "--out", dir.to_str().unwrap()])
            .output()
            .unwrap();
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        serde_json::from_slice(&out.stdout).unwrap()
    };
    let z_share = |v: &serde_json::Value| -> f64 {
        v["composition"]
            .as_array()
            .unwrap()
            .iter()
            .find(|f| f["state"] == "Z-azo")
            .and_then(|f| f["time_share"].as_f64())
            .unwrap()
    };
    let settled = z_share(&json(&["ledger", file]));
    let start = z_share(&json(&["ledger", file, "--at", "0 s"]));
    let sim = json(&["simulate", file, "--until", "2 h"]);
    let fin: Vec<(String, f64)> = serde_json::from_value(sim["final_concentrations_mol_per_l"].clone()).unwrap();
    let conc = |name: &str| fin.iter().find(|(n, _)| n == name).map(|(_, c)| *c).unwrap();
    let (e, z) = (conc("E-azo"), conc("Z-azo"));
    let mixture = z / (e + z);
    assert!((settled - mixture).abs() < 0.01, "ledger {settled}, simulate {mixture}");
    assert!(
        (start - mixture).abs() > 0.02,
        "starting-mixture light {start}, simulate {mixture}"
    );
    let _ = std::fs::remove_dir_all(&dir);
}
