//! The short readable summary `photoledger check` prints.

use crate::light::LightKind;
use crate::network::{Branching, Network, PhotoOutcome, Target};
use crate::units::{format_concentration, sig};
use std::fmt::Write;

/// A plain-text summary of a validated network: what it holds, the light, and warnings.
pub fn network_summary(net: &Network) -> String {
    let mut s = String::new();
    let c = &net.conditions;
    let _ = writeln!(
        s,
        "network  {}{}",
        net.about.name,
        if net.about.invented {
            "  (invented scenario)"
        } else {
            ""
        }
    );
    if !net.about.description.is_empty() {
        let _ = writeln!(s, "         {}", first_line(&net.about.description));
    }
    if !net.about.provenance.is_empty() {
        let _ = writeln!(s, "numbers  {}", first_line(&net.about.provenance));
    }
    let _ = writeln!(
        s,
        "reactor  {} K, {} mL, path {} cm{}",
        sig(c.temperature, 5),
        sig(c.volume * 1e6, 4),
        sig(c.path_length * 100.0, 4),
        c.irradiated_area
            .map_or(String::new(), |a| format!(", irradiated area {} cm²", sig(a * 1e4, 4)))
    );
    let n_abs = net.species_absorbing().len();
    let n_rev = net.thermal.iter().filter(|t| t.reverse_of.is_some()).count();
    let _ = writeln!(
        s,
        "holds    {} species ({} absorbing), {} thermal steps{}, {} photochemical steps, {} transients",
        net.species.len(),
        n_abs,
        net.thermal.len() - n_rev,
        if n_rev > 0 {
            format!(" ({n_rev} reversible)")
        } else {
            String::new()
        },
        net.photo.len(),
        net.transients.len()
    );
    let _ = writeln!(s, "\nlight");
    if net.lights.is_empty() {
        let _ = writeln!(s, "  (none)");
    }
    for l in &net.lights {
        let what = match &l.kind {
            LightKind::Line { wavelength } => format!("line {} nm", sig(wavelength * 1e9, 5)),
            LightKind::Band { centre, fwhm } => {
                format!("band {} nm, FWHM {} nm", sig(centre * 1e9, 5), sig(fwhm * 1e9, 4))
            }
            LightKind::Lamp { file, .. } => format!("lamp spectrum {file}"),
            LightKind::Sun { scale, .. } => format!("sunlight, ASTM G173-03 global tilt × {}", sig(*scale, 4)),
        };
        let (lo, hi) = l.extent().unwrap_or((0.0, 0.0));
        let _ = writeln!(
            s,
            "  {:<14} {:<42} {} mW = {} µeinstein/s ({}–{} nm)",
            l.name,
            what,
            sig(l.power() * 1e3, 4),
            sig(l.photon_flux() * 1e6, 4),
            sig(lo * 1e9, 4),
            sig(hi * 1e9, 4)
        );
    }
    let _ = writeln!(s, "\nspecies");
    for (i, sp) in net.species.iter().enumerate() {
        let eps = match &sp.epsilon {
            None => String::new(),
            Some(e) => {
                // ε at the light's peak photon bin, in the trade's unit.
                let best = net
                    .lights
                    .iter()
                    .flat_map(|l| &l.bins)
                    .max_by(|a, b| a.flux.total_cmp(&b.flux));
                match best {
                    Some(b) => format!(
                        "  ε({} nm) = {} L/(mol cm)",
                        sig(b.wavelength * 1e9, 4),
                        sig(crate::units::epsilon_to_per_cm(e.at(b.wavelength)), 4)
                    ),
                    None => String::new(),
                }
            }
        };
        let absorbs = if net.photo.iter().any(|p| p.absorber == i) {
            "  absorbs"
        } else {
            ""
        };
        let product = if sp.product { "  product" } else { "" };
        let _ = writeln!(
            s,
            "  {:<14} {:>10}{}{}{}{}",
            sp.name,
            format_concentration(sp.initial),
            sp.formula.as_ref().map_or(String::new(), |f| format!("  {f}")),
            absorbs,
            product,
            eps
        );
    }
    if !net.thermal.is_empty() {
        let _ = writeln!(s, "\nthermal steps (rate constants at {} K)", sig(c.temperature, 5));
        for t in &net.thermal {
            let unit = match t.order {
                1 => "/s".to_string(),
                2 => "/(M s)".to_string(),
                n => format!("/(M{} s)", n - 1),
            };
            let _ = writeln!(
                s,
                "  {:<40} k = {} {}",
                format!("{} -> {}", net.side(&t.reactants), net.side(&t.products)),
                sig(t.k, 4),
                unit
            );
        }
    }
    if !net.photo.is_empty() {
        let _ = writeln!(s, "\nphotochemical steps");
        for p in &net.photo {
            let to = match &p.outcome {
                PhotoOutcome::Products(t) => net.side(t),
                PhotoOutcome::Transient(t) => net.transients[*t].name.clone(),
            };
            let q = match &p.quantum_yield {
                crate::light::Spectrum::Constant { value, .. } => sig(*value, 4),
                crate::light::Spectrum::Table { points, .. } => format!("table of {} points", points.len()),
            };
            let word = if matches!(p.outcome, PhotoOutcome::Transient(_)) {
                "efficiency"
            } else {
                "Φ"
            };
            let _ = writeln!(
                s,
                "  {:<40} {word} = {q}",
                format!("{} + hν -> {}", net.species[p.absorber].name, to)
            );
        }
    }
    if !net.transients.is_empty() {
        let _ = writeln!(s, "\ntransients");
        for t in &net.transients {
            let _ = writeln!(s, "  {} ({})", t.name, t.kind.word());
            for ch in &t.channels {
                let to = match &ch.target {
                    Target::Species(ts) => net.side(ts),
                    Target::Transient(k) => net.transients[*k].name.clone(),
                };
                let how = match &ch.branching {
                    Branching::Fraction(x) => format!("fraction {}", sig(*x, 4)),
                    Branching::Rest => "the rest".into(),
                    Branching::Rate { k, .. } => format!("k = {} /s", sig(*k, 4)),
                    Branching::Quenching { partner, k2, .. } => {
                        format!("quenched by {}: k = {} /(M s)", net.species[*partner].name, sig(*k2, 4))
                    }
                };
                let _ = writeln!(
                    s,
                    "    -> {:<30} {how}{}",
                    to,
                    if ch.returns { "   (return)" } else { "" }
                );
            }
        }
    }
    s
}

fn first_line(t: &str) -> &str {
    t.lines().next().unwrap_or("")
}
