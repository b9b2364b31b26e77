//! What `fit` and `compare` write: tables, JSON, SVG of data against fits and residuals, and the
//! network file with fitted values put in.

use crate::error::Result;
use crate::file::data::Experiment;
use crate::fit::mechanism::{Curve, Free};
use crate::fit::{FitResult, lsq};
use crate::report::csv_out::{CsvTable, cell};
use crate::report::{palette, ticks};
use crate::units::display::time as time_unit;
use crate::units::sig;
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use serde_json::json;
use std::fmt::Write;

/// A value in a readable unit: (scaled value, unit text), by `units::display` (the one rule).
pub use crate::units::display::readable;
use crate::units::display::{EnergyUnit, readable_in};

/// The value as `--set`/file text in a readable unit (energies in `family`), 7 significant figures.
pub fn value_text(f: &Free, v: f64, family: EnergyUnit) -> String {
    let (x, u) = readable_in(f.unit, v, family);
    if u.is_empty() {
        sig(x, 7)
    } else {
        format!("{} {u}", sig(x, 7))
    }
}

/// A correlation coefficient as shown: "+0.123", or "—" where there is none (a parameter held on
/// the edge of its range).
pub fn correlation_text(c: f64) -> String {
    if c.is_finite() {
        format!("{c:+.3}")
    } else {
        "—".to_string()
    }
}

/// The fit as a text table: values ± se, 95 % intervals, correlation, χ², warnings.
pub fn fit_text(network: &str, r: &FitResult) -> String {
    let s = &r.solution;
    let mut o = String::new();
    let _ = writeln!(o, "fit      {network}");
    let _ = writeln!(
        o,
        "data     {} observations, {} free parameters, {} degrees of freedom{}",
        r.n,
        r.free.len(),
        s.dof,
        if r.weighted {
            ""
        } else {
            " (some without sd: weight 1 in their unit)"
        }
    );
    let _ = writeln!(
        o,
        "search   {} ({} evaluations, {}); {} start(s), {} ended with a χ²",
        s.termination,
        s.evaluations,
        r.derivatives.describe(),
        r.starts.len(),
        r.starts.iter().filter(|x| x.chi2.is_ok()).count()
    );
    if let Some(stop) = &r.stopped {
        let _ = writeln!(o, "\n{}", not_converged_text(stop, s.chi2));
    }
    let w = r.free.iter().map(|f| f.key.chars().count()).max().unwrap_or(8).max(9);
    let _ = writeln!(
        o,
        "\n{:<w$}  {:>14}  {:>12}  {:>31}  unit",
        "parameter", "value", "± se", "95 % interval"
    );
    for (i, f) in r.free.iter().enumerate() {
        let (v, u) = readable_in(f.unit, s.values[i], r.energy_unit);
        let scale = if s.values[i] != 0.0 { v / s.values[i] } else { 1.0 };
        let (lo, hi) = s.intervals[i];
        let (se, interval) = if s.standard_errors[i].is_finite() {
            (
                sig(s.standard_errors[i] * scale, 3),
                format!("[{}, {}]", sig(lo * scale, 5), sig(hi * scale, 5)),
            )
        } else {
            ("—".to_string(), "on the edge of its range".to_string())
        };
        let _ = writeln!(o, "{:<w$}  {:>14}  {:>12}  {:>31}  {u}", f.key, sig(v, 6), se, interval,);
    }
    let _ = writeln!(
        o,
        "\n95 % intervals are taken on the fitting scale and transformed back, so they stay in range \
         (± se is the natural-scale, delta-method one):"
    );
    for f in &r.free {
        let how = match f.transform {
            lsq::Transform::Identity => "interval on the natural scale (value ± q se)".to_string(),
            t => format!("interval from the {} scale", t.scale_name()),
        };
        let _ = writeln!(o, "  {:<w$}  {how}", f.key);
    }
    let _ = writeln!(
        o,
        "\nstart values: {}",
        r.free
            .iter()
            .map(|f| format!("{} = {}", f.key, value_text(f, f.start, r.energy_unit)))
            .collect::<Vec<_>>()
            .join("; ")
    );
    if r.free.len() > 1 {
        let _ = writeln!(o, "\ncorrelation");
        for i in 0..r.free.len() {
            let row: Vec<String> = (0..r.free.len())
                .map(|j| format!("{:>6}", correlation_text(s.correlation[(i, j)])))
                .collect();
            let _ = writeln!(o, "  {:<w$}  {}", r.free[i].key, row.join("  "));
        }
        if s.correlation.iter().any(|c| !c.is_finite()) {
            let _ = writeln!(
                o,
                "  (— : a parameter held on the edge of its range has no correlation)"
            );
        }
    }
    let _ = writeln!(o, "\nχ² = {}, reduced χ² = {}", sig(s.chi2, 6), sig(s.reduced_chi2, 4));
    let _ = writeln!(o, "{}", r.errors.describe());
    let _ = writeln!(o, "{}", s.interval_method().describe());
    let _ = writeln!(o, "AICc = {}, BIC = {}", sig(r.aicc, 6), sig(r.bic, 6));
    let _ = writeln!(o, "\ngoodness of fit: {}", r.goodness.verdict());
    for line in r.goodness.lines() {
        let _ = writeln!(o, "  {line}");
    }
    if r.warnings.is_empty() {
        let _ = writeln!(o, "identifiability: no warnings");
    }
    for w in &r.warnings {
        let _ = writeln!(o, "warning: {w}");
    }
    let _ = writeln!(o, "\n{}", crate::report::caution_line());
    o
}

/// The message of a fit stopped before converging, with the χ² of the best point reached.
pub fn not_converged_text(stop: &lsq::Stop, chi2: f64) -> String {
    format!(
        "NOT CONVERGED: {}. The values below are the best point reached (χ² = {}), not an optimum, and \
         their errors describe that point only; raise --max-evaluations or --time-limit, or free fewer parameters.",
        stop.describe(),
        sig(chi2, 6)
    )
}

/// The goodness-of-fit checks as JSON.
fn goodness_json(g: &crate::fit::goodness::Goodness) -> serde_json::Value {
    json!({
        "model_describes_data": !g.fails(),
        "verdict": g.verdict(),
        "significance_level": crate::fit::goodness::ALPHA,
        "chi2_test": g.chi2.map(|c| json!({
            "chi2": c.chi2, "dof": c.dof, "p_upper": c.p_upper, "fails": c.fails(), "chi2_too_small": c.too_small(),
        })),
        "runs_tests": g.runs.iter().map(|t| json!({
            "experiment": t.experiment, "positive": t.positive, "negative": t.negative, "runs": t.runs,
            "expected_runs": t.expected, "p_lower": t.p_lower, "fails": t.fails(),
        })).collect::<Vec<_>>(),
        "lines": g.lines(),
    })
}

/// The fit as JSON (internal units named per parameter).
pub fn fit_json(network: &str, r: &FitResult) -> serde_json::Value {
    let s = &r.solution;
    let p = r.free.len();
    let method = s.interval_method();
    json!({
        "network": network,
        "parameters": r.free.iter().enumerate().map(|(i, f)| json!({
            "key": f.key, "unit": f.unit, "start": f.start, "value": s.values[i],
            "standard_error": s.standard_errors[i], "interval_95": [s.intervals[i].0, s.intervals[i].1],
            "interval_scale": f.transform.scale_name(),
        })).collect::<Vec<_>>(),
        "correlation": (0..p).map(|i| (0..p).map(|j| s.correlation[(i, j)]).collect::<Vec<_>>()).collect::<Vec<_>>(),
        "covariance": (0..p).map(|i| (0..p).map(|j| s.covariance[(i, j)]).collect::<Vec<_>>()).collect::<Vec<_>>(),
        "chi2": s.chi2, "reduced_chi2": s.reduced_chi2, "dof": s.dof, "observations": r.n,
        "weighted": r.weighted, "aicc": r.aicc, "bic": r.bic, "minus_two_log_likelihood": r.minus_two_log_likelihood,
        "warnings": r.warnings, "termination": s.termination, "converged": r.stopped.is_none(),
        "not_converged": r.stopped.as_ref().map(|st| not_converged_text(st, s.chi2)), "evaluations": s.evaluations, "derivatives": r.derivatives.word(),
        "goodness_of_fit": goodness_json(&r.goodness),
        "starts": r.starts.iter().map(|x| json!({"start": x.start, "chi2": x.chi2.as_ref().ok(), "failure": x.chi2.as_ref().err()})).collect::<Vec<_>>(),
        "interval_method": json!({
            "distribution": method.name(), "quantile_975": method.quantile(), "text": method.describe(),
            "dof": match method { lsq::IntervalMethod::StudentT { dof, .. } => Some(dof), _ => None },
        }),
        "standard_errors_scaled": r.errors.scale() == lsq::ErrorScale::ReducedChi2, "standard_errors": r.errors.describe(),
    })
}

/// Rows `(experiment, time s, species, measured, predicted, sd, is yield)` of the time courses.
pub type Row = (String, f64, String, f64, f64, f64, bool);

/// The rows of every time-course point with its prediction (`predicted` in experiment order).
pub fn rows(experiments: &[Experiment], predicted: &[Vec<f64>]) -> Vec<Row> {
    let mut v = Vec::new();
    for (e, p) in experiments.iter().zip(predicted) {
        for (pt, f) in e.points.iter().zip(p) {
            v.push((
                e.name.clone(),
                pt.time,
                pt.species.clone(),
                pt.value,
                *f,
                pt.sd,
                pt.is_yield,
            ));
        }
    }
    v
}

/// residuals.csv: every time-course point, measured, fitted and weighted residual.
pub fn residuals_csv(rows: &[Row]) -> String {
    let mut table = CsvTable::new([
        "experiment",
        "time (s)",
        "species",
        "measured (M or fraction)",
        "fitted (M or fraction)",
        "sd",
        "weighted residual",
    ]);
    for (e, t, s, y, f, sd, _) in rows {
        table.row([
            e.clone(),
            cell(*t),
            s.clone(),
            cell(*y),
            cell(*f),
            cell(*sd),
            cell((y - f) / sd),
        ]);
    }
    table.finish()
}

/// An end point as a line of text: what it measures and its value (± sd when given).
fn endpoint_text(e: &crate::file::data::Endpoint) -> String {
    use crate::file::data::EndpointKind as K;
    let pm = |v: String, sd: String| if e.weighted { format!("{v} ± {sd}") } else { v };
    match &e.kind {
        K::Final(s) => format!(
            "final {s} = {}",
            pm(
                crate::units::display::format_concentration(e.value),
                crate::units::display::format_concentration(e.sd)
            )
        ),
        K::Yield(s) => format!("yield of {s} = {}", pm(sig(e.value, 4), sig(e.sd, 2))),
        K::Ratio(a, b) => format!("{a} / {b} at the end = {}", pm(sig(e.value, 4), sig(e.sd, 2))),
        K::QuantumYield(s) => format!("quantum yield of {s} = {}", pm(sig(e.value, 4), sig(e.sd, 2))),
        K::ReactantQuantumYield(a, b) => format!(
            "quantum yield of {a} per photon absorbed by {b} = {}",
            pm(sig(e.value, 4), sig(e.sd, 2))
        ),
        K::Lifetime(s) => format!(
            "lifetime of {s} = {}",
            pm(
                crate::units::display::format_time(e.value),
                crate::units::display::format_time(e.sd)
            )
        ),
    }
}

/// Figure width, px, and the legend column's width.
const FIT_W: u32 = 980;
const FIT_LEGEND: u32 = 250;
/// Height of one experiment's panel, px.
const FIT_PANEL: u32 = 290;

/// The file name of a network path without folder and extension, for legends.
fn short(name: &str) -> String {
    std::path::Path::new(name)
        .file_stem()
        .map_or(name.to_string(), |s| s.to_string_lossy().to_string())
}

/// SVG of data against fitted curves, one panel per experiment with its own time axis: measured
/// points with error bars (when the file gave sd), end points measured as concentrations drawn
/// at the run's end (the others listed under the figure), each species in its network colour
/// (`species`: the network's species in order; names not in it follow). `models` holds each
/// model's curves: the first solid, the rivals (for `compare`) dashed.
pub fn data_svg(
    title: &str,
    experiments: &[Experiment],
    species: &[String],
    models: &[(String, Vec<Curve>)],
) -> String {
    use crate::file::data::EndpointKind;
    let mut names: Vec<String> = species.to_vec();
    let mut measured: Vec<String> = Vec::new();
    for e in experiments {
        let finals = e.endpoints.iter().filter_map(|p| match &p.kind {
            EndpointKind::Final(s) => Some(s),
            _ => None,
        });
        for s in e.points.iter().map(|p| &p.species).chain(finals) {
            if !names.contains(s) {
                names.push(s.clone());
            }
            if !measured.contains(s) {
                measured.push(s.clone());
            }
        }
    }
    let colour = |s: &str| palette::species(names.iter().position(|n| n == s).unwrap_or(0));
    let dash_of = |m: usize| palette::DASHES[m % palette::DASHES.len()];
    let notes: Vec<String> = experiments
        .iter()
        .flat_map(|e| {
            e.endpoints
                .iter()
                .filter(|p| !matches!(p.kind, EndpointKind::Final(_)))
                .map(move |p| format!("{}, end point: {}", e.name, endpoint_text(p)))
        })
        .collect();
    // A panel for each experiment with something to draw against time; end points of other
    // kinds are listed under the figure.
    let drawn: Vec<&Experiment> = experiments
        .iter()
        .filter(|e| !e.points.is_empty() || e.endpoints.iter().any(|p| matches!(p.kind, EndpointKind::Final(_))))
        .collect();
    let any_final = drawn
        .iter()
        .any(|e| e.endpoints.iter().any(|p| matches!(p.kind, EndpointKind::Final(_))));
    let n = drawn.len().max(1) as u32;
    let footer = if notes.is_empty() {
        0
    } else {
        10 + 20 * notes.len() as u32
    };
    let height = 46 + n * FIT_PANEL + footer;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (FIT_W, height)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let draw = || -> std::result::Result<(), Box<dyn std::error::Error + '_>> {
            let body = root.titled(title, ("sans-serif", 22))?;
            let (main, foot) = body.split_vertically(n * FIT_PANEL);
            let (plots, legend) = main.split_horizontally(FIT_W - FIT_LEGEND);
            let panels = plots.split_evenly((n as usize, 1));
            for (e, area) in drawn.iter().zip(&panels) {
                let curves: Vec<&Curve> = models
                    .iter()
                    .flat_map(|m| m.1.iter().filter(|c| c.experiment == e.name))
                    .collect();
                let t_end = e
                    .points
                    .iter()
                    .map(|p| p.time)
                    .chain(curves.iter().flat_map(|c| c.times.iter().copied()))
                    .fold(0.0, f64::max)
                    .max(1e-30);
                let finals: Vec<(String, f64, f64, bool)> = e
                    .endpoints
                    .iter()
                    .filter_map(|p| match &p.kind {
                        EndpointKind::Final(s) => Some((s.clone(), p.value, p.sd, p.weighted)),
                        _ => None,
                    })
                    .collect();
                let yields = !e.points.is_empty() && e.points.iter().all(|p| p.is_yield);
                let ymax = e
                    .points
                    .iter()
                    .map(|p| p.value + if p.weighted { p.sd } else { 0.0 })
                    .chain(finals.iter().map(|f| f.1 + if f.3 { f.2 } else { 0.0 }))
                    .chain(
                        curves
                            .iter()
                            .flat_map(|c| c.series.iter().flat_map(|s| s.1.iter().copied())),
                    )
                    .fold(0.0, f64::max)
                    .max(1e-300);
                let (tu, tname) = time_unit(t_end);
                let (ys, yl) = if yields {
                    (1.0, "yield (fraction)".to_string())
                } else {
                    let (v, u) = readable("M", ymax);
                    (v / ymax, format!("concentration ({u})"))
                };
                let xr = t_end / tu * 1.03;
                let mut c = ChartBuilder::on(area)
                    .caption(format!("experiment “{}”", e.name), ("sans-serif", 16))
                    .margin(10)
                    .x_label_area_size(40)
                    .y_label_area_size(80)
                    .build_cartesian_2d(0.0..xr, 0.0..ymax * ys * 1.08)?;
                c.configure_mesh()
                    .x_desc(format!("time ({tname})"))
                    .y_desc(yl.clone())
                    .x_label_formatter(&|v| ticks::label(*v))
                    .y_label_formatter(&|v| ticks::label(*v))
                    .label_style(("sans-serif", 13))
                    .draw()?;
                for (m, (_, mc)) in models.iter().enumerate() {
                    for cv in mc.iter().filter(|cv| cv.experiment == e.name) {
                        for (s, v, _) in &cv.series {
                            let line: Vec<(f64, f64)> = cv.times.iter().zip(v).map(|(t, y)| (t / tu, y * ys)).collect();
                            let style = colour(s).stroke_width(2);
                            match dash_of(m) {
                                None => c.draw_series(LineSeries::new(line, style))?,
                                Some((on, off)) => c.draw_series(DashedLineSeries::new(line, on, off, style))?,
                            };
                        }
                    }
                }
                let cap = xr * 0.006;
                let bar = |c: &mut ChartContext<'_, SVGBackend<'_>, _>, x: f64, y: f64, sd: f64, col: RGBColor| {
                    let (lo, hi) = ((y - sd).max(0.0) * ys, (y + sd) * ys);
                    let st = col.stroke_width(1);
                    let _ = c.draw_series(std::iter::once(PathElement::new(vec![(x, lo), (x, hi)], st)));
                    let _ = c.draw_series(std::iter::once(PathElement::new(
                        vec![(x - cap, lo), (x + cap, lo)],
                        st,
                    )));
                    let _ = c.draw_series(std::iter::once(PathElement::new(
                        vec![(x - cap, hi), (x + cap, hi)],
                        st,
                    )));
                };
                for p in &e.points {
                    let col = colour(&p.species);
                    let x = p.time / tu;
                    if p.weighted {
                        bar(&mut c, x, p.value, p.sd, col);
                    }
                    c.draw_series(std::iter::once(Circle::new((x, p.value * ys), 3, col.filled())))?;
                }
                for (s, v, sd, weighted) in &finals {
                    let col = colour(s);
                    let x = t_end / tu;
                    if *weighted {
                        bar(&mut c, x, *v, *sd, col);
                    }
                    c.draw_series(std::iter::once(TriangleMarker::new((x, v * ys), 7, col.filled())))?;
                }
            }
            // Legend: species colours, the marks, the models' line styles.
            let ink = palette::rgb(palette::INK_HEX);
            let mut y = 24;
            let text = |y: i32, t: String| Text::new(t, (44, y - 8), ("sans-serif", 14));
            for s in &measured {
                let col = colour(s);
                legend.draw(&PathElement::new(vec![(6, y), (34, y)], col.stroke_width(3)))?;
                legend.draw(&text(y, s.clone()))?;
                y += 22;
            }
            y += 8;
            legend.draw(&Circle::new((20, y), 3, ink.filled()))?;
            legend.draw(&PathElement::new(vec![(20, y - 8), (20, y + 8)], ink.stroke_width(1)))?;
            legend.draw(&text(y, "measured ± sd".into()))?;
            y += 22;
            if any_final {
                legend.draw(&TriangleMarker::new((20, y), 7, ink.filled()))?;
                legend.draw(&text(y, "end point".into()))?;
                y += 22;
            }
            y += 8;
            for (m, (name, _)) in models.iter().enumerate() {
                let pts = vec![(6, y), (34, y)];
                match dash_of(m) {
                    None => legend.draw(&PathElement::new(pts, ink.stroke_width(2)))?,
                    Some((on, off)) => legend.draw(&DashedPathElement::new(pts, on, off, ink.stroke_width(2)))?,
                }
                let label = if models.len() > 1 && m == 0 {
                    format!("{} (best)", short(name))
                } else {
                    short(name)
                };
                legend.draw(&text(y, label))?;
                y += 22;
            }
            for (k, note) in notes.iter().enumerate() {
                foot.draw(&Text::new(note.clone(), (16, 6 + 20 * k as i32), ("sans-serif", 13)))?;
            }
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}

/// SVG of the weighted residuals ((measured − fitted) / sd; weight 1 in their unit where no sd
/// was given), one panel per experiment with its own time axis, each species in its network
/// colour (`species`: the network's species in order; names not in it follow), one y range for
/// every panel so their spreads compare, and a band at ±2.
pub fn residuals_svg(title: &str, rows: &[Row], species: &[String]) -> String {
    let mut names: Vec<String> = species.to_vec();
    let mut shown: Vec<String> = Vec::new();
    let mut experiments: Vec<&str> = Vec::new();
    for r in rows {
        if !names.contains(&r.2) {
            names.push(r.2.clone());
        }
        if !shown.contains(&r.2) {
            shown.push(r.2.clone());
        }
        if !experiments.contains(&r.0.as_str()) {
            experiments.push(&r.0);
        }
    }
    let colour = |s: &str| palette::species(names.iter().position(|n| n == s).unwrap_or(0));
    let m = rows
        .iter()
        .map(|r| ((r.3 - r.4) / r.5).abs())
        .filter(|v| v.is_finite())
        .fold(2.5, f64::max)
        * 1.1;
    let n = experiments.len().max(1) as u32;
    let panel = 260;
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (FIT_W, 46 + n * panel)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let draw = || -> std::result::Result<(), Box<dyn std::error::Error + '_>> {
            let body = root.titled(title, ("sans-serif", 22))?;
            let (plots, legend) = body.split_horizontally(FIT_W - FIT_LEGEND);
            let panels = plots.split_evenly((n as usize, 1));
            for (e, area) in experiments.iter().zip(&panels) {
                let here: Vec<&Row> = rows.iter().filter(|r| r.0 == *e).collect();
                let t_end = here.iter().map(|r| r.1).fold(0.0, f64::max).max(1e-30);
                let (tu, tname) = time_unit(t_end);
                let xr = t_end / tu * 1.03;
                let mut c = ChartBuilder::on(area)
                    .caption(format!("experiment “{e}”"), ("sans-serif", 16))
                    .margin(10)
                    .x_label_area_size(40)
                    .y_label_area_size(80)
                    .build_cartesian_2d(0.0..xr, -m..m)?;
                c.configure_mesh()
                    .x_desc(format!("time ({tname})"))
                    .y_desc("(measured − fitted) / sd")
                    .x_label_formatter(&|v| ticks::label(*v))
                    .y_label_formatter(&|v| ticks::label(*v))
                    .label_style(("sans-serif", 13))
                    .draw()?;
                c.draw_series(std::iter::once(Rectangle::new(
                    [(0.0, -2.0), (xr, 2.0)],
                    palette::rgb(palette::INK_HEX).mix(0.06).filled(),
                )))?;
                c.draw_series(LineSeries::new(vec![(0.0, 0.0), (xr, 0.0)], BLACK.stroke_width(1)))?;
                c.draw_series(
                    here.iter()
                        .filter(|r| ((r.3 - r.4) / r.5).is_finite())
                        .map(|r| Circle::new((r.1 / tu, (r.3 - r.4) / r.5), 4, colour(&r.2).filled())),
                )?;
            }
            let mut y = 20;
            for s in &shown {
                legend.draw(&Circle::new((20, y + 8), 4, colour(s).filled()))?;
                legend.draw(&Text::new(s.clone(), (38, y), ("sans-serif", 15)))?;
                y += 22;
            }
            legend.draw(&Rectangle::new(
                [(12, y + 6), (30, y + 14)],
                palette::rgb(palette::INK_HEX).mix(0.12).filled(),
            ))?;
            legend.draw(&Text::new("within ±2 sd", (38, y), ("sans-serif", 15)))?;
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}

/// The network file text with the fitted values put in, comments and layout kept, and a comment
/// at the top recording the fit. Each value goes to its `--set` key as
/// [`file::write::put_values`](crate::file::write::put_values) finds it (a `k` or `barrier`
/// replaces the whole rate table; a barrier keeps `transmission`); a value with a unit is written
/// in the readable unit of `units::display`, 7 significant figures.
///
/// Molar energies are written in `family`, the network file's (`Network::energy_unit`): a
/// barrier the file gave as "23.5 kcal/mol" comes back in kcal/mol.
pub fn fitted_toml(text: &str, free: &[Free], values: &[f64], se: &[f64], family: EnergyUnit) -> Result<String> {
    use crate::file::write::{Written, put_values};
    let written: Vec<(String, Written)> = free
        .iter()
        .zip(values)
        .map(|(f, v)| {
            let w = if f.unit.is_empty() {
                Written::Number(*v)
            } else {
                let (value, unit) = readable_in(f.unit, *v, family);
                Written::Quantity { value, unit }
            };
            (f.key.clone(), w)
        })
        .collect();
    let mut head = vec!["Fitted values put in by `photoledger fit` (value ± standard error):".to_string()];
    for ((f, v), s) in free.iter().zip(values).zip(se) {
        let (x, u) = readable_in(f.unit, *v, family);
        let scale = if *v != 0.0 { x / v } else { 1.0 };
        if s.is_finite() {
            head.push(format!("  {} = {} ± {} {u}", f.key, sig(x, 7), sig(s * scale, 3)));
        } else {
            head.push(format!("  {} = {} {u} (on the edge of its range)", f.key, sig(x, 7)));
        }
    }
    put_values(text, &written, &head)
}

/// One row of a comparison.
#[derive(Debug, Clone, PartialEq)]
pub struct Ranked {
    /// The network file.
    pub network: String,
    /// Its fit.
    pub fit: FitResult,
    /// Akaike weight (from AICc).
    pub weight: f64,
}

/// The comparison table, ranked by AICc, with where the best two disagree most.
pub fn compare_text(ranked: &[Ranked], disagreement: Option<&str>) -> String {
    ranking_text(ranked, disagreement, "network")
}

/// [`compare_text`] with `what` heading the column of names ("network", or "set" for the sets
/// of values of one network).
pub fn ranking_text(ranked: &[Ranked], disagreement: Option<&str>, what: &str) -> String {
    let mut o = String::new();
    let w = ranked
        .iter()
        .map(|r| r.network.chars().count())
        .max()
        .unwrap_or(8)
        .max(7);
    let best = ranked.first().map_or(0.0, |r| r.fit.aicc);
    let _ = writeln!(
        o,
        "{:<4} {:<w$}  {:>5}  {:>12}  {:>12}  {:>9}  {:>12}  {:>8}",
        "rank", what, "free", "χ²", "AICc", "ΔAICc", "BIC", "weight"
    );
    for (i, r) in ranked.iter().enumerate() {
        let _ = writeln!(
            o,
            "{:<4} {:<w$}  {:>5}  {:>12}  {:>12}  {:>9}  {:>12}  {:>8}",
            i + 1,
            r.network,
            r.fit.free.len(),
            sig(r.fit.solution.chi2, 6),
            sig(r.fit.aicc, 6),
            sig(r.fit.aicc - best, 3),
            sig(r.fit.bic, 6),
            format!("{:.3}", r.weight)
        );
    }
    let _ = writeln!(
        o,
        "\nAkaike weights from AICc; ΔAICc above about 4-7 is commonly read as clear support for the lower (common practice)."
    );
    for r in ranked {
        for wmsg in &r.fit.warnings {
            let _ = writeln!(o, "warning ({}): {wmsg}", r.network);
        }
    }
    if let Some(d) = disagreement {
        let _ = writeln!(o, "\n{d}");
    }
    o
}

/// The comparison as JSON.
pub fn compare_json(ranked: &[Ranked], disagreement: Option<&str>) -> serde_json::Value {
    json!({
        "ranking": ranked.iter().map(|r| json!({
            "network": r.network, "akaike_weight": r.weight, "fit": fit_json(&r.network, &r.fit),
        })).collect::<Vec<_>>(),
        "largest_disagreement": disagreement,
    })
}

/// A time-course CSV of `e` (concentrations in µM, sd column), with `comment` lines on top (the
/// `#` lines `file::data` skips), in the layout `file::data::parse_points` reads.
pub fn points_csv(e: &Experiment, comment: &str) -> String {
    let mut t = CsvTable::with_comments(comment, ["time (min)", "species", "value (µM)", "sd (µM)"]);
    for p in &e.points {
        t.row([
            sig(p.time / 60.0, 6),
            p.species.clone(),
            sig(p.value * 1e6, 5),
            sig(p.sd * 1e6, 3),
        ]);
    }
    t.finish()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::fit::lsq::Transform;
    use crate::network::overrides::parameter;
    use std::path::Path;

    const NET: &str = r#"
# a comment that must survive
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
epsilon = { at = "365 nm", value = "1000 L/(mol cm)" }

[[species]]
name = "B"

[[species]]
name = "Q"
initial = "1 mM"

[[photo]]
absorber = "A"
excites = "A*"

[[transient]]
name = "A*"
kind = "excited"
channels = [
  { to = "B", rate = { k = "1e8 /s" } },   # reaction
  { to = "A", quencher = "Q", rate = { barrier = "5 kcal/mol" } },
]

[[thermal]]
equation = "B <=> A"
rate = { k = "1e-3 /s" }
reverse = { prefactor = "1e10 /s", activation = "90 kJ/mol" }
"#;

    #[test]
    fn every_kind_of_key_is_written_back_and_reads_back() {
        let l = crate::file::parse_text(Path::new("n.toml"), NET.to_string()).unwrap();
        let net = crate::network::build(&l, &crate::network::Overrides::none()).unwrap();
        let keys = [
            "conditions.temperature",
            "species.A.initial",
            "light.lamp.power",
            "photo.A + hν -> A*.efficiency",
            "transient.A*.channels[0].k",
            "transient.A*.channels[1].barrier",
            "thermal.B <=> A.k",
            "thermal.B <=> A.reverse.activation",
        ];
        let free: Vec<Free> = keys
            .iter()
            .map(|k| {
                let p = parameter(&net, k).unwrap_or_else(|e| panic!("{e}"));
                Free {
                    key: k.to_string(),
                    address: p.address,
                    start: p.value,
                    unit: p.unit,
                    transform: Transform::Identity,
                }
            })
            .collect();
        let values: Vec<f64> = free
            .iter()
            .map(|f| if f.unit.is_empty() { 0.8 } else { f.start * 1.25 })
            .collect();
        let se = vec![0.0; values.len()];
        // The file writes its one barrier in kcal/mol before its activation energy in kJ/mol: a tie,
        // the first written decides, and the fitted barrier goes back in kcal/mol.
        assert_eq!(net.energy_unit, EnergyUnit::KcalPerMol);
        let text = fitted_toml(NET, &free, &values, &se, net.energy_unit).unwrap();
        assert!(text.contains("barrier = \"6.25 kcal/mol\""), "{text}");
        assert!(!text.contains("26.15 kJ/mol"), "{text}");
        assert!(
            text.contains("# a comment that must survive") && text.contains("# reaction"),
            "{text}"
        );
        let l = crate::file::parse_text(Path::new("n.toml"), text.clone()).unwrap();
        let net =
            crate::network::build(&l, &crate::network::Overrides::none()).unwrap_or_else(|e| panic!("{e}\n{text}"));
        for (f, v) in free.iter().zip(&values) {
            let back = parameter(&net, &f.key).unwrap().value;
            assert!((back - v).abs() <= 1e-6 * v.abs(), "{}: {back} vs {v}\n{text}", f.key);
        }
        let bad = Free {
            key: "thermal.nothing.k".into(),
            address: free[0].address,
            start: 1.0,
            unit: "/s",
            transform: Transform::Log,
        };
        assert!(fitted_toml(NET, &[bad], &[1.0], &[0.0], EnergyUnit::KjPerMol).is_err());
    }

    #[test]
    fn residuals_are_drawn_one_panel_per_experiment_in_species_colours() {
        let row = |e: &str, t: f64, sp: &str, d: f64| (e.to_string(), t, sp.to_string(), 1.0 + d, 1.0, 0.1, true);
        let rows = vec![
            row("lit", 60.0, "A", 0.1),
            row("lit", 1200.0, "B", -0.1),
            row("dark", 3600.0, "A", 0.05),
            row("dark", 21600.0, "A", -0.2),
        ];
        let names = vec!["A".to_string(), "B".to_string()];
        let svg = residuals_svg("r", &rows, &names);
        assert!(
            svg.contains("experiment “lit”") && svg.contains("experiment “dark”"),
            "{svg}"
        );
        // Each panel has its own time unit: minutes for the first, hours for the second.
        assert!(svg.contains("time (min)") && svg.contains("time (h)"), "{svg}");
        // Species keep the network's colours: B is the second colour of the palette.
        let b = palette::species_hex(1).to_lowercase();
        assert!(svg.to_lowercase().contains(&b), "B's colour {b} is drawn");
    }
}
