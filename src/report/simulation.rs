//! What a kinetics run writes: concentration and photon CSVs, the summary JSON, and plots.

use crate::kinetics::ledger::Ledger;
use crate::kinetics::{Method, Stop, Trajectory};
use crate::model::Model;
use crate::network::Network;
use crate::report::csv_out::{CsvTable, cell, opt_cell};
use crate::report::palette;
use crate::report::timeplot::{self, Curve, Frame, Quantity, TimeAxis, TimePlot};
use plotters::style::RGBColor;
use serde::Serialize;

/// The cautions every report carries.
pub const CAUTIONS: &str = "UV and intense visible light damage eyes and skin; lamps run hot; many photochemical \
feedstocks are toxic. Local regulations and institutional safety practice take precedence.";

/// Assumptions of the kinetics model, stated in every summary.
pub const ASSUMPTIONS: &str = "well-stirred cell; light enters one face and crosses the stated path length; \
absorbances add (Beer–Lambert); transients are collapsed into effective quantum yields; mass-action thermal kinetics";

/// What a run of a network with no light source assumes.
pub const ASSUMPTIONS_DARK: &str = "well-stirred solution; mass-action thermal kinetics";

/// concentrations.csv: time and every species, units in the header.
pub fn concentrations_csv(model: &Model, tr: &Trajectory) -> String {
    let mut bytes = Vec::new();
    let _ = write_concentrations_csv(model, tr, &mut bytes);
    String::from_utf8(bytes).unwrap_or_default()
}

/// [`concentrations_csv`] streamed into `w` row by row.
pub fn write_concentrations_csv(model: &Model, tr: &Trajectory, w: impl std::io::Write) -> std::io::Result<()> {
    let mut header = vec!["time (s)".to_string()];
    header.extend(model.species.iter().map(|n| format!("{n} (mol/L)")));
    let mut t = CsvTable::to_writer(w, header);
    for (time, y) in tr.times.iter().zip(&tr.states) {
        t.row(std::iter::once(cell(*time)).chain(y[..model.n_species()].iter().map(|v| cell(*v))));
    }
    t.flush()
}

/// photons.csv: cumulative photons (einstein) incident, absorbed by each absorber,
/// background, transmitted, and per outcome; and photons per molecule of each product reached
/// through a photochemical step (thermal co-products have no photon cost).
pub fn photons_csv(model: &Model, tr: &Trajectory) -> String {
    let mut bytes = Vec::new();
    let _ = write_photons_csv(model, tr, &mut bytes);
    String::from_utf8(bytes).unwrap_or_default()
}

/// [`photons_csv`] streamed into `w` row by row.
pub fn write_photons_csv(model: &Model, tr: &Trajectory, w: impl std::io::Write) -> std::io::Result<()> {
    let mut header = vec!["time (s)".to_string(), "incident (einstein)".to_string()];
    for a in &model.absorbers {
        header.push(format!("absorbed by {} (einstein)", model.species[*a]));
    }
    header.push("background (einstein)".into());
    header.push("transmitted (einstein)".into());
    for o in &model.outcomes {
        header.push(format!(
            "{}{} (einstein)",
            o.label,
            if o.returns { " [return]" } else { "" }
        ));
    }
    for p in model.photoproducts() {
        header.push(format!("photons per {} (1)", model.species[p]));
    }
    let mut t = CsvTable::to_writer(w, header);
    for (k, (time, y)) in tr.times.iter().zip(&tr.states).enumerate() {
        let l = tr.ledger(model, k);
        let mut row = vec![cell(*time), cell(l.incident)];
        row.extend(l.by_absorber.iter().map(|a| cell(a.absorbed)));
        let bg = l.background();
        let tr_ = l.transmitted();
        row.push(cell(bg));
        row.push(cell(tr_));
        row.extend((0..model.outcomes.len()).map(|o| cell(y[tr.layout.outcome(o)] * model.volume)));
        row.extend(l.products.iter().map(|p| opt_cell(p.photons_per_molecule)));
        t.row(row);
    }
    t.flush()
}

/// The summary of a run, as written to summary.json.
#[derive(Debug, Serialize)]
pub struct Summary {
    /// Network name.
    pub network: String,
    /// True for an invented scenario.
    pub invented: bool,
    /// photoledger version.
    pub version: String,
    /// End time reached, s.
    pub end_time_s: f64,
    /// How the run stopped.
    pub stopped_by: String,
    /// Integrator, and why it was chosen.
    pub method: MethodSummary,
    /// Final concentrations, mol/L, by species.
    pub final_concentrations_mol_per_l: Vec<(String, f64)>,
    /// Volume of the solution, L: amounts in mol (the ledger's `formed`) are concentrations
    /// times it, and their round-off limit is `method.atol` times it.
    pub volume_l: f64,
    /// The unit of every photon amount in `photons`.
    pub photon_unit: String,
    /// The photon ledger at the end (amounts in einstein).
    pub photons: Ledger,
    /// Runs repeated with tighter tolerances because the one before gave a concentration or
    /// photon count below zero beyond the tolerance (`kinetics::check`), first to last.
    pub retries: Vec<RetrySummary>,
    /// Species formed only where they already are that fell to within the absolute tolerance
    /// of zero and grew back (`kinetics::regrowth`): the course after that is not resolved.
    pub unresolved_regrowth: Vec<RegrowthSummary>,
    /// What the floors took as zero (`model::floor`): lights under the light floor, thermal
    /// steps under the rate floor.
    pub floored: FlooredSummary,
    /// The daily light schedule the run followed (None: the light was on throughout).
    pub light_schedule: Option<LightSchedule>,
    /// True when a sunlight source shone around the clock (no schedule, no night): said in the
    /// text, since a day has night.
    pub sun_around_the_clock: bool,
    /// Model assumptions.
    pub assumptions: String,
    /// Safety cautions.
    pub cautions: String,
}

/// A run repeated with tighter tolerances.
#[derive(Debug, Serialize)]
pub struct RetrySummary {
    /// Relative tolerance of the repeated run.
    pub rtol: f64,
    /// Absolute tolerance of the repeated run, mol/L.
    pub atol: f64,
    /// What the run before gave, in words.
    pub because: String,
}

/// A self-made species that grew back from within the tolerance of zero.
#[derive(Debug, Serialize)]
pub struct RegrowthSummary {
    /// The species.
    pub species: String,
    /// When it came within the floor (the absolute tolerance, or one molecule in the sample when
    /// that is larger), s.
    pub entered_time_s: f64,
    /// Whether it was within the floor from the start.
    pub started_within: bool,
    /// Whether the floor was at most ten molecules in the sample: no tolerance then helps.
    pub few_molecules: bool,
    /// When it was lowest, s.
    pub low_time_s: f64,
    /// Its lowest value, mol/L.
    pub low_mol_per_l: f64,
    /// When it was back above a thousand times the absolute tolerance, s.
    pub regrown_time_s: f64,
    /// Its value then, mol/L.
    pub regrown_mol_per_l: f64,
    /// What it means and what to do, in words.
    pub says: String,
}

/// Lights and thermal steps taken as zero because they are under their floors.
#[derive(Debug, Serialize)]
pub struct FlooredSummary {
    /// Light sources whose photon flux is under `light_floor_einstein_per_s` (dark).
    pub lights: Vec<String>,
    /// Thermal steps (each direction) whose rate is under `rate_floor_per_s`.
    pub thermal: Vec<String>,
    /// The light floor, einstein/s: one photon in the age of the universe.
    pub light_floor_einstein_per_s: f64,
    /// The rate floor, s⁻¹, as a pseudo-first-order rate at 100 mol/L.
    pub rate_floor_per_s: f64,
}

impl FlooredSummary {
    /// The floors of `model`.
    pub fn of(model: &Model) -> FlooredSummary {
        FlooredSummary {
            lights: model
                .floored
                .sources
                .iter()
                .map(|&s| model.sources[s].clone())
                .collect(),
            thermal: model
                .floored
                .reactions
                .iter()
                .map(|&r| model.reactions[r].name.clone())
                .collect(),
            light_floor_einstein_per_s: crate::model::floor::LIGHT_FLOOR,
            rate_floor_per_s: crate::model::floor::RATE_FLOOR,
        }
    }

    /// One line for the text summary, or None when the floors took nothing.
    pub fn line(&self) -> Option<String> {
        let mut parts = Vec::new();
        if !self.lights.is_empty() {
            parts.push(format!(
                "light {} taken as none (under {:.1e} einstein/s: fewer than one photon in the age of the universe)",
                quoted(&self.lights),
                self.light_floor_einstein_per_s
            ));
        }
        if !self.thermal.is_empty() {
            parts.push(format!(
                "thermal {} taken as not running (under {:e} s⁻¹ at 100 mol/L: less than 1e-12 converted in the age of the universe)",
                quoted(&self.thermal),
                self.rate_floor_per_s
            ));
        }
        (!parts.is_empty()).then(|| parts.join("; "))
    }
}

fn quoted(names: &[String]) -> String {
    names.iter().map(|n| format!("\"{n}\"")).collect::<Vec<_>>().join(", ")
}

/// A light schedule in the summary: on for the first `lit_per_period_s` of every `period_s`.
#[derive(Debug, Serialize)]
pub struct LightSchedule {
    /// Length of one cycle, s (86400 for a day).
    pub period_s: f64,
    /// Lit time at the start of each cycle, s.
    pub lit_per_period_s: f64,
    /// Time the light was on over the whole run, s.
    pub lit_time_s: f64,
}

/// Integrator details in the summary.
#[derive(Debug, Serialize)]
pub struct MethodSummary {
    /// "BDF" or "Dop853": the integrator that finished the run.
    pub name: String,
    /// Why.
    pub reason: String,
    /// Which integrator took which stretch of time, in order.
    pub segments: Vec<SegmentSummary>,
    /// Accepted steps.
    pub steps: usize,
    /// Rejected steps.
    pub rejected_steps: usize,
    /// Right-hand-side evaluations.
    pub rhs_evaluations: usize,
    /// Jacobian-vector products.
    pub jacobian_products: usize,
    /// Iteration-matrix (LU) factorisations.
    pub jacobian_setups: usize,
    /// Iteration matrices answered with kept factors and a scaled Newton correction.
    pub lu_kept: usize,
    /// Analytic Jacobian evaluations.
    pub jacobian_evaluations: usize,
    /// Relative and absolute tolerances.
    pub rtol: f64,
    /// Absolute tolerance, mol/L.
    pub atol: f64,
}

/// One stretch of a run and the integrator that took it.
#[derive(Debug, Serialize)]
pub struct SegmentSummary {
    /// "BDF" or "Dop853".
    pub method: String,
    /// Start, s.
    pub from_s: f64,
    /// End, s.
    pub to_s: f64,
    /// Accepted steps in the stretch.
    pub steps: usize,
    /// Right-hand-side evaluations in the stretch.
    pub rhs_evaluations: usize,
}

/// The short name of an integrator that ran.
pub fn method_name(m: Method) -> &'static str {
    match m {
        Method::Dop853 => "Dop853",
        _ => "BDF",
    }
}

/// Build the summary of a run.
pub fn summary(net: &Network, model: &Model, tr: &Trajectory, rtol: f64, atol: f64) -> Summary {
    let t = *tr.times.last().unwrap_or(&0.0);
    let y = tr.last();
    Summary {
        network: net.about.name.clone(),
        invented: net.about.invented,
        version: env!("CARGO_PKG_VERSION").to_string(),
        end_time_s: t,
        stopped_by: match tr.stop {
            Stop::EndTime => "end time".into(),
            Stop::Enough(te) => format!("stopped at {}", crate::units::format_time(te)),
            Stop::Event(te) => format!("stop condition met at {}", crate::units::format_time(te)),
        },
        method: MethodSummary {
            name: method_name(tr.method).into(),
            reason: tr.method_reason.clone(),
            segments: tr
                .segments
                .iter()
                .map(|g| SegmentSummary {
                    method: method_name(g.method).into(),
                    from_s: g.from,
                    to_s: g.to,
                    steps: g.steps,
                    rhs_evaluations: g.rhs,
                })
                .collect(),
            steps: tr.counts.steps,
            rejected_steps: tr.counts.rejected,
            rhs_evaluations: tr.counts.rhs,
            jacobian_products: tr.counts.jacobian_products,
            jacobian_setups: tr.counts.jacobian_setups,
            lu_kept: tr.counts.lu_kept,
            jacobian_evaluations: tr.counts.jacobians,
            // a retry's tighter tolerances when there was one (`retries` says why)
            rtol: tr.retries.last().map_or(rtol, |r| r.rtol),
            atol: tr.retries.last().map_or(atol, |r| r.atol),
        },
        final_concentrations_mol_per_l: model.species.iter().cloned().zip(y.iter().copied()).collect(),
        volume_l: model.volume,
        photon_unit: "einstein".into(),
        photons: tr.ledger(model, tr.times.len() - 1),
        retries: tr
            .retries
            .iter()
            .map(|r| RetrySummary {
                rtol: r.rtol,
                atol: r.atol,
                because: r.because.to_string(),
            })
            .collect(),
        unresolved_regrowth: tr
            .regrowth
            .iter()
            .map(|r| RegrowthSummary {
                species: r.species.clone(),
                entered_time_s: r.entered,
                started_within: r.started_within,
                few_molecules: r.few_molecules(),
                low_time_s: r.low_time,
                low_mol_per_l: r.low,
                regrown_time_s: r.high_time,
                regrown_mol_per_l: r.high,
                says: r.to_string(),
            })
            .collect(),
        floored: FlooredSummary::of(model),
        light_schedule: tr.schedule.map(|s| LightSchedule {
            period_s: s.period,
            lit_per_period_s: s.lit,
            lit_time_s: tr.lit_time(t),
        }),
        sun_around_the_clock: tr.schedule.is_none()
            && net
                .lights
                .iter()
                .enumerate()
                .any(|(i, l)| matches!(l.kind, crate::light::LightKind::Sun { .. }) && model.source_flux(i) > 0.0),
        assumptions: if net.lights.is_empty() {
            ASSUMPTIONS_DARK
        } else {
            ASSUMPTIONS
        }
        .into(),
        // No lamp, no lamp caution (the README's rule: a command that involves a lamp).
        cautions: if net.lights.is_empty() {
            String::new()
        } else {
            CAUTIONS.into()
        },
    }
}

/// One decimated curve per series: `values(k)` gives the value of every series at output `k`,
/// computed once per output time (a million output times are never held twice).
fn curves_of(
    times: &[f64],
    axis: TimeAxis,
    styles: Vec<(String, RGBColor, usize)>,
    mut values: impl FnMut(usize, &mut Vec<f64>),
) -> Vec<Curve> {
    let frame = Frame::of(times, axis);
    let mut ds: Vec<_> = styles.iter().map(|_| frame.decimator()).collect();
    let mut row = Vec::with_capacity(styles.len());
    for (k, t) in times.iter().enumerate() {
        row.clear();
        values(k, &mut row);
        for (d, v) in ds.iter_mut().zip(&row) {
            d.push(*t, *v);
        }
    }
    styles
        .into_iter()
        .zip(ds)
        .map(|((name, colour, dash), d)| Curve {
            name,
            colour,
            dash,
            points: d.finish(),
        })
        .collect()
}

/// The concentrations plot of a run, every species in its network colour.
pub fn concentrations_plot(net: &Network, model: &Model, tr: &Trajectory, axis: TimeAxis) -> TimePlot {
    // Round-off within the run's absolute tolerance of zero is drawn at 0: it neither dips
    // below the axis nor, when a curve is all round-off, picks the axis unit (the CSV keeps it).
    // A species that dwarfs the rest (a solvent) gets a panel of its own (`timeplot`).
    let zero = tr.zero_within();
    let n = model.n_species();
    let styles = (0..n)
        .map(|i| (model.species[i].clone(), palette::species(i), palette::species_dash(i)))
        .collect();
    let curves = curves_of(&tr.times, axis, styles, |k, row| {
        row.extend(tr.states[k][..n].iter().map(|c| zero.shown(*c)))
    });
    TimePlot {
        title: format!("{}: concentrations", net.about.name),
        quantity: Quantity::Concentration,
        axis,
        curves,
        notes: Vec::new(),
        target: None,
    }
}

/// concentrations.svg.
pub fn concentrations_svg(net: &Network, model: &Model, tr: &Trajectory, axis: TimeAxis) -> String {
    timeplot::render(&concentrations_plot(net, model, tr, axis))
}

/// The concentrations of a plan's run with its target: the level drawn across, and the time it
/// is reached (`time`, s) marked.
pub fn plan_svg(
    net: &Network,
    model: &Model,
    tr: &Trajectory,
    target: &crate::plan::target::Target,
    time: Option<f64>,
) -> String {
    let axis = TimeAxis::choose(false, &tr.times, &tr.states, model.n_species());
    let mut p = concentrations_plot(net, model, tr, axis);
    p.title = format!("{}: irradiation to the target", net.about.name);
    p.target = Some(timeplot::Target {
        curve: target.species,
        level: target.level,
        time,
        text: target.text.clone(),
    });
    timeplot::render(&p)
}

/// photons.svg: cumulative photons incident, absorbed by each species (in its colour),
/// background and transmitted.
pub fn photons_svg(net: &Network, model: &Model, tr: &Trajectory, axis: TimeAxis) -> String {
    let mut styles = vec![("incident".to_string(), palette::rgb(palette::INK_HEX), 0)];
    for a in &model.absorbers {
        styles.push((
            format!("absorbed by {}", model.species[*a]),
            palette::species(*a),
            palette::species_dash(*a),
        ));
    }
    styles.push(("background".into(), palette::rgb(palette::GREY_HEX), 0));
    styles.push(("transmitted".into(), palette::rgb(palette::TAN_HEX), 0));
    let curves = curves_of(&tr.times, axis, styles, |k, row| {
        let l: Ledger = tr.ledger(model, k);
        row.push(l.incident);
        row.extend(l.by_absorber.iter().map(|a| a.absorbed));
        row.push(l.background());
        row.push(l.transmitted());
    });
    timeplot::render(&TimePlot {
        title: format!("{}: where the photons went", net.about.name),
        quantity: Quantity::Photons,
        axis,
        curves,
        notes: Vec::new(),
        target: None,
    })
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::overrides::Overrides;
    use std::path::Path;

    /// A bundled network run for `until` s: (network, model, trajectory).
    fn run(until: f64) -> (Network, Model, Trajectory) {
        run_of("photoswitch.toml", until)
    }

    /// Bundled network `name` run for `until` s.
    fn run_of(name: &str, until: f64) -> (Network, Model, Trajectory) {
        let path = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks").join(name);
        let text = std::fs::read_to_string(&path).expect("bundled network");
        let loaded = crate::file::parse_text(&path, text).expect("parses");
        let net = crate::network::build(&loaded, &Overrides::none()).expect("builds");
        let model = Model::compile(&net);
        let tr = crate::kinetics::simulate(&model, &crate::kinetics::Options::until(until), &mut |_| {}).expect("runs");
        (net, model, tr)
    }

    #[test]
    fn the_plot_axis_and_the_summary_table_of_one_run_use_the_same_units() {
        // A 2 h run: the old axis rule (3 h and above for h) drew it in min while the table said h.
        let (net, model, tr) = run(7200.0);
        let svg = concentrations_svg(&net, &model, &tr, TimeAxis::Linear);
        let s = summary(&net, &model, &tr, 1e-6, 1e-12);
        let table = crate::report::summary::run_summary(&s);
        assert!(svg.contains("time (h)"), "axis not in h");
        assert!(table.contains(": 2 h ("), "{table}");
        // Concentrations: the network table writes the 50 µM start in the axis unit.
        let start = crate::report::summary::network_summary(&net);
        assert!(start.contains("50 µM"), "{start}");
        assert!(svg.contains("concentration (µM)"), "axis not in µM");
    }

    #[test]
    fn round_off_is_drawn_at_zero_and_never_picks_the_axis_unit() {
        // The photoswitch run with every concentration replaced by round-off inside the run's
        // absolute tolerance (1e-12 mol/L), alternating in sign, as a species that never forms
        // leaves it: the plot must be the plot of zeros, not curves on a fM axis below zero.
        let (net, model, mut tr) = run(600.0);
        let n = model.n_species();
        let mut zeros = tr.clone();
        for (k, (y, z)) in tr.states.iter_mut().zip(zeros.states.iter_mut()).enumerate() {
            for i in 0..n {
                y[i] = if (k + i) % 2 == 0 { 4e-13 } else { -7e-13 };
                z[i] = 0.0;
            }
        }
        let noisy = concentrations_svg(&net, &model, &tr, TimeAxis::Linear);
        assert!(!noisy.contains("fM"), "round-off picked the axis unit");
        assert_eq!(noisy, concentrations_svg(&net, &model, &zeros, TimeAxis::Linear));
        // The CSV keeps the raw numbers.
        assert!(concentrations_csv(&model, &tr).contains("-7e-13"));
    }

    #[test]
    fn a_product_formed_within_round_off_has_no_photon_cost() {
        // A photoproduct whose amount is round-off (1e-18 mol/L in 3 mL, inside atol 1e-12
        // mol/L): its "photons per molecule" would be a ratio of noise (~1e10).
        let (net, model, tr) = run_of("photoswitch-side-product.toml", 600.0);
        let mut s = summary(&net, &model, &tr, 1e-6, 1e-12);
        let real = crate::report::summary::run_summary(&s);
        assert!(real.contains("photons absorbed per molecule (apparent Φ"), "{real}");
        let p = s.photons.products.first_mut().expect("a photoproduct");
        p.formed = 1e-18 * s.volume_l;
        p.photons_per_molecule = Some(s.photons.absorbed / p.formed);
        p.apparent_quantum_yield = Some(p.formed / s.photons.absorbed);
        let name = p.species.clone();
        let text = crate::report::summary::run_summary(&s);
        let line = text
            .lines()
            .skip_while(|l| !l.starts_with("products reached"))
            .find(|l| l.trim_start().starts_with(&name))
            .expect(&text);
        assert!(line.ends_with("none formed"), "{line}");
    }

    /// The stroke colours of an SVG as upper-case hex, in order of first use.
    fn strokes(svg: &str) -> Vec<String> {
        let mut out: Vec<String> = Vec::new();
        for (i, _) in svg.match_indices("stroke=\"#") {
            let c = svg[i + 9..i + 15].to_uppercase();
            if c != "000000" && !out.contains(&c) {
                out.push(c);
            }
        }
        out
    }

    #[test]
    fn a_species_has_one_colour_in_every_plot_of_its_network() {
        // The side-product network: the species of index 2 is drawn in its own colour in the
        // concentrations plot, and the absorbers in the photons plot keep theirs.
        let (net, model, tr) = run_of("photoswitch-side-product.toml", 600.0);
        let conc = strokes(&concentrations_svg(&net, &model, &tr, TimeAxis::Linear));
        let phot = strokes(&photons_svg(&net, &model, &tr, TimeAxis::Linear));
        for i in 0..model.n_species() {
            let hex = palette::species_hex(i).trim_start_matches('#').to_uppercase();
            assert!(conc.contains(&hex), "species {i} not in its colour");
        }
        for a in &model.absorbers {
            let hex = palette::species_hex(*a).trim_start_matches('#').to_uppercase();
            assert!(phot.contains(&hex), "absorber {a} not in its species colour");
        }
        // The HTML ledger uses the same table.
        assert_eq!(palette::species(1), palette::rgb(palette::species_hex(1)));
    }

    #[test]
    fn a_plan_plot_marks_the_target_level_and_when_it_is_reached() {
        let (net, model, tr) = run(600.0);
        let target = crate::plan::target::parse("Z-azo > 20 µM", &model).expect("target");
        let svg = plan_svg(&net, &model, &tr, &target, Some(18.6));
        assert!(svg.contains(">\ntarget\n</text>"), "no target in the legend");
        assert!(svg.contains("reached at 18.6 s"), "no time reached");
        let none = plan_svg(&net, &model, &tr, &target, None);
        assert!(none.contains("not reached in the run"));
    }

    #[test]
    fn the_two_hour_photoswitch_run_is_drawn_on_a_log_axis() {
        // The README's run: a step at t = 0 on a linear axis.
        let (_, model, tr) = run(7200.0);
        assert_eq!(
            TimeAxis::choose(false, &tr.times, &tr.states, model.n_species()),
            TimeAxis::Automatic
        );
        let (_, model, tr) = run(20.0);
        assert_eq!(
            TimeAxis::choose(false, &tr.times, &tr.states, model.n_species()),
            TimeAxis::Linear
        );
    }
}
