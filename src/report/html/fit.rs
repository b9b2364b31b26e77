//! The fit to data and the comparison of rival networks: parameter table, goodness of fit,
//! correlations, identifiability warnings, data against fit, and the ranking.

use super::escape::{esc, inline_svg};
use super::page::{self, num_cell, text_cell};
use crate::report::fit as rf;
use crate::study::FitStudy;
use crate::units::sig;

/// A parameter's unit as a header shows it.
fn unit_label(unit: &str) -> String {
    if unit.is_empty() {
        "dimensionless".into()
    } else {
        unit.into()
    }
}

/// `v` to `n` figures, or "— (on the edge)" when it is not defined.
fn or_edge(v: f64, n: usize) -> String {
    if v.is_finite() {
        sig(v, n)
    } else {
        "— (on the edge)".into()
    }
}

/// The fit section.
pub fn section(f: &FitStudy) -> String {
    let r = &f.fitted.result;
    let s = &r.solution;
    let names: Vec<String> = f.experiments.iter().map(|e| format!("“{}”", e.name)).collect();
    let mut o = String::new();
    if let Some(stop) = &r.stopped {
        o.push_str(&format!(
            "<div class=\"caution\"><strong>{}</strong></div>\n",
            esc(&rf::not_converged_text(stop, s.chi2))
        ));
    }
    o.push_str(&format!(
        "<p>{} fitted to {} observations from {} experiment(s) ({}): {} free parameter(s), {} degrees of freedom; \
         search ended: {} after {} evaluations.</p>\n",
        esc(&f.network),
        r.n,
        f.experiments.len(),
        esc(&names.join(", ")),
        r.free.len(),
        s.dof,
        esc(&s.termination),
        s.evaluations
    ));
    // Parameters as columns, so each header carries its unit.
    let mut headers: Vec<(String, bool)> = vec![("".into(), false)];
    let mut scales = Vec::new();
    for (i, p) in r.free.iter().enumerate() {
        let (v, u) = crate::units::display::readable_in(p.unit, s.values[i], r.energy_unit);
        scales.push(if s.values[i] != 0.0 { v / s.values[i] } else { 1.0 });
        headers.push((format!("{} ({})", p.key, unit_label(&u)), true));
    }
    let row = |label: &str, cell: &dyn Fn(usize) -> String| {
        let mut t = text_cell(label);
        for i in 0..r.free.len() {
            t.push_str(&num_cell(&cell(i)));
        }
        t
    };
    let rows = vec![
        row("fitted value", &|i| sig(s.values[i] * scales[i], 6)),
        row("± standard error", &|i| or_edge(s.standard_errors[i] * scales[i], 3)),
        row("95 % interval, low", &|i| or_edge(s.intervals[i].0 * scales[i], 5)),
        row("95 % interval, high", &|i| or_edge(s.intervals[i].1 * scales[i], 5)),
        row("95 % interval taken on the", &|i| {
            format!("{} scale", r.free[i].transform.scale_name())
        }),
        row("start (the file's value)", &|i| sig(r.free[i].start * scales[i], 6)),
    ];
    let h: Vec<(&str, bool)> = headers.iter().map(|(t, n)| (t.as_str(), *n)).collect();
    o.push_str(&page::table("Fitted parameters", &h, &rows));
    o.push_str(&format!(
        "<p>χ² = <strong>{}</strong>, reduced χ² = <strong>{}</strong> ({}); AICc = {}, BIC = {}.{}</p>\n",
        esc(&sig(s.chi2, 6)),
        esc(&sig(s.reduced_chi2, 4)),
        esc(r.errors.describe()),
        esc(&sig(r.aicc, 6)),
        esc(&sig(r.bic, 6)),
        if r.weighted {
            ""
        } else {
            " Some observations carry no standard deviation and weigh 1 in their unit."
        }
    ));
    if r.free.len() > 1 {
        let mut h: Vec<String> = vec!["".into()];
        h.extend(r.free.iter().map(|p| format!("{} (r)", p.key)));
        let hs: Vec<(&str, bool)> = h.iter().enumerate().map(|(k, t)| (t.as_str(), k > 0)).collect();
        let rows: Vec<String> = (0..r.free.len())
            .map(|i| {
                let mut t = text_cell(&r.free[i].key);
                for j in 0..r.free.len() {
                    t.push_str(&num_cell(&crate::report::fit::correlation_text(s.correlation[(i, j)])));
                }
                t
            })
            .collect();
        o.push_str(&page::table(
            "Correlation of the fitted parameters (linearised, at the optimum)",
            &hs,
            &rows,
        ));
    }
    let goodness = format!(
        "<strong>Goodness of fit</strong>: {}<ul>\n{}</ul>",
        esc(&r.goodness.verdict()),
        r.goodness
            .lines()
            .iter()
            .map(|l| format!("<li>{}</li>\n", esc(l)))
            .collect::<String>()
    );
    if r.goodness.fails() {
        o.push_str(&format!("<div class=\"caution\">{goodness}</div>\n"));
    } else {
        o.push_str(&format!("<div>{goodness}</div>\n"));
    }
    if r.warnings.is_empty() {
        o.push_str("<p>Identifiability: no warnings.</p>\n");
    } else {
        o.push_str("<div class=\"caution\"><strong>Identifiability</strong><ul>\n");
        for w in &r.warnings {
            o.push_str(&format!("<li>{}</li>\n", esc(w)));
        }
        o.push_str("</ul></div>\n");
    }
    let stem = stem(&f.network);
    let svg = rf::data_svg(
        &format!("{stem}: data and fit"),
        &f.experiments,
        &f.species,
        &[(stem.clone(), f.fitted.curves.clone())],
    );
    o.push_str(&page::figure(
        &inline_svg(&svg, "fit"),
        "Measured points (with their standard deviations) against the fitted curves, per experiment and species.",
    ));
    o.push_str(&format!(
        "<p class=\"note\">The other sections of this page use the file's values, not the fitted ones; \
         <code>photoledger fit {} --data …</code> writes the fitted network as <code>{}.fitted.toml</code>.</p>\n",
        esc(&f.network),
        esc(&stem)
    ));
    o.push_str(&page::assumption(&format!(
        "Least squares weighted by each point's standard deviation; standard errors, intervals and correlations \
         from the linearised model at the optimum ({}), which can understate the uncertainty of strongly \
         non-linear or poorly determined parameters.",
        s.interval_method().describe()
    )));
    o
}

/// The file name without folder and `.toml`.
fn stem(network: &str) -> String {
    std::path::Path::new(network)
        .file_stem()
        .map_or_else(|| network.to_string(), |s| s.to_string_lossy().to_string())
}

/// The comparison section (only when there are rivals).
pub fn comparison(f: &FitStudy) -> Option<String> {
    let ranking = f.ranking.as_ref()?;
    let all: Vec<(&str, &crate::fit::run::Fitted)> = std::iter::once((f.network.as_str(), &f.fitted))
        .chain(f.rivals.iter().map(|(n, x)| (n.as_str(), x)))
        .collect();
    let best = ranking.order.first().map_or(0.0, |&i| all[i].1.result.aicc);
    let rows: Vec<String> = ranking
        .order
        .iter()
        .enumerate()
        .map(|(k, &i)| {
            let r = &all[i].1.result;
            format!(
                "{}{}{}{}{}{}{}{}",
                text_cell(&(k + 1).to_string()),
                text_cell(all[i].0),
                num_cell(&r.free.len().to_string()),
                num_cell(&sig(r.solution.chi2, 6)),
                num_cell(&sig(r.aicc, 6)),
                num_cell(&sig(r.aicc - best, 3)),
                num_cell(&sig(r.bic, 6)),
                num_cell(&format!("{:.3}", ranking.weights[i]))
            )
        })
        .collect();
    let mut o = format!(
        "<p>{} and {} rival(s) fitted to the same data, each freeing its own <code>[fit] free</code> list, ranked by \
         AICc.</p>\n",
        esc(&f.network),
        f.rivals.len()
    );
    o.push_str(&page::table(
        "Rival networks ranked by AICc",
        &[
            ("rank", false),
            ("network", false),
            ("free (count)", true),
            ("χ² (no unit)", true),
            ("AICc (no unit)", true),
            ("ΔAICc (no unit)", true),
            ("BIC (no unit)", true),
            ("Akaike weight (fraction)", true),
        ],
        &rows,
    ));
    o.push_str(
        "<p class=\"note\">Akaike weights from AICc; a ΔAICc above about 4–7 is commonly read as clear support for \
         the lower (common practice).</p>\n",
    );
    if let Some(d) = &ranking.disagreement {
        o.push_str(&format!("<p class=\"lede\">The {}.</p>\n", esc(d)));
    }
    let warned: Vec<String> = all
        .iter()
        .flat_map(|(n, x)| x.result.warnings.iter().map(move |w| format!("{n}: {w}")))
        .collect();
    if !warned.is_empty() {
        o.push_str("<div class=\"caution\"><strong>Identifiability</strong><ul>\n");
        for w in &warned {
            o.push_str(&format!("<li>{}</li>\n", esc(w)));
        }
        o.push_str("</ul></div>\n");
    }
    let models: Vec<(String, Vec<_>)> = ranking
        .order
        .iter()
        .map(|&i| (stem(all[i].0), all[i].1.curves.clone()))
        .collect();
    let svg = rf::data_svg("data and each network's fit", &f.experiments, &f.species, &models);
    o.push_str(&page::figure(
        &inline_svg(&svg, "cmp"),
        "The data against each network's fit, best first (the others dashed).",
    ));
    Some(o)
}
