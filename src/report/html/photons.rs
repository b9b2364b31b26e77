//! The photon ledger as a picture: where the incident photons went (each absorber, the
//! background, transmitted), and for each absorber how many of its photons changed a molecule
//! and how many returned it unchanged. Drawn here as plain SVG bars, with the numbers in tables.

use super::escape::{esc, inline_svg};
use super::page::{self, figure, num_cell, text_cell};
use super::{EINSTEIN, pick_unit, sig_or_dash};
use crate::kinetics::Trajectory;
use crate::kinetics::ledger::Ledger;
use crate::model::Model;
use crate::units::{format_time, sig};
use std::fmt::Write;

const BACKGROUND: &str = "#8f979d";
const TRANSMITTED: &str = "#ece8dc";
const PRODUCTIVE: &str = "#2f6f6a";
const RETURNED: &str = "#dcb56e";
const INK: &str = "#22292f";
const MUTED: &str = "#5f6b73";

/// One bar: a label and its segments (name, value, colour).
struct Bar {
    label: String,
    sub: String,
    segments: Vec<(String, f64, &'static str)>,
}

/// Horizontal stacked bars scaled to 100 % each, with the share written in wide segments and a
/// legend of the segment names below.
fn bars_svg(title: &str, bars: &[Bar], legend: &[(String, &'static str)]) -> String {
    const W: f64 = 960.0;
    const LABEL: f64 = 210.0;
    const BAR_W: f64 = W - LABEL - 30.0;
    const ROW: f64 = 46.0;
    const TOP: f64 = 40.0;
    let legend_cols = 3usize;
    let legend_rows = legend.len().div_ceil(legend_cols);
    let h = TOP + ROW * bars.len() as f64 + 24.0 + 22.0 * legend_rows as f64 + 10.0;
    let mut s = format!(
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{W}\" height=\"{h}\" viewBox=\"0 0 {W} {h}\" \
         font-family=\"system-ui, 'DejaVu Sans', Arial, sans-serif\">\n<title>{}</title>\n\
         <rect width=\"{W}\" height=\"{h}\" fill=\"#ffffff\"/>\n\
         <text x=\"16\" y=\"26\" font-size=\"16\" font-weight=\"600\" fill=\"{INK}\">{}</text>\n",
        esc(title),
        esc(title)
    );
    // Quarter marks behind the bars.
    for q in 0..=4 {
        let x = LABEL + BAR_W * q as f64 / 4.0;
        let _ = writeln!(
            s,
            "<line x1=\"{x:.1}\" y1=\"{:.1}\" x2=\"{x:.1}\" y2=\"{:.1}\" stroke=\"#e3e0d6\" stroke-width=\"1\"/>\
             <text x=\"{x:.1}\" y=\"{:.1}\" font-size=\"11\" fill=\"{MUTED}\" text-anchor=\"middle\">{} %</text>",
            TOP - 4.0,
            TOP + ROW * bars.len() as f64 - 8.0,
            TOP + ROW * bars.len() as f64 + 6.0,
            q * 25
        );
    }
    for (r, bar) in bars.iter().enumerate() {
        let y = TOP + ROW * r as f64;
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"14\" fill=\"{INK}\" text-anchor=\"end\">{}</text>\
             <text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\" fill=\"{MUTED}\" text-anchor=\"end\">{}</text>",
            LABEL - 12.0,
            y + 14.0,
            esc(&bar.label),
            LABEL - 12.0,
            y + 29.0,
            esc(&bar.sub)
        );
        let total: f64 = bar.segments.iter().map(|x| x.1.max(0.0)).sum();
        if total <= 0.0 {
            let _ = writeln!(
                s,
                "<text x=\"{LABEL}\" y=\"{:.1}\" font-size=\"12\" fill=\"{MUTED}\">nothing to show</text>",
                y + 20.0
            );
            continue;
        }
        let mut x = LABEL;
        for (name, v, colour) in &bar.segments {
            let w = BAR_W * v.max(0.0) / total;
            if w <= 0.0 {
                continue;
            }
            let share = 100.0 * v / total;
            let _ = writeln!(
                s,
                "<rect x=\"{x:.2}\" y=\"{:.1}\" width=\"{w:.2}\" height=\"28\" fill=\"{colour}\" stroke=\"#ffffff\" \
                 stroke-width=\"1\"><title>{}: {} %</title></rect>",
                y + 2.0,
                esc(name),
                sig(share, 3)
            );
            if w >= 46.0 {
                let light = *colour == TRANSMITTED || *colour == RETURNED;
                let _ = writeln!(
                    s,
                    "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" fill=\"{}\" text-anchor=\"middle\">{} %</text>",
                    x + w / 2.0,
                    y + 20.0,
                    if light { INK } else { "#ffffff" },
                    sig(share, 2)
                );
            }
            x += w;
        }
    }
    let ly = TOP + ROW * bars.len() as f64 + 28.0;
    let col_w = (W - 32.0) / legend_cols as f64;
    for (k, (name, colour)) in legend.iter().enumerate() {
        let lx = 16.0 + col_w * (k % legend_cols) as f64;
        let y = ly + 22.0 * (k / legend_cols) as f64;
        let _ = writeln!(
            s,
            "<rect x=\"{lx:.1}\" y=\"{:.1}\" width=\"14\" height=\"14\" fill=\"{colour}\" stroke=\"#b9b4a6\" \
             stroke-width=\"0.5\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"13\" fill=\"{INK}\">{}</text>",
            y - 11.0,
            lx + 20.0,
            y + 1.0,
            esc(name)
        );
    }
    s.push_str("</svg>\n");
    s
}

/// The ledger at the end of the run: two pictures and their tables.
pub fn section(model: &Model, tr: &Trajectory) -> String {
    let t = *tr.times.last().unwrap_or(&0.0);
    let l: Ledger = tr.ledger(model, tr.times.len() - 1);
    let (f, u) = pick_unit(l.incident, &EINSTEIN);
    let mut s = format!(
        "<p>Photons counted from the start to the end of the run ({}). In all {} {u} entered the sample; \
         the books balance to a relative {}.</p>\n",
        esc(&format_time(t)),
        esc(&sig(l.incident / f, 4)),
        esc(&sig(l.balance_error, 2))
    );
    let colour = |k: usize| crate::report::palette::species_hex(model.absorbers[k]);
    let segments = |absorbed: &[f64], background: f64, transmitted: f64| {
        let mut v: Vec<(String, f64, &'static str)> = absorbed
            .iter()
            .enumerate()
            .map(|(k, a)| (format!("absorbed by {}", l.absorbers[k]), *a, colour(k)))
            .collect();
        v.push(("background (solvent, vessel)".into(), background, BACKGROUND));
        v.push(("transmitted".into(), transmitted, TRANSMITTED));
        v
    };
    let mut bars: Vec<Bar> = l
        .sources
        .iter()
        .map(|src| Bar {
            label: src.source.clone(),
            sub: format!("{} {u} incident", sig(src.incident / f, 3)),
            segments: segments(&src.absorbed, src.background, src.transmitted),
        })
        .collect();
    if l.sources.len() > 1 {
        let absorbed: Vec<f64> = l.by_absorber.iter().map(|a| a.absorbed).collect();
        bars.push(Bar {
            label: "all sources".into(),
            sub: format!("{} {u} incident", sig(l.incident / f, 3)),
            segments: segments(&absorbed, l.background(), l.transmitted()),
        });
    }
    let mut legend: Vec<(String, &'static str)> = l
        .absorbers
        .iter()
        .enumerate()
        .map(|(k, a)| (format!("absorbed by {a}"), colour(k)))
        .collect();
    legend.push(("background (solvent, vessel)".into(), BACKGROUND));
    legend.push(("transmitted".into(), TRANSMITTED));
    s.push_str(&figure(
        &inline_svg(
            &bars_svg("Where the incident photons went", &bars, &legend),
            "ledger-in",
        ),
        "Each bar is one light source's incident photons (100 %), split by where they ended.",
    ));
    let absorber_bars: Vec<Bar> = l
        .by_absorber
        .iter()
        .map(|a| Bar {
            label: a.species.clone(),
            sub: format!("{} {u} absorbed", sig(a.absorbed / f, 3)),
            segments: vec![
                ("changed the molecule".into(), a.productive, PRODUCTIVE),
                ("returned it unchanged".into(), a.returned, RETURNED),
            ],
        })
        .collect();
    if !absorber_bars.is_empty() {
        s.push_str(&figure(
            &inline_svg(
                &bars_svg(
                    "What each absorber's photons did",
                    &absorber_bars,
                    &[
                        ("changed the molecule (productive)".into(), PRODUCTIVE),
                        ("returned it unchanged (return channels, 1 − Φ)".into(), RETURNED),
                    ],
                ),
                "ledger-abs",
            ),
            "Each bar is the photons one absorber took (100 %): productive photons changed the molecule; returned ones \
             left it as it was (return channels and the unreactive remainder of the quantum yields). An absorber with \
             no photochemistry returns every photon.",
        ));
    }
    // Tables with the numbers.
    let pct = |v: f64| {
        if l.incident > 0.0 {
            sig(100.0 * v / l.incident, 3)
        } else {
            "—".into()
        }
    };
    let mut rows: Vec<String> = l
        .by_absorber
        .iter()
        .map(|a| {
            format!(
                "{}{}{}",
                text_cell(&format!("absorbed by {}", a.species)),
                num_cell(&sig(a.absorbed / f, 4)),
                num_cell(&pct(a.absorbed))
            )
        })
        .collect();
    let bg = l.background();
    let tx = l.transmitted();
    rows.push(format!(
        "{}{}{}",
        text_cell("background (solvent, vessel)"),
        num_cell(&sig(bg / f, 4)),
        num_cell(&pct(bg))
    ));
    rows.push(format!(
        "{}{}{}",
        text_cell("transmitted"),
        num_cell(&sig(tx / f, 4)),
        num_cell(&pct(tx))
    ));
    rows.push(format!(
        "{}{}{}",
        text_cell("incident, in all"),
        num_cell(&sig(l.incident / f, 4)),
        num_cell(&pct(l.incident))
    ));
    let h = format!("photons ({u})");
    s.push_str(&page::table(
        "Where the photons went, all sources together",
        &[("destination", false), (&h, true), ("share of incident (%)", true)],
        &rows,
    ));
    let (figure, detail) = crate::report::summary::inner_filter_text(&l);
    let _ = writeln!(
        s,
        "<p>Inner filter: {} ({}).</p>\n<p>Absorbed and led to no reaction: {} % of the incident photons, taken by species \
         that returned the molecule unchanged or have no photochemistry (the background is counted apart).</p>",
        esc(&figure),
        esc(&detail),
        esc(&sig(100.0 * l.unproductive_fraction, 3))
    );
    let rows: Vec<String> = l
        .by_absorber
        .iter()
        .flat_map(|a| {
            let share = |v: f64| {
                if a.absorbed > 0.0 {
                    sig(100.0 * v / a.absorbed, 3)
                } else {
                    "—".into()
                }
            };
            let mut r = vec![format!(
                "{}{}{}{}",
                text_cell(&a.species),
                text_cell("all its photons"),
                num_cell(&sig(a.absorbed / f, 4)),
                num_cell(&share(a.absorbed))
            )];
            for (label, v) in &a.outcomes {
                r.push(format!(
                    "{}{}{}{}",
                    text_cell(""),
                    text_cell(label),
                    num_cell(&sig(v / f, 4)),
                    num_cell(&share(*v))
                ));
            }
            r
        })
        .collect();
    s.push_str(&page::table(
        "Photons by absorber and outcome",
        &[
            ("absorber", false),
            ("outcome", false),
            (&h, true),
            ("share of its photons (%)", true),
        ],
        &rows,
    ));
    if !l.products.is_empty() {
        let (fm, um) = pick_unit(
            l.products.iter().map(|p| p.formed.abs()).fold(0.0, f64::max),
            &[
                (1.0, "mol"),
                (1e-3, "mmol"),
                (1e-6, "µmol"),
                (1e-9, "nmol"),
                (1e-12, "pmol"),
            ],
        );
        let rows: Vec<String> = l
            .products
            .iter()
            .map(|p| {
                format!(
                    "{}{}{}{}",
                    text_cell(&p.species),
                    num_cell(&sig(p.formed / fm, 4)),
                    num_cell(&sig_or_dash(p.photons_per_molecule, 4)),
                    num_cell(&sig_or_dash(p.apparent_quantum_yield, 3))
                )
            })
            .collect();
        let hf = format!("formed ({um})");
        s.push_str(&page::table(
            "Photon cost of each product reached through a photochemical step, over the run",
            &[
                ("product", false),
                (&hf, true),
                ("photons per molecule formed (photons)", true),
                (
                    "apparent Φ, per photon absorbed by the whole sample (mol/einstein)",
                    true,
                ),
            ],
            &rows,
        ));
    }
    if !l.thermal_products.is_empty() {
        let list: Vec<String> = l
            .thermal_products
            .iter()
            .map(|p| format!("{} {} mol", p.species, sig(p.formed, 4)))
            .collect();
        let _ = writeln!(
            s,
            "<p>Formed thermally, no photon cost (thermal co-products: neither formed by a photochemical step nor the principal product of a thermal step fed by a photoproduct): {}.</p>",
            esc(&list.join(", "))
        );
    }
    s.push_str(&page::assumption(
        "at each wavelength the fraction absorbed is 1 − 10^(−A), shared among absorbers in proportion to εcl and \
         with the background; the photon cost counts every photon absorbed by any species, inner filters included, and is given only for \
         products reached through a photochemical step.",
    ));
    s
}
