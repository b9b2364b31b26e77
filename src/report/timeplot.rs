//! The one plot of quantities against time, used by `simulate` (concentrations, photons), `plan`
//! and the HTML report.
//!
//! What every such plot does alike:
//! - the legend stands in its own column right of the plotted area, never over a curve;
//! - a species keeps its network colour ([`palette`]); curves that coincide are told apart by
//!   dash patterns;
//! - the time axis turns logarithmic by itself when most of the change happens in the first
//!   [`EARLY_SHARE`] of the span ([`step_like`]), and the footer says so; it then starts at the
//!   first output time after zero;
//! - curves that dwarf the rest ([`dwarfs`]: a solvent, a scavenger in excess) get a panel and
//!   axis of their own above the others, with a note in the footer;
//! - a planning target is drawn as its level and the time it is reached;
//! - points are decimated per pixel column ([`decimate`]) before they become SVG.

use crate::report::decimate::Decimator;
use crate::report::palette;
use crate::report::ticks;
use crate::units::display;
use plotters::coord::Shift;
use plotters::element::DashedPathElement;
use plotters::prelude::*;

/// Figure size, px.
pub const WIDTH: u32 = 960;
/// Figure height, px (a panel for dwarfing curves takes part of it).
pub const HEIGHT: u32 = 580;
/// Pixel columns a curve is decimated to: no plotted area is wider.
pub const COLUMNS: usize = 800;
/// The share of the time span that counts as "the start" for [`step_like`].
pub const EARLY_SHARE: f64 = 0.01;
/// A curve whose largest value exceeds every other's by this factor or more dwarfs them: on one
/// axis they would sit in its bottom fifth.
pub const DWARF_RATIO: f64 = 5.0;
/// Tolerance, as a share of a panel's height, within which two curves coincide.
const COINCIDE: f64 = 0.01;
const FONT: &str = "sans-serif";
const TITLE_H: u32 = 40;
const LINE_H: u32 = 20;
const Y_LABEL_AREA: u32 = 80;
const MARGIN: u32 = 14;

/// How the time axis is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum TimeAxis {
    /// Linear from zero.
    Linear,
    /// Logarithmic because it was asked for.
    Log,
    /// Logarithmic because the run is [`step_like`] (the footer says so).
    Automatic,
}

impl TimeAxis {
    /// True for either logarithmic axis.
    pub fn is_log(self) -> bool {
        self != TimeAxis::Linear
    }

    /// The axis for a run: logarithmic when `asked`, else [`TimeAxis::Automatic`] when the
    /// first `n` columns of `states` (at `times`, s) are [`step_like`], else linear.
    pub fn choose(asked: bool, times: &[f64], states: &[Vec<f64>], n: usize) -> TimeAxis {
        if asked {
            TimeAxis::Log
        } else if step_like(times, states, n) {
            TimeAxis::Automatic
        } else {
            TimeAxis::Linear
        }
    }
}

/// True when more than half of all the change (the summed absolute steps of the first `n`
/// columns of `states` at `times`) happens within the first [`EARLY_SHARE`] of the time span:
/// on a linear axis the run would be a vertical step at its left edge.
pub fn step_like(times: &[f64], states: &[Vec<f64>], n: usize) -> bool {
    let (Some(&t0), Some(&t1)) = (times.first(), times.last()) else {
        return false;
    };
    let early_end = t0 + EARLY_SHARE * (t1 - t0);
    let (mut early, mut total) = (0.0, 0.0);
    for k in 1..times.len().min(states.len()) {
        let d: f64 = (0..n)
            .map(|i| (states[k][i] - states[k - 1][i]).abs())
            .filter(|d| d.is_finite())
            .sum();
        total += d;
        if times[k] <= early_end {
            early += d;
        }
    }
    total > 0.0 && early > 0.5 * total
}

/// Which of curves with these largest values dwarf the rest: the few (at most half) above the
/// first gap of [`DWARF_RATIO`] or more, counted from the top, with a curve above zero below it.
pub fn dwarfs(maxima: &[f64]) -> Vec<bool> {
    let mut order: Vec<usize> = (0..maxima.len()).filter(|&i| maxima[i] > 0.0).collect();
    order.sort_by(|&a, &b| maxima[b].total_cmp(&maxima[a]));
    let mut out = vec![false; maxima.len()];
    for k in 1..order.len() {
        if 2 * k > maxima.len() {
            break;
        }
        if maxima[order[k - 1]] >= DWARF_RATIO * maxima[order[k]] {
            for &i in &order[..k] {
                out[i] = true;
            }
            break;
        }
    }
    out
}

/// Familiar times, s: powers of ten below a minute, then minute, hour, day and year steps.
const TIMES: [f64; 17] = [
    1e-9,
    1e-6,
    1e-3,
    0.01,
    0.1,
    1.0,
    10.0,
    60.0,
    600.0,
    3600.0,
    36000.0,
    86400.0,
    864000.0,
    8640000.0,
    31557600.0,
    315576000.0,
    3155760000.0,
];

/// Labelled and light values (s) of a log time axis over `x0..x1` drawn `pixels` wide: familiar
/// times ([`TIMES`]), thinned so labels of about 8 characters do not touch; round values of the
/// axis' own decades when fewer than three familiar times fall inside.
fn time_ticks(x0: f64, x1: f64, pixels: f64) -> (Vec<f64>, Vec<f64>) {
    let inside: Vec<f64> = TIMES
        .iter()
        .copied()
        .filter(|t| *t >= x0 * (1.0 - 1e-9) && *t <= x1 * (1.0 + 1e-9))
        .collect();
    let (bold, light) = ticks::log_ticks(x0, x1, pixels, false);
    if inside.len() < 3 {
        return (bold, light);
    }
    let span = (x1 / x0).log10().max(1e-12);
    let mut kept: Vec<f64> = Vec::new();
    for t in inside {
        let clear = kept
            .last()
            .is_none_or(|&p| pixels * (t / p).log10() / span >= 9.0 * ticks::CHAR_WIDTH);
        if clear {
            kept.push(t);
        }
    }
    (kept, light)
}

/// What is plotted: time in s, values in SI (mol/L or einstein).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Concentrations, mol/L.
    Concentration,
    /// Cumulative photons, einstein.
    Photons,
}

impl Quantity {
    fn axis(self, max: f64) -> (f64, String) {
        match self {
            Quantity::Concentration => {
                let (f, u) = display::concentration(max);
                (f, format!("concentration ({u})"))
            }
            Quantity::Photons => {
                let (f, u) = display::photons(max);
                (f, format!("photons ({u})"))
            }
        }
    }

    fn format(self, v: f64) -> String {
        match self {
            Quantity::Concentration => display::format_concentration(v),
            Quantity::Photons => {
                let (f, u) = display::photons(v);
                format!("{} {u}", ticks::label(v / f))
            }
        }
    }
}

/// One curve: already decimated points (time s, value SI).
#[derive(Debug, Clone)]
pub struct Curve {
    /// Legend text.
    pub name: String,
    /// Line colour.
    pub colour: RGBColor,
    /// Index into [`palette::DASHES`] the curve starts from.
    pub dash: usize,
    /// (time s, value) in time order.
    pub points: Vec<(f64, f64)>,
}

/// A level to reach: drawn as a dashed line at `level` and, when reached, a mark at `time`.
#[derive(Debug, Clone)]
pub struct Target {
    /// Index of the curve the target is on.
    pub curve: usize,
    /// Level, SI.
    pub level: f64,
    /// When it is reached, s (None: not within the run).
    pub time: Option<f64>,
    /// The target as written ("Z-azo > 20 µM").
    pub text: String,
}

/// A time plot ready to draw.
#[derive(Debug, Clone)]
pub struct TimePlot {
    /// Title above the figure.
    pub title: String,
    /// What the curves are.
    pub quantity: Quantity,
    /// The time axis.
    pub axis: TimeAxis,
    /// The curves.
    pub curves: Vec<Curve>,
    /// Notes printed under the figure.
    pub notes: Vec<String>,
    /// A planning target.
    pub target: Option<Target>,
}

/// Where the time axis runs (s): from the start, or on a log axis from the first time after zero.
#[derive(Debug, Clone, Copy)]
pub struct Frame {
    /// Start, s.
    pub x0: f64,
    /// End, s.
    pub x1: f64,
    /// Logarithmic.
    pub log: bool,
}

impl Frame {
    /// The frame over output `times` (s).
    pub fn of(times: &[f64], axis: TimeAxis) -> Frame {
        let log = axis.is_log();
        let x1 = times.iter().copied().fold(0.0, f64::max);
        let x0 = if log {
            times.iter().copied().filter(|t| *t > 0.0).fold(f64::INFINITY, f64::min)
        } else {
            times.first().copied().unwrap_or(0.0).min(x1)
        };
        let x0 = if x0.is_finite() { x0 } else { x1 * 1e-6 };
        Frame { x0, x1, log }
    }

    /// A decimator for one curve on this frame.
    pub fn decimator(&self) -> Decimator {
        Decimator::new(self.x0, self.x1, COLUMNS, self.log)
    }
}

/// Pixel rectangles of a drawn plot: (left, top, right, bottom).
#[derive(Debug, Clone, Default, PartialEq)]
pub struct Layout {
    /// The plotted areas (one, or two with a panel for dwarfing curves).
    pub plots: Vec<(i32, i32, i32, i32)>,
    /// The legend column.
    pub legend: (i32, i32, i32, i32),
}

/// The SVG of `p`.
pub fn render(p: &TimePlot) -> String {
    render_with_layout(p).0
}

/// The SVG of `p` and where its parts went.
pub fn render_with_layout(p: &TimePlot) -> (String, Layout) {
    let mut svg = String::new();
    let mut layout = Layout::default();
    {
        let root = SVGBackend::with_string(&mut svg, (WIDTH, HEIGHT)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let _ = draw(&root, p, &mut layout);
        let _ = root.present();
    }
    (svg, layout)
}

/// The curves of one panel and the panel's scale.
struct Panel {
    members: Vec<usize>,
    ymax: f64,
    ymin: f64,
}

/// Dash pattern of each curve: its own, moved on by one for each earlier curve of the same
/// panel it coincides with.
fn dashes(p: &TimePlot, panels: &[Panel], frame: &Frame) -> Vec<usize> {
    let mut out: Vec<usize> = p.curves.iter().map(|c| c.dash).collect();
    let at = |pts: &[(f64, f64)], x: f64| -> Option<f64> {
        let k = pts.partition_point(|q| q.0 < x);
        if k == 0 || k >= pts.len() {
            return pts.get(k).filter(|q| q.0 == x).map(|q| q.1);
        }
        let (a, b) = (pts[k - 1], pts[k]);
        let f = if b.0 > a.0 { (x - a.0) / (b.0 - a.0) } else { 0.0 };
        Some(a.1 + f * (b.1 - a.1))
    };
    let samples: Vec<f64> = (0..=64)
        .map(|j| {
            let f = j as f64 / 64.0;
            if frame.log {
                frame.x0 * (frame.x1 / frame.x0).powf(f)
            } else {
                frame.x0 + f * (frame.x1 - frame.x0)
            }
        })
        .collect();
    // Each curve at the sample times once: the pairs below only compare these (a thousand
    // curves are half a million pairs).
    let sampled: Vec<Vec<Option<f64>>> = p
        .curves
        .iter()
        .map(|c| samples.iter().map(|&x| at(&c.points, x)).collect())
        .collect();
    for panel in panels {
        let tol = COINCIDE * (panel.ymax - panel.ymin).max(f64::MIN_POSITIVE);
        for (k, &b) in panel.members.iter().enumerate() {
            let same = panel.members[..k]
                .iter()
                .filter(|&&a| {
                    let mut compared = 0;
                    let close = sampled[a].iter().zip(&sampled[b]).all(|pair| match pair {
                        (Some(u), Some(v)) => {
                            compared += 1;
                            (u - v).abs() <= tol
                        }
                        _ => true,
                    });
                    close && compared > 0
                })
                .count();
            out[b] += same;
        }
    }
    out.iter().map(|d| d % palette::DASHES.len()).collect()
}

type DrawResult<'a> = Result<(), Box<dyn std::error::Error + 'a>>;

/// The time frame of `p`'s curves, their largest values and the panels they go on (the
/// dwarfing curves' panel first, when there is one).
fn arrange(p: &TimePlot) -> (Frame, Vec<f64>, Vec<Panel>) {
    let times: Vec<f64> = p.curves.iter().flat_map(|c| c.points.iter().map(|q| q.0)).collect();
    let mut frame = Frame::of(&times, p.axis);
    frame.x0 = times
        .iter()
        .copied()
        .filter(|t| !frame.log || *t > 0.0)
        .fold(f64::INFINITY, f64::min);
    if !frame.x0.is_finite() {
        frame.x0 = 0.0;
    }
    if !p.axis.is_log() {
        frame.x0 = frame.x0.min(0.0);
    }
    if frame.x1 <= frame.x0 {
        frame.x1 = if frame.log { frame.x0 * 10.0 } else { frame.x0 + 1.0 };
    }
    let maxima: Vec<f64> = p
        .curves
        .iter()
        .map(|c| c.points.iter().map(|q| q.1).fold(0.0, f64::max))
        .collect();
    let big = dwarfs(&maxima);
    let panel_of = |members: Vec<usize>| {
        let vals = || members.iter().flat_map(|&i| p.curves[i].points.iter().map(|q| q.1));
        let ymax = vals().fold(0.0, f64::max);
        let ymin = vals().fold(0.0, f64::min);
        Panel { members, ymax, ymin }
    };
    let mut panels = Vec::new();
    if big.iter().any(|b| *b) {
        panels.push(panel_of((0..p.curves.len()).filter(|&i| big[i]).collect()));
    }
    panels.push(panel_of((0..p.curves.len()).filter(|&i| !big[i]).collect()));
    (frame, maxima, panels)
}

/// The footer notes: the caller's, then why the axis is logarithmic, then which curves have a
/// panel apart.
fn notes_of(p: &TimePlot, maxima: &[f64], panels: &[Panel]) -> Vec<String> {
    let mut notes = p.notes.clone();
    if p.axis == TimeAxis::Automatic {
        notes.push(format!(
            "Log time axis: more than half of all the change in concentration (summed over the species) happens in the first {} % of the run; the axis starts at the first output time after 0.",
            ticks::label(100.0 * EARLY_SHARE)
        ));
    }
    if panels.len() == 2 {
        let names: Vec<String> = panels[0]
            .members
            .iter()
            .map(|&i| format!("{} (up to {})", p.curves[i].name, p.quantity.format(maxima[i])))
            .collect();
        notes.push(format!(
            "{} on the upper panel's own axis: on one axis the other curves would sit in its bottom fifth.",
            names.join(", ")
        ));
    }
    notes
}

fn draw<'a>(root: &DrawingArea<SVGBackend<'a>, Shift>, p: &TimePlot, layout: &mut Layout) -> DrawResult<'a> {
    let (frame, maxima, panels) = arrange(p);
    let dash = dashes(p, &panels, &frame);

    let notes = notes_of(p, &maxima, &panels);
    let (w, h) = root.dim_in_pixel();
    let body = root.titled(&p.title, (FONT, 22))?;
    let footer_h = if notes.is_empty() {
        0
    } else {
        LINE_H * notes.len() as u32 + 10
    };
    let (main, footer) = body.split_vertically(h - TITLE_H - footer_h);
    let longest = p
        .curves
        .iter()
        .map(|c| c.name.chars().count())
        .chain(p.target.iter().map(|t| t.text.chars().count() + 8))
        .max()
        .unwrap_or(0);
    let legend_w = (56 + 8 * longest as u32).clamp(150, 300);
    let (chart, legend) = main.split_horizontally(w - legend_w);

    // A log axis spans units: it runs in s and its labels name their own unit ("1 min", "1 d").
    let (tu, tname) = if frame.log { (1.0, "") } else { display::time(frame.x1) };
    let x_desc = if frame.log {
        "time (log scale)".to_string()
    } else {
        format!("time ({tname})")
    };
    let areas: Vec<DrawingArea<SVGBackend<'a>, Shift>> = if panels.len() == 2 {
        let (upper, lower) = chart.split_vertically((main.dim_in_pixel().1 as f64 * 0.3) as u32);
        vec![upper, lower]
    } else {
        vec![chart]
    };
    for (k, (panel, area)) in panels.iter().zip(&areas).enumerate() {
        let last = k + 1 == panels.len();
        let (yf, y_desc) = p.quantity.axis(panel.ymax.max(panel.ymin.abs()));
        let ytop = if panel.ymax > 0.0 { panel.ymax / yf * 1.05 } else { 1.0 };
        let ybot = if panel.ymin < 0.0 { panel.ymin / yf * 1.05 } else { 0.0 };
        let mut b = ChartBuilder::on(area);
        b.margin(MARGIN)
            .x_label_area_size(if last { 46 } else { 26 })
            .y_label_area_size(Y_LABEL_AREA);
        let (x0, x1) = (frame.x0 / tu, frame.x1 / tu);
        macro_rules! lines {
            ($chart:expr) => {{
                let mut c = $chart;
                let xfmt = |v: &f64| {
                    if frame.log {
                        display::format_time(*v)
                    } else {
                        ticks::label(*v)
                    }
                };
                let yfmt = |v: &f64| ticks::label(*v);
                let mut mesh = c.configure_mesh();
                mesh.y_desc(y_desc.clone())
                    .label_style((FONT, 14))
                    .x_label_formatter(&xfmt)
                    .y_label_formatter(&yfmt);
                if last {
                    mesh.x_desc(x_desc.clone());
                } else {
                    // A panel apart is short: few labels, no light grid.
                    mesh.y_labels(4).light_line_style(TRANSPARENT);
                }
                mesh.draw()?;
                for &i in &panel.members {
                    let curve = &p.curves[i];
                    let style = curve.colour.stroke_width(2);
                    let pts: Vec<(f64, f64)> = curve
                        .points
                        .iter()
                        .filter(|q| !frame.log || q.0 > 0.0)
                        .map(|q| (q.0 / tu, q.1 / yf))
                        .collect();
                    match palette::DASHES[dash[i]] {
                        None => {
                            c.draw_series(LineSeries::new(pts, style))?;
                        }
                        Some((on, off)) => {
                            c.draw_series(DashedLineSeries::new(pts, on, off, style))?;
                        }
                    }
                }
                if let Some(t) = p.target.as_ref().filter(|t| panel.members.contains(&t.curve)) {
                    let ink = palette::rgb(palette::INK_HEX);
                    let lv = t.level / yf;
                    c.draw_series(DashedLineSeries::new(
                        vec![(x0, lv), (x1, lv)],
                        6,
                        4,
                        ink.stroke_width(1),
                    ))?;
                    if let Some(at) = t.time.filter(|at| !frame.log || *at > 0.0) {
                        c.draw_series(DashedLineSeries::new(
                            vec![(at / tu, ybot), (at / tu, lv)],
                            6,
                            4,
                            ink.stroke_width(1),
                        ))?;
                        c.draw_series(std::iter::once(Circle::new((at / tu, lv), 5, ink.filled())))?;
                    }
                }
                let (xr, yr) = c.plotting_area().get_pixel_range();
                layout.plots.push((xr.start, yr.start, xr.end, yr.end));
            }};
        }
        if frame.log {
            let (xb, xl) = time_ticks(x0, x1, (w - legend_w - Y_LABEL_AREA - 2 * MARGIN) as f64);
            let xaxis = (x0..x1).log_scale().with_key_points(xb).with_light_points(xl);
            lines!(b.build_cartesian_2d(xaxis, ybot..ytop)?);
        } else {
            lines!(b.build_cartesian_2d(x0..x1, ybot..ytop)?);
        }
    }

    let (lx, ly) = legend.get_pixel_range();
    layout.legend = (lx.start, ly.start, lx.end, ly.end);
    draw_legend(&legend, p, &dash)?;
    for (k, n) in notes.iter().enumerate() {
        footer.draw(&Text::new(n.clone(), (16, 4 + LINE_H as i32 * k as i32), (FONT, 13)))?;
    }
    Ok(())
}

/// The legend column: one line sample and name per curve, then the target.
fn draw_legend<'a>(legend: &DrawingArea<SVGBackend<'a>, Shift>, p: &TimePlot, dash: &[usize]) -> DrawResult<'a> {
    let mut y = MARGIN as i32 + 8;
    let sample = |area: &DrawingArea<SVGBackend<'a>, Shift>, y: i32, colour: RGBColor, d: usize| -> DrawResult<'a> {
        let pts = vec![(6, y), (40, y)];
        match palette::DASHES[d] {
            None => area.draw(&PathElement::new(pts, colour.stroke_width(3)))?,
            Some((on, off)) => area.draw(&DashedPathElement::new(pts, on, off, colour.stroke_width(3)))?,
        }
        Ok(())
    };
    for (i, c) in p.curves.iter().enumerate() {
        sample(legend, y, c.colour, dash[i])?;
        legend.draw(&Text::new(c.name.clone(), (48, y - 8), (FONT, 15)))?;
        y += 22;
    }
    if let Some(t) = &p.target {
        y += 8;
        let ink = palette::rgb(palette::INK_HEX);
        sample(legend, y, ink, 1)?;
        legend.draw(&Text::new("target".to_string(), (48, y - 8), (FONT, 15)))?;
        y += 20;
        let level = format!("{} ({})", t.text, p.quantity.format(t.level));
        legend.draw(&Text::new(level, (8, y - 8), (FONT, 13)))?;
        y += 18;
        let when = match t.time {
            Some(at) => format!("reached at {}", display::format_time(at)),
            None => "not reached in the run".to_string(),
        };
        legend.draw(&Text::new(when, (8, y - 8), (FONT, 13)))?;
    }
    Ok(())
}

#[cfg(test)]
mod tests {
    use super::*;

    fn grid(n: usize, f: impl Fn(f64) -> Vec<f64>) -> (Vec<f64>, Vec<Vec<f64>>) {
        let times: Vec<f64> = (0..n).map(|k| 7200.0 * k as f64 / (n - 1) as f64).collect();
        let states = times.iter().map(|&t| f(t)).collect();
        (times, states)
    }

    #[test]
    fn a_step_at_the_start_gets_a_log_axis_and_a_steady_change_does_not() {
        // A photoswitch settling in ~10 s of a 2 h run (time constant 5 s).
        let (t, s) = grid(201, |t| {
            let e = 50e-6 * (0.56 + 0.44 * (-t / 5.0).exp());
            vec![e, 50e-6 - e]
        });
        assert!(step_like(&t, &s, 2));
        assert_eq!(TimeAxis::choose(false, &t, &s, 2), TimeAxis::Automatic);
        // A linear conversion over the run.
        let (t, s) = grid(201, |t| vec![1e-3 * (1.0 - t / 7200.0), 1e-3 * t / 7200.0]);
        assert!(!step_like(&t, &s, 2));
        assert_eq!(TimeAxis::choose(false, &t, &s, 2), TimeAxis::Linear);
        // First-order decay over a tenth of the run: linear is right.
        let (t, s) = grid(201, |t| vec![1e-3 * (-t / 720.0).exp()]);
        assert!(!step_like(&t, &s, 1));
        assert_eq!(TimeAxis::choose(true, &t, &s, 1), TimeAxis::Log);
    }

    #[test]
    fn a_solvent_dwarfs_the_chemistry_and_a_trace_species_does_not() {
        assert_eq!(dwarfs(&[11.0, 5e-5, 2e-5, 0.0]), vec![true, false, false, false]);
        assert_eq!(dwarfs(&[5e-5, 2e-5, 1e-9]), vec![false; 3]);
        assert_eq!(dwarfs(&[5e-5, 4e-5, 3e-5]), vec![false; 3]);
        assert_eq!(dwarfs(&[1.0, 0.5, 1e-4, 2e-4]), vec![true, true, false, false]);
    }

    /// A curve for a test: name, species index, points.
    type Spec<'a> = (&'a str, usize, Vec<(f64, f64)>);

    fn plot(curves: Vec<Spec>) -> TimePlot {
        TimePlot {
            title: "test".into(),
            quantity: Quantity::Concentration,
            axis: TimeAxis::Linear,
            curves: curves
                .into_iter()
                .map(|(n, i, points)| Curve {
                    name: n.into(),
                    colour: palette::species(i),
                    dash: palette::species_dash(i),
                    points,
                })
                .collect(),
            notes: Vec::new(),
            target: None,
        }
    }

    /// The x of the SVG text element whose content is `text`.
    fn text_x(svg: &str, text: &str) -> f64 {
        let end = svg.find(&format!(">\n{text}\n</text>")).expect("text drawn");
        let start = svg[..end].rfind("<text").expect("element");
        let tag = &svg[start..end];
        let x = tag.find(" x=\"").expect("x") + 4;
        tag[x..].split('"').next().and_then(|v| v.parse().ok()).expect("number")
    }

    #[test]
    fn the_legend_stands_right_of_every_plotted_area() {
        let up: Vec<(f64, f64)> = (0..50).map(|k| (k as f64, 1e-5 * k as f64)).collect();
        let down: Vec<(f64, f64)> = (0..50).map(|k| (k as f64, 1e-5 * (49 - k) as f64)).collect();
        let solvent: Vec<(f64, f64)> = (0..50).map(|k| (k as f64, 12.0)).collect();
        let (svg, layout) = render_with_layout(&plot(vec![("A", 0, up), ("B", 1, down), ("S", 2, solvent)]));
        assert_eq!(layout.plots.len(), 2, "the solvent has a panel of its own");
        for r in &layout.plots {
            assert!(
                layout.legend.0 >= r.2,
                "legend {:?} overlaps plot {:?}",
                layout.legend,
                r
            );
        }
        for name in ["A", "B", "S"] {
            assert!(text_x(&svg, name) > layout.plots[0].2 as f64);
        }
        assert!(svg.contains("upper panel"));
    }

    #[test]
    fn coinciding_curves_get_different_dashes() {
        let same: Vec<(f64, f64)> = (0..50).map(|k| (k as f64, 1e-5 * k as f64)).collect();
        let other: Vec<(f64, f64)> = (0..50).map(|k| (k as f64, 1e-5 * (49 - k) as f64)).collect();
        let p = plot(vec![("A", 0, same.clone()), ("B", 1, same), ("C", 2, other)]);
        let frame = Frame::of(&[0.0, 49.0], TimeAxis::Linear);
        let panels = [Panel {
            members: vec![0, 1, 2],
            ymax: 49e-5,
            ymin: 0.0,
        }];
        assert_eq!(dashes(&p, &panels, &frame), vec![0, 1, 0]);
    }
}
