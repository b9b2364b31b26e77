//! The study report: one self-contained HTML page per network.
//!
//! Each section is a small function of one engine's result returning an HTML fragment (one
//! file per section); [`render`] puts the sections that apply into the page ([`page`]). Every
//! drawing is inline SVG with its ids prefixed ([`escape::inline_svg`]); the page holds no
//! script, no URL and no web font, and prints cleanly.

pub mod barrier;
pub mod chain;
pub mod conditions;
pub mod date;
pub mod diagram;
pub mod escape;
pub mod fit;
pub mod header;
pub mod kinetics;
pub mod levels;
pub mod page;
pub mod photons;
pub mod plan;
pub mod switch;

use crate::model::Model;
use crate::network::Network;
use crate::study::Study;

/// Facts about the run itself, for the header.
#[derive(Debug, Clone, PartialEq)]
pub struct Meta {
    /// The command line that made the report, as typed (quoted where needed).
    pub command_line: String,
    /// When, e.g. "2026-12-02 01:15 UTC" ([`date::now_utc`]).
    pub date: String,
}

/// Ids and titles of the sections, in page order (the contents list and the tests use them).
pub const SECTIONS: [(&str, &str); 11] = [
    ("cautions", "Cautions and conditions"),
    ("network", "The network"),
    ("concentrations", "Concentrations over time"),
    ("photons", "Where the photons went"),
    ("chain", "One molecule's path: a Markov chain"),
    ("levels", "Levels of theory compared"),
    ("plan", "The plan: time to the target"),
    ("barriers", "Barrier verdicts"),
    ("fit", "Fit to the data"),
    ("comparison", "Rival networks compared"),
    ("run", "How this was computed"),
];

/// The whole report page for `net` (compiled as `model`) and what the study found.
pub fn render(net: &Network, model: &Model, study: &Study, meta: &Meta) -> String {
    let mut parts: Vec<(&str, String)> = vec![
        ("cautions", conditions::section(net, model)),
        ("network", diagram::section(net)),
        ("concentrations", kinetics::section(net, model, study)),
        ("photons", photons::section(model, &study.kinetics)),
        ("chain", chain::section(&study.chain, study.closed.as_ref())),
    ];
    if let Some(l) = &study.levels {
        parts.push(("levels", levels::section(l)));
    }
    if let Some(p) = &study.plan {
        parts.push(("plan", plan::section(p)));
    }
    if let Some(b) = &study.barrier {
        parts.push((
            "barriers",
            barrier::section(b, net.conditions.temperature, net.energy_unit),
        ));
    }
    if let Some(f) = &study.fit {
        parts.push(("fit", fit::section(f)));
        if let Some(c) = fit::comparison(f) {
            parts.push(("comparison", c));
        }
    }
    parts.push(("run", kinetics::run_section(study, meta)));
    let title_of = |id: &str| SECTIONS.iter().find(|(i, _)| *i == id).map_or("", |(_, t)| *t);
    let parts: Vec<(&str, &str, String)> = parts.into_iter().map(|(id, html)| (id, title_of(id), html)).collect();
    let contents: Vec<(&str, &str)> = parts.iter().map(|(id, title, _)| (*id, *title)).collect();
    let mut body = header::header(net, meta, &contents);
    for (k, (id, title, html)) in parts.iter().enumerate() {
        body.push_str(&page::section(id, k + 1, title, html));
    }
    body.push_str(&format!(
        "<footer>photoledger {} · {} · a computation, not a safety assessment</footer>",
        env!("CARGO_PKG_VERSION"),
        escape::esc(&meta.date)
    ));
    let title = format!("{} — photoledger report", net.about.name);
    page::document(&title, &body)
}

/// The unit ladders and the one rule for picking from them (the largest unit in which the
/// largest value is at least 1) live in `units::display`; the sections use them from here.
pub use crate::units::display::{CONCENTRATION, EINSTEIN, POWER, TIME, pick as pick_unit};

/// `v` with `n` significant figures, or "—" for none.
pub fn sig_or_dash(v: Option<f64>, n: usize) -> String {
    v.filter(|x| x.is_finite())
        .map_or_else(|| "—".to_string(), |x| crate::units::sig(x, n))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn units_are_picked_from_the_largest_value() {
        assert_eq!(pick_unit(5e-5, &CONCENTRATION), (1e-6, "µM"));
        assert_eq!(pick_unit(55.3, &CONCENTRATION), (1.0, "M"));
        assert_eq!(pick_unit(1e-20, &CONCENTRATION), (1e-12, "pM"));
        assert_eq!(pick_unit(7200.0, &TIME), (3600.0, "h"));
        assert_eq!(pick_unit(2.5e-4, &EINSTEIN), (1e-6, "µeinstein"));
        assert_eq!(sig_or_dash(None, 3), "—");
        assert_eq!(sig_or_dash(Some(0.123456), 3), "0.123");
    }
}
