//! Levels of theory compared: the network under each of its labelled sets of values, the
//! observables side by side, and what the sets agree and disagree on.

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use crate::levels::{Comparison, Kind, Verdict};
use crate::report::levels::{factor_text, findings, value_text, verdict_word};

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
            let note = if x.note.is_empty() { String::new() } else { format!(": {}", esc(&x.note)) };
            format!("<li><strong>{}</strong>{note}</li>", esc(&x.label))
        })
        .collect();
    s.push_str(&format!("<ul>\n{}\n</ul>\n", notes.join("\n")));
    let labels: Vec<&str> = c.sets.iter().map(|x| x.label.as_str()).collect();
    let mut head: Vec<(&str, bool)> = vec![("key", false)];
    head.extend(labels.iter().map(|l| (*l, false)));
    let rows: Vec<String> = c
        .values
        .iter()
        .map(|v| {
            let mut r = text_cell(&v.key);
            if v.counts.is_empty() {
                for x in &v.values {
                    r.push_str(&num_cell(&match x {
                        None => "(file)".to_string(),
                        Some(x) => {
                            let (x, u) = crate::units::display::readable(v.unit, *x);
                            if u.is_empty() {
                                crate::units::sig(x, 4)
                            } else {
                                format!("{} {u}", crate::units::sig(x, 4))
                            }
                        }
                    }));
                }
            } else {
                for x in &v.counts {
                    r.push_str(&num_cell(&x.as_ref().map_or("(file)".to_string(), |runs| {
                        let t: Vec<String> = runs.iter().map(|n| n.to_string()).collect();
                        format!("{} runs", t.join(" / "))
                    })));
                }
            }
            r
        })
        .collect();
    s.push_str(&page::table("What each set gives (unit in each cell)", &head, &rows));
    let mut head: Vec<(&str, bool)> = vec![("observable", false), ("unit", false)];
    head.extend(labels.iter().map(|l| (*l, false)));
    head.extend([("apart", false), ("verdict", false)]);
    let rows: Vec<String> = c
        .observables
        .iter()
        .map(|o| {
            let unit = match o.kind {
                k if k.is_time() => "time (in each cell)",
                Kind::Final => "concentration (in each cell)",
                Kind::PhotonsPerProduct => "photons per molecule",
                _ => "—",
            };
            let mut r = format!("{}{}", text_cell(&o.name), text_cell(unit));
            for v in &o.values {
                r.push_str(&num_cell(&value_text(o.kind, *v)));
            }
            let cls = match o.verdict {
                Some(Verdict::Agree) => "yes",
                Some(Verdict::Disagree) => "no",
                _ => "open",
            };
            r.push_str(&num_cell(&factor_text(o)));
            r.push_str(&format!("<td class=\"{cls}\">{}</td>", esc(&verdict_word(o.verdict).to_lowercase())));
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
