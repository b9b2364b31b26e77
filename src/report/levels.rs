//! `levels` outputs: the sets side by side as text, JSON and CSV, and the scores against data.
//! Values are shown through `units::display` (times by the time ladder, concentrations by
//! theirs, plain numbers to four figures); CSV and JSON keep SI values.

use super::csv_out::{CsvTable, cell, opt_cell};
use super::fit::{self as rf, Ranked};
use crate::levels::score::Scores;
use crate::levels::{AGREE, Comparison, DISAGREE, Kind, Observable, Verdict};
use crate::units::{display, format_concentration, format_time, sig};
use serde_json::json;
use std::fmt::Write;

/// One value of an observable for display.
pub fn value_text(kind: Kind, v: Option<f64>) -> String {
    match v {
        None if kind == Kind::TimeToTarget => "not reached".into(),
        None => "—".into(),
        Some(x) if !x.is_finite() => "—".into(),
        Some(x) if kind.is_time() => format_time(x),
        Some(x) if kind == Kind::Final => format_concentration(x),
        Some(x) => sig(x, 4),
    }
}

/// How far apart the sets are, in words: "×2.916", "one set gives none".
pub fn factor_text(o: &Observable) -> String {
    match o.factor {
        None => "—".into(),
        Some(f) if f.is_infinite() && o.kind == Kind::TimeToTarget => "not reached by all".into(),
        Some(f) if f.is_infinite() => "one gives none".into(),
        Some(f) => format!("×{}", sig(f, 4)),
    }
}

/// The verdict word.
pub fn verdict_word(v: Option<Verdict>) -> &'static str {
    match v {
        Some(Verdict::Agree) => "agree",
        Some(Verdict::Differ) => "differ",
        Some(Verdict::Disagree) => "DISAGREE",
        None => "",
    }
}

/// The unit of an observable's values in CSV and JSON.
pub fn si_unit(kind: Kind) -> &'static str {
    match kind {
        k if k.is_time() => "s",
        Kind::Final => "mol/L",
        _ => "",
    }
}

/// A set value for display (its key's unit through the display rule), or its counts.
fn set_value_text(unit: &str, v: Option<f64>, family: display::EnergyUnit) -> String {
    match v {
        None => "(file)".into(),
        Some(x) => {
            // An energy in the file's family, with the other beside it (the display rule).
            if display::quantity_of_spelling(unit) == Some(crate::units::Quantity::MolarEnergy) {
                return display::format_energy_beside(x, family);
            }
            let (x, u) = display::readable_in(unit, x, family);
            if u.is_empty() {
                sig(x, 4)
            } else {
                format!("{} {u}", sig(x, 4))
            }
        }
    }
}

/// Trajectory counts per channel with their total: "41, 52 of 93" (never "41/52", which reads
/// as a share of 41 in 52).
pub fn counts_text(c: &Option<Vec<u64>>) -> String {
    match c {
        None => "(file)".into(),
        Some(runs) => format!(
            "{} of {}",
            runs.iter().map(|r| r.to_string()).collect::<Vec<_>>().join(", "),
            runs.iter().sum::<u64>()
        ),
    }
}

/// The sentences naming what the sets disagree on most and agree on, and what to measure.
pub fn findings(c: &Comparison) -> Vec<String> {
    let label = |i: usize| format!("\"{}\"", c.sets[i].label);
    let mut out = Vec::new();
    if c.sets.len() < 2 {
        out.push("one set only: nothing to compare (add another [[level]])".into());
        return out;
    }
    let order = c.by_disagreement();
    let apart: Vec<String> = order
        .iter()
        .map(|&i| &c.observables[i])
        .filter(|o| o.verdict == Some(Verdict::Disagree))
        .take(4)
        .map(|o| {
            let (lo, hi) = o.extremes.unwrap_or((0, 0));
            format!(
                "{} ({}: {} {} vs {} {})",
                o.name,
                factor_text(o),
                label(hi),
                value_text(o.kind, o.values[hi]),
                label(lo),
                value_text(o.kind, o.values[lo])
            )
        })
        .collect();
    if apart.is_empty() {
        out.push(format!(
            "disagree on nothing by a factor of {} or more",
            sig(DISAGREE, 3)
        ));
    } else {
        out.push(format!("disagree most on: {}", apart.join("; ")));
    }
    let agree: Vec<&str> = c
        .observables
        .iter()
        .filter(|o| o.verdict == Some(Verdict::Agree))
        .map(|o| o.name.as_str())
        .collect();
    out.push(if agree.is_empty() {
        format!("agree (within {} %) on nothing", sig(100.0 * (AGREE - 1.0), 2))
    } else {
        format!(
            "agree within {} % on: {}",
            sig(100.0 * (AGREE - 1.0), 2),
            agree.join(", ")
        )
    });
    if let Some((life, prod)) = c.same_lifetime_other_products() {
        let (lo, hi) = prod.extremes.unwrap_or((0, 0));
        out.push(format!(
            "agree on {}, disagree on {} ({} between {} and {}): the same lifetime from different branching, \
             so the lifetime cannot tell the sets apart",
            life.name,
            prod.name,
            factor_text(prod),
            label(hi),
            label(lo)
        ));
    }
    match c.telling() {
        Some(o) => {
            let (lo, hi) = o.extremes.unwrap_or((0, 0));
            out.push(format!(
                "to tell {} from {}, measure {}: {} is where they are farthest apart ({})",
                label(hi),
                label(lo),
                o.kind.measurement().unwrap_or(""),
                o.name,
                factor_text(o)
            ));
        }
        None => out
            .push("no measurement listed here tells the sets apart: they agree on every measurable observable".into()),
    }
    out
}

/// The comparison as text.
pub fn text(name: &str, c: &Comparison) -> String {
    let mut o = String::new();
    let n = c.sets.len();
    let _ = writeln!(
        o,
        "levels of theory in {name}: {n} set{} of values, each written over the file's values",
        if n == 1 { "" } else { "s" }
    );
    for s in &c.sets {
        let note = if s.note.is_empty() {
            String::new()
        } else {
            format!(": {}", s.note)
        };
        let _ = writeln!(o, "  \"{}\"{note}", s.label);
    }
    let widest_value = c
        .values
        .iter()
        .flat_map(|v| {
            v.values
                .iter()
                .map(|x| set_value_text(v.unit, *x, c.energy_unit).chars().count())
        })
        .max()
        .unwrap_or(0);
    let lw = c
        .sets
        .iter()
        .map(|s| s.label.chars().count())
        .max()
        .unwrap_or(8)
        .max(12)
        .max(widest_value)
        + 2;
    let keyw = c
        .values
        .iter()
        .map(|v| v.key.chars().count())
        .chain(c.observables.iter().map(|o| o.name.chars().count()))
        .max()
        .unwrap_or(20)
        + 2;
    let head = |o: &mut String, first: &str, extra: &str| {
        let _ = write!(o, "  {first:<keyw$}");
        for s in &c.sets {
            let _ = write!(o, "{:>lw$}", s.label);
        }
        let _ = writeln!(o, "{extra}");
    };
    let _ = writeln!(o);
    head(&mut o, "values each set gives", "");
    for v in &c.values {
        let _ = write!(o, "  {:<keyw$}", v.key);
        if v.counts.is_empty() {
            for x in &v.values {
                let _ = write!(o, "{:>lw$}", set_value_text(v.unit, *x, c.energy_unit));
            }
        } else {
            for x in &v.counts {
                let _ = write!(o, "{:>lw$}", counts_text(x));
            }
        }
        let _ = writeln!(o);
    }
    let _ = writeln!(o);
    let _ = writeln!(o, "observables (one molecule followed: {})", c.chain_light);
    let _ = writeln!(o, "  products at {}: {}", format_time(c.until), c.until_reason);
    head(&mut o, "", "      apart  verdict");
    for ob in &c.observables {
        let _ = write!(o, "  {:<keyw$}", ob.name);
        for v in &ob.values {
            let _ = write!(o, "{:>lw$}", value_text(ob.kind, *v));
        }
        let _ = writeln!(o, "  {:>14}  {}", factor_text(ob), verdict_word(ob.verdict));
    }
    for s in &c.sets {
        if let Some(e) = &s.chain_error {
            let _ = writeln!(o, "  (no chain under \"{}\": {e})", s.label);
        }
    }
    let _ = writeln!(
        o,
        "  (apart: largest over smallest value; agree within ×{}, disagree from ×{})",
        sig(AGREE, 3),
        sig(DISAGREE, 3)
    );
    let _ = writeln!(o);
    for f in findings(c) {
        let _ = writeln!(o, "{f}");
    }
    o
}

/// The scores against data as text.
pub fn scores_text(s: &Scores) -> String {
    let mut o = String::new();
    let Some(first) = s.fixed.first() else {
        return o;
    };
    let basis = if first.score.weighted {
        "every sd given and taken as known: −2 ln L = χ², k = 0"
    } else {
        "some observations without sd: σ estimated from the scatter, −2 ln L = n ln(χ²/n), k = 1"
    };
    let _ = writeln!(
        o,
        "\nagainst the data, as each set stands ({} observations; {basis})",
        first.score.n
    );
    let w = s
        .fixed
        .iter()
        .map(|f| f.label.chars().count())
        .max()
        .unwrap_or(8)
        .max(8);
    let best = s.order.first().map_or(0.0, |&i| s.fixed[i].score.aicc);
    let _ = writeln!(
        o,
        "  {:<4} {:<w$}  {:>12}  {:>12}  {:>12}  {:>9}  {:>8}",
        "rank", "set", "χ²", "−2 ln L", "AICc", "ΔAICc", "weight"
    );
    for (r, &i) in s.order.iter().enumerate() {
        let f = &s.fixed[i];
        let _ = writeln!(
            o,
            "  {:<4} {:<w$}  {:>12}  {:>12}  {:>12}  {:>9}  {:>8}",
            r + 1,
            f.label,
            sig(f.score.chi2, 6),
            sig(f.score.minus_two_log_likelihood, 6),
            sig(f.score.aicc, 6),
            sig(f.score.aicc - best, 3),
            format!("{:.3}", f.weight)
        );
    }
    if let Some(d) = &s.disagreement {
        let _ = writeln!(o, "  {d}");
    }
    if let Some(cmp) = &s.refit {
        let _ = writeln!(o, "\nrefitted under each set (free: {})", s.free.join(", "));
        for line in rf::ranking_text(&ranked(cmp), cmp.ranking.disagreement.as_deref(), "set").lines() {
            if line.is_empty() {
                let _ = writeln!(o);
            } else {
                let _ = writeln!(o, "  {line}");
            }
        }
        for (label, f, _) in cmp.ranked() {
            let values: Vec<String> = f
                .result
                .free
                .iter()
                .zip(&f.result.solution.values)
                .map(|(p, &v)| format!("{} = {}", p.key, rf::value_text(p, v, f.result.energy_unit)))
                .collect();
            let _ = writeln!(o, "  \"{label}\": {}", values.join(", "));
        }
    }
    o
}

/// The refits as `compare` ranks them.
pub fn ranked(cmp: &crate::fit::run::Comparison) -> Vec<Ranked> {
    cmp.ranked()
        .into_iter()
        .map(|(network, f, weight)| Ranked {
            network: network.to_string(),
            fit: f.result.clone(),
            weight,
        })
        .collect()
}

/// The comparison (and the scores) as JSON, SI values with their units.
pub fn json(c: &Comparison, scores: Option<&Scores>) -> serde_json::Value {
    let observables: Vec<serde_json::Value> = c
        .observables
        .iter()
        .map(|o| {
            json!({
                "name": o.name, "kind": o.kind, "unit": si_unit(o.kind), "values": o.values,
                "factor": o.factor.filter(|f| f.is_finite()), "one_set_gives_none": o.factor.is_some_and(f64::is_infinite),
                "extremes": o.extremes.map(|(lo, hi)| json!({"lowest": c.sets[lo].label, "highest": c.sets[hi].label})),
                "verdict": o.verdict,
            })
        })
        .collect();
    let scores = scores.map(|s| {
        json!({
            "as_given": s.order.iter().map(|&i| &s.fixed[i]).collect::<Vec<_>>(),
            "largest_disagreement": s.disagreement,
            "refit": s.refit.as_ref().map(|cmp| json!({
                "free": s.free,
                "comparison": rf::compare_json(&ranked(cmp), cmp.ranking.disagreement.as_deref()),
            })),
        })
    });
    json!({
        "sets": c.sets,
        "values": c.values,
        "observables": observables,
        "agree_within_factor": AGREE,
        "disagree_from_factor": DISAGREE,
        "target": c.target,
        "until_s": c.until,
        "until_reason": c.until_reason,
        "chain_light": c.chain_light,
        "findings": findings(c),
        "scores": scores,
    })
}

/// `observables.csv`: one row per observable, one column per set (SI values), the factor apart
/// and the verdict.
pub fn observables_csv(c: &Comparison) -> String {
    let mut header = vec!["observable".to_string(), "kind".into(), "unit".into()];
    header.extend(c.sets.iter().map(|s| s.label.clone()));
    header.extend(["factor apart".to_string(), "verdict".into()]);
    let mut t = CsvTable::new(header);
    for o in &c.observables {
        let mut row = vec![
            o.name.clone(),
            serde_json::to_value(o.kind)
                .ok()
                .and_then(|v| v.as_str().map(str::to_string))
                .unwrap_or_default(),
            si_unit(o.kind).to_string(),
        ];
        row.extend(o.values.iter().map(|v| opt_cell(*v)));
        row.push(match o.factor {
            Some(f) if f.is_infinite() => "inf".into(),
            f => opt_cell(f),
        });
        row.push(verdict_word(o.verdict).to_lowercase());
        t.row(row);
    }
    t.finish()
}

/// `scores.csv`: each set as it stands (and refitted, when it was).
pub fn scores_csv(s: &Scores) -> String {
    let mut t = CsvTable::new([
        "set",
        "refitted",
        "observations",
        "estimated",
        "chi2",
        "minus two ln L",
        "AICc",
        "BIC",
        "Akaike weight",
    ]);
    for f in &s.fixed {
        t.row([
            f.label.clone(),
            "no".into(),
            f.score.n.to_string(),
            f.score.k.to_string(),
            cell(f.score.chi2),
            cell(f.score.minus_two_log_likelihood),
            cell(f.score.aicc),
            cell(f.score.bic),
            cell(f.weight),
        ]);
    }
    if let Some(cmp) = &s.refit {
        for (i, (label, f)) in cmp.fits.iter().enumerate() {
            let r = &f.result;
            t.row([
                label.clone(),
                "yes".into(),
                r.n.to_string(),
                r.k.to_string(),
                cell(r.solution.chi2),
                cell(r.minus_two_log_likelihood),
                cell(r.aicc),
                cell(r.bic),
                cell(cmp.ranking.weights[i]),
            ]);
        }
    }
    t.finish()
}

/// `check`'s lines on the sets a network carries ("" when none): each label with what it sets.
pub fn check_text(net: &crate::network::Network) -> String {
    let mut o = String::new();
    if net.levels.is_empty() {
        return o;
    }
    let _ = writeln!(
        o,
        "\nlevels of theory ({} set{}; `photoledger levels` runs the network under each)",
        net.levels.len(),
        if net.levels.len() == 1 { "" } else { "s" }
    );
    for l in &net.levels {
        let mut keys: Vec<String> = l.values.iter().map(|(k, _)| k.spell(net)).collect();
        keys.extend(
            l.counts
                .iter()
                .map(|c| format!("transient.{}.trajectories", net.transients[c.transient].name)),
        );
        let note = if l.note.is_empty() {
            String::new()
        } else {
            format!(" ({})", l.note)
        };
        let _ = writeln!(o, "  \"{}\"{note}: {}", l.label, keys.join(", "));
    }
    o
}

#[cfg(test)]
mod tests {
    #[test]
    fn trajectory_counts_read_as_counts_of_a_total() {
        // 41 to the first channel and 52 to the second: a share of 41/93, not 41/52.
        assert_eq!(super::counts_text(&Some(vec![41, 52])), "41, 52 of 93");
        assert_eq!(super::counts_text(&None), "(file)");
    }
}
