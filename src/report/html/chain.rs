//! One molecule followed as an absorbing Markov chain: yields, photons per product with their
//! spread, cycles, the photon-count histogram and the largest sensitivities.

use super::escape::{esc, inline_svg};
use super::page::{self, figure, num_cell, text_cell};
use super::{TIME, pick_unit, sig_or_dash};
use crate::study::{ChainStudy, ClosedStudy};
use crate::units::{format_time, sig};
use std::fmt::Write;

/// How many sensitivities the report lists.
pub const TOP_SENSITIVITIES: usize = 8;

/// The chain's mean time against the kinetics: the verdict, and why they differ when they do.
fn kinetics_check(sm: &crate::report::chain::Summary) -> String {
    let Some(a) = &sm.kinetics_check else {
        return sm.kinetics_check_skipped.as_ref().map_or_else(String::new, |why| {
            format!(
                "<p class=\"note\">The chain's mean time was not checked against the kinetics: {}.</p>\n",
                esc(why)
            )
        });
    };
    let headline = esc(&upper_first(&a.headline()));
    let mut s = if a.agree {
        format!("<p id=\"chain-check\" class=\"note\">{headline}.</p>\n")
    } else {
        let mut d = format!("<div id=\"chain-check\" class=\"caution\"><p>{headline}. Why:</p>\n<ul>\n");
        for r in &a.reasons {
            let _ = writeln!(d, "<li>{}</li>", esc(r));
        }
        d.push_str("</ul></div>\n");
        d
    };
    let _ = writeln!(s, "<p class=\"note\">How the check is made: {}.</p>", esc(&a.method));
    match (&a.yields, &a.yields_skipped) {
        (Some(y), _) => {
            let class = if y.agree { "note" } else { "caution" };
            let _ = writeln!(
                s,
                "<div id=\"chain-yield-check\" class=\"{class}\"><p>{}.</p>\n<ul>",
                esc(&upper_first(&y.headline()))
            );
            for l in y.end_lines() {
                let _ = writeln!(s, "<li>{}</li>", esc(&l));
            }
            for r in &y.reasons {
                let _ = writeln!(s, "<li>Why: {}</li>", esc(r));
            }
            let _ = writeln!(
                s,
                "</ul></div>\n<p class=\"note\">How the yields are compared: {}.</p>",
                esc(&y.method)
            );
        }
        (None, Some(why)) => {
            let _ = writeln!(s, "<p class=\"note\">The yields were not compared: {}.</p>", esc(why));
        }
        (None, None) => {}
    }
    s
}

/// The chain's results, the photostationary state of a closed switch (`closed`), or why the
/// chain does not apply to this network.
pub fn section(chain: &Result<ChainStudy, String>, closed: Option<&ClosedStudy>) -> String {
    let c = match (chain, closed) {
        (Ok(c), _) => c,
        (Err(_), Some(s)) => return super::switch::section(s),
        (Err(why), None) => {
            return format!(
                "<p class=\"missing\">The single-molecule analysis does not apply to this network: {}.</p>\n\
                 <p class=\"note\">A molecule followed here must be able to end somewhere (a product, or a species \
                 with no way out). The kinetics and the photon ledger above do not need one.</p>\n",
                esc(why.trim_end_matches('.'))
            );
        }
    };
    let sm = &c.summary;
    let mut s = format!(
        "<p>{}. The chain has {} states. A molecule absorbs on average {} photons before it ends; it takes {} \
         under the light (light assumed: {}).</p>\n",
        esc(&upper_first(&sm.start)),
        sm.states,
        esc(&sig(sm.photons_per_molecule, 4)),
        esc(&format_time(sm.time_mean_s)),
        esc(&sm.light)
    );
    s.push_str(&kinetics_check(sm));
    for n in &sm.notes {
        s.push_str(&page::assumption(n));
    }
    let zero = sm.yield_zero();
    let ends: Vec<_> = sm.ends.iter().filter(|e| zero.shown(e.yield_fraction) > 0.0).collect();
    let tmax = ends.iter().filter_map(|e| e.time_mean_s).fold(0.0, f64::max);
    let (tf, tu) = pick_unit(tmax, &TIME);
    let rows: Vec<String> = ends
        .iter()
        .map(|e| {
            format!(
                "{}{}{}{}{}{}{}",
                text_cell(&e.species),
                text_cell(if e.product { "product" } else { "no way out" }),
                num_cell(&sig(100.0 * e.yield_fraction, 4)),
                num_cell(&sig_or_dash(e.photons_mean, 4)),
                num_cell(&sig_or_dash(e.photons_sd, 3)),
                num_cell(&sig_or_dash(e.quantum_yield, 3)),
                num_cell(&sig_or_dash(e.time_mean_s.map(|t| t / tf), 3))
            )
        })
        .collect();
    let ht = format!("mean time to it ({tu})");
    // Where the kinetics of the mixture disagree with the chain, the table says so where its
    // numbers are read, not only in the box above it.
    let disagree = sm
        .kinetics_check
        .as_ref()
        .is_some_and(|a| !a.agree || a.yields.as_ref().is_some_and(|y| !y.agree));
    let caption = if disagree {
        "How a followed molecule ends: one molecule on its own, with the light of the start (the kinetics of \
         the mixture DISAGREE: see the check above before quoting these yields and times)"
    } else {
        "How a followed molecule ends"
    };
    s.push_str(&page::table(
        caption,
        &[
            ("ends as", false),
            ("kind", false),
            ("yield (%)", true),
            ("photons absorbed, mean (per molecule)", true),
            ("photons absorbed, sd (per molecule)", true),
            ("Φ overall (mol/einstein)", true),
            (&ht, true),
        ],
        &rows,
    ));
    s.push_str(
        "<p class=\"note\">Photons are counted per molecule that ends as the given species (conditional on \
         that end), with their standard deviation (sd); Φ overall is molecules of it per photon absorbed by the \
         followed molecule, whatever it became.</p>\n",
    );
    if !sm.returns.is_empty() {
        let rows: Vec<String> = sm
            .returns
            .iter()
            .map(|r| format!("{}{}", text_cell(&r.channel), num_cell(&sig(r.expected, 4))))
            .collect();
        s.push_str("<h3>Cycles</h3>\n");
        s.push_str(&page::table(
            "How often the molecule goes round before it ends",
            &[
                ("return channel or photon that changed nothing", false),
                ("expected times per molecule (count)", true),
            ],
            &rows,
        ));
    }
    if c.analysis.distribution.is_some() {
        s.push_str("<h3>Photon-count distribution</h3>\n");
        let totals: Vec<f64> = c
            .analysis
            .distribution
            .as_ref()
            .map(|d| d.p.iter().map(|r| r.iter().sum()).collect())
            .unwrap_or_default();
        let (svg, shown) = histogram(&totals, sm.photons_per_molecule);
        let mut caption = "Probability that a followed molecule absorbs n photons before it ends".to_string();
        if let (Some(t), Some(n)) = (sm.distribution_tail, sm.distribution_max_photons) {
            caption.push_str(&format!(
                ", drawn up to {shown} photons (99.9 % of it); computed up to {n} photons, probability left beyond: {}",
                sig(t, 2)
            ));
        }
        if sm.distribution_truncated {
            caption.push_str("; cut at the photon limit before its tail bound");
        }
        caption.push('.');
        s.push_str(&figure(&inline_svg(&svg, "hist"), &caption));
    }
    let main = (0..sm.ends.len())
        .max_by(|&i, &j| sm.ends[i].yield_fraction.total_cmp(&sm.ends[j].yield_fraction))
        .unwrap_or(0);
    if let Some(end) = sm.ends.get(main)
        && !sm.sensitivities.is_empty()
    {
        s.push_str("<h3>Largest sensitivities</h3>\n");
        let rows: Vec<String> = sm
            .sensitivities
            .iter()
            .take(TOP_SENSITIVITIES)
            .map(|x| {
                // round-off reads 0 (`Summary::sensitivity_zero`)
                let (dy_zero, el_zero) = sm.sensitivity_zero(x);
                let el = x
                    .elasticity_photons
                    .get(main)
                    .copied()
                    .flatten()
                    .map(|v| el_zero.shown(v));
                let dy = x.yield_derivative.get(main).copied().map(|v| dy_zero.shown(v));
                let per_barrier = x
                    .photons_per_barrier
                    .as_ref()
                    .and_then(|b| b.get(main).copied().flatten())
                    .map(|b| if el == Some(0.0) { 0.0 } else { b });
                let (v, u) = crate::units::display::readable_in(&x.unit, x.value, sm.energy_unit);
                let per_barrier = per_barrier
                    .map(|b| b * sm.energy_unit.factor() / crate::units::display::EnergyUnit::KcalPerMol.factor());
                format!(
                    "{}{}{}{}{}{}",
                    text_cell(&x.parameter),
                    num_cell(&sig(v, 4)),
                    text_cell(if u.is_empty() { "—" } else { &u }),
                    num_cell(&el.map_or_else(|| "—".into(), |v| format!("{v:+.3}"))),
                    num_cell(&sig_or_dash(dy, 3)),
                    num_cell(&per_barrier.map_or_else(|| "—".into(), |v| format!("{v:+.3}")))
                )
            })
            .collect();
        let caption = format!(
            "What moves the photon cost of {} most (the {} largest of {})",
            end.species,
            rows.len(),
            sm.sensitivities.len()
        );
        let per_barrier_head = format!("d ln photons / d ΔG‡ (per {})", sm.energy_unit.spelling());
        s.push_str(&page::table(
            &caption,
            &[
                ("parameter", false),
                ("value", true),
                ("unit", false),
                ("d ln photons / d ln p", true),
                ("d yield / d p (1/unit)", true),
                (&per_barrier_head, true),
            ],
            &rows,
        ));
        s.push_str(&format!(
            "<p class=\"note\">{}.</p>\n",
            esc(&upper_first(&sm.sensitivity_method))
        ));
    }
    s.push_str(&page::assumption(
        "one molecule at a time in a fixed environment: bimolecular steps linearised at the partner concentrations \
         named above, light shared at the initial concentrations, and where a step has several products the \
         molecule follows the first one written.",
    ));
    s
}

/// `text` with its first letter in upper case.
/// `text` with its first letter in upper case.
pub(super) fn upper_first(text: &str) -> String {
    let mut c = text.chars();
    c.next()
        .map(|f| f.to_uppercase().collect::<String>() + c.as_str())
        .unwrap_or_default()
}

/// A round step of about `span / 5`: 1, 2 or 5 times a power of ten.
fn tick_step(span: f64) -> f64 {
    let raw = (span / 5.0).max(1e-300);
    let p = 10f64.powf(raw.log10().floor());
    [1.0, 2.0, 5.0, 10.0]
        .into_iter()
        .map(|m| m * p)
        .find(|v| *v >= raw)
        .unwrap_or(10.0 * p)
}

/// The photon-count histogram as SVG: P(N = n) for `p[n]`, drawn up to the count that holds
/// 99.9 % of the probability (counts grouped into at most 120 bars, each bar the mean P over its
/// group), with the mean `mean` marked. Returns the SVG and the largest count drawn.
pub fn histogram(p: &[f64], mean: f64) -> (String, usize) {
    const W: f64 = 960.0;
    const H: f64 = 340.0;
    const L: f64 = 78.0;
    const R: f64 = 24.0;
    const T: f64 = 22.0;
    const B: f64 = 52.0;
    let mut cum = 0.0;
    let mut last = p.len().saturating_sub(1);
    for (n, v) in p.iter().enumerate() {
        cum += v;
        if cum >= 0.999 {
            last = n;
            break;
        }
    }
    let last = last.max(10).min(p.len().saturating_sub(1));
    let group = (last + 1).div_ceil(120).max(1);
    let bars: Vec<(usize, f64)> = p[..=last.min(p.len().saturating_sub(1))]
        .chunks(group)
        .enumerate()
        .map(|(i, c)| (i * group, c.iter().sum::<f64>() / group as f64))
        .collect();
    let xmax = (bars.len() * group) as f64;
    let ymax_raw = bars.iter().map(|b| b.1).fold(0.0, f64::max).max(1e-300);
    let ystep = tick_step(ymax_raw);
    let ymax = (ymax_raw / ystep).ceil() * ystep;
    let x = |n: f64| L + (W - L - R) * n / xmax.max(1.0);
    let y = |v: f64| T + (H - T - B) * (1.0 - v / ymax);
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{W}\" height=\"{H}\" viewBox=\"0 0 {W} {H}\" \
         font-family=\"system-ui, 'DejaVu Sans', Arial, sans-serif\">\n<title>photons absorbed per molecule</title>\n\
         <rect width=\"{W}\" height=\"{H}\" fill=\"#ffffff\"/>\n"
    );
    let mut v = 0.0;
    while v <= ymax * (1.0 + 1e-9) {
        let _ = writeln!(
            s,
            "<line x1=\"{L}\" x2=\"{:.1}\" y1=\"{:.1}\" y2=\"{:.1}\" stroke=\"#ebe8df\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" fill=\"#5f6b73\" text-anchor=\"end\">{}</text>",
            W - R,
            y(v),
            y(v),
            L - 8.0,
            y(v) + 4.0,
            sig(v, 3)
        );
        v += ystep;
    }
    let xstep = tick_step(xmax).max(1.0).round();
    let mut n = 0.0;
    while n <= xmax + 1e-9 {
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" x2=\"{:.1}\" y1=\"{:.1}\" y2=\"{:.1}\" stroke=\"#8f979d\"/>\
             <text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" fill=\"#5f6b73\" text-anchor=\"middle\">{}</text>",
            x(n),
            x(n),
            H - B,
            H - B + 5.0,
            x(n),
            H - B + 20.0,
            sig(n, 6)
        );
        n += xstep;
    }
    let bw = (x(group as f64) - x(0.0)).max(0.5);
    for (n0, v) in &bars {
        let _ = writeln!(
            s,
            "<rect x=\"{:.2}\" y=\"{:.2}\" width=\"{:.2}\" height=\"{:.2}\" fill=\"#3b6e8f\"{}/>",
            x(*n0 as f64),
            y(*v),
            if bw > 3.0 { bw - 1.0 } else { bw },
            (H - B - y(*v)).max(0.0),
            if bw > 3.0 {
                ""
            } else {
                " stroke=\"#3b6e8f\" stroke-width=\"0.3\""
            }
        );
    }
    let _ = writeln!(
        s,
        "<line x1=\"{L}\" x2=\"{:.1}\" y1=\"{:.1}\" y2=\"{:.1}\" stroke=\"#22292f\"/>",
        W - R,
        H - B,
        H - B
    );
    if mean.is_finite() && mean >= 0.0 && mean <= xmax {
        let _ = writeln!(
            s,
            "<line x1=\"{:.1}\" x2=\"{:.1}\" y1=\"{T}\" y2=\"{:.1}\" stroke=\"#c07a3a\" stroke-width=\"2\" \
             stroke-dasharray=\"6 4\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"13\" fill=\"#8a4b12\">mean {}</text>",
            x(mean),
            x(mean),
            H - B,
            x(mean) + 6.0,
            T + 14.0,
            sig(mean, 3)
        );
    }
    let _ = writeln!(
        s,
        "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"13\" fill=\"#22292f\" text-anchor=\"middle\">photons absorbed \
         before the molecule ends, n</text>",
        (L + W - R) / 2.0,
        H - 12.0
    );
    let ylabel = if group == 1 {
        "P(N = n)".to_string()
    } else {
        format!("P(N = n), mean over {group} counts")
    };
    let _ = writeln!(
        s,
        "<text transform=\"translate(18,{:.1}) rotate(-90)\" font-size=\"13\" fill=\"#22292f\" \
         text-anchor=\"middle\">{}</text>",
        (T + H - B) / 2.0,
        super::escape::esc(&ylabel)
    );
    s.push_str("</svg>\n");
    (s, bars.len() * group - 1)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn histogram_draws_the_bulk_and_marks_the_mean() {
        // A geometric distribution P(N = n) = (1 − q) q^n with q = 0.9: mean q / (1 − q) = 9
        // (common practice), and 99.9 % of it lies below n = ln(0.001) / ln(0.9) ≈ 65.6.
        let q: f64 = 0.9;
        let p: Vec<f64> = (0..2000).map(|n| (1.0 - q) * q.powi(n)).collect();
        let (svg, shown) = histogram(&p, 9.0);
        assert_eq!(shown, 65);
        let doc = roxmltree::Document::parse(&svg).expect("XML");
        let bars = doc.descendants().filter(|n| n.has_tag_name("rect")).count() - 1;
        assert_eq!(bars, 66, "one bar per count up to 65");
        assert!(svg.contains("mean 9"));
        assert_eq!(tick_step(1000.0), 200.0);
        assert_eq!(tick_step(0.05), 0.01);
    }
}
