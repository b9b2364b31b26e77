//! One molecule followed as an absorbing Markov chain: yields, photons per product with their
//! spread, cycles, the photon-count histogram and the largest sensitivities.

use super::escape::{esc, inline_svg};
use super::page::{self, figure, num_cell, text_cell};
use super::{TIME, pick_unit, sig_or_dash};
use crate::report::chain::histogram_svg;
use crate::study::ChainStudy;
use crate::units::{format_time, sig};

/// How many sensitivities the report lists.
pub const TOP_SENSITIVITIES: usize = 8;

/// The chain's results, or why the chain does not apply to this network.
pub fn section(chain: &Result<ChainStudy, String>) -> String {
    let c = match chain {
        Ok(c) => c,
        Err(why) => {
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
         under the light.</p>\n",
        esc(&upper_first(&sm.start)),
        sm.states,
        esc(&sig(sm.photons_per_molecule, 4)),
        esc(&format_time(sm.time_mean_s))
    );
    for n in &sm.notes {
        s.push_str(&page::assumption(n));
    }
    let ends: Vec<_> = sm.ends.iter().filter(|e| e.yield_fraction > 1e-12).collect();
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
    s.push_str(&page::table(
        "How a followed molecule ends",
        &[
            ("ends as", false),
            ("kind", false),
            ("yield (%)", true),
            ("photons absorbed, mean (photons)", true),
            ("± standard deviation (photons)", true),
            ("quantum yield (mol/einstein)", true),
            (&ht, true),
        ],
        &rows,
    ));
    s.push_str(
        "<p class=\"note\">Photons are counted per molecule that ends as the given species (conditional on \
         that end); the quantum yield is molecules of it per photon absorbed by the followed molecule, whatever it \
         became.</p>\n",
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
        let svg = histogram_svg("photons absorbed per molecule followed", &c.analysis);
        let mut caption = "Probability that a followed molecule absorbs n photons before it ends".to_string();
        if let (Some(t), Some(n)) = (sm.distribution_tail, sm.distribution_max_photons) {
            caption.push_str(&format!(
                ", shown up to {n} photons (probability left beyond: {})",
                sig(t, 2)
            ));
        }
        if sm.distribution_truncated {
            caption.push_str("; cut at the photon limit before its tail bound");
        }
        caption.push('.');
        s.push_str(&figure(&inline_svg(&svg, "hist"), &caption, true));
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
                let el = x.elasticity_photons.get(main).copied().flatten();
                let dy = x.yield_derivative.get(main).copied();
                let per_barrier = x
                    .photons_per_barrier
                    .as_ref()
                    .and_then(|b| b.get(main).copied().flatten());
                format!(
                    "{}{}{}{}{}{}",
                    text_cell(&x.parameter),
                    num_cell(&sig(x.value, 4)),
                    text_cell(&x.unit),
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
        s.push_str(&page::table(
            &caption,
            &[
                ("parameter", false),
                ("value (in its unit)", true),
                ("unit", false),
                ("d ln photons / d ln p (1)", true),
                ("d yield / d p (1/unit)", true),
                ("d ln photons / d barrier (per kcal/mol)", true),
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
fn upper_first(text: &str) -> String {
    let mut c = text.chars();
    c.next()
        .map(|f| f.to_uppercase().collect::<String>() + c.as_str())
        .unwrap_or_default()
}
