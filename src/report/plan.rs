//! What `plan` and `actinometer` write: text summaries, JSON, sweep CSV and SVG plots, and
//! `[[light]]` blocks for a network file.

use crate::kinetics::Schedule;
use crate::light::{LightKind, LightSource};
use crate::plan::actinometry::{FluxResult, Measured, NetworkFit};
use crate::plan::target::Basis;
use crate::plan::{Days, Direction, Flow, Plan, Tube, Unreachable, Why};
use crate::units::display::{self, ZeroWithin, format_concentration_within};
use crate::units::{format_concentration, format_time, sig};
use serde::Serialize;
use std::fmt::Write;

pub use super::simulation::CAUTIONS;

/// The flow approximation, stated wherever a flow rate is given.
pub const FLOW_APPROXIMATION: &str = "plug flow treated as a batch over the residence time τ = V/Q (no axial \
dispersion, no radial concentration or light gradients beyond Beer–Lambert across the tube); optical path = \
inner diameter; the background absorbance scales with the path (taken as the solvent's; a wall's share would \
not); the sources' photon flux is taken as the flux entering the irradiated tubing";

/// Electrical energy from a wall-plug efficiency.
#[derive(Debug, Clone, Copy, PartialEq, Serialize)]
pub struct Electrical {
    /// Wall-plug efficiency (optical power out / electrical power in).
    pub efficiency: f64,
    /// Electrical power, W.
    pub power: f64,
    /// Electrical energy to the target, J.
    pub energy: f64,
    /// Per mole of the target amount, J/mol.
    pub per_mol: Option<f64>,
}

/// The inverse answer: the light needed for a given time.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct PowerAnswer {
    /// Time asked, s.
    pub duration: f64,
    /// Factor on every source of the file.
    pub scale: f64,
    /// Each source: (name, radiant power W, photon flux einstein/s) at that factor.
    pub sources: Vec<(String, f64, f64)>,
    /// Plans evaluated by the root solve.
    pub evaluations: usize,
    /// Relative tolerance on the time.
    pub tolerance: f64,
}

/// The flow answer with its tube.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct FlowAnswer {
    /// The tube.
    pub tube: Tube,
    /// Irradiated volume, L.
    pub volume: f64,
    /// Residence time, flow rate, throughput.
    pub flow: Flow,
    /// Flow rate in mL/min.
    pub flow_ml_per_min: f64,
    /// Throughput in mol/h.
    pub throughput_mol_per_h: f64,
    /// The approximation.
    pub approximation: String,
}

/// The sunlight answer.
#[derive(Debug, Clone, PartialEq, Serialize)]
pub struct SunAnswer {
    /// Sun-hours a day.
    pub sun_hours: f64,
    /// Factor on the ASTM G173-03 spectrum (on top of the file's scale).
    pub scale: f64,
    /// Where the target fell.
    pub days: Option<Days>,
}

/// Everything `plan --json` prints and `summary.json` holds.
#[derive(Debug, Clone, Serialize)]
pub struct PlanSummary {
    /// Network name.
    pub network: String,
    /// The target.
    pub target: crate::plan::Target,
    /// How the target level reads in words.
    pub target_meaning: String,
    /// True when met.
    pub reached: bool,
    /// Time to the target, s.
    pub time: Option<f64>,
    /// Why not.
    pub unreachable: Option<Unreachable>,
    /// The closest level of an unreachable target as its percentage counts it (a fraction; None
    /// when reached or given as a concentration).
    pub best_fraction: Option<f64>,
    /// Photons and energy.
    pub dose: crate::plan::Dose,
    /// Photon unit of the dose.
    pub photon_unit: String,
    /// Electrical energy, if a wall-plug efficiency was given.
    pub electrical: Option<Electrical>,
    /// Products and selectivities at the target time.
    pub products: Vec<crate::plan::Share>,
    /// Light needed for a given time.
    pub power: Option<PowerAnswer>,
    /// Flow reactor.
    pub flow: Option<FlowAnswer>,
    /// Sunlight.
    pub sun: Option<SunAnswer>,
    /// Integrator and method notes.
    pub method: String,
    /// Relative tolerance.
    pub rtol: f64,
    /// Absolute tolerance of the integrator, mol/L: the text shows concentrations within it of
    /// zero (and what is derived from them) as 0; the numbers here are the raw ones.
    pub atol: f64,
    /// Safety cautions.
    pub cautions: String,
    /// The unit of every number above, by field path ("dose.incident": "einstein"); SI
    /// throughout except concentrations in mol/L and volumes in L.
    pub units: std::collections::BTreeMap<&'static str, &'static str>,
}

/// The units of [`PlanSummary`]'s numbers, by field path.
pub fn summary_units() -> std::collections::BTreeMap<&'static str, &'static str> {
    [
        ("time", "s"),
        ("target.level", "mol/L"),
        ("target.basis.*.fraction", "1"),
        ("best_fraction", "1"),
        ("dose.lit_time", "s"),
        ("dose.incident", "einstein"),
        ("dose.absorbed", "einstein"),
        ("dose.incident_per_litre", "einstein/L"),
        ("dose.absorbed_per_litre", "einstein/L"),
        ("dose.amount", "mol"),
        ("dose.incident_per_mol", "einstein/mol"),
        ("dose.absorbed_per_mol", "einstein/mol"),
        ("dose.power", "W"),
        ("dose.radiant_energy", "J"),
        ("dose.radiant_per_mol", "J/mol"),
        ("electrical.efficiency", "1"),
        ("electrical.power", "W"),
        ("electrical.energy", "J"),
        ("electrical.per_mol", "J/mol"),
        ("products[].formed", "mol/L"),
        (
            "products[].selectivity",
            "mol per mol of products[].reference consumed (null: not formed from it)",
        ),
        (
            "products[].stoichiometric_max",
            "mol per mol of products[].reference consumed",
        ),
        ("power.duration", "s"),
        ("power.scale", "1"),
        ("power.sources[]", "[name, W, einstein/s]"),
        ("power.evaluations", "count"),
        ("power.tolerance", "1"),
        ("sun.days.day", "count (1 = the first day)"),
        ("flow.tube.inner_diameter", "m"),
        ("flow.tube.length", "m"),
        ("flow.volume", "L"),
        ("flow.flow.residence_time", "s"),
        ("flow.flow.flow_rate", "L/s"),
        ("flow.flow.throughput", "mol/s"),
        ("flow.flow_ml_per_min", "mL/min"),
        ("flow.throughput_mol_per_h", "mol/h"),
        ("sun.sun_hours", "h"),
        ("sun.scale", "1"),
        ("sun.days.days", "d"),
        ("sun.days.lit_hours", "h"),
        ("sun.days.fraction_of_lit", "1"),
        ("unreachable.final_level", "mol/L"),
        ("unreachable.best_level", "mol/L"),
        ("unreachable.best_time", "s"),
        ("unreachable.horizon", "s"),
        ("unreachable.consumers[].rate", "mol/(L s)"),
        ("rtol", "1"),
        ("atol", "mol/L"),
    ]
    .into_iter()
    .collect()
}

/// The target level in words.
pub fn target_meaning(plan: &Plan) -> String {
    let t = &plan.target;
    let cmp = match t.direction {
        Direction::Above => "rises to",
        Direction::Below => "falls to",
    };
    let lvl = format_concentration(t.level);
    match &t.basis {
        Basis::Absolute => format!("{} {cmp} {lvl}", t.species_name),
        Basis::OfInitial { fraction } => {
            format!(
                "{} {cmp} {} % of its start ({lvl})",
                t.species_name,
                sig(fraction * 100.0, 4)
            )
        }
        Basis::YieldOf {
            reference,
            fraction,
            chosen,
        } => format!(
            "{} {cmp} {} {} % yield on {reference}{} at 1:1 ({lvl})",
            t.species_name,
            article(&sig(fraction * 100.0, 4)),
            sig(fraction * 100.0, 4),
            if *chosen {
                " (taken as the limiting reagent: the smallest start below 1 M among the species a step consumes; \
                 write \"... % of NAME\" to choose)"
            } else {
                ""
            }
        ),
    }
}

/// Build the summary.
#[allow(clippy::too_many_arguments)]
pub fn summary(
    network: &str,
    plan: &Plan,
    rtol: f64,
    efficiency: Option<f64>,
    power: Option<PowerAnswer>,
    flow: Option<FlowAnswer>,
    sun: Option<SunAnswer>,
) -> PlanSummary {
    let electrical = efficiency.map(|e| Electrical {
        efficiency: e,
        power: plan.dose.power / e,
        energy: plan.dose.radiant_energy / e,
        per_mol: plan.dose.radiant_per_mol.map(|x| x / e),
    });
    PlanSummary {
        network: network.to_string(),
        target: plan.target.clone(),
        target_meaning: target_meaning(plan),
        reached: plan.time.is_some(),
        time: plan.time,
        unreachable: plan.unreachable.clone(),
        best_fraction: best_fraction(plan),
        dose: plan.dose.clone(),
        photon_unit: "einstein (mol of photons)".into(),
        electrical,
        products: plan.products.clone(),
        power,
        flow,
        sun,
        method: format!(
            "{} ({}); time to target by root finding on the target species in the integrator ({} stretch{})",
            crate::report::simulation::method_name(plan.trajectory.method),
            plan.trajectory.method_reason,
            plan.stretches,
            if plan.stretches == 1 { "" } else { "es" }
        ),
        rtol,
        atol: plan.trajectory.atol,
        cautions: CAUTIONS.into(),
        units: summary_units(),
    }
}

/// An energy per mole always in kJ (so the radiant and the electrical figure compare at a glance).
fn energy_per_mol(j: f64) -> String {
    format!("{} kJ", sig(j / 1e3, 4))
}

fn energy(j: f64) -> String {
    display::format_energy_amount(j)
}

/// The text summary.
pub fn text(s: &PlanSummary) -> String {
    let mut o = String::new();
    // round-off within the integrator's absolute tolerance of zero reads 0 (summary.json keeps
    // the raw values beside its `atol`)
    let zero = ZeroWithin(s.atol);
    let _ = writeln!(o, "plan for {}", s.network);
    let _ = writeln!(o, "target: \"{}\": {}", s.target.text, s.target_meaning);
    let d = &s.dose;
    let what = match s.target.direction {
        Direction::Above => format!("mol {} formed", s.target.species_name),
        Direction::Below => format!("mol {} consumed", s.target.species_name),
    };
    match (&s.time, &s.unreachable) {
        (Some(t), _) => {
            let _ = writeln!(
                o,
                "reached after {} ({} {}; found by the integrator's root finding, rtol {:e})",
                format_time(*t),
                sig(*t / display::time(*t).0, 6),
                display::time(*t).1,
                s.rtol
            );
        }
        (None, Some(u)) => {
            let _ = writeln!(o, "NOT REACHABLE: {}", u.why.words());
            let _ = writeln!(
                o,
                "  {} reaches at best {}{} ({}); {} after {} of integration",
                s.target.species_name,
                format_concentration_within(u.best_level, zero),
                s.best_fraction
                    .map_or(String::new(), |f| format!(", {} %", sig(100.0 * f, 3))),
                closest_when(u),
                format_concentration_within(u.final_level, zero),
                format_time(u.horizon)
            );
            if s.target.direction == Direction::Above && u.final_level < u.best_level * 0.999 && !u.consumers.is_empty()
            {
                let _ = writeln!(
                    o,
                    "  after its peak it is lost to: {}",
                    u.consumers
                        .iter()
                        .take(3)
                        .map(|c| format!("{} ({} M/s at the peak)", c.step, sig(c.rate, 3)))
                        .collect::<Vec<_>>()
                        .join(", ")
                );
            }
        }
        _ => {}
    }
    if let Some(sun) = &s.sun {
        let _ = writeln!(
            o,
            "sunlight: {} sun-hours a day, ASTM G173-03 global tilt × {} (on top of the file's scale); dark hours \
             integrated with the light off",
            sig(sun.sun_hours, 3),
            sig(sun.scale, 3)
        );
        if let Some(days) = &sun.days {
            if days.in_dark {
                let _ = writeln!(
                    o,
                    "  met on day {} in the dark after that day's light ({} days of sunlight; {} sun-hours in all)",
                    days.day,
                    sig(days.days, 4),
                    sig(days.lit_hours, 4)
                );
            } else {
                let _ = writeln!(
                    o,
                    "  met on day {} after {} % of its sun-hours ({} days of sunlight, the last counted by its share of sun-hours; {} sun-hours in all)",
                    days.day,
                    sig(days.fraction_of_lit * 100.0, 3),
                    sig(days.days, 4),
                    sig(days.lit_hours, 4)
                );
            }
        }
    }
    let per = |x: Option<f64>| x.map_or(String::new(), |v| format!("; {} einstein per {what}", sig(v, 4)));
    let _ = writeln!(
        o,
        "photons {}",
        if s.reached {
            "to the target"
        } else {
            "to the closest approach"
        }
    );
    let _ = writeln!(
        o,
        "  incident  {} ({}/L{})",
        display::format_photons(d.incident),
        display::format_photons(d.incident_per_litre),
        per(d.incident_per_mol)
    );
    let _ = writeln!(
        o,
        "  absorbed  {} ({}/L{})",
        display::format_photons(d.absorbed),
        display::format_photons(d.absorbed_per_litre),
        per(d.absorbed_per_mol)
    );
    if d.power > 0.0 {
        let _ = writeln!(
            o,
            "radiant energy into the sample: {} for {} lit = {}{}",
            display::format_power(d.power),
            format_time(d.lit_time),
            energy(d.radiant_energy),
            d.radiant_per_mol
                .map_or(String::new(), |v| format!(" ({} per {what})", energy_per_mol(v)))
        );
    }
    if let Some(e) = &s.electrical {
        let _ = writeln!(
            o,
            "electrical energy at a wall-plug efficiency of {} %: {} drawn, {}{}",
            sig(e.efficiency * 100.0, 3),
            display::format_power(e.power),
            energy(e.energy),
            e.per_mol
                .map_or(String::new(), |v| format!(" ({} per {what})", energy_per_mol(v)))
        );
    }
    if let Some(p) = &s.power {
        let _ = writeln!(
            o,
            "light needed to reach the target in {}: {} × the file's light (root solve on log power, |t/T − 1| < {:e}, \
             {} plans)",
            format_time(p.duration),
            sig(p.scale, 5),
            p.tolerance,
            p.evaluations
        );
        for (name, w, q) in &p.sources {
            let _ = writeln!(
                o,
                "  {name}: {} ({})",
                display::format_power(*w),
                display::format_photon_flux(*q)
            );
        }
    }
    if let Some(f) = &s.flow {
        let _ = writeln!(
            o,
            "flow: tube {} mm inner diameter × {} m = {} mL; residence time {}; flow rate {} mL/min; throughput {} \
             mol/h",
            sig(f.tube.inner_diameter * 1e3, 3),
            sig(f.tube.length, 3),
            sig(f.volume * 1e3, 4),
            format_time(f.flow.residence_time),
            sig(f.flow_ml_per_min, 4),
            sig(f.throughput_mol_per_h, 4)
        );
        let _ = writeln!(o, "  approximation: {}", f.approximation);
    }
    let formed: Vec<_> = s
        .products
        .iter()
        .map(|p| shown_share(p, zero))
        .filter(|p| p.formed > 0.0)
        .collect();
    if !formed.is_empty() {
        let _ = writeln!(
            o,
            "products {}",
            if s.reached {
                "at the target"
            } else {
                "at the closest approach"
            }
        );
        for p in &formed {
            let _ = writeln!(
                o,
                "  {:<16} {:>12}  {}",
                p.species,
                format_concentration(p.formed),
                selectivity_text(p)
            );
        }
    }
    let _ = writeln!(o, "method: {}", s.method);
    let _ = writeln!(o, "caution: {}", s.cautions);
    o
}

/// A product's share as shown: the amount formed within the integrator's tolerance `zero` of
/// zero reads 0, and so does its selectivity (a ratio of round-off to the reagent consumed).
pub fn shown_share(p: &crate::plan::Share, zero: ZeroWithin) -> crate::plan::Share {
    let formed = zero.shown(p.formed);
    crate::plan::Share {
        formed,
        selectivity: p.selectivity.map(|x| if formed == 0.0 { 0.0 } else { x }),
        ..p.clone()
    }
}

/// A product's selectivity in words: the share with its reference, the stoichiometric ceiling
/// when it is not 1 (or when the share exceeds it), or why there is none.
pub fn selectivity_text(p: &crate::plan::Share) -> String {
    let Some(r) = &p.reference else {
        return String::new();
    };
    let (Some(sel), Some(most)) = (p.selectivity, p.stoichiometric_max) else {
        return format!("no selectivity: a co-product, not the principal product of a route from {r}");
    };
    let mut t = format!("selectivity {} % (mol per mol {r} consumed", sig(sel * 100.0, 4));
    if sel > most * (1.0 + 1e-6) {
        let _ = write!(
            t,
            "; above the stoichiometric {} %: it also forms by routes that do not start from {r}",
            sig(most * 100.0, 4)
        );
    } else if (most - 1.0).abs() > 1e-9 {
        let _ = write!(t, "; the stoichiometry allows up to {} %", sig(most * 100.0, 4));
    }
    t.push(')');
    t
}

pub use super::sweep::{SweepAxis, selectivity_svg, sweep_csv, sweep_svg, sweep_text};

/// Format a measured value with its uncertainty and unit.
pub fn measured(m: &Measured, unit: &str) -> String {
    // A photon flux, a power or an amount in its display unit (the display rule); others as given.
    let ladder: Option<&display::Ladder> = match unit {
        "einstein/s" => Some(&display::PHOTON_FLUX),
        "W" => Some(&display::POWER),
        "mol" => Some(&display::AMOUNT),
        _ => None,
    };
    let (f, unit) = ladder.map_or((1.0, unit), |l| display::pick(m.value, l));
    if m.sigma > 0.0 {
        format!(
            "{} ± {} {unit} ({} %)",
            sig(m.value / f, 5),
            sig(m.sigma / f, 2),
            sig(m.relative() * 100.0, 2)
        )
    } else {
        format!("{} {unit}", sig(m.value / f, 6))
    }
}

/// A `[[light]]` block that pastes into a network file: `source`'s kind and shape with the
/// photon flux given, the uncertainty and the origin as comments (the block itself is written by
/// [`file::write::light_block`](crate::file::write::light_block)).
pub fn light_block(name: &str, kind: &LightKind, window: Option<(f64, f64)>, flux: &Measured, origin: &str) -> String {
    let mut comments = vec![origin.to_string()];
    if flux.sigma > 0.0 {
        comments.push(format!(
            "photon flux {} einstein/s, standard uncertainty {} einstein/s ({} %)",
            sig(flux.value, 6),
            sig(flux.sigma, 2),
            sig(flux.relative() * 100.0, 2)
        ));
    }
    crate::file::write::light_block(&crate::file::write::LightBlock {
        comments,
        name,
        kind,
        window,
        photon_flux: flux.value,
    })
}

/// The ferrioxalate result as text.
pub fn ferrioxalate_text(
    r: &FluxResult,
    m: &crate::plan::actinometry::Ferrioxalate,
    yield_note: &str,
    eps_note: &str,
) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "ferrioxalate actinometry at {} nm", sig(m.wavelength * 1e9, 5));
    let _ = writeln!(
        o,
        "  quantum yield of Fe2+: Φ = {} ({yield_note})",
        measured(&m.quantum_yield, "").trim_end()
    );
    let _ = writeln!(o, "  ε(510 nm) of Fe(phen)3 2+: {eps_note}");
    let _ = writeln!(
        o,
        "  n(Fe2+) = ΔA · V_total / (ε · l) · V_irradiated / V_aliquot = {}",
        measured(&r.moles, "mol")
    );
    let _ = writeln!(
        o,
        "  photon flux q = n / (Φ · t · f) = {}",
        measured(&r.photon_flux, "einstein/s")
    );
    let _ = writeln!(o, "  as radiant power at the wavelength: {}", measured(&r.power, "W"));
    if !r.contributions.is_empty() {
        let _ = writeln!(o, "  first-order uncertainty from (relative)");
        for (n, v) in &r.contributions {
            let _ = writeln!(o, "    {n:<24} {} %", sig(v * 100.0, 2));
        }
    }
    if !r.exact.is_empty() {
        let _ = writeln!(
            o,
            "  taken as exact (given without an uncertainty, so the uncertainty above leaves them out): {}",
            r.exact.join(", ")
        );
    }
    o
}

/// The network fit as text.
pub fn network_fit_text(fit: &NetworkFit, species: &str, step: &str) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "photon flux from the conversion of {species} by \"{step}\"");
    let _ = writeln!(
        o,
        "  light scale {} × the file's; total photon flux {}",
        measured(&fit.scale, ""),
        measured(&fit.photon_flux, "einstein/s")
    );
    let _ = writeln!(
        o,
        "  {} points, residual sum of squares {} (conversion²), {} Gauss–Newton iterations on the log of the scale",
        fit.points,
        sig(fit.rss, 3),
        fit.iterations
    );
    if fit.points < 2 {
        let _ = writeln!(
            o,
            "  one point: the flux is solved exactly and no uncertainty can be given"
        );
    } else {
        let _ = writeln!(
            o,
            "  uncertainty from the residual scatter and the slope (first order, n − 1 degrees of freedom); the \
             network's quantum yields and ε are taken as exact"
        );
    }
    o
}

/// The schedule in words.
pub fn schedule_words(s: &Schedule) -> String {
    format!("{} of light every {}", format_time(s.lit), format_time(s.period))
}

/// A light source's block from the network with a new flux.
pub fn light_block_for(src: &LightSource, flux: &Measured, origin: &str) -> String {
    let window = match src.kind {
        LightKind::Line { .. } => None,
        _ => Some(src.window),
    };
    let kind = match &src.kind {
        LightKind::Sun { scale, area } => LightKind::Sun {
            scale: scale * flux.value / src.photon_flux().max(1e-300),
            area: *area,
        },
        k => k.clone(),
    };
    // The block's photon_flux is the whole source's (the window cuts it again when read back).
    let whole = src.emitted_photon_flux / src.photon_flux().max(1e-300);
    let flux = match src.kind {
        LightKind::Sun { .. } => *flux,
        _ => Measured {
            value: flux.value * whole,
            sigma: flux.sigma * whole,
        },
    };
    light_block(&src.name, &kind, window, &flux, origin)
}

/// The closest level of an unreachable target as the target's percentage counts it (a
/// fraction), None when reached or given as a concentration.
pub fn best_fraction(plan: &Plan) -> Option<f64> {
    let u = plan.unreachable.as_ref()?;
    let x0 = plan.trajectory.states.first()?[plan.target.species];
    plan.target.as_fraction(u.best_level, x0)
}

/// [`best_fraction`] for text: " (44.2 %)", or nothing.
pub fn best_percent(plan: &Plan) -> String {
    best_fraction(plan).map_or(String::new(), |f| format!(" ({} %)", sig(100.0 * f, 3)))
}

/// When an unreachable target's closest level was reached, in words: "99 % of the way there
/// after 35.2 s" for a level that settles ([`crate::plan::SETTLED`]), "at 2 h" for a peak.
pub fn closest_when(u: &Unreachable) -> String {
    match u.why {
        Why::Photostationary | Why::Exhausted => format!(
            "{} % of the way there after {}",
            sig(100.0 * crate::plan::SETTLED, 2),
            format_time(u.best_time)
        ),
        _ => format!("at {}", format_time(u.best_time)),
    }
}

/// "a" or "an" before a number as it is read aloud: "an 80 % yield", "an 11 % yield", "an 18 %",
/// "a 90 % yield" (English usage; common practice).
fn article(number: &str) -> &'static str {
    let digits: String = number.chars().take_while(|c| c.is_ascii_digit()).collect();
    let an = digits.starts_with('8') || digits == "11" || digits == "18";
    if an { "an" } else { "a" }
}

#[cfg(test)]
mod article_tests {
    #[test]
    fn an_80_percent_yield() {
        for (n, a) in [
            ("80", "an"),
            ("8.5", "an"),
            ("11", "an"),
            ("18", "an"),
            ("90", "a"),
            ("1", "a"),
            ("0.8", "a"),
            ("110", "a"),
        ] {
            assert_eq!(super::article(n), a, "{n}");
        }
    }
}
