//! Barrier verdicts: can each thermal step and rate channel happen within the window asked?

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use crate::study::BarrierStudy;
use crate::units::display::{self, EnergyUnit};
use crate::units::sig;

/// The verdict table.
/// Barriers in `family` (the network's), the other family beside.
pub fn section(b: &BarrierStudy, temperature: f64, family: EnergyUnit) -> String {
    let mut s = format!(
        "<p>Every thermal step and rate channel at {} K against a window of {}, asking for a {} % chance of \
         crossing.</p>\n",
        esc(&sig(temperature, 5)),
        esc(&crate::units::format_time(b.window)),
        esc(&sig(100.0 * b.probability, 3))
    );
    if b.rows.is_empty() {
        s.push_str("<p class=\"missing\">No step of this network carries a rate (fixed fractions only).</p>\n");
        s.push_str(&hot_table(b, family));
        return s;
    }
    let rows: Vec<String> = b
        .rows
        .iter()
        .map(|r| {
            let cls = match r.outcome() {
                crate::barrier::Outcome::Crosses => "yes",
                crate::barrier::Outcome::TooSlow => "no",
                crate::barrier::Outcome::Undetermined => "open",
            };
            format!(
                "{}{}{}{}{}<td class=\"{cls}\">{}</td>",
                text_cell(&r.name),
                num_cell(&format!(
                    "{}{}",
                    sig(r.barrier / family.factor(), 4),
                    if r.barrier_given { "" } else { "*" }
                )),
                num_cell(&format!(
                    "{}{}",
                    sig(r.barrier / family.other().factor(), 4),
                    if r.barrier_given { "" } else { "*" }
                )),
                num_cell(&sig(r.rate, 3)),
                // Each half-life in its own unit: they span from fs to years in one table.
                num_cell(&if r.half_life.is_finite() {
                    display::format_time(r.half_life)
                } else {
                    "never".into()
                }),
                esc(&r.words())
            )
        })
        .collect();
    let (main, other) = (
        format!("ΔG‡ ({})", family.spelling()),
        format!("ΔG‡ ({})", family.other().spelling()),
    );
    let k = format!("k ({})", display::rate_constant(1));
    s.push_str(&page::table(
        "Verdict for every step with a rate",
        &[
            ("step", false),
            (&main, true),
            (&other, true),
            (&k, true),
            ("half-life", true),
            ("verdict", false),
        ],
        &rows,
    ));
    s.push_str(&format!("<p>{}</p>\n", esc(&crate::barrier::tally(&b.rows))));
    s.push_str(&page::assumption(
        "Eyring transition-state theory at the network temperature (ΔG‡ implied by each rate law; * marks a rate \
         given as a plain k, for which ΔG‡ is only what Eyring's equation would need, not a barrier). Each thermal \
         step is taken alone from the initial concentrations and follows its own integrated rate law (second-order \
         laws for A + B and 2 A, per molecule of the limiting reactant); k is its loss rate per molecule at the \
         start. Quenching is pseudo-first-order at the initial quencher concentration. A step with a reactant (or \
         quencher) at 0 M at the start is judged instead where it runs fastest in the study's kinetics run, from the \
         concentrations there (its verdict says when and at what). ΔG‡ for bimolecular steps refers to 1 mol/L. Channels set by fixed fractions carry no rate and are not listed.",
    ));
    s.push_str(&hot_table(b, family));
    s
}

/// The hot ground-state channels: the share that reacts before cooling (no window applies).
fn hot_table(b: &BarrierStudy, family: EnergyUnit) -> String {
    if b.hot.is_empty() {
        return String::new();
    }
    let rows: Vec<String> = b
        .hot
        .iter()
        .map(|r| {
            format!(
                "{}{}{}{}{}{}{}",
                text_cell(&r.name),
                num_cell(&sig(r.barrier / family.factor(), 4)),
                num_cell(&sig(r.energy / family.factor(), 4)),
                num_cell(&sig(r.rate_at_start, 3)),
                num_cell(&display::format_time(r.cooling)),
                num_cell(&sig(r.competition(), 3)),
                text_cell(&r.words())
            )
        })
        .collect();
    let (e0, e) = (
        format!("E₀ ({})", family.spelling()),
        format!("E ({})", family.spelling()),
    );
    let k = format!("k(E) ({})", display::rate_constant(1));
    let mut s = page::table(
        "Hot ground-state channels: yield before cooling",
        &[
            ("channel", false),
            (&e0, true),
            (&e, true),
            (&k, true),
            ("τ", true),
            ("k(E)·τ", true),
            ("verdict", false),
        ],
        &rows,
    );
    s.push_str(&page::assumption(
        "A hot molecule reacts or cools within a few cooling times τ of the photon, so the window does not apply: the \
         yield integrates RRKM k(E) while the excess energy E decays exponentially with τ (set in the network file).",
    ));
    s
}
