//! The chain section for a closed switch: no molecule ever ends, so instead of yields the
//! section gives the photostationary composition three ways side by side (one molecule under
//! the light shared as at the start, one molecule under the light the mixture lets through at
//! the end of the run, and the mixture from the kinetics), says which to quote, and gives the
//! photons and switching events per second and the mean first passages between the forms (the
//! numbers `ledger` prints for such a network).

use super::chain::upper_first;
use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use super::{TIME, pick_unit, sig_or_dash};
use crate::report::chain_paths::ClosedSummary;
use crate::study::ClosedStudy;
use crate::units::{display, format_time};

/// Percentage points within which the mixture and one molecule under the mixture's light count
/// as the same photostationary composition: rounding of a run settled to 1 % of its change
/// ([`crate::plan::SETTLED`]) on a switch that moves a few tens of points.
pub const SAME_POINTS: f64 = 0.5;

/// The section body for `c`.
pub fn section(c: &ClosedStudy) -> String {
    let s0 = &c.at_start;
    let forms: Vec<&str> = s0
        .composition
        .iter()
        .filter(|f| f.kind == "species")
        .map(|f| f.state.as_str())
        .collect();
    let after = format_time(c.until);
    let mut o = format!(
        "<p>No molecule ends here: a molecule switches among {} for ever, so there is no yield or photon cost \
         per product to give. The chain ({} states) gives instead the state one molecule settles in under the \
         light, and the kinetics the state the mixture reaches. {}.</p>\n",
        esc(&forms.join(", ")),
        s0.states,
        esc(&upper_first(&s0.start))
    );
    for n in &s0.notes {
        o.push_str(&page::assumption(n));
    }
    if c.at_end.is_ok() {
        o.push_str(&format!(
            "<p class=\"note\">That sharing of the light holds for the first column below; the second column and \
             the rates after the table share it at the concentrations the kinetics reach after {}.</p>\n",
            esc(&after)
        ));
    }
    let end = c.at_end.as_ref().ok();
    let share = |s: &ClosedSummary, state: &str| {
        s.composition
            .iter()
            .find(|f| f.state == state)
            .and_then(|f| f.time_share)
    };
    let mixture = |state: &str| c.mixture.iter().find(|(n, _)| n == state).map(|(_, x)| *x);
    let pct = |x: Option<f64>| x.map_or("—".into(), |x| display::number(100.0 * x));
    let rows: Vec<String> = s0
        .composition
        .iter()
        .map(|f| {
            let name = if f.kind == "transient" {
                format!("{} (transient)", f.state)
            } else {
                f.state.clone()
            };
            format!(
                "{}{}{}{}",
                text_cell(&name),
                num_cell(&pct(f.time_share)),
                num_cell(&pct(end.and_then(|e| share(e, &f.state)))),
                num_cell(&pct(mixture(&f.state)))
            )
        })
        .collect();
    let h1 = format!("one molecule, light as after {after} (%)");
    let h2 = format!("the mixture after {after}, kinetics (%)");
    o.push_str(&page::table(
        "Photostationary composition three ways: the share of the time one molecule spends in each state, \
         and the mixture's share of each form",
        &[
            ("state", false),
            ("one molecule, light as at the start (%)", true),
            (&h1, true),
            (&h2, true),
        ],
        &rows,
    ));
    o.push_str(&verdict(c, &after));
    // The rates and first passages under the light of the settled mixture when that chain was
    // built, else under the starting light.
    let s = end.unwrap_or(s0);
    let light_words = if end.is_some() {
        format!("under the light the mixture lets through after {after}")
    } else {
        "under the light shared as at the start".to_string()
    };
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
        "<p>{}, a molecule that has settled {}.</p>\n",
        esc(&upper_first(&light_words)),
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
    o.push_str(&format!(
        "<p class=\"note\">The first column of the composition table is what <code>ledger --at \"0 s\"</code> \
         prints; the second column, the rates and the first passages are what <code>ledger --at {}</code> prints \
         (<code>ledger</code> alone shares the light where the kinetics settle, close to this).</p>\n",
        esc(&after)
    ));
    o
}

/// Which composition to quote: the mixture's when one molecule under the mixture's light
/// agrees with it (the run reached the photostationary state), with what the starting light's
/// column means; otherwise how far the run is from it.
fn verdict(c: &ClosedStudy, after: &str) -> String {
    let points = |s: &ClosedSummary| {
        c.mixture
            .iter()
            .filter_map(|(n, x)| {
                let f = s.composition.iter().find(|f| &f.state == n)?;
                Some(100.0 * (f.time_share? - x).abs())
            })
            .fold(None, |m: Option<f64>, d| Some(m.map_or(d, |m| m.max(d))))
    };
    let Ok(end) = &c.at_end else {
        return format!(
            "<p class=\"note\">One molecule under the mixture's light after {} was not followed: {}.</p>\n",
            esc(after),
            esc(c.at_end.as_ref().err().map_or("", |e| e.as_str()))
        );
    };
    let (Some(gap), Some(start_gap)) = (points(end), points(&c.at_start)) else {
        return String::new();
    };
    let shares = |s: &ClosedSummary| {
        c.mixture
            .iter()
            .filter_map(|(n, _)| {
                let f = s.composition.iter().find(|f| &f.state == n)?;
                Some(format!("{} {} %", n, crate::units::sig(100.0 * f.time_share?, 3)))
            })
            .collect::<Vec<_>>()
            .join(", ")
    };
    let mixture = c
        .mixture
        .iter()
        .map(|(n, x)| format!("{} {} %", n, crate::units::sig(100.0 * x, 3)))
        .collect::<Vec<_>>()
        .join(", ");
    if gap <= SAME_POINTS {
        let first = if start_gap <= SAME_POINTS {
            "The first column agrees as well: here the forms' absorption barely moves the light.".to_string()
        } else {
            format!(
                "The first column, {} percentage points away, shares the light as in the starting mixture, which \
                 no irradiated sample keeps: it is not the photostationary state of this sample. The forms absorb \
                 the lamps differently, so the photostationary state moves with the concentration and the path \
                 length; in an optically thin sample (absorbance well below 0.1) all three columns coincide, at \
                 yet another composition.",
                crate::units::sig(start_gap, 2)
            )
        };
        format!(
            "<p><strong>To quote:</strong> {} — the photostationary state of this sample (these concentrations, \
             this path length, these lamps): one molecule under the light the mixture lets through after {} \
             settles there, and the mixture itself ({}) is within {} percentage points of it, still creeping \
             towards it. {}</p>\n",
            esc(&shares(end)),
            esc(after),
            esc(&mixture),
            crate::units::sig(gap, 2),
            esc(&first)
        )
    } else {
        format!(
            "<p><strong>Not yet photostationary:</strong> after {} the mixture ({}) is still {} percentage points \
             from where one molecule settles under the light the mixture then lets through (the second column, \
             where it is heading while the light stays so); a longer run (<code>--until</code>) comes closer.</p>\n",
            esc(after),
            esc(&mixture),
            crate::units::sig(gap, 2)
        )
    }
}
