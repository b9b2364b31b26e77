//! What `ledger` writes: the summary (text and JSON), the photon-count distribution as CSV,
//! and its histogram as SVG.

use crate::chain::agreement::Agreement;
use crate::chain::sensitivity::Sensitivity;
use crate::chain::{Analysis, Chain, StateKind};
use crate::report::csv_out::{CsvTable, cell};
use crate::units::{display, format_time};
use plotters::prelude::*;
use serde::Serialize;
use std::fmt::Write;

/// One end of the chain (a product or a species with no way out).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct End {
    /// Species (or state) name.
    pub species: String,
    /// True when it is named as a product or formed and never consumed.
    pub product: bool,
    /// Probability that a followed molecule ends here.
    pub yield_fraction: f64,
    /// Mean photons absorbed per molecule ending here (conditional).
    pub photons_mean: Option<f64>,
    /// Standard deviation of the same.
    pub photons_sd: Option<f64>,
    /// Molecules of it per photon absorbed by the followed molecule, whatever it became.
    pub quantum_yield: Option<f64>,
    /// Mean time to end here under the light, s (conditional).
    pub time_mean_s: Option<f64>,
}

/// Expected visits to one state.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Visit {
    /// State name.
    pub state: String,
    /// "species" or "transient".
    pub kind: &'static str,
    /// Expected number of visits per molecule followed.
    pub visits: f64,
}

/// Expected repetitions of one counted move.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Repeat {
    /// The return channel or wasted photon.
    pub channel: String,
    /// Expected number of times per molecule followed.
    pub expected: f64,
}

/// Everything `summary.json` holds.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Summary {
    /// Network name.
    pub network: String,
    /// Where the molecule started.
    pub start: String,
    /// Assumptions made in building the chain.
    pub notes: Vec<String>,
    /// Number of states of the chain.
    pub states: usize,
    /// Ends with their yields and photon costs.
    pub ends: Vec<End>,
    /// Mean photons absorbed per molecule followed.
    pub photons_per_molecule: f64,
    /// Mean time to an end per molecule followed, s.
    pub time_mean_s: f64,
    /// The light the chain's times assume, in words.
    pub light: String,
    /// The chain's mean time checked against the kinetics (None: not checked, see
    /// `kinetics_check_skipped`).
    pub kinetics_check: Option<Agreement>,
    /// Why the check against the kinetics was not made, when it was not.
    pub kinetics_check_skipped: Option<String>,
    /// Expected visits to every non-absorbing state.
    pub visits: Vec<Visit>,
    /// Expected returns per return channel, and photons that changed nothing.
    pub returns: Vec<Repeat>,
    /// Probability left beyond the last photon count of the distribution.
    pub distribution_tail: Option<f64>,
    /// Largest photon count in the distribution.
    pub distribution_max_photons: Option<usize>,
    /// True when the distribution stopped at the photon limit before its tail bound.
    pub distribution_truncated: bool,
    /// How the sensitivities were found.
    pub sensitivity_method: String,
    /// Sensitivities, largest effect on the main end's photon cost first; each list is in the
    /// order of `ends`.
    pub sensitivities: Vec<Sensitivity>,
    /// Intervals from trajectory counts alone (`uncertainty::counts`), when the network has any.
    #[serde(skip_serializing_if = "Option::is_none")]
    pub count_intervals: Option<crate::uncertainty::counts::CountIntervals>,
    /// Cycles before the molecule ends, lifetimes and routes, when asked for (`ledger`).
    #[serde(skip_serializing_if = "Option::is_none")]
    pub paths: Option<crate::report::chain_paths::Paths>,
    /// The family energies are shown in, the network's ([`Summary::in_energy_unit`]); JSON
    /// keeps J/mol and the sensitivities per kcal/mol as named there.
    #[serde(skip)]
    pub energy_unit: display::EnergyUnit,
}

/// Build the summary; `products` says which absorbing states are products, `light` the light
/// the chain assumes (as [`crate::chain::light_words`] writes it); the check against the
/// kinetics is added with [`Summary::with_check`].
pub fn summary(
    network: &str,
    chain: &Chain,
    a: &Analysis,
    start: &str,
    light: &str,
    products: &[usize],
    mut sens: Vec<Sensitivity>,
) -> Summary {
    let ends: Vec<End> = a
        .absorbing
        .iter()
        .enumerate()
        .map(|(k, &s)| End {
            species: chain.states[s].name.clone(),
            product: matches!(chain.states[s].kind, StateKind::Species(i) if products.contains(&i)),
            yield_fraction: a.yields[k],
            photons_mean: a.photons_mean[k],
            photons_sd: a.photons_variance[k].map(f64::sqrt),
            quantum_yield: a.quantum_yield(k),
            time_mean_s: a.time_mean[k],
        })
        .collect();
    let main = main_end(a);
    sens.sort_by(|x, y| {
        let f = |s: &Sensitivity| s.elasticity_photons.get(main).copied().flatten().unwrap_or(0.0).abs();
        f(y).total_cmp(&f(x))
    });
    let visits = chain
        .states
        .iter()
        .enumerate()
        .filter(|(_, s)| !s.absorbing)
        .map(|(i, s)| Visit {
            state: s.name.clone(),
            kind: if matches!(s.kind, StateKind::Transient(_)) {
                "transient"
            } else {
                "species"
            },
            visits: a.visits[i],
        })
        .collect();
    let returns = chain
        .counted
        .iter()
        .zip(&a.counted)
        .map(|(c, x)| Repeat {
            channel: c.label.clone(),
            expected: *x,
        })
        .collect();
    Summary {
        network: network.to_string(),
        start: start.to_string(),
        notes: chain.notes.clone(),
        states: chain.states.len(),
        ends,
        photons_per_molecule: a.photons_total,
        time_mean_s: a.time_total,
        light: light.to_string(),
        kinetics_check: None,
        kinetics_check_skipped: Some("not made".into()),
        visits,
        returns,
        distribution_tail: a.distribution.as_ref().map(|d| d.tail),
        distribution_max_photons: a.distribution.as_ref().map(|d| d.p.len().saturating_sub(1)),
        distribution_truncated: a.distribution.as_ref().is_some_and(|d| d.truncated),
        sensitivity_method: crate::chain::sensitivity::METHOD.to_string(),
        sensitivities: sens,
        count_intervals: None,
        paths: None,
        energy_unit: display::EnergyUnit::default(),
    }
}

impl Summary {
    /// The summary with energies shown in `family` (the network's `energy_unit`).
    pub fn in_energy_unit(mut self, family: display::EnergyUnit) -> Summary {
        self.energy_unit = family;
        self
    }

    /// The summary with the chain's check against the kinetics ([`crate::chain::agreement::check`]).
    pub fn with_check(mut self, check: std::result::Result<Agreement, String>) -> Summary {
        match check {
            Ok(a) => {
                self.kinetics_check = Some(a);
                self.kinetics_check_skipped = None;
            }
            Err(why) => {
                self.kinetics_check = None;
                self.kinetics_check_skipped = Some(why);
            }
        }
        self
    }
}

/// The end with the largest yield.
fn main_end(a: &Analysis) -> usize {
    (0..a.yields.len())
        .max_by(|&i, &j| a.yields[i].total_cmp(&a.yields[j]))
        .unwrap_or(0)
}

impl Summary {
    /// The round-off limit of the yields: [`display::CHAIN_ROUNDOFF`] of the largest one (an end
    /// with a yield within it is not shown as an end).
    pub fn yield_zero(&self) -> display::ZeroWithin {
        let largest = display::largest(self.ends.iter().map(|e| e.yield_fraction));
        display::ZeroWithin::relative(largest, display::CHAIN_ROUNDOFF)
    }

    /// The round-off limits of sensitivity `x`: of its d yield / d p (the yields' round-off
    /// against a unit relative change of p, [`display::ZeroWithin::derivative`]) and of its
    /// elasticities d ln photons / d ln p (relative round-off).
    pub fn sensitivity_zero(&self, x: &Sensitivity) -> (display::ZeroWithin, display::ZeroWithin) {
        let largest = display::largest(self.ends.iter().map(|e| e.yield_fraction));
        (
            display::ZeroWithin::derivative(largest, display::CHAIN_ROUNDOFF, x.value),
            display::ZeroWithin::derivative(1.0, display::CHAIN_ROUNDOFF, 1.0),
        )
    }
}

fn opt(x: Option<f64>, f: impl Fn(f64) -> String) -> String {
    x.map_or_else(|| "—".to_string(), f)
}

/// The readable table printed by `ledger`.
pub fn text(s: &Summary) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}: photon ledger of one molecule ({} states)", s.network, s.states);
    let _ = writeln!(o, "  {}", s.start);
    for n in &s.notes {
        let _ = writeln!(o, "  note: {n}");
    }
    let _ = writeln!(o);
    let _ = writeln!(
        o,
        "  {:<22} {:>10} {:>14} {:>12} {:>12} {:>14}",
        "ends as", "yield", "photons mean", "photons sd", "quantum yld", "mean time"
    );
    // yields within the chain's round-off of zero are no end; summary.json keeps every one
    let zero = s.yield_zero();
    for e in s.ends.iter().filter(|e| zero.shown(e.yield_fraction) > 0.0) {
        let _ = writeln!(
            o,
            "  {:<22} {:>10.6} {:>14} {:>12} {:>12} {:>14}",
            format!("{}{}", e.species, if e.product { " (product)" } else { "" }),
            e.yield_fraction,
            opt(e.photons_mean, |x| format!("{x:.4}")),
            opt(e.photons_sd, |x| format!("{x:.4}")),
            opt(e.quantum_yield, |x| format!("{x:.3e}")),
            opt(e.time_mean_s, format_time),
        );
    }
    let _ = writeln!(
        o,
        "  photons absorbed per molecule followed: {:.4}; mean time to an end: {} (light: {})",
        s.photons_per_molecule,
        format_time(s.time_mean_s),
        s.light
    );
    match (&s.kinetics_check, &s.kinetics_check_skipped) {
        (Some(a), _) => {
            let _ = writeln!(o, "  {}", a.headline());
            if !a.agree {
                for r in &a.reasons {
                    let _ = writeln!(o, "    why: {r}");
                }
            }
            let _ = writeln!(o, "    (how: {})", a.method);
            match (&a.yields, &a.yields_skipped) {
                (Some(y), _) => {
                    let _ = writeln!(o, "  {}", y.headline());
                    for l in y.end_lines() {
                        let _ = writeln!(o, "    {l}");
                    }
                    for r in &y.reasons {
                        let _ = writeln!(o, "    why: {r}");
                    }
                    let _ = writeln!(o, "    (how: {})", y.method);
                }
                (None, Some(why)) => {
                    let _ = writeln!(o, "  yield check not made: {why}");
                }
                (None, None) => {}
            }
        }
        (None, Some(why)) => {
            let _ = writeln!(o, "  kinetics check not made: {why}");
        }
        (None, None) => {}
    }
    // Cycles are returns through a photon: a dark network has none to list.
    if !s.returns.is_empty() {
        let _ = writeln!(o, "\n  cycles (expected per molecule followed)");
        for r in &s.returns {
            let _ = writeln!(o, "    {:>14.4}  {}", r.expected, r.channel);
        }
        let _ = writeln!(o, "  visits");
    } else {
        let _ = writeln!(o, "\n  visits (expected per molecule followed)");
    }
    for v in &s.visits {
        let _ = writeln!(o, "    {:>14.4}  {} ({})", v.visits, v.state, v.kind);
    }
    let no_photons = s.ends.iter().all(|e| e.photons_mean.is_none_or(|m| m == 0.0));
    if no_photons {
        let _ = writeln!(
            o,
            "  photon-count distribution: no photon is absorbed on any way to an end"
        );
    } else if let (Some(t), Some(n)) = (s.distribution_tail, s.distribution_max_photons) {
        // the tail is 1 − Σ P(k ≤ n): a probability of the chain solve, round-off within
        // CHAIN_ROUNDOFF of 1 (a dark run's 1 − 1 = 1.1e-16 reads 0)
        let t = display::ZeroWithin::relative(1.0, display::CHAIN_ROUNDOFF).shown(t);
        let _ = writeln!(
            o,
            "  photon-count distribution: 0..{n} photons, tail beyond {}{}",
            if t == 0.0 { "0".to_string() } else { format!("{t:.1e}") },
            if s.distribution_truncated {
                " (stopped at the photon limit: raise --max-photons)"
            } else {
                ""
            }
        );
    }
    let main = (0..s.ends.len())
        .max_by(|&i, &j| s.ends[i].yield_fraction.total_cmp(&s.ends[j].yield_fraction))
        .unwrap_or(0);
    if let Some(e) = s.ends.get(main) {
        let _ = writeln!(
            o,
            "\n  top sensitivities for {} (d ln photons / d ln p; d yield / d p)",
            e.species
        );
        // round-off (a yield pinned at 1 moves by round-off only) reads 0;
        // summary.json keeps the raw derivatives
        for x in s.sensitivities.iter().take(8) {
            let (dy_zero, el_zero) = s.sensitivity_zero(x);
            let el = x
                .elasticity_photons
                .get(main)
                .copied()
                .flatten()
                .map(|v| el_zero.shown(v));
            let dy = dy_zero.shown(x.yield_derivative.get(main).copied().unwrap_or(0.0));
            // The value in its display unit (none for a fraction or a yield).
            let (v, u) = display::readable_in(&x.unit, x.value, s.energy_unit);
            let mut line = format!(
                "    {:>9} {:>11}  {} = {}{}",
                opt(el, |v| format!("{v:+.4}")),
                if dy == 0.0 {
                    "0".to_string()
                } else {
                    format!("{dy:.3e}")
                },
                x.parameter,
                crate::units::sig(v, 5),
                if u.is_empty() { String::new() } else { format!(" {u}") }
            );
            if let Some(b) = x
                .photons_per_barrier
                .as_ref()
                .and_then(|b| b.get(main).copied().flatten())
            {
                let b = if el == Some(0.0) { 0.0 } else { b };
                // The engine's derivative is per kcal/mol; per unit of the network's family.
                let kcal = display::EnergyUnit::KcalPerMol.factor();
                let b = b * s.energy_unit.factor() / kcal;
                let _ = write!(
                    line,
                    "  [d ln photons / d barrier {b:+.3} per {}]",
                    s.energy_unit.spelling()
                );
            }
            let _ = writeln!(o, "{line}");
            // The key that --set, --free and [[uncertain]] take for this number.
            if let Some(k) = &x.key {
                let _ = writeln!(o, "    {:>9} {:>11}  key {k}", "", "");
            }
        }
    }
    o
}

/// photon_counts.csv: n, P(N = n) and P(N = n, end k) for every end with a yield.
pub fn distribution_csv(chain: &Chain, a: &Analysis) -> String {
    let Some(d) = &a.distribution else {
        return String::new();
    };
    let keep: Vec<usize> = (0..a.absorbing.len()).filter(|&k| a.yields[k] > 0.0).collect();
    let mut header = vec!["photons absorbed".to_string(), "probability".to_string()];
    header.extend(
        keep.iter()
            .map(|&k| format!("probability ending as {}", chain.states[a.absorbing[k]].name)),
    );
    let mut t = CsvTable::new(header);
    for (n, row) in d.p.iter().enumerate() {
        let mut cells = vec![n.to_string(), cell(row.iter().sum::<f64>())];
        cells.extend(keep.iter().map(|&k| cell(row[k])));
        t.row(cells);
    }
    t.finish()
}

/// photon_counts.svg: histogram of P(N = n) (bars grouped when there are many counts).
pub fn histogram_svg(title: &str, a: &Analysis) -> String {
    let mut svg = String::new();
    let Some(d) = &a.distribution else {
        return svg;
    };
    let totals: Vec<f64> = d.p.iter().map(|r| r.iter().sum()).collect();
    // Group counts into at most 400 bars.
    let width = totals.len().div_ceil(400).max(1);
    let bars: Vec<(usize, f64)> = totals
        .chunks(width)
        .enumerate()
        .map(|(i, c)| (i * width, c.iter().sum::<f64>()))
        .collect();
    let ymax = bars.iter().map(|b| b.1).fold(0.0, f64::max).max(1e-300) * 1.05;
    let xmax = (bars.len() * width) as f64;
    {
        let root = SVGBackend::with_string(&mut svg, (900, 560)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let draw = || -> Result<(), Box<dyn std::error::Error + '_>> {
            let mut chart = ChartBuilder::on(&root)
                .caption(title, ("sans-serif", 22))
                .margin(16)
                .x_label_area_size(48)
                .y_label_area_size(80)
                .build_cartesian_2d(0.0..xmax, 0.0..ymax)?;
            chart
                .configure_mesh()
                .x_desc("photons absorbed per molecule")
                .y_desc(if width == 1 {
                    "probability".to_string()
                } else {
                    format!("probability per {width} photons")
                })
                .label_style(("sans-serif", 15))
                .draw()?;
            let col = RGBColor(31, 119, 180);
            chart.draw_series(
                bars.iter()
                    .map(|&(x, y)| Rectangle::new([(x as f64, 0.0), ((x + width) as f64, y)], col.filled())),
            )?;
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}
