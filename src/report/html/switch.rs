//! The chain section for a closed switch: no molecule ever ends, so instead of yields the
//! section gives the photostationary composition one molecule settles in, the photons and
//! switching events per second, and the mean first passages between the forms (the numbers
//! `ledger` prints for such a network).

use super::chain::upper_first;
use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use super::{TIME, pick_unit, sig_or_dash};
use crate::report::chain_paths::ClosedSummary;
use crate::units::{display, format_time};

/// The section body for `s`.
pub fn section(s: &ClosedSummary) -> String {
    let forms: Vec<&str> = s
        .composition
        .iter()
        .filter(|f| f.kind == "species")
        .map(|f| f.state.as_str())
        .collect();
    let mut o = format!(
        "<p>No molecule ends here: a molecule switches among {} for ever, so there is no yield or photon cost \
         per product to give. The chain ({} states) gives instead the state one molecule settles in under the \
         light (light assumed: {}). {}.</p>\n",
        esc(&forms.join(", ")),
        s.states,
        esc(&s.light),
        esc(&upper_first(&s.start))
    );
    for n in &s.notes {
        o.push_str(&page::assumption(n));
    }
    let rows: Vec<String> = s
        .composition
        .iter()
        .map(|f| {
            let name = if f.kind == "transient" {
                format!("{} (transient)", f.state)
            } else {
                f.state.clone()
            };
            format!(
                "{}{}",
                text_cell(&name),
                num_cell(&f.time_share.map_or("—".into(), |x| display::number(100.0 * x)))
            )
        })
        .collect();
    o.push_str(&page::table(
        "Photostationary composition: share of the time one molecule spends in each state",
        &[("state", false), ("share of the time (%)", true)],
        &rows,
    ));
    let mut facts = Vec::new();
    if let Some(r) = s.photons_per_second {
        facts.push(format!("absorbs {} photons per second", display::number(r)));
    }
    match (s.photons_per_switch, s.switches_per_second) {
        (Some(p), rate) => {
            if let Some(r) = rate {
                facts.push(format!(
                    "changes form {} times per second (one switching event every {})",
                    display::number(r),
                    format_time(1.0 / r)
                ));
            }
            let mut line = format!("absorbs {} photons per switching event", display::number(p));
            if let Some(l) = s.switches_by_light {
                line.push_str(&format!(
                    ", {} % of the events begun by a photon and the rest by heat",
                    display::number(100.0 * l)
                ));
            }
            facts.push(line);
        }
        (None, _) => facts.push("never changes form".into()),
    }
    o.push_str(&format!(
        "<p>At the photostationary state one molecule {}.</p>\n",
        esc(&facts.join("; "))
    ));
    if !s.first_passage.is_empty() {
        let tmax = s.first_passage.iter().filter_map(|p| p.time_s).fold(0.0, f64::max);
        let (tf, tu) = pick_unit(tmax, &TIME);
        let rows: Vec<String> = s
            .first_passage
            .iter()
            .map(|p| {
                format!(
                    "{}{}{}",
                    text_cell(&format!("{} → {}", p.from, p.to)),
                    num_cell(&display::number(p.photons)),
                    num_cell(&sig_or_dash(p.time_s.map(|t| t / tf), 3))
                )
            })
            .collect();
        let ht = format!("time ({tu})");
        o.push_str(&page::table(
            "Mean first passage between the forms: photons absorbed and time on the way",
            &[
                ("from → to", false),
                ("photons absorbed (per molecule)", true),
                (&ht, true),
            ],
            &rows,
        ));
        if s.forms_left_out > 0 {
            o.push_str(&format!(
                "<p class=\"note\">{} more forms are left out of the first passages (ledger's summary.json \
                 keeps them).</p>\n",
                s.forms_left_out
            ));
        }
    }
    o.push_str(
        "<p class=\"note\">The light is shared as at the start; where the forms filter the lamps differently, \
         <code>ledger --at DURATION</code> shares it at the composition the kinetics reach.</p>\n",
    );
    o
}
