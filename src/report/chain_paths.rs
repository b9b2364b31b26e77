//! What `ledger` adds about where a molecule goes and how long it takes: a closed switch's
//! photostationary state and first passages, switching cycles before loss, the transients'
//! lifetimes and the time in the excited manifold, and the main routes to each end with the
//! barrier verdicts of their thermal steps. Text and the JSON parts; `cycle_counts.csv`.
//! Kept apart from `report::chain` (the absorbing chain's table) so each grows on its own.

use crate::barrier::Verdict;
use crate::chain::closed::Stationary;
use crate::chain::cycles::Cycles;
use crate::chain::lifetimes::Lifetimes;
use crate::chain::routes::{EndRoutes, Judgement, judge};
use crate::chain::{Chain, StateKind};
use crate::network::Network;
use crate::report::csv_out::{CsvTable, cell};
use crate::units::{display, format_time};
use serde::Serialize;
use std::fmt::Write;

/// At most this many states of a closed chain's composition are printed.
const MAX_ROWS: usize = 12;

/// A share printed with six decimals, or in scientific notation when small but not zero.
fn share(x: f64) -> String {
    if x > 0.0 && x < 1e-4 {
        format!("{x:.3e}")
    } else {
        format!("{x:.6}")
    }
}

/// One form's share of the photostationary state.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FormShare {
    /// State name.
    pub state: String,
    /// "species" or "transient".
    pub kind: &'static str,
    /// Share of the time one molecule spends in it (None without holding times).
    pub time_share: Option<f64>,
    /// Share of the moves of the jump chain made from it.
    pub visit_share: f64,
}

/// Mean first passage from one form to another, named.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PassageRow {
    /// From.
    pub from: String,
    /// To.
    pub to: String,
    /// Mean photons absorbed on the way.
    pub photons: f64,
    /// Mean time on the way, s.
    pub time_s: Option<f64>,
}

/// `summary.json` of a closed chain.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct ClosedSummary {
    /// Network name.
    pub network: String,
    /// Where the molecule started.
    pub start: String,
    /// Assumptions made in building the chain.
    pub notes: Vec<String>,
    /// Number of states of the chain.
    pub states: usize,
    /// The light the chain's times assume.
    pub light: String,
    /// Every state of the closed class with its shares.
    pub composition: Vec<FormShare>,
    /// Photons absorbed per s per molecule at the photostationary state.
    pub photons_per_second: Option<f64>,
    /// Switching events (changes of form) per s.
    pub switches_per_second: Option<f64>,
    /// Photons absorbed per switching event.
    pub photons_per_switch: Option<f64>,
    /// Share of switching events begun by a photon.
    pub switches_by_light: Option<f64>,
    /// Mean first passages between the main forms.
    pub first_passage: Vec<PassageRow>,
    /// Forms of the class left out of the first passages.
    pub forms_left_out: usize,
    /// Lifetimes and the time in the excited manifold.
    pub lifetimes: LifetimeView,
}

/// Lifetimes, named.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct LifetimeView {
    /// (transient, kind, lifetime s or None for fractions only, counted as excited manifold).
    pub transients: Vec<(String, &'static str, Option<f64>, bool)>,
    /// Mean time in the excited manifold per photon absorbed, s.
    pub excited_time_per_photon_s: Option<f64>,
    /// Share of absorbed photons that lead into a transient.
    pub photons_into_transients: Option<f64>,
}

impl LifetimeView {
    /// Named view of `l`.
    pub fn of(l: &Lifetimes) -> LifetimeView {
        LifetimeView {
            transients: l
                .transients
                .iter()
                .map(|t| (t.name.clone(), t.kind, t.lifetime, t.excited))
                .collect(),
            excited_time_per_photon_s: l.excited_time_per_photon,
            photons_into_transients: l.photons_into_transients,
        }
    }
}

/// The summary of a closed run of `net` (the chain where no molecule ends): its lifetimes
/// computed from the stationary visits, then [`closed_summary`]. `ledger` and the report share it.
pub fn closed_run_summary(net: &Network, c: &crate::chain::ClosedRun) -> ClosedSummary {
    let lifetimes = crate::chain::lifetimes::lifetimes(&c.chain, net, &c.stationary.visits);
    closed_summary(
        &net.about.name,
        &c.chain,
        &c.stationary,
        &c.start_note,
        &c.light,
        &lifetimes,
    )
}

/// The closed chain's summary.
pub fn closed_summary(
    network: &str,
    chain: &Chain,
    s: &Stationary,
    start: &str,
    light: &str,
    lifetimes: &Lifetimes,
) -> ClosedSummary {
    let name = |i: usize| chain.states[i].name.clone();
    ClosedSummary {
        network: network.to_string(),
        start: start.to_string(),
        notes: chain.notes.clone(),
        states: chain.states.len(),
        light: light.to_string(),
        composition: s
            .class
            .iter()
            .map(|&i| FormShare {
                state: name(i),
                kind: if matches!(chain.states[i].kind, StateKind::Transient(_)) {
                    "transient"
                } else {
                    "species"
                },
                time_share: s.time_share.as_ref().map(|t| t[i]),
                visit_share: s.visits[i],
            })
            .collect(),
        photons_per_second: s.photon_rate,
        switches_per_second: s.switch_rate,
        photons_per_switch: s.photons_per_switch,
        switches_by_light: s.light_share,
        first_passage: s
            .passages
            .iter()
            .map(|p| PassageRow {
                from: name(p.from),
                to: name(p.to),
                photons: p.photons,
                time_s: p.time,
            })
            .collect(),
        forms_left_out: s.forms_left_out,
        lifetimes: LifetimeView::of(lifetimes),
    }
}

/// The text `ledger` prints for a closed chain.
pub fn closed_text(s: &ClosedSummary) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "{}: one molecule that never ends ({} states): its photostationary state",
        s.network, s.states
    );
    let _ = writeln!(o, "  {}", s.start);
    for n in &s.notes {
        let _ = writeln!(o, "  note: {n}");
    }
    let species: Vec<&str> = s
        .composition
        .iter()
        .filter(|f| f.kind == "species")
        .map(|f| f.state.as_str())
        .collect();
    let _ = writeln!(
        o,
        "  no end: a molecule switches among {} for ever, so the chain gives the state it settles in",
        species.join(", ")
    );
    let at_start = s.light.starts_with("stirred cell, light shared at the initial");
    let settled = s.light.ends_with(crate::chain::SAMPLE_STATE);
    let _ = writeln!(
        o,
        "\n  photostationary composition of one molecule{} (share of the time in each state, %)",
        if at_start {
            " under the light shared as in the starting mixture (not this sample's photostationary state: see below)"
        } else if settled {
            " under the light the settled mixture shares: this sample's photostationary state"
        } else {
            ""
        }
    );
    // the largest shares first when there are many; summary.json keeps every state
    let mut rows: Vec<&FormShare> = s.composition.iter().collect();
    let left = rows.len().saturating_sub(MAX_ROWS);
    if left > 0 {
        rows.sort_by(|a, b| {
            b.time_share
                .unwrap_or(b.visit_share)
                .total_cmp(&a.time_share.unwrap_or(a.visit_share))
        });
        rows.truncate(MAX_ROWS);
    }
    for f in rows {
        let _ = writeln!(
            o,
            "    {:<22} {:>12}",
            if f.kind == "transient" {
                format!("{} (transient)", f.state)
            } else {
                f.state.clone()
            },
            f.time_share.map_or("—".into(), |x| display::number(100.0 * x)),
        );
    }
    if left > 0 {
        let _ = writeln!(o, "    ({left} more states with smaller shares: summary.json)");
    }
    if let Some(r) = s.photons_per_second {
        let _ = writeln!(o, "  photons absorbed per molecule: {} per s", display::number(r));
    }
    match (s.photons_per_switch, s.switches_per_second) {
        (Some(p), rate) => {
            let _ = write!(o, "  switching events (changes of form): ");
            if let Some(r) = rate {
                let _ = write!(o, "{} per s, one every {}; ", display::number(r), format_time(1.0 / r));
            }
            let _ = write!(o, "{} photons absorbed per event", display::number(p));
            if let Some(l) = s.switches_by_light {
                let _ = write!(
                    o,
                    "; {} % begun by a photon, the rest by heat",
                    display::number(100.0 * l)
                );
            }
            let _ = writeln!(o);
        }
        (None, _) => {
            let _ = writeln!(o, "  the molecule never changes form");
        }
    }
    if !s.first_passage.is_empty() {
        let _ = writeln!(o, "\n  {:<32} {:>14} {:>14}", "mean first passage", "photons", "time");
        for p in &s.first_passage {
            let _ = writeln!(
                o,
                "  {:<32} {:>14} {:>14}",
                format!("{} -> {}", p.from, p.to),
                format!("{:.4}", p.photons),
                p.time_s.map_or("—".into(), format_time)
            );
        }
        if s.forms_left_out > 0 {
            let _ = writeln!(
                o,
                "  ({} more forms with smaller shares left out of the first passages)",
                s.forms_left_out
            );
        }
    }
    let _ = writeln!(o, "  (light: {})", s.light);
    if at_start {
        let _ = writeln!(
            o,
            "  (the light is shared as in the starting mixture, which no irradiated sample keeps: where the forms \
             absorb the lamps differently, the sample's own photostationary state differs; without `--at`, `ledger` \
             shares the light at the mixture the kinetics settle to, and `report` puts the two side by side)"
        );
    }
    o.push_str(&lifetimes_text(&s.lifetimes));
    o
}

/// The lifetimes section.
pub fn lifetimes_text(l: &LifetimeView) -> String {
    let mut o = String::new();
    if l.transients.is_empty() {
        let _ = writeln!(
            o,
            "\n  no transients: the network gives no excited state, so no lifetime or time in the excited manifold"
        );
        return o;
    }
    let _ = writeln!(o, "\n  lifetimes (1/Σk over each transient's rate channels)");
    for (name, kind, tau, _) in &l.transients {
        let _ = writeln!(
            o,
            "    {:<22} {:<13} {}",
            name,
            kind,
            tau.map_or("— (fractions only)".into(), format_time)
        );
    }
    let excited: Vec<&str> = l
        .transients
        .iter()
        .filter(|t| t.3 && t.2.is_some())
        .map(|t| t.0.as_str())
        .collect();
    match l.excited_time_per_photon_s {
        Some(t) => {
            let _ = write!(
                o,
                "  time in the excited manifold ({}) per photon absorbed: {}",
                excited.join(", "),
                format_time(t)
            );
            if let Some(f) = l.photons_into_transients
                && f < 1.0 - 1e-9
            {
                let _ = write!(
                    o,
                    " ({:.1} % of the photons lead into a transient; the others count no time there)",
                    100.0 * f
                );
            }
            let _ = writeln!(o);
        }
        None => {
            let _ = writeln!(
                o,
                "  time in the excited manifold: not known (no excited state or intersection with a rate channel)"
            );
        }
    }
    o
}

/// The cycles, named.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct CycleView {
    /// The form whose cycles are counted.
    pub form: String,
    /// The other forms of its cycles.
    pub partners: Vec<String>,
    /// Mean cycles before the molecule ends.
    pub mean: f64,
    /// Standard deviation of the same.
    pub sd: f64,
    /// Median, 5th and 95th percentiles (None where the distribution stops before them).
    pub median: Option<usize>,
    /// 5th percentile.
    pub p05: Option<usize>,
    /// 95th percentile.
    pub p95: Option<usize>,
    /// Probability beyond the last count of the distribution.
    pub tail: f64,
    /// True when the distribution stopped at its count limit.
    pub truncated: bool,
}

impl CycleView {
    /// Named view of `c` on `chain`.
    pub fn of(chain: &Chain, c: &Cycles) -> CycleView {
        let name = |i: usize| chain.states[i].name.clone();
        CycleView {
            form: name(c.form),
            partners: c.partners.iter().map(|&i| name(i)).collect(),
            mean: c.mean,
            sd: c.variance.sqrt(),
            median: c.quantile(0.5),
            p05: c.quantile(0.05),
            p95: c.quantile(0.95),
            tail: c.tail,
            truncated: c.truncated,
        }
    }
}

/// One step of a route, named.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct StepView {
    /// The state it leads to.
    pub to: String,
    /// True for a photon absorbed.
    pub photon: bool,
}

/// One route, named, with its judgement when a window was given.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct RouteView {
    /// Probability that a molecule followed takes it.
    pub probability: f64,
    /// The state it starts from.
    pub start: String,
    /// Its steps.
    pub steps: Vec<StepView>,
    /// Photons absorbed on it.
    pub photons: usize,
    /// What it needs within the window (None without a window).
    pub judgement: Option<Judgement>,
}

/// The main routes to one end, named.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct EndRouteView {
    /// The end.
    pub end: String,
    /// Its yield.
    pub yield_fraction: f64,
    /// The routes, most probable first.
    pub routes: Vec<RouteView>,
    /// Σ of their probabilities.
    pub covered: f64,
    /// Why the list stops ("covered", "top", "budget", "all").
    pub stopped: &'static str,
}

/// Everything `ledger` adds to a chain that ends (the `paths` of `summary.json`).
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct Paths {
    /// Lifetimes and the time in the excited manifold.
    pub lifetimes: LifetimeView,
    /// Switching cycles before the molecule ends (None: no species lies on a cycle through
    /// another).
    pub cycles: Option<CycleView>,
    /// The main routes to each end.
    pub routes: Vec<EndRouteView>,
    /// The window the routes' thermal steps were judged against, s.
    pub window_s: Option<f64>,
}

/// Named routes of `chain` (built from `net`), judged against `verdicts` when given.
pub fn route_views(
    chain: &Chain,
    net: &Network,
    ends: &[EndRoutes],
    verdicts: Option<&[Verdict]>,
) -> Vec<EndRouteView> {
    let name = |i: usize| chain.states[i].name.clone();
    ends.iter()
        .map(|e| EndRouteView {
            end: name(e.end),
            yield_fraction: e.yield_fraction,
            covered: e.covered,
            stopped: e.stopped,
            routes: e
                .routes
                .iter()
                .map(|r| RouteView {
                    probability: r.probability,
                    start: name(r.start),
                    steps: r
                        .moves
                        .iter()
                        .map(|&k| StepView {
                            to: name(chain.moves[k].to),
                            photon: chain.moves[k].photon,
                        })
                        .collect(),
                    photons: r.moves.iter().filter(|&&k| chain.moves[k].photon).count(),
                    judgement: verdicts.map(|v| judge(chain, net, r, v)),
                })
                .collect(),
        })
        .collect()
}

/// A route in one line: states joined by → (a thermal step or a channel) and ⇒ (a photon
/// absorbed); long routes keep their first and last states.
fn route_line(r: &RouteView) -> String {
    let mut parts: Vec<String> = vec![r.start.clone()];
    for s in &r.steps {
        parts.push(format!("{} {}", if s.photon { "⇒" } else { "→" }, s.to));
    }
    if parts.len() > 14 {
        let n = parts.len();
        let mut short: Vec<String> = parts[..6].to_vec();
        short.push(format!("… ({} steps) …", n - 12));
        short.extend(parts[n - 6..].iter().cloned());
        parts = short;
    }
    parts.join(" ")
}

/// The text `ledger` adds to a chain that ends: cycles, lifetimes, routes.
pub fn paths_text(p: &Paths) -> String {
    let mut o = String::new();
    if let Some(c) = &p.cycles {
        let shown: Vec<&str> = c.partners.iter().take(3).map(String::as_str).collect();
        let more = c.partners.len().saturating_sub(shown.len());
        let _ = writeln!(
            o,
            "\n  switching cycles before the molecule ends (a cycle: a molecule of {} goes to {}{} and comes back)",
            c.form,
            shown.join(" or "),
            if more > 0 {
                format!(" (or {more} other species)")
            } else {
                String::new()
            }
        );
        let _ = write!(o, "    mean {}, sd {}", display::number(c.mean), display::number(c.sd));
        if let (Some(m), Some(a), Some(b)) = (c.median, c.p05, c.p95) {
            let _ = write!(o, "; median {m}, 90 % between {a} and {b}");
        }
        let _ = writeln!(
            o,
            "{}",
            if c.truncated {
                " (distribution stopped at the count limit: raise --max-photons, which limits cycle counts too)"
            } else {
                ""
            }
        );
        let _ = writeln!(
            o,
            "    ends before completing the next cycle with probability {}: every return starts afresh, so \
             the count is geometric (cycle_counts.csv)",
            display::number(1.0 / (1.0 + c.mean))
        );
    }
    o.push_str(&lifetimes_text(&p.lifetimes));
    for e in &p.routes {
        let _ = writeln!(
            o,
            "\n  routes to {} (loops erased; ⇒ a photon absorbed): {} route{} covering {} of its yield {}{}",
            e.end,
            e.routes.len(),
            if e.routes.len() == 1 { "" } else { "s" },
            share(e.covered),
            share(e.yield_fraction),
            match e.stopped {
                "covered" | "all" => String::new(),
                "top" => format!(
                    "; the rest, {}, on routes below the top {}",
                    share((e.yield_fraction - e.covered).max(0.0)),
                    e.routes.len()
                ),
                _ => format!(
                    "; the search stopped at its limit, {} of the yield on routes not listed",
                    share((e.yield_fraction - e.covered).max(0.0))
                ),
            }
        );
        for r in &e.routes {
            let _ = writeln!(o, "    {:>10}  {}", share(r.probability), route_line(r));
            if let Some(j) = &r.judgement {
                let what = match j.verdict {
                    "light" => {
                        let mut w = format!(
                            "needs light: {} photon{}",
                            j.photons,
                            if j.photons == 1 { "" } else { "s" }
                        );
                        if !j.excited.is_empty() {
                            w.push_str(&format!(", through {}", j.excited.join(", ")));
                        } else {
                            w.push_str(", through an excited state");
                        }
                        w
                    }
                    "ground" => "could run on the ground state within the window".into(),
                    "too slow" => "on the ground state, but too slow within the window".into(),
                    _ => "on the ground state; a thermal step has no rate to judge".into(),
                };
                let _ = writeln!(o, "                {what}");
                for (name, _, words) in &j.thermal {
                    let _ = writeln!(o, "                  thermal \"{name}\": {words}");
                }
            }
        }
    }
    if let Some(w) = p.window_s {
        let _ = writeln!(
            o,
            "  (thermal steps judged alone for a 50 % chance of crossing within {}, as `barrier` does)",
            format_time(w)
        );
    } else if p.routes.iter().any(|e| !e.routes.is_empty()) {
        let _ = writeln!(o, "  (give --window DURATION to judge each route's thermal steps)");
    }
    o
}

/// cycle_counts.csv: n and P(K = n).
pub fn cycles_csv(c: &Cycles) -> String {
    let mut t = CsvTable::new(vec!["cycles completed".to_string(), "probability".to_string()]);
    for (n, p) in c.distribution.iter().enumerate() {
        t.row(vec![n.to_string(), cell(*p)]);
    }
    t.finish()
}
