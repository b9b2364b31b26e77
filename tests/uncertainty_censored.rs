//! `uncertainty` with a target some samples never reach: those samples are counted and kept as
//! right-censored (quantiles over all samples, "> horizon" where one falls among them), the
//! tornado chart includes the time to the target.

use photoledger::report::uncertainty as report;
use photoledger::uncertainty::{Problem, Settings, Space, summarise};
use std::path::Path;

// Invented: A -> B over a barrier of 90 ± 1 kJ/mol at 298.15 K (k ≈ 1e-3 /s, so 95 % of A
// takes about 50 min on average) with a slow way back; a horizon of 45 min leaves some samples
// short of the target.
const NET: &str = r#"
[about]
name = "censored target (invented)"
invented = true

[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"

[[species]]
name = "A"
initial = "2 mM"

[[species]]
name = "B"
initial = "0 M"
product = true

[[thermal]]
name = "A to B"
equation = "A -> B"
rate = { barrier = "90 kJ/mol" }

[[thermal]]
name = "B to A"
equation = "B -> A"
rate = { k = "1e-5 /s" }

[[uncertain]]
key = "thermal.A to B.barrier"
normal = "90 kJ/mol ± 1 kJ/mol"

[[uncertain]]
key = "thermal.B to A.k"
uniform = ["1e-5 /s", "2e-5 /s"]
"#;

#[test]
fn samples_that_never_reach_the_target_are_counted_and_censored() {
    let l = photoledger::file::parse_text(Path::new("t.toml"), NET.to_string()).expect("parses");
    let space = Space {
        independent: photoledger::network::uncertain::read(&l).expect("entries read"),
        ..Space::default()
    };
    let horizon = 2700.0;
    let settings = Settings {
        chain: false,
        until: Some(horizon),
        target: Some("B > 1.9 mM".into()),
    };
    let p = Problem::new(&net_of(&l), space, settings).expect("problem");
    let n = 60;
    let r = p.record(3, n, 0..n, &|| {});
    let s = summarise(&r);
    let col = r
        .header
        .outputs
        .iter()
        .position(|c| c.name == "time_to_target")
        .unwrap();
    let reached: Vec<f64> = r.samples.iter().filter_map(|s| s.outputs[col]).collect();
    let never = r
        .samples
        .iter()
        .filter(|s| s.error.is_none() && s.outputs[col].is_none())
        .count();
    assert!(
        never > 0 && !reached.is_empty(),
        "the set-up must leave some short: {never}"
    );
    let t = &s.outputs[col];
    assert_eq!((t.n, t.censored, t.missing), (reached.len(), never, 0));
    assert_eq!(
        t.mean, None,
        "a mean over the reached samples alone would be biased low"
    );
    // Quantiles over all n samples, Hyndman & Fan (1996) definition 7, the censored ones above
    // every reached value: the 2.5 % quantile from the reached ones, by hand.
    let mut v = reached.clone();
    v.sort_by(f64::total_cmp);
    let h = (n - 1) as f64 * 0.025;
    let (lo, f) = (h.floor() as usize, h - h.floor());
    let want = v[lo] + f * (v[lo + 1] - v[lo]);
    let got = t.quantiles[0].1.unwrap();
    assert!((got - want).abs() <= 1e-12 * want, "{got} vs {want}");
    // The 97.5 % quantile falls among the censored samples: "> 45 min", never a number.
    assert_eq!(t.quantiles[4].1, None);
    assert!(t.beyond_horizon.contains(&0.975));
    let text = report::text(&s);
    assert!(
        text.contains(&format!("{never} of {n} samples never reached it within 45 min")),
        "{text}"
    );
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("time_to_target ("))
        .unwrap();
    assert!(row.trim_end().ends_with("> 45"), "{row}");
    // The ranking counts the censored samples at the horizon: a higher barrier, a later time.
    let d = t
        .drivers
        .iter()
        .find(|d| d.parameter == "thermal.A to B.barrier")
        .unwrap();
    assert!(d.spearman.unwrap() > 0.5, "{d:?}");
    // The tornado chart includes the time to the target.
    assert!(report::tornado_svg("t", &s).contains("time_to_target"));
}

/// The network built from `l` with no `--set`.
fn net_of(l: &photoledger::file::Loaded) -> photoledger::network::Network {
    photoledger::network::build(l, &photoledger::network::Overrides::none()).expect("builds")
}
