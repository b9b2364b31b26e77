//! The "uncertain values" section of `check`: every value `uncertainty` would draw, with its key,
//! value, origin and spread (defaults marked), from `uncertainty::evidence::entries`.

use crate::network::evidence::{ShareSd, Source, Spreads};
use crate::uncertainty::counts::{CountIntervals, Interval};
use crate::uncertainty::evidence::{Basis, Entry, Spreading};
use crate::units::display::EnergyUnit;
use crate::units::{self, display};
use std::fmt::Write;

/// "7 kcal/mol (29.29 kJ/mol)" for an energy difference in J/mol: in the network's family,
/// the other beside it (the display rule).
fn energy(e: f64, family: EnergyUnit) -> String {
    display::format_energy_beside(e, family)
}

fn share_sd(s: ShareSd) -> String {
    match s {
        ShareSd::Absolute(a) => format!("± {}", units::sig(a, 3)),
        ShareSd::Relative(r) => format!("± {} % of the value", units::sig(r * 100.0, 3)),
    }
}

fn value(e: &Entry, family: EnergyUnit) -> String {
    if !e.value.is_finite() {
        return "(not a key of this network)".into();
    }
    let (v, u) = display::quantity_in(e.quantity, e.value, family);
    if u.is_empty() {
        units::sig(v, 4)
    } else {
        format!("{} {u}", units::sig(v, 4))
    }
}

/// The spread column of one entry.
fn spread(e: &Entry, family: EnergyUnit) -> String {
    let default = if e.default { ", default" } else { "" };
    let text = match (&e.basis, e.spread) {
        (Basis::Entry(written), _) => written.clone(),
        (
            Basis::Counts {
                runs,
                finished,
                unfinished,
                prior,
            },
            _,
        ) => format!(
            "{runs} of {finished} runs{}; Dirichlet over the channels, {prior}",
            if *unfinished > 0 {
                format!(" ({unfinished} more ended nowhere: left out)")
            } else {
                String::new()
            }
        ),
        (Basis::Origin(_), Spreading::Energy(sd)) => format!("sd {}{default}", energy(sd, family)),
        (Basis::Origin(_), Spreading::Factor(f, None)) => format!("factor {}{default}", units::sig(f, 3)),
        (Basis::Origin(_), Spreading::Factor(f, Some(b))) => format!(
            "factor {} (from the barrier spread {}{default})",
            units::sig(f, 3),
            energy(b, family)
        ),
        (Basis::Origin(_), Spreading::Share(s)) => format!("{}{default}", share_sd(s)),
        (Basis::Origin(s), Spreading::None) => format!(
            "none{}: not drawn (set one in [spreads.{}])",
            if e.default { " by default" } else { "" },
            s.word()
        ),
        (Basis::Origin(_), Spreading::Own) => String::new(),
    };
    if e.replaced {
        format!("{text}; replaced by its [[uncertain]] entry")
    } else {
        text
    }
}

/// The section, or "" when nothing is uncertain.
/// Energies are shown in `family` (the network's [`crate::network::Network::energy_unit`]).
pub fn uncertain_values(entries: &[Entry], family: EnergyUnit) -> String {
    if entries.is_empty() {
        return String::new();
    }
    let mut s = String::new();
    let _ = writeln!(
        s,
        "\nuncertain values (drawn by `uncertainty`; the key is the one --set and [[uncertain]] use)"
    );
    let kw = entries.iter().map(|e| e.key.chars().count()).max().unwrap_or(0).max(3);
    let vw = entries
        .iter()
        .map(|e| value(e, family).chars().count())
        .max()
        .unwrap_or(0)
        .max(5);
    let _ = writeln!(s, "  {:kw$}  {:>vw$}  {:22}  spread", "key", "value", "origin");
    for e in entries {
        let origin = match &e.basis {
            Basis::Entry(_) => "[[uncertain]] entry",
            Basis::Origin(o) => o.word(),
            Basis::Counts { .. } => "trajectory counts",
        };
        let _ = writeln!(
            s,
            "  {:kw$}  {:>vw$}  {origin:22}  {}",
            e.key,
            value(e, family),
            spread(e, family)
        );
    }
    // The defaults of the origins used, so a reader sees what "default" stands for.
    let mut used: Vec<Source> = entries
        .iter()
        .filter_map(|e| match e.basis {
            Basis::Origin(o) if e.default => Some(o),
            _ => None,
        })
        .collect();
    used.sort_by_key(|o| *o as usize);
    used.dedup();
    if !used.is_empty() {
        let d = Spreads::default();
        let rows: Vec<String> = used
            .iter()
            .map(|&o| {
                let r = d.of(o);
                let mut parts = Vec::new();
                if let Some(b) = r.barrier.value {
                    parts.push(format!("barrier sd {}", energy(b, family)));
                }
                if let Some(f) = r.rate_factor.value {
                    parts.push(format!("k factor {}", units::sig(f, 3)));
                }
                if let Some(f) = r.fraction.value {
                    parts.push(format!("fraction {}", share_sd(f)));
                }
                if let Some(q) = r.quantum_yield.value {
                    parts.push(format!("quantum yield {}", share_sd(q)));
                }
                if parts.is_empty() {
                    parts.push("none".into());
                }
                format!("{}: {}", o.word(), parts.join(", "))
            })
            .collect();
        let _ = writeln!(
            s,
            "  default spreads (change them in [spreads.ORIGIN]): {}",
            rows.join("; ")
        );
    }
    s
}

/// `ledger`'s section on what the trajectory counts alone leave uncertain.
pub fn count_intervals(c: &CountIntervals) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "\nfrom the trajectory counts alone ({} % intervals over {} draws of their Dirichlet, seed {}; every other number held)",
        units::sig(c.level * 100.0, 3),
        c.draws,
        c.seed
    );
    for t in &c.transients {
        let finished: u64 = t.runs.iter().sum();
        let runs: Vec<String> = t.runs.iter().map(|n| n.to_string()).collect();
        let _ = writeln!(
            s,
            "  {}: {} runs by channel, {finished} that reached a channel{}; {}",
            t.name,
            runs.join(" / "),
            if t.unfinished > 0 {
                format!(", {} more that ended nowhere (left out of the shares)", t.unfinished)
            } else {
                String::new()
            },
            t.prior
        );
    }
    let label = |i: &Interval| match i.output.as_str() {
        "yield" => format!("yield of {}", i.product),
        _ => format!("photons per {}", i.product),
    };
    let w = c.intervals.iter().map(|i| label(i).chars().count()).max().unwrap_or(0);
    for i in &c.intervals {
        let _ = writeln!(
            s,
            "  {:w$}  {:>10}  ({} – {})",
            label(i),
            display::number(i.value),
            display::number(i.low),
            display::number(i.high)
        );
    }
    if c.failed > 0 {
        let _ = writeln!(s, "  {} of the draws could not be evaluated and are left out", c.failed);
    }
    if let Some(w) = c.widest.and_then(|k| c.intervals.get(k)) {
        let more: Vec<String> = c
            .transients
            .iter()
            .map(|t| {
                let finished: u64 = t.runs.iter().sum();
                format!(
                    "about {} more runs on {} ({} → {} that reach a channel{})",
                    t.more_runs,
                    t.name,
                    finished,
                    t.finished_needed,
                    if t.unfinished > 0 {
                        ", allowing for those that end nowhere at today's rate".to_string()
                    } else {
                        String::new()
                    }
                )
            })
            .collect();
        let _ = writeln!(
            s,
            "  widest for its value: {}; to halve it, {}{}",
            label(w),
            more.join(" and "),
            match c.widest_after {
                Some((l, h)) => format!(
                    "; drawn at those counts it is ({} – {}), {} % of today's width",
                    display::number(l),
                    display::number(h),
                    units::sig(100.0 * (h - l) / (w.high - w.low), 2)
                ),
                None => String::new(),
            }
        );
    }
    s
}
