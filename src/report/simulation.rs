//! What a kinetics run writes: concentration and photon CSVs, the summary JSON, and plots.

use crate::kinetics::ledger::Ledger;
use crate::kinetics::{Method, Stop, Trajectory};
use crate::model::Model;
use crate::network::Network;
use crate::report::csv_out::{CsvTable, opt_sci, sci};
use plotters::prelude::*;
use serde::Serialize;

/// The cautions every report carries.
pub const CAUTIONS: &str = "UV and intense visible light damage eyes and skin; lamps run hot; many photochemical \
feedstocks are toxic. Local regulations and institutional safety practice take precedence.";

/// Assumptions of the kinetics model, stated in every summary.
pub const ASSUMPTIONS: &str = "well-stirred cell; light enters one face and crosses the stated path length; \
absorbances add (Beer–Lambert); transients are collapsed into effective quantum yields; mass-action thermal kinetics";

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
        t.row(std::iter::once(sci(*time)).chain(y[..model.n_species()].iter().map(|v| sci(*v))));
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
        let mut row = vec![sci(*time), sci(l.incident)];
        row.extend(l.by_absorber.iter().map(|a| sci(a.absorbed)));
        let bg = l.background();
        let tr_ = l.transmitted();
        row.push(sci(bg));
        row.push(sci(tr_));
        row.extend((0..model.outcomes.len()).map(|o| sci(y[tr.layout.outcome(o)] * model.volume)));
        row.extend(l.products.iter().map(|p| opt_sci(p.photons_per_molecule)));
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
    /// What the floors took as zero (`model::floor`): lights under the light floor, thermal
    /// steps under the rate floor.
    pub floored: FlooredSummary,
    /// The daily light schedule the run followed (None: the light was on throughout).
    pub light_schedule: Option<LightSchedule>,
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
        floored: FlooredSummary::of(model),
        light_schedule: tr.schedule.map(|s| LightSchedule {
            period_s: s.period,
            lit_per_period_s: s.lit,
            lit_time_s: tr.lit_time(t),
        }),
        assumptions: ASSUMPTIONS.into(),
        cautions: CAUTIONS.into(),
    }
}

pub(crate) const PALETTE: [RGBColor; 10] = [
    RGBColor(31, 119, 180),
    RGBColor(214, 39, 40),
    RGBColor(44, 160, 44),
    RGBColor(148, 103, 189),
    RGBColor(255, 127, 14),
    RGBColor(23, 190, 207),
    RGBColor(140, 86, 75),
    RGBColor(227, 119, 194),
    RGBColor(127, 127, 127),
    RGBColor(188, 189, 34),
];

/// A line plot of several series against time, as SVG text.
fn line_plot(title: &str, y_label: &str, times: &[f64], series: &[(String, Vec<f64>)], log_time: bool) -> String {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 560)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let t_end = times.iter().cloned().fold(0.0, f64::max).max(1e-30);
        let (tu, tname) = crate::units::display::time(t_end);
        let ymax = series.iter().flat_map(|s| s.1.iter()).cloned().fold(0.0, f64::max);
        let (yscale, yunit) = scale_for(ymax, y_label);
        let ytop = if ymax > 0.0 { ymax / yscale * 1.05 } else { 1.0 };
        let draw =
            |root: &DrawingArea<SVGBackend, plotters::coord::Shift>| -> Result<(), Box<dyn std::error::Error + '_>> {
                let mut b = ChartBuilder::on(root);
                b.caption(title, ("sans-serif", 22))
                    .margin(16)
                    .x_label_area_size(48)
                    .y_label_area_size(80);
                let xs: Vec<f64> = times.iter().map(|t| t / tu).collect();
                let pts =
                    |s: &Vec<f64>| -> Vec<(f64, f64)> { xs.iter().zip(s).map(|(x, y)| (*x, y / yscale)).collect() };
                // The same mesh, lines and legend on either time axis.
                macro_rules! lines {
                    ($chart:expr, $x_desc:expr, $keep:expr) => {{
                        let mut c = $chart;
                        c.configure_mesh()
                            .x_desc($x_desc)
                            .y_desc(yunit.clone())
                            .label_style(("sans-serif", 15))
                            .draw()?;
                        for (i, (name, s)) in series.iter().enumerate() {
                            let col = PALETTE[i % PALETTE.len()];
                            let p: Vec<(f64, f64)> = pts(s).into_iter().filter($keep).collect();
                            c.draw_series(LineSeries::new(p, col.stroke_width(2)))?
                                .label(name.clone())
                                .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], col.stroke_width(3)));
                        }
                        c.configure_series_labels()
                            .background_style(WHITE.mix(0.85))
                            .border_style(BLACK)
                            .label_font(("sans-serif", 15))
                            .draw()?;
                    }};
                }
                let x1 = xs.iter().cloned().fold(0.0, f64::max).max(1e-30);
                if log_time {
                    let x0 = xs.iter().cloned().filter(|x| *x > 0.0).fold(f64::INFINITY, f64::min);
                    lines!(
                        b.build_cartesian_2d((x0..x1).log_scale(), 0.0..ytop)?,
                        format!("time ({tname}, log scale)"),
                        |p: &(f64, f64)| p.0 > 0.0
                    );
                } else {
                    lines!(
                        b.build_cartesian_2d(0.0..x1, 0.0..ytop)?,
                        format!("time ({tname})"),
                        |_: &(f64, f64)| true
                    );
                }
                Ok(())
            };
        let _ = draw(&root);
        let _ = root.present();
    }
    svg
}

/// A scale factor and axis label for values up to `max` of a quantity named `label`
/// ("concentration" in mol/L, otherwise photons in einstein).
fn scale_for(max: f64, label: &str) -> (f64, String) {
    let (name, (f, u)) = if label == "concentration" {
        ("concentration", crate::units::display::concentration(max))
    } else {
        ("photons", crate::units::display::photons(max))
    };
    (f, format!("{name} ({u})"))
}

/// concentrations.svg.
pub fn concentrations_svg(net: &Network, model: &Model, tr: &Trajectory, log_time: bool) -> String {
    // Solvent-like species (1 M or more at the start) would flatten every other curve.
    // Round-off within the run's absolute tolerance of zero is drawn at 0: it neither dips
    // below the axis nor, when a curve is all round-off, picks the axis unit (the CSV keeps it).
    let zero = tr.zero_within();
    let series: Vec<(String, Vec<f64>)> = (0..model.n_species())
        .filter(|&i| model.initial[i] < 1.0)
        .map(|i| {
            (
                model.species[i].clone(),
                tr.series(i).into_iter().map(|c| zero.shown(c)).collect(),
            )
        })
        .collect();
    line_plot(
        &format!("{}: concentrations", net.about.name),
        "concentration",
        &tr.times,
        &series,
        log_time,
    )
}

/// photons.svg: cumulative photons incident, absorbed by each species, background and transmitted.
pub fn photons_svg(net: &Network, model: &Model, tr: &Trajectory, log_time: bool) -> String {
    let ledgers: Vec<Ledger> = (0..tr.times.len()).map(|k| tr.ledger(model, k)).collect();
    let mut series = vec![(
        "incident".to_string(),
        ledgers.iter().map(|l| l.incident).collect::<Vec<_>>(),
    )];
    for (k, a) in model.absorbers.iter().enumerate() {
        series.push((
            format!("absorbed by {}", model.species[*a]),
            ledgers.iter().map(|l| l.by_absorber[k].absorbed).collect(),
        ));
    }
    series.push(("background".into(), ledgers.iter().map(|l| l.background()).collect()));
    series.push(("transmitted".into(), ledgers.iter().map(|l| l.transmitted()).collect()));
    line_plot(
        &format!("{}: where the photons went", net.about.name),
        "photons",
        &tr.times,
        &series,
        log_time,
    )
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
        let svg = concentrations_svg(&net, &model, &tr, false);
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
        let noisy = concentrations_svg(&net, &model, &tr, false);
        assert!(!noisy.contains("fM"), "round-off picked the axis unit");
        assert_eq!(noisy, concentrations_svg(&net, &model, &zeros, false));
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
}
