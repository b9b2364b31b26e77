//! Trajectory counts and stated origins (issue 16, items 1 and 3): the Dirichlet of the counts
//! against its closed-form moments, the intervals `ledger` prints against the closed-form beta
//! quantiles and against a Monte Carlo of the counts themselves, the spreads each origin gives,
//! an `[[uncertain]]` entry winning over them, and located errors.

use photoledger::chain::ChainOptions;
use photoledger::file::{Loaded, parse_text};
use photoledger::network::{Network, Overrides};
use photoledger::uncertainty::counts;
use photoledger::uncertainty::evidence::{self, dirichlet_moments};
use photoledger::uncertainty::sampling::dirichlet;
use photoledger::uncertainty::spec::Distribution;
use photoledger::uncertainty::{Problem, Settings, Space, stats};
use rand::SeedableRng;
use rand_distr::Distribution as _;
use statrs::distribution::{Beta, ContinuousCDF};
use std::path::Path;

const KCAL: f64 = 4184.0;

fn loaded(text: &str) -> Loaded {
    parse_text(Path::new("test.toml"), text.to_string()).expect("parses")
}

fn built(text: &str) -> Network {
    photoledger::network::build(&loaded(text), &Overrides::none()).expect("builds")
}

fn errors(text: &str) -> String {
    let l = match parse_text(Path::new("test.toml"), text.to_string()) {
        Ok(l) => l,
        Err(e) => return e.to_string(),
    };
    match photoledger::network::build(&l, &Overrides::none()) {
        Ok(_) => panic!("built a network that should be refused"),
        Err(e) => e.to_string(),
    }
}

/// An invented absorber A whose excited state X leaves by channels given as counts.
fn counted(channels: &str, extra: &str) -> String {
    format!(
        r#"
[about]
name = "counts (test)"
invented = true

[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
power = "10 mW"

[[species]]
name = "A"
initial = "1 mM"
epsilon = {{ at = "365 nm", value = "5000 L/(mol cm)" }}

[[species]]
name = "B"
product = true

[[species]]
name = "C"
product = true

[[photo]]
name = "excitation"
absorber = "A"
excites = "X"

[[transient]]
name = "X"
kind = "excited"
{extra}
channels = [{channels}]
"#
    )
}

const FIXTURE: &str = include_str!("fixtures/counted-branching.toml");

#[test]
fn dirichlet_draws_have_the_closed_form_mean_and_variance() {
    // Kotz, Balakrishnan & Johnson, Continuous Multivariate Distributions, vol. 1, 2nd ed.,
    // 2000, ch. 49: E[pᵢ] = αᵢ/α₀, Var[pᵢ] = αᵢ(α₀ − αᵢ)/(α₀²(α₀ + 1)).
    let alphas = [41.5, 12.5, 3.5];
    let mut rng = rand_chacha::ChaCha12Rng::seed_from_u64(3);
    let n = 40_000;
    let draws: Vec<Vec<f64>> = (0..n).map(|_| dirichlet(&alphas, &mut rng)).collect();
    for (i, _) in alphas.iter().enumerate() {
        let v: Vec<f64> = draws.iter().map(|d| d[i]).collect();
        let (m, sd) = stats::mean_sd(&v);
        let (mean, var) = dirichlet_moments(&alphas, i);
        // Monte Carlo error of the mean: sd/√n; of the variance: about var·√(2/n).
        assert!(
            (m.unwrap() - mean).abs() < 4.0 * var.sqrt() / (n as f64).sqrt(),
            "mean {i}"
        );
        assert!(
            (sd.unwrap().powi(2) - var).abs() < 4.0 * var * (2.0 / n as f64).sqrt() * 1.5,
            "variance {i}"
        );
    }
    assert!(draws.iter().all(|d| (d.iter().sum::<f64>() - 1.0).abs() < 1e-12));
}

#[test]
fn count_shares_and_their_dirichlet_are_read_from_the_file() {
    let net = built(&counted(
        r#"{ to = "B", trajectories = 41 }, { to = "C", trajectories = 12 }, { to = "A", trajectories = 3 }"#,
        "unfinished_trajectories = 4",
    ));
    let x = net.transient_index("X").unwrap();
    let shares: Vec<f64> = net.transients[x]
        .channels
        .iter()
        .map(|c| c.branching.fixed_share().unwrap())
        .collect();
    assert_eq!(shares, vec![41.0 / 56.0, 12.0 / 56.0, 3.0 / 56.0]);
    let c = net.evidence.counts_of(x).unwrap();
    assert_eq!((c.unfinished, c.prior, c.prior_given), (4, 0.5, false));
    let (ps, notes) = evidence::parameters(&net, &[]);
    assert_eq!(ps.len(), 3);
    match &ps[0].distribution {
        Distribution::Counts { alphas, .. } => assert_eq!(alphas, &vec![41.5, 12.5, 3.5]),
        d => panic!("{d:?}"),
    }
    assert!(
        notes
            .iter()
            .any(|n| n.contains("Jeffreys prior ½") && n.contains("4 that ended nowhere")),
        "{notes:?}"
    );
    // A uniform prior, when asked for.
    let net = built(&counted(
        r#"{ to = "B", trajectories = 4 }, { to = "C", trajectories = 0 }"#,
        "trajectory_prior = 1",
    ));
    match &evidence::parameters(&net, &[]).0[1].distribution {
        Distribution::Counts { alphas, .. } => assert_eq!(alphas, &vec![5.0, 1.0]),
        d => panic!("{d:?}"),
    }
}

#[test]
fn bad_counts_are_located_errors() {
    let e = errors(&counted(
        r#"{ to = "B", trajectories = 4.5 }, { to = "C", trajectories = 2 }"#,
        "",
    ));
    assert!(
        e.contains("test.toml") && e.contains("channels[0].trajectories") && e.contains("whole number"),
        "{e}"
    );
    assert!(!e.contains("no way out"), "no follow-on error: {e}");
    let e = errors(&counted(
        r#"{ to = "B", trajectories = 4 }, { to = "C", fraction = "rest" }"#,
        "",
    ));
    assert!(e.contains("mixes trajectory counts"), "{e}");
    let e = errors(&counted(
        r#"{ to = "B", trajectories = 0 }, { to = "C", trajectories = 0 }"#,
        "",
    ));
    assert!(e.contains("no run reached any channel"), "{e}");
    let e = errors(&counted(
        r#"{ to = "B", fraction = 0.5 }, { to = "C", fraction = "rest" }"#,
        "unfinished_trajectories = 3",
    ));
    assert!(
        e.contains("unfinished_trajectories") && e.contains("applies only"),
        "{e}"
    );
    let e = errors(&counted(
        r#"{ to = "B", trajectories = 4 }, { to = "C", trajectories = 2 }"#,
        "trajectory_prior = 0",
    ));
    assert!(e.contains("trajectory_prior") && e.contains("Jeffreys"), "{e}");
}

/// The central 95 % interval of Beta(a, b), by statrs' inverse CDF.
fn beta_interval(a: f64, b: f64) -> (f64, f64) {
    let d = Beta::new(a, b).unwrap();
    (d.inverse_cdf(0.025), d.inverse_cdf(0.975))
}

#[test]
fn ledger_intervals_from_counts_match_the_closed_form_beta() {
    // With no return path every molecule absorbs one photon and ends by one channel, so the
    // yield of B is its share, whose marginal under Dirichlet(n + ½) is Beta(n_B + ½, n − n_B + ½)
    // (Gelman et al., Bayesian Data Analysis, 3rd ed., 2013, Appendix A), and photons per B is
    // one over it.
    let net = built(&counted(
        r#"{ to = "B", trajectories = 41 }, { to = "C", trajectories = 15 }"#,
        "",
    ));
    let ci = counts::intervals(&net, &ChainOptions::default()).unwrap().unwrap();
    assert_eq!(ci.failed, 0);
    let d = Beta::new(41.5, 15.5).unwrap();
    let find = |o: &str, p: &str| ci.intervals.iter().find(|i| i.output == o && i.product == p).unwrap();
    let y = find("yield", "B");
    assert!((y.value - 41.0 / 56.0).abs() < 1e-12);
    // In probability: each end within Monte Carlo error (2000 draws: sd of a 2.5 % point's
    // probability about 0.0035) of 0.025 and 0.975.
    assert!(
        (d.cdf(y.low) - 0.025).abs() < 0.012,
        "{} {:?}",
        d.cdf(y.low),
        beta_interval(41.5, 15.5)
    );
    assert!(
        (d.cdf(y.high) - 0.975).abs() < 0.012,
        "{} {:?}",
        d.cdf(y.high),
        beta_interval(41.5, 15.5)
    );
    let p = find("photons_per", "B");
    assert!((d.cdf(1.0 / p.high) - 0.025).abs() < 0.012 && (d.cdf(1.0 / p.low) - 0.975).abs() < 0.012);
}

#[test]
fn ledger_intervals_from_counts_match_a_monte_carlo_of_the_counts() {
    // The counts themselves drawn again: n* ~ Multinomial(n, n/Σn) (a parametric bootstrap),
    // each set of shares written into the network and run through the chain. With 600 runs the
    // bootstrap and the Dirichlet posterior agree to a few per cent (Bernstein–von Mises; common
    // practice). A return channel makes the yields non-linear in the shares.
    let runs = [300u64, 100, 200];
    let net = built(&counted(
        r#"{ to = "B", trajectories = 300 }, { to = "C", trajectories = 100 }, { to = "A", trajectories = 200 }"#,
        "",
    ));
    let ci = counts::intervals(&net, &ChainOptions::default()).unwrap().unwrap();
    let x = net.transient_index("X").unwrap();
    let keys: Vec<_> = (0..3)
        .map(|channel| photoledger::network::params::Key::Fraction { transient: x, channel })
        .collect();
    let n: u64 = runs.iter().sum();
    let mut rng = rand_chacha::ChaCha12Rng::seed_from_u64(11);
    let mut yields = Vec::new();
    let mut photons = Vec::new();
    for _ in 0..2000 {
        // Sequential binomials: a multinomial draw.
        let mut left = n;
        let mut p_left = 1.0;
        let mut drawn = Vec::new();
        for (i, &r) in runs.iter().enumerate() {
            let p = r as f64 / n as f64;
            let k = if i + 1 == runs.len() {
                left
            } else {
                rand_distr::Binomial::new(left, (p / p_left).min(1.0))
                    .unwrap()
                    .sample(&mut rng)
            };
            drawn.push(k);
            left -= k;
            p_left -= p;
        }
        if drawn[0] + drawn[1] == 0 {
            continue;
        }
        let typed: Vec<_> = keys
            .iter()
            .copied()
            .zip(drawn.iter().map(|&k| k as f64 / n as f64))
            .collect();
        let net_i = photoledger::uncertainty::written(&net, &typed).unwrap();
        let m = photoledger::model::Model::compile(&net_i);
        let run = photoledger::chain::run(&m, &net_i, &ChainOptions::default()).unwrap();
        let k = run
            .analysis
            .absorbing
            .iter()
            .position(|&s| run.chain.states[s].name == "B")
            .unwrap();
        yields.push(run.analysis.yields[k]);
        photons.push(run.analysis.photons_total / run.analysis.yields[k]);
    }
    for (output, v) in [("yield", &mut yields), ("photons_per", &mut photons)] {
        v.sort_by(f64::total_cmp);
        let (lo, hi) = (stats::quantile(v, 0.025).unwrap(), stats::quantile(v, 0.975).unwrap());
        let i = ci
            .intervals
            .iter()
            .find(|i| i.output == output && i.product == "B")
            .unwrap();
        let width = hi - lo;
        assert!(
            ((i.high - i.low) - width).abs() < 0.1 * width,
            "{output}: {i:?} against {lo}..{hi}"
        );
        assert!(
            ((i.high + i.low) / 2.0 - (hi + lo) / 2.0).abs() < 0.1 * width,
            "{output}: {i:?} against {lo}..{hi}"
        );
    }
}

#[test]
fn the_runs_that_halve_the_widest_interval_do_halve_it() {
    let net = built(FIXTURE);
    let ci = counts::intervals(&net, &ChainOptions::default()).unwrap().unwrap();
    let w = &ci.intervals[ci.widest.unwrap()];
    let (l, h) = ci.widest_after.unwrap();
    let ratio = (h - l) / (w.high - w.low);
    assert!((0.4..0.6).contains(&ratio), "{ratio}");
    // α₀ + 1 four times larger: 4 (56 + 3·½ + 1) − 3·½ − 1 = 231.5 → 232 runs reaching a
    // channel; 176 more, of which 4 in 60 end nowhere: 176 · 60/56 = 188.6 → 189 to start.
    let t = &ci.transients[0];
    assert_eq!((t.finished_needed, t.more_runs), (232, 189));
}

#[test]
fn origins_give_their_spreads_and_an_entry_wins() {
    let net = built(FIXTURE);
    let (ps, _) = evidence::parameters(&net, &[]);
    let get = |k: &str| ps.iter().find(|p| p.key == k).unwrap().distribution.clone();
    // Defaults: ±1.5 kcal/mol for a computed ground-state barrier, ±7 for an excited state.
    match get("thermal.C to D.barrier") {
        Distribution::NormalAtLeast { mean, sd, low } => {
            assert!((mean - 19.0 * KCAL).abs() < 1e-6 && (sd - 1.5 * KCAL).abs() < 1e-9 && low == 0.0)
        }
        d => panic!("{d:?}"),
    }
    match get("transient.A*.channels[0].barrier") {
        Distribution::NormalAtLeast { sd, .. } => assert!((sd - 7.0 * KCAL).abs() < 1e-9),
        d => panic!("{d:?}"),
    }
    match get("transient.A*.channels[1].k") {
        Distribution::LogNormal { median, factor } => assert!(median == 1e9 && factor == 1.25),
        d => panic!("{d:?}"),
    }
    // A measured efficiency of 0.95 ± 10 %: the beta with that mean and sd.
    match get("photo.excitation.efficiency") {
        Distribution::Beta { alpha, beta, .. } => {
            let (m, v) = dirichlet_moments(&[alpha, beta], 0);
            assert!((m - 0.95).abs() < 1e-12 && (v.sqrt() - 0.095).abs() < 1e-12);
        }
        d => panic!("{d:?}"),
    }
    // The file's own spread replaces the default; an [[uncertain]] entry replaces both.
    let text = format!(
        "{FIXTURE}\n[spreads.computed-excited-state]\nbarrier = \"5 kcal/mol\"\n\n[[uncertain]]\nkey = \"thermal.C to D.k\"\nlognormal = {{ median = \"0.07 /s\", factor = 3 }}\n"
    );
    let l = loaded(&text);
    let net = photoledger::network::build(&l, &Overrides::none()).unwrap();
    let explicit = photoledger::network::uncertain::read(&l).unwrap();
    let (ps, notes) = evidence::parameters(&net, &explicit.iter().collect::<Vec<_>>());
    assert!(
        ps.iter().all(|p| p.key != "thermal.C to D.barrier"),
        "the entry on the same rate wins"
    );
    assert!(
        notes
            .iter()
            .any(|n| n.starts_with("thermal.C to D.barrier: the [[uncertain]] entry")),
        "{notes:?}"
    );
    match &ps
        .iter()
        .find(|p| p.key == "transient.A*.channels[0].barrier")
        .unwrap()
        .distribution
    {
        Distribution::NormalAtLeast { sd, .. } => assert!((sd - 5.0 * KCAL).abs() < 1e-9),
        d => panic!("{d:?}"),
    }
    // check lists every uncertain value with key, origin and spread, defaults marked.
    let entries = evidence::entries(&net, &explicit.iter().collect::<Vec<_>>());
    let text = photoledger::report::evidence::uncertain_values(&entries, net.energy_unit);
    for want in [
        "thermal.C to D.k",
        "[[uncertain]] entry",
        "transient.A*.channels[0].barrier",
        // The fixture writes its barriers in kcal/mol: spreads in kcal/mol, kJ/mol beside.
        "3 kcal/mol  computed-excited-state  sd 5 kcal/mol (20.92 kJ/mol)\n",
        "computed-ground-state   sd 1.5 kcal/mol (6.276 kJ/mol), default; replaced by its [[uncertain]] entry",
        "transient.CI.channels[2].fraction",
        "3 of 56 runs (4 more ended nowhere: left out); Dirichlet over the channels, Jeffreys prior ½ per channel (default)",
        "default spreads",
    ] {
        assert!(text.contains(want), "missing {want:?} in\n{text}");
    }
}

#[test]
fn an_estimate_without_a_spread_is_listed_and_not_drawn() {
    let text = FIXTURE.replace("origin = \"measured\"\n", "origin = \"estimated\"\n");
    let net = built(&text);
    let (ps, notes) = evidence::parameters(&net, &[]);
    assert!(ps.iter().all(|p| p.key != "photo.excitation.efficiency"));
    assert!(
        notes.iter().any(|n| n.contains("origin estimated has no spread")),
        "{notes:?}"
    );
}

#[test]
fn bad_origins_and_spreads_are_located_errors() {
    let e = errors(&FIXTURE.replace("\"computed-ground-state\"", "\"computed\""));
    assert!(
        e.contains("test.toml:") && e.contains("thermal[0].rate.origin") && e.contains("\"computed-excited-state\""),
        "{e}"
    );
    let e = errors(&format!("{FIXTURE}\n[spreads.measured]\nrate_factor = 0.5\n"));
    assert!(
        e.contains("spreads.measured.rate_factor") && e.contains("above 1"),
        "{e}"
    );
    let e = errors(&format!("{FIXTURE}\n[spreads.guessed]\nbarrier = \"2 kcal/mol\"\n"));
    assert!(e.contains("guessed") && e.contains("computed-ground-state"), "{e}");
    let e = errors(&FIXTURE.replace(
        "{ to = \"B\", trajectories = 41 }",
        "{ to = \"B\", trajectories = 41, origin = \"measured\" }",
    ));
    assert!(e.contains("channels[0].origin") && e.contains("own uncertainty"), "{e}");
}

#[test]
fn uncertainty_runs_on_origins_and_counts_alone() {
    // Wide Dirichlet draws (one run per channel) move the shares far from the count shares; every
    // sample must still be written (shares that fall go first), with no [[uncertain]] entry.
    let text = FIXTURE
        .replace("trajectories = 41", "trajectories = 1")
        .replace("trajectories = 12", "trajectories = 1")
        .replace("trajectories = 3", "trajectories = 1");
    let net = built(&text);
    let (ps, notes) = evidence::parameters(&net, &[]);
    let space = Space {
        independent: ps,
        fit: None,
    };
    let settings = Settings {
        chain: true,
        until: None,
        target: None,
    };
    let p = Problem::new(&net, space, settings).unwrap().with_notes(notes);
    let record = p.record(5, 60, 0..60, &|| {});
    let failed: Vec<_> = record.samples.iter().filter_map(|s| s.error.clone()).collect();
    assert!(failed.is_empty(), "{failed:?}");
    assert!(record.header.notes.iter().any(|n| n.contains("Dirichlet")));
}

#[test]
fn a_counted_share_cannot_be_set() {
    let l = loaded(FIXTURE);
    let o = Overrides::parse(&["transient.CI.channels[0].fraction=0.5".to_string()]).unwrap();
    let e = photoledger::network::build(&l, &o).unwrap_err().to_string();
    assert!(
        e.contains("comes from trajectory counts") && e.contains("--set transient.CI.channels[0].fraction"),
        "{e}"
    );
}

#[test]
fn photons_per_product_spanning_many_decades_are_never_shown_as_zero() {
    // A computed excited-state barrier of 3 ± 7 kcal/mol moves the photons per product from about
    // one to well over 1e10 across samples; the median must be a number of photons, not 0 by a
    // round-off limit taken relative to the largest sample.
    let net = built(FIXTURE);
    let (ps, notes) = evidence::parameters(&net, &[]);
    let space = Space {
        independent: ps,
        fit: None,
    };
    let settings = Settings {
        chain: true,
        until: None,
        target: None,
    };
    let p = Problem::new(&net, space, settings).unwrap().with_notes(notes);
    let summary = photoledger::uncertainty::summarise(&p.record(1, 200, 0..200, &|| {}));
    let o = summary
        .outputs
        .iter()
        .find(|o| o.column.name == "photons_per[B]")
        .unwrap();
    let q = |f: f64| o.quantiles.iter().find(|x| x.0 == f).unwrap().1.unwrap();
    assert!(q(0.975) / q(0.025) > 1e3, "the spread spans decades: {:?}", o.quantiles);
    let text = photoledger::report::uncertainty::text(&summary);
    let row = text
        .lines()
        .find(|l| l.trim_start().starts_with("photons_per[B]"))
        .unwrap();
    let cells: Vec<&str> = row.split_whitespace().collect();
    // n, mean, sd, then the five quantiles: none of them reads 0.
    assert!(cells[4..].iter().all(|c| *c != "0"), "{row}");
}
