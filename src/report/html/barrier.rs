//! Barrier verdicts: can each thermal step and rate channel happen within the window asked?

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use super::{TIME, pick_unit};
use crate::study::BarrierStudy;
use crate::units::sig;

/// The verdict table.
pub fn section(b: &BarrierStudy, temperature: f64) -> String {
    let mut s = format!(
        "<p>Every thermal step and rate channel at {} K against a window of {}, asking for a {} % chance of \
         crossing.</p>\n",
        esc(&sig(temperature, 5)),
        esc(&crate::units::format_time(b.window)),
        esc(&sig(100.0 * b.probability, 3))
    );
    if b.rows.is_empty() {
        s.push_str("<p class=\"missing\">No step of this network carries a rate (fixed fractions only).</p>\n");
        s.push_str(&hot_table(b));
        return s;
    }
    let finite = b.rows.iter().map(|r| r.half_life).filter(|t| t.is_finite());
    let (tf, tu) = pick_unit(finite.fold(0.0, f64::max), &TIME);
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
                    sig(r.barrier / 1000.0, 4),
                    if r.barrier_given { "" } else { "*" }
                )),
                num_cell(&format!(
                    "{}{}",
                    sig(r.barrier / 4184.0, 4),
                    if r.barrier_given { "" } else { "*" }
                )),
                num_cell(&sig(r.rate, 3)),
                num_cell(&if r.half_life.is_finite() {
                    sig(r.half_life / tf, 3)
                } else {
                    "never".into()
                }),
                esc(&r.words())
            )
        })
        .collect();
    let ht = format!("half-life ({tu})");
    s.push_str(&page::table(
        "Verdict for every step with a rate",
        &[
            ("step", false),
            ("ΔG‡ (kJ/mol)", true),
            ("ΔG‡ (kcal/mol)", true),
            ("k (1/s)", true),
            (&ht, true),
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
    s.push_str(&hot_table(b));
    s
}

/// The hot ground-state channels: the share that reacts before cooling (no window applies).
fn hot_table(b: &BarrierStudy) -> String {
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
                num_cell(&sig(r.barrier / 1000.0, 4)),
                num_cell(&sig(r.energy / 1000.0, 4)),
                num_cell(&sig(r.rate_at_start, 3)),
                num_cell(&sig(r.cooling * 1e12, 3)),
                num_cell(&sig(r.competition(), 3)),
                text_cell(&r.words())
            )
        })
        .collect();
    let mut s = page::table(
        "Hot ground-state channels: yield before cooling",
        &[
            ("channel", false),
            ("E₀ (kJ/mol)", true),
            ("E (kJ/mol)", true),
            ("k(E) (1/s)", true),
            ("τ (ps)", true),
            ("k(E)·τ (1)", true),
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
