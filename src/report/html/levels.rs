//! Levels of theory compared: the network under each of its labelled sets of values, the
//! observables side by side, and what the sets agree and disagree on.

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use super::{CONCENTRATION, TIME, pick_unit};
use crate::levels::{Comparison, Kind, Verdict};
use crate::report::levels::{factor_text, findings, verdict_word};
use crate::units::sig;

/// The section, or why the comparison could not be made.
pub fn section(c: &std::result::Result<Comparison, String>) -> String {
    let c = match c {
        Ok(c) => c,
        Err(e) => {
            return format!(
                "<p class=\"missing\">The sets of values could not be compared: {}</p>\n",
                esc(e)
            );
        }
    };
    let mut s = format!(
        "<p>The network carries {} labelled set{} of computed values; each is written over the file's values and \
         the chain and kinetics are run under it. The other sections of this page use the file's own values.</p>\n",
        c.sets.len(),
        if c.sets.len() == 1 { "" } else { "s" }
    );
    let notes: Vec<String> = c
        .sets
        .iter()
        .map(|x| {
            let note = if x.note.is_empty() {
                String::new()
            } else {
                format!(": {}", esc(&x.note))
            };
            format!("<li><strong>{}</strong>{note}</li>", esc(&x.label))
        })
        .collect();
    s.push_str(&format!("<ul>\n{}\n</ul>\n", notes.join("\n")));
    // Numbers in each row's own unit (the row's largest value picks it), named in the row's
    // "unit" column beside the key; the set columns carry only the set's label.
    let heads: Vec<String> = c.sets.iter().map(|x| x.label.clone()).collect();
    let mut head: Vec<(&str, bool)> = vec![("key", false), ("unit", false)];
    head.extend(heads.iter().map(|l| (l.as_str(), true)));
    let rows: Vec<String> = c
        .values
        .iter()
        .map(|v| {
            if v.counts.is_empty() {
                let largest = v.values.iter().flatten().fold(0.0f64, |m, x| m.max(x.abs()));
                let (f, u) = crate::units::display::readable_unit_in(v.unit, largest, c.energy_unit);
                let mut r = format!(
                    "{}{}",
                    text_cell(&v.key),
                    text_cell(if u.is_empty() { "—" } else { &u })
                );
                for x in &v.values {
                    r.push_str(&num_cell(&x.map_or("(file)".to_string(), |x| sig(x / f, 4))));
                }
                r
            } else {
                let mut r = format!("{}{}", text_cell(&v.key), text_cell("runs per channel"));
                for x in &v.counts {
                    r.push_str(&num_cell(&crate::report::levels::counts_text(x)));
                }
                r
            }
        })
        .collect();
    s.push_str(&page::table("What each set gives", &head, &rows));
    let mut head: Vec<(&str, bool)> = vec![("observable", false), ("unit", false)];
    head.extend(heads.iter().map(|l| (l.as_str(), true)));
    head.extend([("apart (factor)", true), ("verdict", false)]);
    let rows: Vec<String> = c
        .observables
        .iter()
        .map(|o| {
            let largest = o
                .values
                .iter()
                .flatten()
                .filter(|x| x.is_finite())
                .fold(0.0f64, |m, x| m.max(x.abs()));
            let (f, unit) = match o.kind {
                k if k.is_time() => {
                    let (f, u) = pick_unit(largest, &TIME);
                    (f, u.to_string())
                }
                Kind::Final => {
                    let (f, u) = pick_unit(largest, &CONCENTRATION);
                    (f, u.to_string())
                }
                Kind::PhotonsPerProduct => (1.0, "photons per molecule".to_string()),
                _ => (1.0, "—".to_string()),
            };
            let mut r = format!("{}{}", text_cell(&o.name), text_cell(&unit));
            for v in &o.values {
                r.push_str(&num_cell(&match v {
                    Some(x) if x.is_finite() => sig(x / f, 4),
                    None if o.kind == Kind::TimeToTarget => "not reached".to_string(),
                    _ => "—".to_string(),
                }));
            }
            let cls = match o.verdict {
                Some(Verdict::Agree) => "yes",
                Some(Verdict::Disagree) => "no",
                _ => "open",
            };
            r.push_str(&num_cell(&factor_text(o)));
            r.push_str(&format!(
                "<td class=\"{cls}\">{}</td>",
                esc(&verdict_word(o.verdict).to_lowercase())
            ));
            r
        })
        .collect();
    s.push_str(&page::table("The observables under each set", &head, &rows));
    s.push_str(&page::assumption(&format!(
        "one molecule followed ({}); products compared at {} ({}); apart is the largest value over the smallest, \
         agreement within ×{}, disagreement from ×{}",
        c.chain_light,
        crate::units::format_time(c.until),
        c.until_reason,
        crate::units::sig(crate::levels::AGREE, 3),
        crate::units::sig(crate::levels::DISAGREE, 3)
    )));
    let items: Vec<String> = findings(c).iter().map(|f| format!("<li>{}</li>", esc(f))).collect();
    s.push_str(&format!("<ul class=\"findings\">\n{}\n</ul>\n", items.join("\n")));
    s
}
