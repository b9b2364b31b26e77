//! Labelled sets of values (`[[level]]`, one per level of theory) and the `levels` engine:
//! closed forms for two competing first-order decays of one excited state, scoring against
//! data made from one set, the AICc formula, and bad input located in the file.

use photoledger::Error;
use photoledger::file::data::{Experiment, Point};
use photoledger::file::parse_text;
use photoledger::fit::mechanism::{Accuracy, FitOptions, Setup};
use photoledger::levels::{self, Kind, LevelOptions, Verdict};
use photoledger::network::{Network, Overrides, build};
use std::path::{Path, PathBuf};

/// One absorber A whose excited state S1 decays to P (k₁) or Q (k₂), every absorbed photon
/// reaching S1. Set "one" gives k₁ = 3e9 /s, k₂ = 1e9 /s; set "two" the same two rates the
/// other way round: the sets differ only in the branching. Invented values.
const NET: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
photon_flux = "0.05 µeinstein/s"

[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "500 L/(mol cm)" }

[[species]]
name = "P"
product = true

[[species]]
name = "Q"
product = true

[[photo]]
name = "excite"
absorber = "A"
excites = "S1"

[[transient]]
name = "S1"
kind = "excited"
channels = [ { to = "P", rate = { k = "2e9 /s" } }, { to = "Q", rate = { k = "2e9 /s" } } ]

[[level]]
label = "one"
set = { "transient.S1.channels[0].k" = "3e9 /s", "transient.S1.channels[1].k" = "1e9 /s" }

[[level]]
label = "two"
note = "the same rates, the other way round"
set = { "transient.S1.channels[0].k" = "1e9 /s", "transient.S1.channels[1].k" = "3e9 /s" }
"#;

fn network(text: &str) -> Network {
    let l = parse_text(Path::new("levels-test.toml"), text.to_string()).expect("parses");
    match build(&l, &Overrides::none()) {
        Ok(n) => n,
        Err(e) => panic!("{e}\n--- network ---\n{text}"),
    }
}

fn value(c: &levels::Comparison, name: &str) -> levels::Observable {
    c.observables
        .iter()
        .find(|o| o.name == name)
        .unwrap_or_else(|| {
            panic!(
                "no observable {name}: {:?}",
                c.observables.iter().map(|o| &o.name).collect::<Vec<_>>()
            )
        })
        .clone()
}

fn close(x: f64, want: f64, rel: f64) -> bool {
    (x - want).abs() <= rel * want.abs()
}

#[test]
fn two_sets_differing_in_branching_give_opposite_ratios_and_one_lifetime() {
    let net = network(NET);
    assert_eq!(net.levels.len(), 2);
    let c = levels::compare(&net, &LevelOptions::default()).expect("compares");
    // Competing first-order decays of one state (common practice, closed form): the share of
    // channel i is kᵢ / (k₁ + k₂) and the lifetime is 1 / (k₁ + k₂), the same for both sets.
    let (k_big, k_small) = (3e9, 1e9);
    let share = k_big / (k_big + k_small);
    let tau = 1.0 / (k_big + k_small);
    let yp = value(&c, "yield of P");
    let yq = value(&c, "yield of Q");
    assert!(close(yp.values[0].unwrap(), share, 1e-10), "{:?}", yp.values);
    assert!(close(yp.values[1].unwrap(), 1.0 - share, 1e-10), "{:?}", yp.values);
    assert!(close(yq.values[0].unwrap(), 1.0 - share, 1e-10), "{:?}", yq.values);
    let ratio = value(&c, "ratio P : Q");
    assert!(close(ratio.values[0].unwrap(), 3.0, 1e-10), "{:?}", ratio.values);
    assert!(close(ratio.values[1].unwrap(), 1.0 / 3.0, 1e-10), "{:?}", ratio.values);
    assert!(close(ratio.factor.unwrap(), 9.0, 1e-9));
    assert_eq!(ratio.verdict, Some(Verdict::Disagree));
    let life = value(&c, "lifetime of S1");
    for v in &life.values {
        assert!(close(v.unwrap(), tau, 1e-12), "{:?}", life.values);
    }
    assert_eq!(life.verdict, Some(Verdict::Agree));
    // Every absorbed photon reaches S1 and S1 always ends: one photon per molecule, so the
    // photons per product are 1 / its share (closed form).
    let per = value(&c, "photons absorbed per P");
    assert!(close(per.values[0].unwrap(), 1.0 / share, 1e-10), "{:?}", per.values);
    assert!(
        close(per.values[1].unwrap(), 1.0 / (1.0 - share), 1e-10),
        "{:?}",
        per.values
    );
    // The kinetics: P and Q form from the same S1 at every instant, so [P]/[Q] = k₁/k₂ at any
    // time (closed form).
    let fp = c
        .observables
        .iter()
        .find(|o| o.kind == Kind::Final && o.name.starts_with("P at"))
        .unwrap();
    let fq = c
        .observables
        .iter()
        .find(|o| o.kind == Kind::Final && o.name.starts_with("Q at"))
        .unwrap();
    assert!(close(fp.values[0].unwrap() / fq.values[0].unwrap(), 3.0, 1e-6));
    assert!(close(fp.values[1].unwrap() / fq.values[1].unwrap(), 1.0 / 3.0, 1e-6));
    // Reported as "agree on the lifetime, disagree on the product ratio".
    let (l, p) = c.same_lifetime_other_products().expect("the finding");
    assert_eq!(l.name, "lifetime of S1");
    assert_eq!(p.name, "ratio P : Q");
    assert_eq!(c.telling().map(|o| o.name.as_str()), Some("ratio P : Q"));
    let words = photoledger::report::levels::findings(&c).join("\n");
    assert!(
        words.contains("agree on lifetime of S1, disagree on ratio P : Q"),
        "{words}"
    );
    // The network itself keeps its own values.
    assert!(
        matches!(net.transients[0].channels[0].branching, photoledger::network::Branching::Rate { k, .. } if k == 2e9)
    );
}

/// Time courses of P made from `net` at `x` (sd 1 µM), predicted exactly (no noise).
fn data_from(net: &Network) -> Vec<Experiment> {
    let times = [60.0, 300.0, 900.0, 1800.0, 3600.0, 7200.0];
    let point = |t: f64, s: &str| Point {
        time: t,
        species: s.into(),
        value: 0.0,
        sd: 1e-6,
        is_yield: false,
        weighted: true,
        file: PathBuf::from("made.csv"),
        line: 2,
    };
    let template = vec![Experiment {
        name: "made".into(),
        set: Vec::new(),
        until: None,
        yield_of: None,
        points: times.iter().flat_map(|&t| [point(t, "P"), point(t, "Q")]).collect(),
        endpoints: Vec::new(),
    }];
    let setup = Setup::fixed(net, &template, Accuracy::default()).expect("setup");
    let p = setup.predict(&template[0], &[]).expect("predicts");
    let mut e = template.clone();
    for (pt, v) in e[0].points.iter_mut().zip(&p.points) {
        pt.value = *v;
    }
    e
}

#[test]
fn scoring_finds_the_set_the_data_came_from() {
    let net = network(NET);
    let nets = levels::networks(&net).expect("applies");
    let data = data_from(&nets[1]);
    let n = data[0].points.len();
    let s = levels::score::score(&net, &data, &[], &FitOptions::default(), &|_| {}).expect("scores");
    assert_eq!(s.fixed[1].label, "two");
    // χ² of the set the data came from is round-off; the other is far off.
    assert!(s.fixed[1].score.chi2 < 1e-8, "{}", s.fixed[1].score.chi2);
    assert!(s.fixed[0].score.chi2 > 100.0, "{}", s.fixed[0].score.chi2);
    assert_eq!(s.order[0], 1);
    assert!(s.fixed[1].weight > 0.999);
    // Nothing estimated and every sd given: −2 ln L = χ², k = 0, AICc = χ².
    let f = &s.fixed[0].score;
    assert_eq!((f.k, f.n), (0, n));
    assert_eq!(f.minus_two_log_likelihood, f.chi2);
    assert_eq!(f.aicc, f.chi2);
    // Refitting k₁ under each set: the data fix only the share k₁/(k₁ + k₂), so both sets reach
    // it (k₁ = k₂/3), χ² ≈ 0, one estimated quantity each.
    let free = vec!["transient.S1.channels[0].k".to_string()];
    let s = levels::score::score(&net, &data, &free, &FitOptions::default(), &|_| {}).expect("refits");
    let cmp = s.refit.expect("refit");
    for (label, f) in &cmp.fits {
        assert!(f.result.solution.chi2 < 1e-6, "{label}: {}", f.result.solution.chi2);
        assert_eq!(f.result.k, 1);
        let k2 = if label == "one" { 1e9 } else { 3e9 };
        assert!(
            close(f.result.solution.values[0], k2 / 3.0, 1e-4),
            "{label}: {}",
            f.result.solution.values[0]
        );
        // AICc = −2 ln L + 2k + 2k(k + 1)/(n − k − 1) (Burnham & Anderson, Model Selection and
        // Multimodel Inference, 2nd ed., 2002, the small-sample criterion; from memory).
        let (m2ll, k, nf) = (f.result.minus_two_log_likelihood, 1.0, n as f64);
        let want = m2ll + 2.0 * k + 2.0 * k * (k + 1.0) / (nf - k - 1.0);
        assert!((f.result.aicc - want).abs() < 1e-12, "{} vs {want}", f.result.aicc);
    }
}

#[test]
fn aicc_follows_the_textbook_formula() {
    // Burnham & Anderson (2002), AICc = AIC + 2k(k + 1)/(n − k − 1), AIC = −2 ln L + 2k (from
    // memory): at −2 ln L = 5, k = 2, n = 10: 5 + 4 + 12/7.
    let (aicc, bic) = photoledger::fit::score::criteria(5.0, 2, 10);
    assert!((aicc - (9.0 + 12.0 / 7.0)).abs() < 1e-12);
    assert!((bic - (5.0 + 2.0 * 10f64.ln())).abs() < 1e-12);
    // With an estimated σ counted as a parameter and no free key: k = 1.
    let (aicc, _) = photoledger::fit::score::criteria(-3.0, 1, 8);
    assert!((aicc - (-3.0 + 2.0 + 4.0 / 6.0)).abs() < 1e-12);
}

/// The first error of building `text`: (line, field, message, help).
fn first_error(text: &str) -> (usize, String, String, String) {
    let l = parse_text(Path::new("bad.toml"), text.to_string()).expect("parses as TOML");
    match build(&l, &Overrides::none()) {
        Err(Error::Invalid(ds)) => {
            let d = ds
                .iter()
                .find(|d| d.severity == photoledger::error::Severity::Error)
                .expect("an error");
            assert_eq!(d.file.as_deref(), Some(Path::new("bad.toml")), "{d}");
            (
                d.line_col.map_or(0, |l| l.0),
                d.field.clone(),
                d.message.clone(),
                d.help.clone().unwrap_or_default(),
            )
        }
        Ok(_) => panic!("accepted:\n{text}"),
        Err(e) => panic!("{e}"),
    }
}

/// `NET` with its sets replaced by `levels`; the 1-based line of the first line of `levels`
/// that contains `mark`.
fn with_levels(levels_text: &str, mark: &str) -> (String, usize) {
    let base = &NET[..NET.find("[[level]]").unwrap()];
    let text = format!("{base}{levels_text}");
    let line = text.lines().position(|l| l.contains(mark)).expect("mark") + 1;
    (text, line)
}

#[test]
fn bad_sets_are_named_at_their_line() {
    // A label used twice: at the second, naming the first's line.
    let (t, line) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[0].k\" = \"1e9 /s\" }\n\n[[level]]\nlabel = \"a\" # twice\nset = { \"transient.S1.channels[0].k\" = \"2e9 /s\" }\n",
        "# twice",
    );
    let (l, field, msg, _) = first_error(&t);
    assert_eq!(l, line);
    assert!(field.contains("level \"a\""), "{field}");
    assert!(
        msg.contains("used twice") && msg.contains(&format!("line {}", line - 4)),
        "{msg}"
    );
    // A label used twice is named even when the first set has its own problem.
    let (t, line) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[0].k\" = \"1 kcal/mol\" }\n\n[[level]]\nlabel = \"a\" # twice\nset = { \"transient.S1.channels[0].k\" = \"2e9 /s\" }\n",
        "# twice",
    );
    let l = parse_text(Path::new("bad.toml"), t).expect("parses");
    let Err(Error::Invalid(ds)) = build(&l, &Overrides::none()) else {
        panic!("accepted")
    };
    assert!(
        ds.iter()
            .any(|d| d.message.contains("used twice") && d.line_col.map(|x| x.0) == Some(line)),
        "{ds:?}"
    );
    // An unknown key, with the closest one suggested.
    let (t, line) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[0].kk\" = \"1e9 /s\" }\n",
        "kk",
    );
    let (l, field, msg, _) = first_error(&t);
    assert_eq!(l, line);
    assert!(field.contains("transient.S1.channels[0].kk"), "{field}");
    assert!(
        msg.contains("not given with `kk`") || msg.contains("did you mean"),
        "{msg}"
    );
    // A wrong unit: what is accepted is named.
    let (t, line) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[0].k\" = \"3 kcal/mol\" }\n",
        "kcal",
    );
    let (l, _, _, help) = first_error(&t);
    assert_eq!(l, line);
    assert!(help.contains("expected"), "{help}");
    // A number with no unit for a rate.
    let (t, _) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[0].k\" = 3e9 }\n",
        "3e9",
    );
    assert!(first_error(&t).2.contains("no unit"));
    // Out of range: an efficiency above 1, a negative rate.
    let (t, line) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"photo.excite.efficiency\" = 1.5 }\n",
        "efficiency",
    );
    let (l, _, msg, _) = first_error(&t);
    assert_eq!(l, line);
    assert!(msg.contains("[0, 1]"), "{msg}");
    let (t, _) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.channels[1].k\" = \"-1 /s\" }\n",
        "-1",
    );
    assert!(first_error(&t).2.contains("must be positive"));
    // No label; an empty set.
    let (t, _) = with_levels("[[level]]\nset = { \"photo.excite.efficiency\" = 0.5 }\n", "set");
    assert!(first_error(&t).2.contains("label"));
    let (t, _) = with_levels("[[level]]\nlabel = \"a\"\nset = { }\n", "set");
    assert!(first_error(&t).2.contains("no values"));
    // Counts on a transient the file does not count.
    let (t, _) = with_levels(
        "[[level]]\nlabel = \"a\"\nset = { \"transient.S1.trajectories\" = [3, 4] }\n",
        "trajectories",
    );
    assert!(first_error(&t).2.contains("trajectory counts"));
}

/// A network whose intersection branches by trajectory counts.
const COUNTED: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
photon_flux = "0.05 µeinstein/s"

[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "500 L/(mol cm)" }

[[species]]
name = "P"
product = true

[[photo]]
name = "excite"
absorber = "A"
excites = "CI"

[[transient]]
name = "CI"
kind = "intersection"
channels = [ { to = "P", trajectories = 30 }, { to = "A", trajectories = 70 } ]
"#;

#[test]
fn counted_shares_take_counts_not_fractions() {
    let text =
        format!("{COUNTED}\n[[level]]\nlabel = \"a\"\nset = {{ \"transient.CI.channels[0].fraction\" = 0.5 }}\n");
    let (_, _, msg, help) = first_error(&text);
    assert!(msg.contains("trajectory counts"), "{msg}");
    assert!(help.contains("transient.CI.trajectories"), "{help}");
    let text = format!("{COUNTED}\n[[level]]\nlabel = \"a\"\nset = {{ \"transient.CI.trajectories\" = [1, 2, 3] }}\n");
    assert!(first_error(&text).2.contains("3 counts for 2 channels"));
    let text = format!("{COUNTED}\n[[level]]\nlabel = \"a\"\nset = {{ \"transient.CI.trajectories\" = [0, 0] }}\n");
    assert!(first_error(&text).2.contains("no run"));
    // A set's counts become the shares and the evidence of the network under it.
    let text = format!("{COUNTED}\n[[level]]\nlabel = \"a\"\nset = {{ \"transient.CI.trajectories\" = [60, 40] }}\n");
    let net = network(&text);
    let c = levels::compare(&net, &LevelOptions::default()).expect("compares");
    // One absorbed photon reaches the funnel, which makes P with share 0.6 or returns A: the
    // yield of P is 1 and the photons per P are 1 / 0.6 (geometric number of tries, closed form).
    let per = value(&c, "photons absorbed per P");
    assert!(close(per.values[0].unwrap(), 1.0 / 0.6, 1e-10), "{:?}", per.values);
}

#[test]
fn a_fit_refuses_to_free_a_share_given_by_counts() {
    let net = network(COUNTED);
    let data = vec![Experiment {
        name: "e".into(),
        set: Vec::new(),
        until: None,
        yield_of: None,
        points: vec![Point {
            time: 60.0,
            species: "P".into(),
            value: 1e-4,
            sd: 1e-6,
            is_yield: false,
            weighted: true,
            file: PathBuf::from("d.csv"),
            line: 2,
        }],
        endpoints: Vec::new(),
    }];
    let free = vec!["transient.CI.channels[0].fraction".to_string()];
    let e = Setup::new(&net, &data, &free, Accuracy::default())
        .err()
        .expect("refused");
    let m = e.to_string();
    assert!(matches!(e, Error::Usage(_)), "{m}");
    assert!(
        m.contains("trajectory counts") && m.contains("Remove the counts"),
        "{m}"
    );
}
