//! `plan --sweep` outputs: the sweep table (text and CSV) and its plots (time to target and
//! selectivity against the swept value, log axes ticked by `report::ticks`).

use super::plan::shown_share;
use crate::plan::SweepPoint;
use crate::report::csv_out::{CsvTable, cell, opt_cell};
use crate::report::ticks;
use crate::units::display::{self, format_concentration_within};
use crate::units::{format_time, sig};
use plotters::prelude::*;
use std::fmt::Write;

/// What a sweep varies (made by `plan::sweep::parse`).
pub use crate::plan::sweep::SweepAxis;

/// sweep.csv: value, time to target, reached, and each product's concentration and selectivity.
pub fn sweep_csv(axis: &SweepAxis, points: &[SweepPoint]) -> String {
    let products: Vec<String> = points
        .iter()
        .find_map(|p| p.plan.as_ref().ok())
        .map(|p| p.products.iter().map(|s| s.species.clone()).collect())
        .unwrap_or_default();
    let mut header = vec![
        axis.label.clone(),
        "time to target (s)".into(),
        "reached".into(),
        "note".into(),
        "selectivity reference".into(),
    ];
    for p in &products {
        header.push(format!("{p} (mol/L)"));
        header.push(format!("{p} selectivity (mol per mol reference consumed)"));
    }
    let mut t = CsvTable::new(header);
    for pt in points {
        let mut cells = vec![cell(pt.value * axis.unit_factor)];
        match &pt.plan {
            Ok(p) => {
                let note = p.unreachable.as_ref().map_or("", |u| u.why.words());
                let reference = p.products.first().and_then(|x| x.reference.clone()).unwrap_or_default();
                cells.extend([
                    opt_cell(p.time),
                    p.time.is_some().to_string(),
                    note.to_string(),
                    reference,
                ]);
                // Matched by name so every row has the header's columns (empty where a point lacks one).
                for name in &products {
                    let sh = p.products.iter().find(|sh| &sh.species == name);
                    cells.push(opt_cell(sh.map(|sh| sh.formed)));
                    cells.push(opt_cell(sh.and_then(|sh| sh.selectivity)));
                }
            }
            Err(e) => {
                cells.extend([String::new(), "false".into(), e.clone(), String::new()]);
                cells.extend(std::iter::repeat_n(String::new(), 2 * products.len()));
            }
        }
        t.row(cells);
    }
    t.finish()
}

/// Drawn length of the x axis of [`xy_plot`]'s 900 × 560 px chart, px (approximate: the width
/// less the margins and the y label area).
const X_AXIS_PX: f64 = 787.0;

/// Drawn length of its y axis, px (approximate).
const Y_AXIS_PX: f64 = 440.0;

/// An x–y plot with points and lines, either axis logarithmic, as SVG text.
fn xy_plot(
    title: &str,
    x: (&str, bool),
    y: (&str, bool),
    series: &[(String, Vec<(f64, f64)>)],
    y_range: Option<(f64, f64)>,
) -> String {
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 560)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let all: Vec<(f64, f64)> = series
            .iter()
            .flat_map(|s| s.1.iter().cloned())
            .filter(|p| p.0.is_finite() && p.1.is_finite() && (!x.1 || p.0 > 0.0) && (!y.1 || p.1 > 0.0))
            .collect();
        let (mut x0, mut x1) = all
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |a, p| (a.0.min(p.0), a.1.max(p.0)));
        let (mut y0, mut y1) = all
            .iter()
            .fold((f64::INFINITY, f64::NEG_INFINITY), |a, p| (a.0.min(p.1), a.1.max(p.1)));
        if let Some(r) = y_range {
            (y0, y1) = r;
        }
        if !x0.is_finite() {
            (x0, x1) = (1.0, 10.0);
        }
        if !y0.is_finite() {
            (y0, y1) = (1.0, 10.0);
        }
        if x1 <= x0 {
            x1 = x0 * 1.1 + 1.0;
        }
        if y1 <= y0 {
            (y0, y1) = (y0 * 0.9, y1 * 1.1 + 1e-30);
        }
        if y.1 {
            (y0, y1) = (y0 / 1.3, y1 * 1.3);
        } else if y_range.is_none() {
            let pad = 0.05 * (y1 - y0);
            (y0, y1) = ((y0 - pad).max(0.0), y1 + pad);
        }
        let draw = |root: &DrawingArea<SVGBackend, plotters::coord::Shift>,
                    legend: &DrawingArea<SVGBackend, plotters::coord::Shift>|
         -> Result<(), Box<dyn std::error::Error + '_>> {
            let mut b = ChartBuilder::on(root);
            b.caption(title, ("sans-serif", 22))
                .margin(16)
                .x_label_area_size(48)
                .y_label_area_size(80);
            macro_rules! go {
                ($chart:expr) => {{
                    let mut c = $chart;
                    c.configure_mesh()
                        .x_desc(x.0)
                        .y_desc(y.0)
                        .x_label_formatter(&|v| ticks::label(*v))
                        .y_label_formatter(&|v| ticks::label(*v))
                        .label_style(("sans-serif", 15))
                        .draw()?;
                    for (i, (name, pts)) in series.iter().enumerate() {
                        let col = super::palette::species(i);
                        let p: Vec<(f64, f64)> = pts
                            .iter()
                            .cloned()
                            .filter(|p| (!x.1 || p.0 > 0.0) && (!y.1 || p.1 > 0.0) && p.1.is_finite())
                            .collect();
                        c.draw_series(LineSeries::new(p.clone(), col.stroke_width(2)))?
                            .label(name.clone())
                            .legend(move |(x, y)| PathElement::new(vec![(x, y), (x + 18, y)], col.stroke_width(3)));
                        c.draw_series(p.into_iter().map(|q| Circle::new(q, 3, col.filled())))?;
                    }
                    // The legend stands in its own column right of the plot, not over the points.
                    if series.len() > 1 {
                        for (i, (name, _)) in series.iter().enumerate() {
                            let col = super::palette::species(i);
                            let y = 60 + 22 * i as i32;
                            legend.draw(&PathElement::new(vec![(6, y), (34, y)], col.stroke_width(3)))?;
                            legend.draw(&Text::new(name.clone(), (42, y - 8), ("sans-serif", 15)))?;
                        }
                    }
                }};
            }
            // Log axes carry round values as labels, never overlapping (`ticks`).
            let (xb, xl) = ticks::log_ticks(x0, x1, X_AXIS_PX, false);
            let (yb, yl) = ticks::log_ticks(y0, y1, Y_AXIS_PX, true);
            let xlog = || {
                (x0..x1)
                    .log_scale()
                    .with_key_points(xb.clone())
                    .with_light_points(xl.clone())
            };
            let ylog = || {
                (y0..y1)
                    .log_scale()
                    .with_key_points(yb.clone())
                    .with_light_points(yl.clone())
            };
            match (x.1, y.1) {
                (true, true) => go!(b.build_cartesian_2d(xlog(), ylog())?),
                (true, false) => go!(b.build_cartesian_2d(xlog(), y0..y1)?),
                (false, true) => go!(b.build_cartesian_2d(x0..x1, ylog())?),
                (false, false) => go!(b.build_cartesian_2d(x0..x1, y0..y1)?),
            }
            Ok(())
        };
        let legend_w = if series.len() > 1 {
            let longest = series.iter().map(|s| s.0.chars().count()).max().unwrap_or(0) as u32;
            (50 + 8 * longest).clamp(120, 260)
        } else {
            0
        };
        let (plot, legend) = root.split_horizontally(900 - legend_w);
        let _ = draw(&plot, &legend);
        let _ = root.present();
    }
    svg
}

/// sweep.svg: time to target against the swept value (log time axis); unreachable points left out.
pub fn sweep_svg(network: &str, target: &str, axis: &SweepAxis, points: &[SweepPoint]) -> String {
    let times: Vec<(f64, f64)> = points
        .iter()
        .filter_map(|p| Some((p.value * axis.unit_factor, p.plan.as_ref().ok()?.time?)))
        .collect();
    let longest = times.iter().map(|p| p.1).fold(0.0, f64::max);
    let (div, unit) = crate::units::display::time(longest);
    let pts: Vec<(f64, f64)> = times.iter().map(|&(x, t)| (x, t / div)).collect();
    xy_plot(
        &format!("{network}: time to \"{target}\""),
        (&axis.label, axis.log),
        (&format!("time to target ({unit}, log scale)"), true),
        &[("time to target".into(), pts)],
        None,
    )
}

/// selectivity.svg: each product's selectivity at the target time (mol formed per 100 mol of
/// the reference reagent consumed) against the swept value (None when fewer than two form).
pub fn selectivity_svg(network: &str, axis: &SweepAxis, points: &[SweepPoint]) -> Option<String> {
    let names: Vec<String> = points
        .iter()
        .find_map(|p| p.plan.as_ref().ok())?
        .products
        .iter()
        .map(|s| s.species.clone())
        .collect();
    let series: Vec<(String, Vec<(f64, f64)>)> = names
        .iter()
        .enumerate()
        .map(|(i, n)| {
            (
                n.clone(),
                points
                    .iter()
                    .filter_map(|p| {
                        let pl = p.plan.as_ref().ok()?;
                        let sh = shown_share(pl.products.get(i)?, pl.trajectory.zero_within());
                        Some((p.value * axis.unit_factor, sh.selectivity? * 100.0))
                    })
                    .collect(),
            )
        })
        .collect();
    // A co-product has no selectivity against the reference at any point: no line, no legend.
    let series: Vec<(String, Vec<(f64, f64)>)> = series.into_iter().filter(|s| !s.1.is_empty()).collect();
    let forming = series.iter().filter(|s| s.1.iter().any(|p| p.1 > 0.0)).count();
    (forming >= 2).then(|| {
        xy_plot(
            &format!("{network}: selectivity at the target"),
            (&axis.label, axis.log),
            ("formed per reagent consumed (%)", false),
            &series,
            None,
        )
    })
}

/// The sweep as a text table: each swept value with its unit on the display ladder (a fixed
/// unit for wavelength and temperature), the time to the target or, for a point that never gets
/// there, why and the closest level with when it came, and the products' selectivity when any
/// product forms.
pub fn sweep_text(axis: &SweepAxis, points: &[SweepPoint]) -> String {
    let reference = points
        .iter()
        .find_map(|p| p.plan.as_ref().ok())
        .and_then(|p| p.products.first())
        .and_then(|s| s.reference.clone());
    let what = reference.map_or("selectivity".to_string(), |r| {
        format!("selectivity: formed per {r} consumed")
    });
    let value = |v: f64| match axis.ladder {
        Some(l) => display::format(v, l),
        None => sig(v * axis.unit_factor, 4),
    };
    let header = match axis.ladder {
        Some(_) => axis.name.clone(),
        None => axis.label.clone(),
    };
    let products = |pl: &crate::plan::Plan| {
        pl.products
            .iter()
            .map(|s| shown_share(s, pl.trajectory.zero_within()))
            .filter(|s| s.formed > 0.0)
            .map(|s| match s.selectivity {
                Some(x) => format!("{} {} %", s.species, sig(x * 100.0, 3)),
                None => format!("{} (not formed from the reference)", s.species),
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    let any_products = points
        .iter()
        .any(|p| p.plan.as_ref().is_ok_and(|pl| !products(pl).is_empty()));
    let width = points
        .iter()
        .map(|p| value(p.value).chars().count())
        .chain([header.chars().count()])
        .max()
        .unwrap_or(14);
    let mut o = format!("{header:>width$}  {:>14}", "time to target");
    if any_products {
        o.push_str(&format!("  products ({what})"));
    }
    o.push('\n');
    for p in points {
        let v = value(p.value);
        match &p.plan {
            Ok(pl) => {
                let t = match (pl.time, &pl.unreachable) {
                    (Some(t), _) => format_time(t),
                    (None, Some(u)) => format!(
                        "unreachable ({}): at best {}{}, {}",
                        short(u.why),
                        format_concentration_within(u.best_level, pl.trajectory.zero_within()),
                        super::plan::best_percent(pl),
                        super::plan::closest_when(u)
                    ),
                    (None, None) => "unreachable".into(),
                };
                let _ = write!(o, "{v:>width$}  {t:>14}");
                if any_products {
                    let _ = write!(o, "  {}", products(pl));
                }
                o.push('\n');
            }
            Err(e) => {
                let _ = writeln!(o, "{v:>width$}  failed: {e}");
            }
        }
    }
    let missed: Vec<String> = points
        .iter()
        .filter(|p| p.plan.as_ref().is_ok_and(|pl| pl.time.is_none()))
        .map(|p| value(p.value))
        .collect();
    if missed.len() == points.len() {
        let _ = writeln!(o, "NOT REACHABLE at any point of the sweep (exit 5)");
    } else if !missed.is_empty() {
        let _ = writeln!(
            o,
            "not reached at {} of {} points: {} {}",
            missed.len(),
            points.len(),
            header,
            missed.join(", ")
        );
    }
    o
}

fn short(w: crate::plan::Why) -> &'static str {
    match w {
        crate::plan::Why::Photostationary => "photostationary",
        crate::plan::Why::Exhausted => "material used up",
        crate::plan::Why::Horizon => "horizon",
        crate::plan::Why::Dark => "no light",
        crate::plan::Why::BelowFloor => "no light (below floor)",
    }
}
