//! The plan: time to the target, the photon dose and energy it takes, the products and their
//! shares at that time, and what other lamp powers would change.

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use super::{CONCENTRATION, EINSTEIN, POWER, TIME, pick_unit, sig_or_dash};
use crate::report::plan::target_meaning;
use crate::study::PlanStudy;
use crate::units::{format_time, sig};

/// The plan section.
pub fn section(p: &PlanStudy) -> String {
    let plan = &p.plan;
    let mut s = format!(
        "<p>Target <code>{}</code>: {}.</p>\n",
        esc(&plan.target.text),
        esc(&target_meaning(plan))
    );
    match (plan.time, &plan.unreachable) {
        (Some(t), _) => s.push_str(&format!(
            "<p class=\"lede\">Reached after <strong>{}</strong> under the light of the file.</p>\n",
            esc(&format_time(t))
        )),
        (None, Some(u)) => s.push_str(&format!(
            "<p class=\"lede\">Not reached: {}. Closest: {} {}; integrated for {}.</p>\n",
            esc(u.why.words()),
            esc(&crate::units::display::format_concentration_within(
                u.best_level,
                plan.trajectory.zero_within()
            )),
            esc(&match u.why {
                crate::plan::Why::Photostationary | crate::plan::Why::Exhausted => {
                    format!("({})", crate::report::plan::closest_when(u))
                }
                _ => crate::report::plan::closest_when(u),
            }),
            esc(&format_time(u.horizon))
        )),
        (None, None) => s.push_str("<p class=\"lede\">Not reached.</p>\n"),
    }
    let d = &plan.dose;
    let (tf, tu) = pick_unit(d.lit_time, &TIME);
    let (ef, eu) = pick_unit(d.incident.max(d.absorbed), &EINSTEIN);
    let (pf, pu) = pick_unit(d.power * 4.0, &POWER);
    let head_p = format!("radiant power ({pu})");
    let head_t = format!("light on ({tu})");
    let head_i = format!("incident photons ({eu})");
    let head_a = format!("absorbed photons ({eu})");
    let row = format!(
        "{}{}{}{}{}{}{}",
        num_cell(&sig(d.lit_time / tf, 4)),
        num_cell(&sig(d.incident / ef, 4)),
        num_cell(&sig(d.absorbed / ef, 4)),
        num_cell(&sig_or_dash(d.incident_per_mol, 4)),
        num_cell(&sig_or_dash(d.absorbed_per_mol, 4)),
        num_cell(&sig(d.power / pf, 4)),
        num_cell(&sig_or_dash(d.radiant_per_mol.map(|e| e / 1e3), 4))
    );
    s.push_str(&page::table(
        if plan.time.is_some() {
            "The dose to the target"
        } else {
            "The dose to the closest approach"
        },
        &[
            (&head_t, true),
            (&head_i, true),
            (&head_a, true),
            ("incident per mole (einstein/mol)", true),
            ("absorbed per mole (einstein/mol)", true),
            (&head_p, true),
            ("radiant energy per mole (kJ/mol)", true),
        ],
        &[row],
    ));
    // round-off within the run's absolute tolerance of zero reads 0
    let products: Vec<_> = plan
        .products
        .iter()
        .map(|x| crate::report::plan::shown_share(x, plan.trajectory.zero_within()))
        .collect();
    if !products.is_empty() {
        let (cf, cu) = pick_unit(
            products.iter().map(|x| x.formed.abs()).fold(0.0, f64::max),
            &CONCENTRATION,
        );
        let rows: Vec<String> = plan
            .products
            .iter()
            .map(|x| {
                format!(
                    "{}{}{}",
                    text_cell(&x.species),
                    num_cell(&sig(x.formed / cf, 4)),
                    num_cell(&x.selectivity.map_or("—".to_string(), |v| sig(100.0 * v, 3)))
                )
            })
            .collect();
        let h = format!("formed ({cu})");
        let sel = plan
            .products
            .first()
            .and_then(|x| x.reference.as_ref())
            .map_or("selectivity (%)".to_string(), |r| {
                format!("selectivity: per {r} consumed (%)")
            });
        s.push_str(&page::table(
            "Products at that time",
            &[("product", false), (&h, true), (&sel, true)],
            &rows,
        ));
        let notes: Vec<String> = plan
            .products
            .iter()
            .filter(|x| x.reference.is_some() && (x.selectivity.is_none() || x.stoichiometric_max != Some(1.0)))
            .map(|x| format!("{}: {}", x.species, crate::report::plan::selectivity_text(x)))
            .collect();
        if !notes.is_empty() {
            s.push_str(&format!("<p>{}.</p>\n", esc(&notes.join("; "))));
        }
    }
    if !p.alternatives.is_empty() {
        let times: Vec<f64> = p.alternatives.iter().filter_map(|a| a.time).collect();
        let (af, au) = if times.is_empty() {
            (1.0, "s")
        } else {
            pick_unit(times.iter().cloned().fold(0.0, f64::max), &TIME)
        };
        let rows: Vec<String> = p
            .alternatives
            .iter()
            .map(|a| {
                let time = match (a.time, &a.failed) {
                    (Some(t), _) => sig(t / af, 4),
                    (None, Some(why)) => format!("not reached ({why})"),
                    (None, None) => "not reached".into(),
                };
                format!(
                    "{}{}{}{}",
                    num_cell(&format!("× {}", sig(a.scale, 3))),
                    num_cell(&sig(a.power / pf, 4)),
                    num_cell(&time),
                    // Photon cost only where the target is met (not at a closest approach).
                    num_cell(&sig_or_dash(a.time.and(a.absorbed_per_mol), 4))
                )
            })
            .collect();
        let h = format!("time to target ({au})");
        s.push_str("<h3>Other lamp powers</h3>\n");
        s.push_str(&page::table(
            "Every source of the file scaled by the same factor",
            &[
                ("factor on the light (×)", true),
                (&head_p, true),
                (&h, true),
                ("absorbed photons per mole (einstein/mol)", true),
            ],
            &rows,
        ));
    }
    s.push_str(&page::assumption(
        "the well-stirred cell of the file; the time to the target found by root finding on the target species \
         inside the integrator (not by scanning output), light on throughout (no day–night schedule); other powers \
         scale every source's photon flux by one factor, spectrum unchanged.",
    ));
    s
}
