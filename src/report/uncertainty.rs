//! What `uncertainty` writes: the text summary (quantiles and the parameters that drive each
//! output), the samples CSV, one SVG histogram per output and a tornado chart of rank
//! correlations.
//!
//! Text and SVG show values in display units (`units::display`: kJ/mol, M⁻¹ s⁻¹, mM, h); the
//! CSV and JSON keep the internal (SI) values with their unit named beside them.

use crate::report::csv_out::{CsvTable, cell, opt_cell};
use crate::report::{palette, ticks};
use crate::uncertainty::{OutputSummary, QUANTILES, Record, Summary};
use crate::units::{self, display, sig};
use plotters::element::DashedPathElement;
use plotters::prelude::*;
use plotters::style::text_anchor::{HPos, Pos, VPos};
use std::fmt::Write;

fn opt(v: Option<f64>) -> String {
    v.map_or("-".into(), |x| sig(x, 4))
}

/// The display unit of an output's statistics, picked by the largest of its mean and quantiles
/// (`units::display`): (internal units per display unit, spelling).
fn shown_unit(x: &OutputSummary) -> (f64, String) {
    let values = x.mean.into_iter().chain(x.quantiles.iter().filter_map(|q| q.1));
    display::readable_unit(&x.column.unit, display::largest(values))
}

/// The round-off limit of an output's statistics (`units::display::ZeroWithin`): its column's
/// absolute limit (the kinetics' tolerance for concentrations) or its relative one times the
/// output's largest magnitude (chain outputs).
pub fn zero_within(x: &OutputSummary) -> display::ZeroWithin {
    if let Some(a) = x.column.zero_within {
        return display::ZeroWithin(a);
    }
    match x.column.zero_within_relative {
        Some(rel) => {
            let values = x.mean.into_iter().chain(x.quantiles.iter().filter_map(|q| q.1));
            display::ZeroWithin::relative(display::largest(values), rel)
        }
        None => display::ZeroWithin::NONE,
    }
}

/// "30 d" for a censored output's horizon in the row's unit (`per`, `unit`).
fn horizon_text(x: &OutputSummary, per: f64, unit: &str) -> Option<String> {
    x.column.censored_above.map(|h| {
        if unit.is_empty() {
            sig(h / per, 4)
        } else {
            format!("{} {unit}", sig(h / per, 4))
        }
    })
}

fn with_unit(name: &str, unit: &str) -> String {
    if unit.is_empty() {
        name.to_string()
    } else {
        format!("{name} ({unit})")
    }
}

/// True when an output spreads beyond rounding (sd above 1e-9 of |mean|): only then is a
/// ranking of its drivers meaningful.
pub fn varies(x: &OutputSummary) -> bool {
    if x.censored > 0 {
        // some samples reach the level and some do not: that alone is a spread
        return x.n > 0;
    }
    match (x.mean, x.sd) {
        (Some(m), Some(sd)) => sd > 1e-9 * m.abs() && sd > 0.0,
        _ => false,
    }
}

/// summary.txt: the parameters, then per output n, mean, sd, quantiles and the top drivers.
pub fn text(s: &Summary) -> String {
    let mut o = String::new();
    let _ = writeln!(o, "{}: uncertainty propagation", s.network);
    let _ = writeln!(
        o,
        "  {} samples (seed {}), {} could not be evaluated",
        s.samples, s.seed, s.failed
    );
    for f in &s.failures {
        let _ = writeln!(o, "    e.g. {f}");
    }
    for n in &s.notes {
        let _ = writeln!(o, "  note: {n}");
    }
    let _ = writeln!(o, "\n  uncertain values");
    for p in &s.parameters {
        let _ = writeln!(o, "    {:<46} {}", p.name, p.about);
    }
    let _ = write!(o, "\n  {:<40} {:>7} {:>11} {:>11}", "output", "n", "mean", "sd");
    for q in QUANTILES {
        let _ = write!(o, " {:>11}", format!("{} %", q * 100.0));
    }
    o.push('\n');
    for x in &s.outputs {
        let (per, unit) = shown_unit(x);
        let z = zero_within(x);
        let _ = write!(
            o,
            "  {:<40} {:>7} {:>11} {:>11}",
            with_unit(&x.column.name, &unit),
            x.n,
            opt(x.mean.map(|v| z.shown(v) / per)),
            opt(x.sd.map(|v| z.shown(v) / per))
        );
        for (q, v) in &x.quantiles {
            let cell = match v {
                Some(v) => opt(Some(z.shown(*v) / per)),
                None if x.beyond_horizon.contains(q) => {
                    format!("> {}", sig(x.column.censored_above.unwrap_or(0.0) / per, 4))
                }
                None => "-".into(),
            };
            let _ = write!(o, " {cell:>11}");
        }
        o.push('\n');
    }
    for x in s.outputs.iter().filter(|x| x.censored > 0) {
        let (per, unit) = shown_unit(x);
        let h = horizon_text(x, per, &unit).unwrap_or_default();
        let all = x.n + x.censored;
        let _ = writeln!(
            o,
            "  {}: {} of {all} samples never reached it within {h} (right-censored, kept): its quantiles are over all \
             {all}, \"> {h}\" where one falls among them; mean and sd are not defined with censored samples; in the \
             ranking below they count as {h}, tied above every reached value.",
            x.column.name, x.censored
        );
    }
    if s.outputs
        .iter()
        .any(|x| x.column.zero_within.is_some() || x.column.zero_within_relative.is_some())
    {
        let atol = s.outputs.iter().find_map(|x| x.column.zero_within);
        let _ = writeln!(
            o,
            "  round-off shown as 0: {}chain statistics within {} of their output's largest value \
             (double-precision sparse LU solve); samples.csv and summary.json keep the raw numbers.",
            atol.map_or(String::new(), |a| format!(
                "concentrations within the kinetics' absolute tolerance ({}) of zero; ",
                display::format_concentration(a)
            )),
            sig(display::CHAIN_ROUNDOFF, 2)
        );
    }
    let _ = writeln!(
        o,
        "\n  what drives each output (Spearman rank correlation ρ; first-order Sobol index S1 from the same samples)"
    );
    for x in s.outputs.iter().filter(|x| varies(x)) {
        let _ = writeln!(o, "    {}", x.column.name);
        for d in x.drivers.iter().take(5) {
            let _ = writeln!(
                o,
                "      ρ {:>7}  S1 {:>6}  {}",
                d.spearman.map_or("-".into(), |v| format!("{v:+.3}")),
                d.sobol_first_order.map_or("-".into(), |v| format!("{v:.3}")),
                d.parameter
            );
        }
    }
    let _ = writeln!(
        o,
        "\n  quantiles interpolate between order statistics (Hyndman & Fan definition 7); sd uses n − 1.\n\n{}",
        crate::report::caution_line()
    );
    o
}

/// samples.csv: index, every drawn value, every output (empty where missing), error.
pub fn samples_csv(r: &Record) -> String {
    let mut header = vec!["sample".to_string()];
    header.extend(
        r.header
            .parameters
            .iter()
            .chain(&r.header.outputs)
            .map(|c| with_unit(&c.name, &c.unit)),
    );
    header.push("error".into());
    let mut t = CsvTable::new(header);
    for s in &r.samples {
        let mut cells = vec![s.index.to_string()];
        cells.extend(s.values.iter().map(|v| cell(*v)));
        cells.extend(s.outputs.iter().map(|v| opt_cell(*v)));
        cells.push(s.error.clone().unwrap_or_default());
        t.row(cells);
    }
    t.finish()
}

/// A file-name-safe form of an output name: `quantum_yield[product]` -> `quantum_yield-product`.
pub fn file_stem(name: &str) -> String {
    let mut s: String = name
        .chars()
        .map(|c| {
            if c.is_alphanumeric() || c == '_' || c == '-' {
                c
            } else {
                '-'
            }
        })
        .collect();
    while s.contains("--") {
        s = s.replace("--", "-");
    }
    s.trim_matches('-').to_string()
}

/// Histogram of one output's values (40 bars over the observed range) with the 2.5 %, 50 % and
/// 97.5 % quantiles marked. Positive values spread over more than two decades are binned on a
/// log scale. Empty string when there are no values.
pub fn histogram_svg(title: &str, x: &OutputSummary, values: &[f64]) -> String {
    let (per, unit) = shown_unit(x);
    let z = zero_within(x);
    let v: Vec<f64> = values
        .iter()
        .copied()
        .filter(|v| v.is_finite())
        .map(|v| z.shown(v) / per)
        .collect();
    let title = match horizon_text(x, per, &unit) {
        Some(h) if x.censored > 0 => format!(
            "{title} ({} of {} not reached within {h}, not drawn)",
            x.censored,
            x.n + x.censored
        ),
        _ => title.to_string(),
    };
    let title = title.as_str();
    let mut svg = String::new();
    if v.is_empty() {
        return svg;
    }
    let min = v.iter().copied().fold(f64::INFINITY, f64::min);
    let max = v.iter().copied().fold(f64::NEG_INFINITY, f64::max);
    let log = min > 0.0 && max / min > 100.0;
    let tx = |a: f64| if log { a.log10() } else { a };
    let (lo, hi) = (tx(min), tx(max));
    // One value only (every sample alike, or all within round-off of zero): a narrow span around
    // it, or a unit span around 0, so the axis has a width.
    let span = if hi > lo {
        hi - lo
    } else if lo != 0.0 {
        lo.abs() * 1e-6
    } else {
        1.0
    };
    let (lo, hi) = (lo - 0.02 * span, hi + 0.02 * span);
    let bins = 40;
    let w = (hi - lo) / bins as f64;
    let mut counts = vec![0usize; bins];
    for a in &v {
        counts[(((tx(*a) - lo) / w) as usize).min(bins - 1)] += 1;
    }
    let ymax = *counts.iter().max().unwrap_or(&1) as f64 * 1.1;
    let x_desc = format!(
        "{}{}",
        with_unit(&x.column.name, &unit),
        if log { " (log scale)" } else { "" }
    );
    // Bin edges back in the value (bins are even in log10 of the value on a log axis).
    let edge = |i: usize| {
        let e = lo + i as f64 * w;
        if log { 10f64.powf(e) } else { e }
    };
    let (x0, x1) = (edge(0), edge(bins));
    // Quantiles beyond the horizon (not reached by then) have no line but a legend entry.
    let beyond: Vec<(&str, String)> = [(0.025, "2.5 % quantile"), (0.5, "median"), (0.975, "97.5 % quantile")]
        .into_iter()
        .filter(|(q, _)| x.beyond_horizon.contains(q))
        .map(|(_, n)| {
            let h = horizon_text(x, per, &unit).unwrap_or_else(|| "the horizon".into());
            (n, format!("beyond {h} (no line)"))
        })
        .collect();
    let marks: Vec<(f64, &str, palette::Dash)> = x
        .quantiles
        .iter()
        .filter_map(|(q, val)| {
            // Shown as the bars are (round-off of zero reads 0), and drawn only inside the axis:
            // a line far outside it would overflow the plotting library's pixel coordinates.
            let val = z.shown((*val)?) / per;
            if !(val >= x0 && val <= x1) {
                return None;
            }
            let (name, dash) = if *q == 0.5 {
                ("median", None)
            } else if *q == 0.025 {
                ("2.5 % quantile", Some((8, 5)))
            } else if *q == 0.975 {
                ("97.5 % quantile", Some((2, 4)))
            } else {
                return None;
            };
            (!log || val > 0.0).then_some((val, name, dash))
        })
        .collect();
    {
        let root = SVGBackend::with_string(&mut svg, (960, 560)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let draw = || -> Result<(), Box<dyn std::error::Error + '_>> {
            let body = root.titled(title, ("sans-serif", 20))?;
            let (plot, legend) = body.split_horizontally(790);
            let mut b = ChartBuilder::on(&plot);
            b.margin(16).x_label_area_size(48).y_label_area_size(70);
            let col = palette::species(0);
            let mark = palette::rgb(palette::INK_HEX);
            macro_rules! bars {
                ($chart:expr) => {{
                    let mut chart = $chart;
                    chart
                        .configure_mesh()
                        .x_desc(x_desc.as_str())
                        .y_desc("samples")
                        .x_label_formatter(&|a| ticks::label(*a))
                        .y_label_formatter(&|c| format!("{c:.0}"))
                        .label_style(("sans-serif", 15))
                        .draw()?;
                    chart.draw_series(counts.iter().enumerate().map(|(i, &c)| {
                        Rectangle::new([(edge(i), 0.0), (edge(i + 1), c as f64)], col.mix(0.8).filled())
                    }))?;
                    for (val, _, dash) in &marks {
                        let line = vec![(*val, 0.0), (*val, ymax)];
                        match dash {
                            None => chart.draw_series(LineSeries::new(line, mark.stroke_width(2)))?,
                            Some((on, off)) => {
                                chart.draw_series(DashedLineSeries::new(line, *on, *off, mark.stroke_width(2)))?
                            }
                        };
                    }
                }};
            }
            if log {
                let (kb, kl) = ticks::log_ticks(x0, x1, 650.0, false);
                bars!(b.build_cartesian_2d(
                    (x0..x1).log_scale().with_key_points(kb).with_light_points(kl),
                    0.0..ymax
                )?);
            } else {
                bars!(b.build_cartesian_2d(x0..x1, 0.0..ymax)?);
            }
            // The legend names the lines, beside the plot.
            let mut y = 30;
            for (val, name, dash) in &marks {
                let pts = vec![(4, y), (34, y)];
                match dash {
                    None => legend.draw(&PathElement::new(pts, mark.stroke_width(2)))?,
                    Some((on, off)) => legend.draw(&DashedPathElement::new(pts, *on, *off, mark.stroke_width(2)))?,
                }
                legend.draw(&Text::new(name.to_string(), (40, y - 9), ("sans-serif", 14)))?;
                let shown = if unit.is_empty() {
                    ticks::label(*val)
                } else {
                    format!("{} {unit}", ticks::label(*val))
                };
                legend.draw(&Text::new(shown, (40, y + 8), ("sans-serif", 13)))?;
                y += 44;
            }
            for (name, b) in &beyond {
                legend.draw(&Text::new(name.to_string(), (40, y - 9), ("sans-serif", 14)))?;
                legend.draw(&Text::new(b.clone(), (40, y + 8), ("sans-serif", 13)))?;
                y += 44;
            }
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}

/// A parameter key written as its step and quantity ("transient.adduct*.channels[1].barrier"
/// reads "adduct*, channel 2: barrier"; "species.dinitrile.initial" reads "dinitrile: initial
/// concentration"); a key of another shape is returned as it is.
pub fn parameter_words(key: &str) -> String {
    let Some((section, rest)) = key.split_once('.') else {
        return key.replace('_', " ");
    };
    let (name, field) = match rest.rsplit_once('.') {
        Some((n, f)) => (Some(n), f),
        None => (None, rest),
    };
    let field = match (section, field) {
        ("species", "initial") => "initial concentration".to_string(),
        (_, "k") => "rate constant".to_string(),
        _ => field.replace('_', " "),
    };
    let Some(name) = name else {
        return field;
    };
    let name = name.replace('"', "");
    let name = match name.rsplit_once(".channels[") {
        Some((step, k)) => match k.trim_end_matches(']').parse::<usize>() {
            Ok(k) => format!("{step}, channel {}", k + 1),
            Err(_) => name.clone(),
        },
        None => name,
    };
    format!("{name}: {field}")
}

/// An output's heading in the tornado: what it is ("concentration of aldehyde at 30 d"), from
/// the column's description.
fn output_words(x: &OutputSummary) -> String {
    let about = x.column.about.as_str();
    let about = about.split_once(": ").map_or(about, |(_, a)| a);
    let about = about.split([';', '(']).next().unwrap_or(about).trim();
    if about.is_empty() {
        x.column.name.clone()
    } else {
        format!("{} ({})", about, x.column.name)
    }
}

/// Parameters drawn per output in the tornado.
pub const TORNADO_TOP: usize = 3;

/// tornado.svg: one group per output with a spread, headed by what the output is, with the
/// [`TORNADO_TOP`] parameters of largest |Spearman ρ| as bars labelled by step and quantity.
pub fn tornado_svg(title: &str, s: &Summary) -> String {
    let groups: Vec<(String, Vec<(String, f64)>)> = s
        .outputs
        .iter()
        .filter(|x| varies(x))
        .map(|x| {
            let mut head = output_words(x);
            if let Some(h) = x.column.censored_above.filter(|_| x.censored > 0) {
                head.push_str(&format!(", not reached counted as {}", units::format_time(h)));
            }
            let bars = x
                .drivers
                .iter()
                .filter_map(|d| Some((parameter_words(&d.parameter), d.spearman?)))
                .take(TORNADO_TOP)
                .collect();
            (head, bars)
        })
        .filter(|g: &(String, Vec<(String, f64)>)| !g.1.is_empty())
        .collect();
    let mut svg = String::new();
    if groups.is_empty() {
        return svg;
    }
    // Rows: a heading, then its bars, top to bottom.
    let n: usize = groups.iter().map(|g| 1 + g.1.len()).sum();
    let height = (110 + 22 * n) as u32;
    {
        let root = SVGBackend::with_string(&mut svg, (1000, height)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let draw = || -> Result<(), Box<dyn std::error::Error + '_>> {
            let mut chart = ChartBuilder::on(&root)
                .caption(title, ("sans-serif", 22))
                .margin(16)
                .x_label_area_size(44)
                .y_label_area_size(380)
                .build_cartesian_2d(-1.0..1.0, 0.0..n as f64)?;
            chart
                .configure_mesh()
                .x_desc("Spearman rank correlation ρ")
                .y_labels(0)
                .label_style(("sans-serif", 13))
                .disable_y_mesh()
                .draw()?;
            let right = TextStyle::from(("sans-serif", 13).into_font()).pos(Pos::new(HPos::Right, VPos::Center));
            let heading = TextStyle::from(("sans-serif", 14).into_font().style(FontStyle::Bold))
                .pos(Pos::new(HPos::Left, VPos::Center));
            let pos = palette::species(0);
            let neg = palette::species(1);
            let mut row = 0;
            for (head, bars) in &groups {
                let (px, py) = chart.backend_coord(&(-1.0, (n - 1 - row) as f64 + 0.5));
                root.draw(&Text::new(head.clone(), (px - 370, py), heading.clone()))?;
                row += 1;
                for (label, r) in bars {
                    let y = (n - 1 - row) as f64;
                    let (px, py) = chart.backend_coord(&(-1.0, y + 0.5));
                    root.draw(&Text::new(label.clone(), (px - 8, py), right.clone()))?;
                    let c = if *r >= 0.0 { pos } else { neg };
                    chart.draw_series(std::iter::once(Rectangle::new(
                        [(0.0, y + 0.15), (*r, y + 0.85)],
                        c.filled(),
                    )))?;
                    row += 1;
                }
            }
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::uncertainty::{Problem, Settings, Space, summarise};
    use std::path::Path;

    const NET: &str = r#"
[about]
name = "display units (invented)"
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

    fn run() -> (Record, Summary) {
        let l = crate::file::parse_text(Path::new("t.toml"), NET.to_string()).expect("parses");
        let space = Space {
            independent: crate::network::uncertain::read(&l).expect("entries read"),
            ..Space::default()
        };
        let settings = Settings {
            chain: false,
            until: Some(7200.0),
            target: None,
        };
        let net = crate::network::build(&l, &crate::network::Overrides::none()).expect("valid");
        let p = Problem::new(&net, space, settings).expect("problem");
        let r = p.record(1, 40, 0..40, &|| {});
        let s = summarise(&r);
        (r, s)
    }

    #[test]
    fn text_shows_display_units_and_json_keeps_si_with_the_unit_named() {
        let (r, s) = run();
        let txt = text(&s);
        // Barrier in kJ/mol, first-order rate constant in s⁻¹, concentrations in mM.
        assert!(txt.contains("normal(mean 90 kJ/mol, sd 1 kJ/mol)"), "{txt}");
        assert!(txt.contains("uniform(1.000e-5 s⁻¹, 2.000e-5 s⁻¹)"), "{txt}");
        assert!(txt.contains("final[B] (mM)"), "{txt}");
        assert!(txt.contains("final[A] (µM)"), "{txt}");
        assert!(!txt.contains("(J/mol)") && !txt.contains("(mol/L)"), "{txt}");
        // JSON: SI values, the unit in the field next to them.
        let json = serde_json::to_value(&s).unwrap();
        assert_eq!(json["parameters"][0]["unit"], "J/mol");
        assert_eq!(json["parameters"][1]["unit"], "/s");
        let fin = json["outputs"]
            .as_array()
            .unwrap()
            .iter()
            .find(|o| o["name"] == "final[B]")
            .unwrap();
        assert_eq!(fin["unit"], "mol/L");
        assert!(
            fin["mean"].as_f64().unwrap() < 2e-3 && fin["mean"].as_f64().unwrap() > 1e-4,
            "{fin}"
        );
        assert!(r.samples[0].values[0] > 8e4, "drawn barrier in J/mol");
        // The histogram's axis is in the table's unit.
        let x = s.outputs.iter().find(|o| o.column.name == "final[B]").unwrap();
        let col = r.header.outputs.iter().position(|c| c.name == "final[B]").unwrap();
        let v: Vec<f64> = r.samples.iter().filter_map(|s| s.outputs[col]).collect();
        assert!(histogram_svg("B", x, &v).contains("final[B] (mM)"));
    }

    #[test]
    fn the_tornado_is_grouped_by_output_and_names_steps_not_keys() {
        let (r, s) = run();
        let svg = tornado_svg("t", &s);
        assert!(svg.contains("A to B: barrier"), "step and quantity named");
        assert!(!svg.contains("thermal.A to B.barrier"), "raw key shown");
        assert!(svg.contains("concentration of B"), "output heading missing");
        // The quantile lines have a legend.
        let x = s.outputs.iter().find(|x| x.column.name == "final[B]").unwrap();
        let col = r.header.outputs.iter().position(|c| c.name == "final[B]").unwrap();
        let v: Vec<f64> = r.samples.iter().filter_map(|s| s.outputs[col]).collect();
        let h = histogram_svg("B", x, &v);
        assert!(h.contains(">\nmedian\n</text>") && h.contains(">\n97.5 % quantile\n</text>"));
    }

    #[test]
    fn parameter_keys_read_as_step_and_quantity() {
        assert_eq!(
            parameter_words("transient.adduct*.channels[1].barrier"),
            "adduct*, channel 2: barrier"
        );
        assert_eq!(
            parameter_words("species.dinitrile.initial"),
            "dinitrile: initial concentration"
        );
        assert_eq!(
            parameter_words("photo.second photon.quantum_yield"),
            "second photon: quantum yield"
        );
        assert_eq!(parameter_words("conditions.temperature"), "temperature");
        assert_eq!(parameter_words("light.\"blue LED\".power"), "blue LED: power");
    }

    #[test]
    fn a_histogram_of_values_within_round_off_of_zero_draws_without_overflow() {
        // Every sample within the kinetics' round-off of zero (a reactor of 1e6 L, so the
        // concentrations are ~1e-20 M at atol 1e-12 M) while the quantiles are ~1e-15: the
        // quantile lines used to be drawn unshown, 1e291 axis widths away, which overflowed the
        // plotting library's pixel coordinates (a panic in a debug build). Found by
        // scripts/fuzz_inputs.py.
        let x = OutputSummary {
            column: crate::uncertainty::Column {
                name: "final[product]".into(),
                unit: "M".into(),
                about: "final concentration".into(),
                zero_within: Some(1e-12),
                zero_within_relative: None,
                censored_above: None,
            },
            n: 3,
            missing: 0,
            censored: 0,
            mean: Some(1e-15),
            sd: Some(1e-16),
            quantiles: vec![(0.025, Some(9e-16)), (0.5, Some(1e-15)), (0.975, Some(1.1e-15))],
            beyond_horizon: vec![],
            drivers: vec![],
        };
        let svg = histogram_svg("product", &x, &[9e-16, 1e-15, 1.1e-15]);
        assert!(svg.contains("<svg"), "{svg}");
        assert!(svg.contains("median"), "the legend names the median line");
    }
}
