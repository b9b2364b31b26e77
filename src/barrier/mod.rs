//! The barrier engine: which barriers can be crossed in a time window, and a verdict on every
//! rate-carrying step of a network.
//!
//! Energies are molar (J/mol), times in s, rates in s⁻¹. Pure functions: nothing here reads
//! files or prints.
//!
//! * [`thermal_window`]: the largest ΔG‡ with probability p of crossing within a window at a
//!   temperature, solving 1 − exp(−k t) = p with k the Eyring rate (unimolecular).
//! * [`hot_window`]: the largest zero-point-corrected barrier E₀ that a hot molecule of given
//!   energy crosses with probability p, before exponential cooling (or within a window at fixed
//!   energy), by bisection on E₀ with RRKM k(E).
//! * [`network_verdicts`]: barrier, rate, half-life and verdict for each thermal step and each
//!   rate channel of the transients.
//! * [`hot_verdicts`]: the channels of hot ground states, which are yields before cooling and
//!   not rates, so a time window does not apply to them: the share that reacts, k(E)·τ.
//! * [`k_table`]: k(E), ρ(E) and W(E) over an energy range.

use crate::error::{Error, Result};
use crate::kinetics::Trajectory;
use crate::network::{Branching, Network};
use crate::rates::hot::hot_yields;
use crate::rates::partition::Modes;
use crate::rates::rrkm::Rrkm;
use crate::rates::{RateLaw, eyring, eyring_barrier};
use crate::units::display;

fn check_probability(p: f64) -> Result<()> {
    if p.is_finite() && p > 0.0 && p < 1.0 {
        Ok(())
    } else {
        Err(Error::Usage(format!(
            "probability: {p} must lie strictly between 0 and 1"
        )))
    }
}

/// The largest free energy of activation (J/mol) that a unimolecular step crosses with
/// probability `probability` within `window` s at `temperature` K, with transmission
/// coefficient `kappa` (include a tunnelling correction here):
/// ΔG‡ = RT ln(κ (k_B T / h) t / (−ln(1 − p))).
pub fn thermal_window(window: f64, temperature: f64, probability: f64, kappa: f64) -> Result<f64> {
    check_probability(probability)?;
    if !(window.is_finite() && window > 0.0) {
        return Err(Error::Usage(format!("window: {window} s must be a positive duration")));
    }
    if !(temperature.is_finite() && temperature > 0.0) {
        return Err(Error::Usage(format!("temperature: {temperature} K must be positive")));
    }
    if !(kappa.is_finite() && kappa > 0.0) {
        return Err(Error::Usage(format!(
            "transmission coefficient: {kappa} must be positive"
        )));
    }
    let fastest = kappa * crate::units::constants::BOLTZMANN * temperature / crate::units::constants::PLANCK;
    if !fastest.is_finite() {
        return Err(Error::Usage(format!(
            "temperature: {temperature:e} K with κ = {kappa:e} puts Eyring's fastest rate κkT/h beyond any number"
        )));
    }
    let k_needed = -(-probability).ln_1p() / window;
    if k_needed >= fastest {
        // Even a step with no barrier (ΔG‡ = 0) runs at κkT/h and is too slow for this window.
        return Err(Error::Usage(format!(
            "window: no thermal step crosses within {} with {:.0} % probability at {} K: even with no barrier it needs {} (Eyring's limit κkT/h = {})",
            crate::units::format_time(window),
            probability * 100.0,
            crate::units::sig(temperature, 5),
            crate::units::format_time(-(-probability).ln_1p() / fastest),
            crate::units::display::format_rate_constant(fastest, 1)
        )));
    }
    let g = eyring_barrier(k_needed, temperature, 1, kappa);
    if !g.is_finite() {
        return Err(Error::Usage(format!(
            "window: {} s at {} K gives a barrier beyond any number",
            crate::units::sig(window, 4),
            crate::units::sig(temperature, 5)
        )));
    }
    Ok(g)
}

/// How the hot molecule's time runs out.
#[derive(Debug, Clone, Copy, PartialEq)]
pub enum HotLimit {
    /// Exponential cooling of the excess energy with this time constant, s.
    Cooling(f64),
    /// No cooling: the molecule keeps its energy for this window, s.
    Window(f64),
}

/// Result of [`hot_window`].
#[derive(Debug, Clone, PartialEq)]
pub struct HotWindow {
    /// The largest E₀ (J/mol) crossed with the requested probability; `None` when even a zero
    /// barrier does not reach it.
    pub barrier: Option<f64>,
    /// Probability of crossing at E₀ = 0 (the best case).
    pub probability_at_zero: f64,
    /// k(E) at the initial energy for the barrier found, s⁻¹.
    pub rate_at_barrier: Option<f64>,
}

/// Probability of crossing barrier `e0` (J/mol) from `energy` J/mol with the given limit.
pub fn hot_probability(rrkm: &Rrkm, energy: f64, e0: f64, limit: HotLimit) -> f64 {
    match limit {
        HotLimit::Window(t) => {
            let k = rrkm.rate_over(energy, e0).unwrap_or(0.0);
            -(-k * t).exp_m1()
        }
        HotLimit::Cooling(tau) => {
            let k = |e: f64| rrkm.rate_over(e, e0).unwrap_or(0.0);
            hot_yields(&[&k], energy, Some(tau), e0, 1e-7).probabilities[0]
        }
    }
}

/// The largest barrier a hot molecule with `energy` J/mol (above its zero-point level) crosses
/// with probability `probability`, from reactant and transition-state modes, reaction-path
/// degeneracy and a grain (J/mol), by bisection on E₀ to 1e-4 of the energy.
pub fn hot_window(
    reactant: &Modes,
    ts: &Modes,
    degeneracy: f64,
    energy: f64,
    limit: HotLimit,
    probability: f64,
    grain: f64,
) -> Result<HotWindow> {
    check_probability(probability)?;
    if !(energy.is_finite() && energy > 0.0) {
        return Err(Error::Usage(format!("energy: {energy} J/mol must be positive")));
    }
    let t = match limit {
        HotLimit::Cooling(t) | HotLimit::Window(t) => t,
    };
    if !(t.is_finite() && t > 0.0) {
        return Err(Error::Usage(format!(
            "cooling or window: {t} s must be a positive duration"
        )));
    }
    let rrkm = Rrkm::new(reactant, ts, 0.0, degeneracy, grain, energy + grain).map_err(Error::Usage)?;
    let p0 = hot_probability(&rrkm, energy, 0.0, limit);
    if p0 < probability {
        return Ok(HotWindow {
            barrier: None,
            probability_at_zero: p0,
            rate_at_barrier: None,
        });
    }
    let (mut lo, mut hi) = (0.0, energy);
    while hi - lo > 1e-4 * energy {
        let mid = 0.5 * (lo + hi);
        if hot_probability(&rrkm, energy, mid, limit) >= probability {
            lo = mid;
        } else {
            hi = mid;
        }
    }
    Ok(HotWindow {
        barrier: Some(lo),
        probability_at_zero: p0,
        rate_at_barrier: rrkm.rate_over(energy, lo),
    })
}

/// What kind of step a verdict is about.
#[derive(Debug, Clone, PartialEq)]
pub enum StepKind {
    /// A thermal step of this molecularity.
    Thermal(u32),
    /// A rate channel of a transient.
    Channel,
    /// A quenching channel of a transient (pseudo-first-order in the partner).
    Quenching,
}

/// One row of [`network_verdicts`].
#[derive(Debug, Clone, PartialEq)]
pub struct Verdict {
    /// Display name of the step or channel.
    pub name: String,
    /// Kind.
    pub kind: StepKind,
    /// ΔG‡ implied by the rate law at the network temperature, J/mol (standard state 1 mol/L
    /// for bimolecular steps).
    pub barrier: f64,
    /// False when the rate was given as a plain rate constant: ΔG‡ is then only what Eyring's
    /// equation would need for that k (fluorescence or internal conversion has no barrier).
    pub barrier_given: bool,
    /// Rate of loss per molecule at the start, s⁻¹: for a thermal step, ν k Π cⱼ^νⱼ / c of
    /// the reactant followed (the limiting one) at the initial concentrations; for quenching,
    /// k₂ [quencher]; zero when a reactant starts at zero.
    pub rate: f64,
    /// Time for half of the reactant followed to react, s (infinite for a zero rate).
    pub half_life: f64,
    /// Time for the requested share of the reactant followed to react, s.
    pub time_needed: f64,
    /// time_needed / window: ≤ 1 crosses within the window.
    pub factor: f64,
    /// Set when a reactant (or the quencher) starts at 0 M and the step was judged instead at
    /// the concentrations a kinetics run reaches, where the step runs fastest.
    pub judged_at: Option<JudgedAt>,
    /// End of the kinetics run looked at, s, when one was (for a step whose reactant starts at
    /// 0 M); `None` when none was given.
    pub run_until: Option<f64>,
}

/// Where a step whose reactant starts at 0 M was judged: the output time of the kinetics run at
/// which its rate k Π cⱼ^νⱼ (quenching: k₂ [quencher]) is largest.
#[derive(Debug, Clone, PartialEq)]
pub struct JudgedAt {
    /// Time, s.
    pub time: f64,
    /// The reactants' (or the quencher's) concentrations there: (name, mol/L).
    pub concentrations: Vec<(String, f64)>,
    /// The rate of the step there, mol L⁻¹ s⁻¹ (quenching: per excited molecule, s⁻¹).
    pub step_rate: f64,
}

/// How a verdict reads, for counting.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Outcome {
    /// Reaches the probability within the window.
    Crosses,
    /// Needs longer than the window.
    TooSlow,
    /// No rate: a reactant or the quencher starts at zero and no kinetics run was given, or it
    /// stays within the run's absolute tolerance of zero throughout the run.
    Undetermined,
}

impl Verdict {
    /// True when the step reaches the probability within the window.
    pub fn crosses(&self) -> bool {
        self.factor <= 1.0
    }

    /// Crosses, too slow, or undetermined (no rate at the start).
    pub fn outcome(&self) -> Outcome {
        if self.crosses() {
            Outcome::Crosses
        } else if self.rate <= 0.0 {
            Outcome::Undetermined
        } else {
            Outcome::TooSlow
        }
    }

    /// "crosses within the window" or "too slow by a factor 2.019", with where the step was
    /// judged when a reactant starts at 0 M.
    pub fn words(&self) -> String {
        let mut w = match self.outcome() {
            Outcome::Crosses => "crosses within the window".to_string(),
            Outcome::Undetermined => match self.run_until {
                Some(t) => format!(
                    "no rate: a reactant stays within the tolerance of zero over the whole run ({})",
                    crate::units::format_time(t)
                ),
                None => "no rate at the start (a reactant starts at zero)".into(),
            },
            Outcome::TooSlow => format!("too slow by a factor {}", display::number(self.factor)),
        };
        if let Some(j) = &self.judged_at {
            let at: Vec<String> = j
                .concentrations
                .iter()
                .map(|(n, c)| format!("{n} {}", crate::units::format_concentration(*c)))
                .collect();
            w.push_str(&format!(
                "; judged where it runs fastest in the kinetics run to {}: at {} ({})",
                crate::units::format_time(self.run_until.unwrap_or(j.time)),
                crate::units::format_time(j.time),
                at.join(", ")
            ));
        }
        w
    }
}

/// "5 of 6 cross within the window; 1 does not." with undetermined rows counted apart.
pub fn tally(rows: &[Verdict]) -> String {
    let count = |o: Outcome| rows.iter().filter(|r| r.outcome() == o).count();
    let (yes, no, open) = (
        count(Outcome::Crosses),
        count(Outcome::TooSlow),
        count(Outcome::Undetermined),
    );
    let verb = |n: usize, one: &str, many: &str| if n == 1 { one.to_string() } else { many.to_string() };
    let mut s = format!(
        "{yes} of {} {} within the window; {no} {}",
        rows.len(),
        verb(yes, "crosses", "cross"),
        verb(no, "does not", "do not")
    );
    if open > 0 {
        s.push_str(&format!(
            "; {open} {} no rate (a reactant stays at zero)",
            verb(open, "has", "have")
        ));
    }
    s.push('.');
    s
}

/// Time for a share `p` of reactant `followed` to react in the isolated step of rate
/// r = k Π cⱼ^νⱼ, each `terms` entry being (cⱼ⁰ mol/L, order νⱼ, net consumption nⱼ per event:
/// reactant minus product coefficient, so a catalyst has nⱼ = 0 and stays at cⱼ⁰):
/// t = ∫₀^ξ* dξ / (k Π (cⱼ⁰ − nⱼ ξ)^νⱼ) with ξ* = p c⁰ / n of the reactant followed, which must
/// be the limiting one among those consumed. Adaptive Simpson quadrature to 1e-10 relative.
fn isolated_step_time(k: f64, terms: &[(f64, f64, f64)], followed: usize, p: f64) -> f64 {
    let (c_f, _, n_f) = terms[followed];
    let end = p * c_f / n_f;
    let f = |xi: f64| {
        let mut r = k;
        for &(c, nu, n) in terms {
            r *= (c - n * xi).max(0.0).powf(nu);
        }
        1.0 / r
    };
    adaptive_simpson(&f, 0.0, end, 1e-10, 48)
}

fn adaptive_simpson(f: &dyn Fn(f64) -> f64, a: f64, b: f64, rel: f64, depth: u32) -> f64 {
    fn simpson(fa: f64, fm: f64, fb: f64, a: f64, b: f64) -> f64 {
        (b - a) / 6.0 * (fa + 4.0 * fm + fb)
    }
    #[allow(clippy::too_many_arguments)]
    fn go(f: &dyn Fn(f64) -> f64, a: f64, b: f64, fa: f64, fm: f64, fb: f64, whole: f64, tol: f64, depth: u32) -> f64 {
        let m = 0.5 * (a + b);
        let (lm, rm) = (0.5 * (a + m), 0.5 * (m + b));
        let (flm, frm) = (f(lm), f(rm));
        let left = simpson(fa, flm, fm, a, m);
        let right = simpson(fm, frm, fb, m, b);
        if depth == 0 || (left + right - whole).abs() <= 15.0 * tol {
            return left + right + (left + right - whole) / 15.0;
        }
        go(f, a, m, fa, flm, fm, left, tol / 2.0, depth - 1) + go(f, m, b, fm, frm, fb, right, tol / 2.0, depth - 1)
    }
    let (fa, fm, fb) = (f(a), f(0.5 * (a + b)), f(b));
    let whole = simpson(fa, fm, fb, a, b);
    go(f, a, b, fa, fm, fb, whole, rel * whole.abs(), depth)
}

/// The largest of `rate(state)` over the output states of `run`, with the concentrations
/// cleaned of round-off (values within the run's absolute tolerance of zero read 0): (output
/// index, that rate, the cleaned concentrations there). `None` when it is zero throughout.
fn fastest(run: &Trajectory, n_species: usize, rate: &dyn Fn(&[f64]) -> f64) -> Option<(usize, f64, Vec<f64>)> {
    let z = run.zero_within();
    let clean = |y: &[f64]| -> Vec<f64> {
        y[..n_species.min(y.len())]
            .iter()
            .map(|&v| z.shown(v).max(0.0))
            .collect()
    };
    let mut best: Option<(usize, f64)> = None;
    for (i, y) in run.states.iter().enumerate() {
        let r = rate(&clean(y));
        if r.is_finite() && r > 0.0 && best.is_none_or(|(_, b)| r > b) {
            best = Some((i, r));
        }
    }
    best.map(|(i, r)| (i, r, clean(&run.states[i])))
}

/// A verdict for every thermal step and every rate or quenching channel of `net`, at the
/// network temperature, for crossing with probability `probability` within `window` s.
/// Channels with a fixed fraction or the rest carry no rate and are left out.
///
/// A thermal step is taken alone from the initial concentrations (as if no other step ran):
/// the share of its limiting reactant that reacts follows the step's own integrated rate law
/// (first order: 1 − exp(−k t); A + B and 2 A: the second-order laws), not a pseudo-first-order
/// rate, which holds only with the partner in large excess. Quenching is pseudo-first-order in
/// the quencher, which is not consumed.
///
/// A step with a reactant (or a quencher) at 0 M at the start has no rate there. With `run`, a
/// kinetics run of the network (species first in each state, as [`Trajectory`] holds them),
/// such a step is judged instead from the concentrations at the output time where its rate
/// k Π cⱼ^νⱼ is largest ([`Verdict::judged_at`]), taken alone from there as above; without
/// `run`, or when the rate stays zero (within the run's absolute tolerance) throughout, it is
/// left undetermined.
pub fn network_verdicts(
    net: &Network,
    window: f64,
    probability: f64,
    run: Option<&Trajectory>,
) -> Result<Vec<Verdict>> {
    check_probability(probability)?;
    if !(window.is_finite() && window > 0.0) {
        return Err(Error::Usage(format!("window: {window} s must be a positive duration")));
    }
    let t = net.conditions.temperature;
    let need = -(-probability).ln_1p();
    let given = |law: &RateLaw| !matches!(law, RateLaw::Constant(_));
    let n_species = net.species.len();
    let run_until = run.and_then(|r| r.times.last().copied());
    let first_order = |name: String, kind: StepKind, law: &RateLaw, order: u32, rate: f64| {
        let (half_life, time_needed) = if rate > 0.0 {
            (std::f64::consts::LN_2 / rate, need / rate)
        } else {
            (f64::INFINITY, f64::INFINITY)
        };
        Verdict {
            name,
            kind,
            barrier: law.barrier(t, order),
            barrier_given: given(law),
            rate,
            half_life,
            time_needed,
            factor: time_needed / window,
            judged_at: None,
            run_until: None,
        }
    };
    let start: Vec<f64> = net.species.iter().map(|x| x.initial).collect();
    let mut out = Vec::new();
    for s in &net.thermal {
        let name = format!("{} ({} -> {})", s.name, net.side(&s.reactants), net.side(&s.products));
        if s.order <= 1 || s.reactants.is_empty() {
            out.push(first_order(name, StepKind::Thermal(s.order), &s.rate, s.order, s.k));
            continue;
        }
        let step_rate = |c: &[f64]| {
            s.reactants
                .iter()
                .fold(s.k, |r, x| r * c[x.species].powf(x.coefficient))
        };
        let mut conc = start.clone();
        let mut judged_at = None;
        let zero_start = step_rate(&start) <= 0.0;
        if zero_start
            && let Some(tr) = run
            && let Some((i, r, c)) = fastest(tr, n_species, &step_rate)
        {
            let mut at: Vec<(String, f64)> = Vec::new();
            for x in &s.reactants {
                let n = &net.species[x.species].name;
                if !at.iter().any(|(m, _)| m == n) {
                    at.push((n.clone(), c[x.species]));
                }
            }
            judged_at = Some(JudgedAt {
                time: tr.times[i],
                concentrations: at,
                step_rate: r,
            });
            conc = c;
        }
        let mut v = thermal_verdict(net, s, &conc, name, probability, window);
        v.judged_at = judged_at;
        v.run_until = if zero_start { run_until } else { None };
        out.push(v);
    }
    for (ti, tr) in net.transients.iter().enumerate() {
        for (ci, c) in tr.channels.iter().enumerate() {
            let name = net.channel_name(ti, ci);
            match &c.branching {
                Branching::Rate { law, k } => out.push(first_order(name, StepKind::Channel, law, 1, *k)),
                Branching::Quenching { partner, law, k2 } => {
                    let q = &net.species[*partner].name;
                    let name = format!("{name} [quenched by {q}]");
                    let mut rate = k2 * start[*partner];
                    let mut judged_at = None;
                    let zero_start = rate <= 0.0;
                    if zero_start
                        && let Some(tr) = run
                        && let Some((i, r, c)) = fastest(tr, n_species, &|c: &[f64]| k2 * c[*partner])
                    {
                        rate = r;
                        judged_at = Some(JudgedAt {
                            time: tr.times[i],
                            concentrations: vec![(q.clone(), c[*partner])],
                            step_rate: r,
                        });
                    }
                    let mut v = first_order(name, StepKind::Quenching, law, 2, rate);
                    v.judged_at = judged_at;
                    v.run_until = if zero_start { run_until } else { None };
                    out.push(v);
                }
                Branching::Fraction(_) | Branching::Rest | Branching::Hot { .. } => {}
            }
        }
    }
    Ok(out)
}

/// The verdict on thermal step `s` (order 2 or more) taken alone from concentrations `conc`
/// (mol/L, by species), following its limiting reactant by its integrated rate law.
fn thermal_verdict(
    net: &Network,
    s: &crate::network::ThermalStep,
    conc: &[f64],
    mut name: String,
    probability: f64,
    window: f64,
) -> Verdict {
    // (c, order, net consumption): a species on both sides (a catalyst) is not used up
    let terms: Vec<(f64, f64, f64)> = s
        .reactants
        .iter()
        .map(|r| {
            let made: f64 = s
                .products
                .iter()
                .filter(|x| x.species == r.species)
                .map(|x| x.coefficient)
                .sum();
            (conc[r.species], r.coefficient, r.coefficient - made)
        })
        .collect();
    // follow the limiting reactant among those consumed (smallest c/n; the first on ties)
    let followed = (0..terms.len())
        .filter(|&a| terms[a].2 > 0.0)
        .min_by(|&a, &b| (terms[a].0 / terms[a].2).total_cmp(&(terms[b].0 / terms[b].2)));
    let consumed = followed.is_some();
    let followed = followed.unwrap_or(0);
    if let Some(f) = s.reactants.get(followed) {
        name.push_str(&format!(" [per {}]", net.species[f.species].name));
    }
    let (c_f, _, n_f) = terms[followed];
    let mut rate = if c_f > 0.0 && consumed { s.k * n_f / c_f } else { 0.0 };
    for &(c, nu, _) in &terms {
        rate *= c.powf(nu);
    }
    let (half_life, time_needed) = if rate > 0.0 && rate.is_finite() {
        (
            isolated_step_time(s.k, &terms, followed, 0.5),
            isolated_step_time(s.k, &terms, followed, probability),
        )
    } else {
        (f64::INFINITY, f64::INFINITY)
    };
    Verdict {
        name,
        kind: StepKind::Thermal(s.order),
        barrier: s.rate.barrier(net.conditions.temperature, s.order),
        barrier_given: !matches!(s.rate, RateLaw::Constant(_)),
        rate,
        half_life,
        time_needed,
        factor: time_needed / window,
        judged_at: None,
        run_until: None,
    }
}

/// One channel of a hot ground state, from [`hot_verdicts`]. A hot molecule reacts or cools
/// within a few cooling times τ of the photon (ps to ns in solution), so the question is the
/// share that reacts before cooling, not whether a window is long enough.
#[derive(Debug, Clone, PartialEq)]
pub struct HotVerdict {
    /// Display name, "TRANSIENT channel N -> TARGET".
    pub name: String,
    /// Zero-point-corrected barrier E₀, J/mol.
    pub barrier: f64,
    /// Excess energy the hot molecule starts with, J/mol.
    pub energy: f64,
    /// Cooling time constant τ, s.
    pub cooling: f64,
    /// RRKM k(E) at the starting energy, s⁻¹.
    pub rate_at_start: f64,
    /// Yield of this channel before cooling (dimensionless).
    pub fraction: f64,
}

impl HotVerdict {
    /// k(E)·τ at the starting energy: well above 1 the channel outruns cooling at first, well
    /// below 1 most molecules cool before crossing.
    pub fn competition(&self) -> f64 {
        self.rate_at_start * self.cooling
    }

    /// "reacts before cooling in 42.0 % of hot molecules" and what decides it.
    pub fn words(&self) -> String {
        let share = format!("{:.3} %", 100.0 * self.fraction);
        if self.fraction >= 0.5 {
            format!("reacts before cooling in {share} of hot molecules")
        } else if self.competition() >= 1.0 {
            format!("outruns cooling at first but loses to the other channels or to cooling: {share}")
        } else {
            format!("mostly cools first: {share} react")
        }
    }
}

/// The hot channels of every hot ground state in `net`, with their computed yields.
pub fn hot_verdicts(net: &Network) -> Vec<HotVerdict> {
    let mut out = Vec::new();
    for (ti, tr) in net.transients.iter().enumerate() {
        for (ci, c) in tr.channels.iter().enumerate() {
            if let Branching::Hot {
                fraction,
                barrier,
                energy,
                cooling,
                rate_at_start,
            } = c.branching
            {
                out.push(HotVerdict {
                    name: net.channel_name(ti, ci),
                    barrier,
                    energy,
                    cooling,
                    rate_at_start,
                    fraction,
                });
            }
        }
    }
    out
}

/// One row of [`k_table`].
#[derive(Debug, Clone, PartialEq)]
pub struct KRow {
    /// Energy above the reactant zero-point level, J/mol.
    pub energy: f64,
    /// k(E), s⁻¹ (`None` where the averaged density is zero).
    pub rate: Option<f64>,
    /// Reactant density averaged over the density window centred on the energy, per J/mol.
    pub density: f64,
    /// Reactant sum of states W(E).
    pub sum: f64,
    /// Transition-state sum of states W‡(E − E₀).
    pub ts_sum: f64,
}

/// k(E), ρ(E), W(E) and W‡(E − E₀) at `points` evenly spaced energies from `from` to `to`
/// J/mol (rows at least one grain apart). ρ and k(E) are the ones the hot-molecule engine uses
/// ([`Rrkm::density`], [`Rrkm::rate`]): the count averaged over the density window centred on
/// each energy, so the table shows the k(E) behind the network's hot yields.
pub fn k_table(rrkm: &Rrkm, from: f64, to: f64, points: usize) -> Result<Vec<KRow>> {
    if !(from.is_finite() && to.is_finite() && from >= 0.0 && to > from) {
        return Err(Error::Usage(format!(
            "energy range: {from}..{to} J/mol must run upwards from zero or more"
        )));
    }
    if to > rrkm.reactant.max_energy() {
        return Err(Error::Usage("energy range: above the counted range".into()));
    }
    let points = points.max(2);
    let step = ((to - from) / (points - 1) as f64).max(rrkm.reactant.grain);
    let mut rows = Vec::new();
    let mut e = from;
    while e <= to + 1e-9 * to.max(1.0) {
        // the same windowed density and k(E) as the hot-molecule engine uses
        let density = rrkm.density(e).unwrap_or(0.0);
        let ts_sum = rrkm.ts.sum_at(e - rrkm.barrier).unwrap_or(0.0);
        let rate = rrkm.rate(e);
        rows.push(KRow {
            energy: e,
            rate,
            density,
            sum: rrkm.reactant.sum_at(e).unwrap_or(f64::NAN),
            ts_sum,
        });
        e += step;
    }
    Ok(rows)
}

/// The Eyring rate for ΔG‡ `barrier` J/mol, unimolecular, at `temperature` K (re-exported
/// for reports).
pub fn eyring_rate(barrier: f64, temperature: f64, kappa: f64) -> f64 {
    eyring(barrier, temperature, 1, kappa)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn thermal_window_inverts_eyring() {
        // The barrier found gives exactly probability p in the window (definition).
        let (t, temp, p) = (3600.0, 298.15, 0.5);
        let g = thermal_window(t, temp, p, 1.0).unwrap();
        let k = eyring_rate(g, temp, 1.0);
        assert!(((-k * t).exp() - 0.5).abs() < 1e-12);
        assert!(thermal_window(t, temp, 1.0, 1.0).is_err());
        assert!(thermal_window(-1.0, temp, 0.5, 1.0).is_err());
    }

    // Integrated rate laws for an isolated step (Atkins & de Paula, Physical Chemistry, the
    // integrated second-order rate laws, `from memory` for the section): first order
    // t = −ln(1 − p)/k; A + B with [A]₀ < [B]₀: k t = ln([B][A]₀/([A][B]₀))/([B]₀ − [A]₀);
    // A + B equal: t½ = 1/(k [A]₀); 2 A with r = k[A]² and d[A]/dt = −2r: t½ = 1/(2 k [A]₀).
    #[test]
    fn isolated_step_times_follow_the_integrated_rate_laws() {
        let rel = |a: f64, b: f64| (a - b).abs() / b;
        let k = 0.0136;
        // A + B, equal 10 mM
        let t = isolated_step_time(k, &[(0.01, 1.0, 1.0), (0.01, 1.0, 1.0)], 0, 0.5);
        assert!(rel(t, 1.0 / (k * 0.01)) < 1e-9, "{t}");
        // A + B, A limiting at 10 mM against 30 mM, to 90 % of A
        let (a0, b0, p): (f64, f64, f64) = (0.01, 0.03, 0.9);
        let (a, b) = (a0 * (1.0 - p), b0 - a0 * p);
        let want = (b * a0 / (a * b0)).ln() / (k * (b0 - a0));
        let t = isolated_step_time(k, &[(a0, 1.0, 1.0), (b0, 1.0, 1.0)], 0, p);
        assert!(rel(t, want) < 1e-9, "{t} vs {want}");
        // 2 A
        let t = isolated_step_time(k, &[(0.02, 2.0, 2.0)], 0, 0.5);
        assert!(rel(t, 1.0 / (2.0 * k * 0.02)) < 1e-9, "{t}");
        // a large excess of B tends to the pseudo-first-order half-life ln 2 / (k [B]₀)
        let t = isolated_step_time(k, &[(1e-6, 1.0, 1.0), (1.0, 1.0, 1.0)], 0, 0.5);
        assert!(rel(t, std::f64::consts::LN_2 / k) < 1e-5, "{t}");
        // A + cat -> B + cat: the catalyst is not consumed, so A decays first order in k[cat]₀
        let t = isolated_step_time(k, &[(0.01, 1.0, 1.0), (1e-3, 1.0, 0.0)], 0, 0.5);
        assert!(rel(t, std::f64::consts::LN_2 / (k * 1e-3)) < 1e-9, "{t}");
    }

    #[test]
    fn tally_counts_undetermined_apart_and_agrees_in_number() {
        let v = |factor: f64, rate: f64| Verdict {
            name: "x".into(),
            kind: StepKind::Thermal(2),
            barrier: 0.0,
            barrier_given: true,
            rate,
            half_life: 1.0,
            time_needed: factor,
            factor,
            judged_at: None,
            run_until: None,
        };
        let rows = [v(0.5, 1.0), v(2.0, 1.0), v(f64::INFINITY, 0.0)];
        assert_eq!(
            tally(&rows),
            "1 of 3 crosses within the window; 1 does not; 1 has no rate (a reactant stays at zero)."
        );
        assert_eq!(tally(&rows[..1]), "1 of 1 crosses within the window; 0 do not.");
    }

    #[test]
    fn hot_window_is_consistent_with_its_probability() {
        let wn = crate::units::parse("1 cm-1", crate::units::Quantity::MolarEnergy).unwrap();
        let r = Modes {
            vibrations: [3000.0, 1500.0, 1000.0, 800.0, 500.0, 300.0]
                .iter()
                .map(|v| v * wn)
                .collect(),
            ..Default::default()
        };
        let ts = Modes {
            vibrations: [3000.0, 1500.0, 1000.0, 800.0, 300.0].iter().map(|v| v * wn).collect(),
            imaginary: Some(600.0 * wn),
            rotors: vec![],
        };
        let e = 200e3;
        let w = hot_window(&r, &ts, 1.0, e, HotLimit::Cooling(10e-12), 0.5, 10.0 * wn).unwrap();
        let b = w.barrier.unwrap();
        assert!(b > 0.0 && b < e);
        let rrkm = Rrkm::new(&r, &ts, 0.0, 1.0, 10.0 * wn, e + 10.0 * wn).unwrap();
        let p_lo = hot_probability(&rrkm, e, b * 0.98, HotLimit::Cooling(10e-12));
        let p_hi = hot_probability(&rrkm, e, b * 1.02, HotLimit::Cooling(10e-12));
        assert!(p_lo > 0.5 && p_hi < 0.5, "{p_lo} {p_hi}");
    }
}
