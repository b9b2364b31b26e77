//! The chain's mean time against the kinetics, and the report's horizon from the kinetics.
//!
//! A single photoreaction A → B in the optically thin limit has a closed form: every A
//! molecule absorbs at σ E and reacts with Φ, so the mean time is 1/k with k = Φ σ E and the
//! kinetics convert 1 − 1/e of A at t = 1/k (`common practice`). There the chain and the
//! kinetics must agree and nothing may be flagged. The bundled prebiotic pool (invented) shares
//! the light at the start, where its absorber is 0 M, and linearises its condensation at the
//! initial 10 mM: the check must flag it and say why.

use photoledger::chain::build::{Light, Settings};
use photoledger::chain::{self, ChainOptions, agreement};
use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build as build_network};
use photoledger::plan::Why;
use photoledger::plan::horizon::{self, Ended};
use photoledger::report::chain as chain_report;
use photoledger::report::html::{self, Meta};
use photoledger::study::{self, StudyOptions};
use std::path::Path;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    build_network(&l, &Overrides::none()).expect("valid")
}

fn bundled(name: &str) -> Network {
    let path = format!("{}/networks/{name}", env!("CARGO_MANIFEST_DIR"));
    network(&std::fs::read_to_string(path).expect("bundled network"))
}

/// One A → B photoreaction, Φ = 0.5, ε = 1000 L mol⁻¹ cm⁻¹ at 365 nm, 1 nM of A (absorbance
/// 1e-6: optically thin), 1 mW at 365 nm on 1 cm² over a 1 cm path (V = S l = 1 mL).
const THIN: &str = r#"
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
name = "A"
initial = "1 nM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }
[[species]]
name = "B"
[[photo]]
equation = "A -> B"
quantum_yield = 0.5
"#;

/// k = Φ σ E: σ = 1000 ln(10) ε / N_A (ε in L mol⁻¹ cm⁻¹, σ in cm²), E = P λ / (h c S)
/// photons cm⁻² s⁻¹ (`common practice`; CODATA 2018 exact h, c, N_A).
fn thin_rate() -> f64 {
    let (h, c, na) = (6.626_070_15e-34, 299_792_458.0, 6.022_140_76e23);
    let sigma_cm2 = 1000.0 * std::f64::consts::LN_10 * 1000.0 / na;
    let photons_per_cm2_s = 1e-3 * 365e-9 / (h * c) / 1.0;
    0.5 * sigma_cm2 * photons_per_cm2_s
}

#[test]
fn thin_single_step_chain_time_is_one_over_k_and_agrees_with_the_kinetics() {
    let net = network(THIN);
    let model = Model::compile(&net);
    let opts = ChainOptions {
        settings: Settings {
            light: Light::Thin,
            concentrations: None,
        },
        sensitivities: false,
        ..ChainOptions::default()
    };
    let run = chain::run(&model, &net, &opts).expect("chain");
    let k = thin_rate();
    let tau = run.analysis.time_total;
    assert!(
        (tau * k - 1.0).abs() < 1e-9,
        "chain mean time {tau} s, 1/k = {} s",
        1.0 / k
    );
    let check = agreement::check(&model, &net, &run, None)
        .expect("runs")
        .expect("applies");
    // The kinetics use the cell's absorbance, g(A) → ln 10 at A = 1e-6: 1/k within 1e-5.
    let t = check.kinetics_time_s.expect("reached");
    assert!((t * k - 1.0).abs() < 1e-5, "kinetics {t} s, 1/k = {} s", 1.0 / k);
    assert!(check.agree && check.reasons.is_empty(), "{check:?}");
    let summary = chain_report::summary(
        "thin",
        &run.chain,
        &run.analysis,
        &run.start_note,
        &run.light,
        &model.products,
        Vec::new(),
    )
    .with_check(Ok(check));
    let text = chain_report::text(&summary);
    assert!(text.contains("(light: optically thin limit"), "{text}");
    assert!(text.contains("they agree"), "{text}");
    assert!(!text.contains("DISAGREE") && !text.contains("why:"), "{text}");
}

#[test]
fn prebiotic_pool_chain_time_is_flagged_with_its_reasons() {
    let net = bundled("prebiotic-pool.toml");
    let model = Model::compile(&net);
    let run = chain::run(&model, &net, &ChainOptions::default()).expect("chain");
    let check = agreement::check(&model, &net, &run, None)
        .expect("runs")
        .expect("applies");
    assert!(!check.agree, "{check:?}");
    assert!(check.ratio.expect("reached") > 10.0, "{check:?}");
    let all = check.reasons.join("\n");
    assert!(all.contains("adduct") && all.contains("inner filter"), "{all}");
    assert!(all.contains("\"condensation\" is linearised"), "{all}");
    let summary = chain_report::summary(
        &net.about.name,
        &run.chain,
        &run.analysis,
        &run.start_note,
        &run.light,
        &model.products,
        Vec::new(),
    )
    .with_check(Ok(check));
    let text = chain_report::text(&summary);
    assert!(
        text.contains("mean time to an end: 2.89 h (light: stirred cell, light shared at the initial concentrations)"),
        "{text}"
    );
    assert!(text.contains("DISAGREE") && text.contains("why: light:"), "{text}");
    // The yields differ too: the condensation joins an aldehyde and a dinitrile, both
    // followed, into one adduct, so the kinetics make half a product per molecule followed.
    assert!(
        text.contains("yield check") && text.contains("product: chain 1, kinetics 0.49"),
        "{text}"
    );
    assert!(
        text.contains("why: \"condensation\" is second order and joins"),
        "{text}"
    );
    let json = serde_json::to_value(&summary).expect("json");
    assert_eq!(json["kinetics_check"]["agree"], false);
    assert_eq!(json["kinetics_check"]["yields"]["agree"], false);
    assert!(json["light"].as_str().unwrap().starts_with("stirred cell"));
}

#[test]
fn prebiotic_pool_report_covers_the_chemistry_and_says_why_it_ends() {
    let net = bundled("prebiotic-pool.toml");
    let model = Model::compile(&net);
    let s = study::run(&net, &model, &StudyOptions::default()).expect("study");
    let h = s.horizon.as_ref().expect("automatic horizon");
    assert!(matches!(h.ended, Ended::Reached(_)), "{:?}", h.ended);
    let conv = format!(
        "{} % conversion of aldehyde is reached",
        photoledger::units::sig(100.0 * horizon::DEFAULT_CONVERSION, 3)
    );
    assert!(s.until_reason.contains(&conv), "{}", s.until_reason);
    let last = s.kinetics.last();
    let (ald, prod) = (
        model.species_index("aldehyde").unwrap(),
        model.species_index("product").unwrap(),
    );
    // The stated conversion is reached, and with it most of the product (10 mM at 1:1).
    assert!(last[ald] <= (1.0 - horizon::DEFAULT_CONVERSION) * 10e-3 * (1.0 + 1e-6));
    assert!(last[prod] >= 0.5 * 10e-3, "product {} M at {} s", last[prod], s.until);
    // The report says it, and shows the chain's disagreement with the kinetics.
    let meta = Meta {
        command_line: "photoledger report prebiotic-pool.toml".into(),
        date: "2026-12-02 00:00 UTC".into(),
    };
    let page = html::render(&net, &model, &s, &meta);
    assert!(page.contains(&conv), "horizon reason in the page");
    assert!(page.contains("<div id=\"chain-check\" class=\"caution\">"));
    assert!(page.contains("light assumed: stirred cell, light shared at the initial concentrations"));
}

#[test]
fn a_photostationary_switch_ends_when_nothing_changes() {
    let net = bundled("photoswitch.toml");
    let model = Model::compile(&net);
    let h = horizon::automatic(&model, None).expect("horizon");
    assert!(
        matches!(h.ended, Ended::Steady(Why::Photostationary, _)),
        "{:?}",
        h.ended
    );
    assert!(
        h.reason()
            .contains("every concentration is within 1 % of where it settles"),
        "{}",
        h.reason()
    );
    // The horizon is when the switch settled, not the end of the stretch that showed it was
    // at rest (ten times the stretch before): within 1 % of the whole change of E-azo there,
    // and still more than 1 % short a little earlier.
    let plan = h.plan.as_ref().expect("a run");
    let end = plan.trajectory.times.last().copied().unwrap();
    assert!(h.time < 0.5 * end, "settled at {} s, run to {end} s", h.time);
    let e = model.species_index("E-azo").unwrap();
    let (start, last) = (model.initial[e], plan.state()[e]);
    let at = |t: f64| {
        let mut o = photoledger::kinetics::Options::until(t);
        o.rtol = 1e-10;
        o.atol = 1e-16;
        photoledger::kinetics::simulate(&model, &o, &mut |_| {}).unwrap().last()[e]
    };
    let left = |t: f64| (at(t) - last).abs() / (start - last).abs();
    assert!(left(h.time) <= 0.0101, "{} left at the horizon", left(h.time));
    assert!(
        left(0.9 * h.time) > 0.0101,
        "{} left a little earlier",
        left(0.9 * h.time)
    );
    // The report's run then ends at a round time at least that long.
    let s = study::run(&net, &model, &StudyOptions::default()).expect("study");
    assert!(s.until >= h.time && s.until <= 1.5 * h.time);
}

/// Thermal A ⇌ B, first order both ways (invented rate constants), no light: the default
/// target (99 % of A converted) is never met, and the distance from equilibrium falls as
/// e^(−(k₁ + k₂) t) (first-order relaxation, `common practice`), so every concentration is
/// within 1 % of where it settles from t = ln(100)/(k₁ + k₂) on.
#[test]
fn an_equilibrium_settles_at_the_relaxation_closed_form() {
    let model = Model::compile(&network(
        r#"
[about]
name = "invented A <-> B"
description = "invented test network"
provenance = "invented"
invented = true
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "1 mM"
[[species]]
name = "B"
[[thermal]]
equation = "A -> B"
rate = { k = "0.02 /s" }
[[thermal]]
equation = "B -> A"
rate = { k = "0.03 /s" }
"#,
    ));
    let h = horizon::automatic(&model, None).expect("horizon");
    assert!(matches!(h.ended, Ended::Steady(_, _)), "{:?}", h.ended);
    let want = 100f64.ln() / 0.05;
    // Linear between output times and the run's own end value: a few parts in a thousand.
    assert!((h.time - want).abs() <= 5e-3 * want, "{} s against {want} s", h.time);
}

/// Two photoproducts from one absorber (invented): A → B (Φ 0.3) and A → C (Φ 0.1) under one
/// line, nothing else. The branching is by quantum yields alone, whatever light A gets, so the
/// chain's yields 0.75 and 0.25 are exactly what the kinetics make per A consumed (absorption
/// probabilities of an absorbing chain = long-time yields of linear kinetics, `common practice`).
const BRANCH: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "50 µM"
epsilon = { at = "365 nm", value = "5000 L/(mol cm)" }
[[species]]
name = "B"
product = true
[[species]]
name = "C"
product = true
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[photo]]
equation = "A -> C"
quantum_yield = 0.1
"#;

/// Light against heat under an inner filter (invented): A leaves by light to B (Φ 1) and by
/// heat to C (2e-3 /s); B absorbs twenty times more strongly than A. At the start A takes
/// 0.9 of the light and 82 % of it goes to B; as B builds up it takes the light, and the rest
/// of A goes to C: the kinetics make far less B than the chain's start-of-run branching says.
const FILTER: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }
[[species]]
name = "B"
product = true
epsilon = { at = "365 nm", value = "20000 L/(mol cm)" }
[[species]]
name = "C"
product = true
[[photo]]
equation = "A -> B"
quantum_yield = 1.0
[[thermal]]
equation = "A -> C"
rate = { k = "2e-3 /s" }
"#;

fn yields_of(text: &str) -> (agreement::Agreement, String) {
    let net = network(text);
    let model = Model::compile(&net);
    let opts = ChainOptions {
        sensitivities: false,
        ..ChainOptions::default()
    };
    let run = chain::run(&model, &net, &opts).expect("chain");
    let check = agreement::check(&model, &net, &run, None)
        .expect("runs")
        .expect("applies");
    let summary = chain_report::summary(
        "test",
        &run.chain,
        &run.analysis,
        &run.start_note,
        &run.light,
        &model.products,
        Vec::new(),
    )
    .with_check(Ok(check.clone()));
    (check, chain_report::text(&summary))
}

#[test]
fn yields_of_a_first_order_branching_agree_with_the_kinetics() {
    let (check, text) = yields_of(BRANCH);
    let y = check.yields.as_ref().expect("yields compared");
    assert!(y.agree && y.reasons.is_empty(), "{y:?}");
    let want = [("B", 0.75), ("C", 0.25)];
    assert_eq!(y.ends.len(), 2, "{y:?}");
    for (e, (name, v)) in y.ends.iter().zip(want) {
        assert_eq!(e.end, name);
        assert!((e.chain - v).abs() < 1e-9, "{e:?}");
        // per A consumed at 99 % conversion: the same branching, to the tolerances
        assert!((e.kinetics - v).abs() < 1e-5, "{e:?}");
    }
    assert!(text.contains("yield check: per molecule of A that reacts"), "{text}");
    assert!(text.contains("B: chain 0.75, kinetics 0.75; agree"), "{text}");
}

#[test]
fn yields_differ_where_an_inner_filter_shifts_light_against_heat_and_say_why() {
    let (check, text) = yields_of(FILTER);
    let y = check.yields.as_ref().expect("yields compared");
    assert!(!y.agree, "{y:?}");
    let b = y.ends.iter().find(|e| e.end == "B").unwrap();
    let c = y.ends.iter().find(|e| e.end == "C").unwrap();
    // The chain's branching at the start: k_light / (k_light + k) ≈ 0.82.
    assert!((b.chain - 0.82).abs() < 0.01, "{b:?}");
    assert!(!b.agree && b.kinetics < b.chain / 1.2, "{b:?}");
    assert!(!c.agree && c.kinetics > c.chain * 1.2, "{c:?}");
    // B and C still account for every A consumed.
    assert!((b.kinetics + c.kinetics - 1.0).abs() < 1e-4, "{y:?}");
    let all = y.reasons.join("\n");
    assert!(
        all.contains("light against heat: A leaves by light and by A -> C"),
        "{all}"
    );
    assert!(
        text.contains("DISAGREE by a factor of") && text.contains("why: light against heat"),
        "{text}"
    );
}

/// The time check on the inner-filter network (invented, above): the kinetics never make the
/// (1 − 1/e) × 0.82 of A as B that the chain's yield asks for, so there is no time to compare.
/// The check says so in words ("never turn", not "take never"), names the most B the kinetics
/// make against that level, and points to the yield check, which says why.
#[test]
fn a_time_check_never_met_points_to_the_yield_check() {
    let (check, text) = yields_of(FILTER);
    assert!(check.kinetics_time_s.is_none() && !check.agree, "{check:?}");
    let y = check.yields.as_ref().expect("yields compared");
    assert!(!y.agree, "{y:?}");
    let first = check.reasons.first().expect("a reason");
    assert!(
        first.contains("the kinetics make at most")
            && first.contains("of B (")
            && first.contains("short of the")
            && first.contains("the yield check below"),
        "{first}"
    );
    // The most B the kinetics make, as printed, is below the level the chain's yield sets.
    let b = y.ends.iter().find(|e| e.end == "B").unwrap();
    assert!(b.kinetics < check.fraction, "{b:?} against {}", check.fraction);
    assert!(text.contains("the kinetics never turn 51.9 % of A into B ("), "{text}");
    assert!(!text.contains("take never"), "{text}");
}

/// An absorbing intermediate (invented): A → B by light (Φ 0.3); B absorbs but has no
/// photochemistry, and goes on by heat to C (1e-3 /s) or back to A (2e-4 /s). Every path ends
/// in C, so the chain's yield of C is 1 (first-order steps: its absorption probability is the
/// kinetics' long-time yield, `common practice`). When 99 % of A is consumed, about 40 % of it
/// is still in B (lifetime 1/1.2e-3 s ≈ 14 min): read there, the kinetics made 0.57 C per A and
/// the check called it a disagreement, with "light against heat: B leaves by light" (B never
/// reacts by light).
const TRANSIT: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "5 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }
[[species]]
name = "B"
epsilon = { at = "365 nm", value = "100 L/(mol cm)" }
[[species]]
name = "C"
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
name = "B to C"
equation = "B -> C"
rate = { k = "1e-3 /s" }
[[thermal]]
name = "B back"
equation = "B -> A"
rate = { k = "2e-4 /s" }
"#;

#[test]
fn yields_are_read_once_the_intermediates_have_drained_into_the_ends() {
    let (check, text) = yields_of(TRANSIT);
    let y = check.yields.as_ref().expect("yields compared");
    let c = y.ends.iter().find(|e| e.end == "C").expect("C is an end");
    assert!((c.chain - 1.0).abs() < 1e-9, "{c:?}");
    // read when under 1 % of the consumed A is still in B: C accounts for the rest
    assert!(y.agree && c.kinetics > 0.98 && c.kinetics <= 1.0 + 1e-6, "{y:?}");
    assert!(y.in_transit.is_empty(), "{y:?}");
    // well past the automatic horizon (99 % of A at ~19 min)
    let h = horizon::automatic(&Model::compile(&network(TRANSIT)), None).unwrap();
    assert!(y.at_s > 2.0 * h.time, "{} against {}", y.at_s, h.time);
    assert!(
        text.contains("read on until under 1 % of it is still in intermediates (B), at"),
        "{text}"
    );
}

/// An intermediate the kinetics leave behind for good (invented): A → B by light, then
/// B + D → C with D at half of A. The chain takes the second-order step at the initial [D] and
/// ends every B in C; the kinetics run out of D and half of the consumed A stays in B.
const STRANDED: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "2 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "5 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }
[[species]]
name = "B"
[[species]]
name = "D"
initial = "0.5 mM"
[[species]]
name = "C"
[[photo]]
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
name = "capture"
equation = "B + D -> C"
rate = { k = "10 L/(mol s)" }
"#;

#[test]
fn material_left_in_an_intermediate_is_named_as_the_reason() {
    let (check, _) = yields_of(STRANDED);
    let y = check.yields.as_ref().expect("yields compared");
    assert!(!y.agree, "{y:?}");
    let b = y.in_transit.iter().find(|x| x.0 == "B").expect("B in transit");
    // half of the consumed A waits in B: D ran out
    assert!((b.1 - 0.5).abs() < 0.02, "{b:?}");
    let first = y.reasons.first().expect("a reason");
    assert!(
        first.contains("the kinetics still hold") && first.contains("in B") && first.contains("not yet at an end"),
        "{first}"
    );
    assert!(
        y.reasons.iter().any(|r| r.contains("\"capture\" is second order")),
        "{:?}",
        y.reasons
    );
}

/// The time check reads its time from the run to the automatic horizon, integrating again only
/// the interval where that run passes the level. On the thin A → B the half-conversion time is
/// ln 2 / k (first-order decay, `common practice`); the reused run and a fresh run from t = 0
/// agree with it and with each other.
#[test]
fn a_target_found_on_an_earlier_run_equals_a_fresh_run() {
    use photoledger::plan::{PlanOptions, target, time_to_target, time_to_target_reusing};
    let model = Model::compile(&network(THIN));
    let h = horizon::automatic(&model, None).expect("horizon");
    let earlier = h.plan.as_ref().expect("a run to the horizon");
    let half = target::parse("B > 50 %", &model).expect("target");
    let opts = PlanOptions {
        horizon: horizon::CAP,
        ..PlanOptions::default()
    };
    let reused = time_to_target_reusing(&model, &half, earlier, &opts).expect("reused");
    let fresh = time_to_target(&model, &half, &opts).expect("fresh");
    let (tr, tf) = (reused.time.expect("met"), fresh.time.expect("met"));
    let k = thin_rate();
    assert!(
        (tr * k - std::f64::consts::LN_2).abs() < 1e-5,
        "{tr} s against ln 2 / k"
    );
    assert!((tr - tf).abs() <= 1e-5 * tf, "reused {tr} s, fresh {tf} s");
    // The joined run ends at the level, and its times increase.
    assert!((reused.state()[half.species] - half.level).abs() <= 1e-5 * half.level);
    assert!(reused.trajectory.times.windows(2).all(|w| w[0] < w[1]));
    assert_eq!(reused.trajectory.times.len(), reused.trajectory.states.len());
}

/// A closed switch's photostationary state from the chain and from the kinetics. Under a fixed
/// light every step of the photoswitch is first order, so the kinetics' steady state, divided by
/// the total, is the stationary distribution of the molecule's chain built at that light (the
/// master equation of one molecule is the kinetics of the mixture for first-order steps,
/// `common practice`): with the light shared at the photostationary mixture the two agree to the
/// integrator's tolerance. With the light shared as at the start they do not, since E and Z
/// filter the two LEDs differently; the report puts the three side by side and says which to
/// quote.
#[test]
fn a_closed_switch_under_its_own_photostationary_light_is_the_mixture() {
    let net = bundled("photoswitch.toml");
    let model = Model::compile(&net);
    let long = study::StudyOptions {
        until: Some(600.0),
        ..StudyOptions::default()
    };
    let s = study::run(&net, &model, &long).expect("study");
    let c = s.closed.as_ref().expect("a closed switch");
    let end = c.at_end.as_ref().expect("the chain at the end of the run");
    let share = |sum: &photoledger::report::chain_paths::ClosedSummary, n: &str| {
        sum.composition
            .iter()
            .find(|f| f.state == n)
            .and_then(|f| f.time_share)
            .unwrap()
    };
    assert_eq!(c.mixture.len(), 2);
    for (name, x) in &c.mixture {
        assert!(
            (share(end, name) - x).abs() <= 1e-5,
            "{name}: chain {} mixture {x}",
            share(end, name)
        );
        assert!(
            (share(&c.at_start, name) - x).abs() > 0.01,
            "the starting light differs by more than a point"
        );
    }
    let meta = Meta {
        command_line: "photoledger report photoswitch.toml".into(),
        date: "2026-12-02 00:00 UTC".into(),
    };
    let page = html::render(&net, &model, &s, &meta);
    assert!(page.contains("To quote:"), "the page says which to quote");
    // Eight seconds in, the mixture is far from it, and the page says so.
    let short = study::StudyOptions {
        until: Some(8.0),
        ..StudyOptions::default()
    };
    let s = study::run(&net, &model, &short).expect("study");
    let page = html::render(&net, &model, &s, &meta);
    assert!(
        page.contains("Not yet photostationary"),
        "the page says the run is short"
    );
}
