//! The short readable summary `photoledger check` prints.

use crate::light::LightKind;
use crate::network::{Branching, Network, PhotoOutcome, Target};
use crate::units::{display, format_concentration, sig};
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
    for (i, l) in net
        .about
        .description
        .lines()
        .filter(|l| !l.trim().is_empty())
        .enumerate()
    {
        let _ = (i, writeln!(s, "         {}", l.trim()));
    }
    for (i, l) in net
        .about
        .provenance
        .lines()
        .filter(|l| !l.trim().is_empty())
        .enumerate()
    {
        let _ = writeln!(s, "{}{}", if i == 0 { "numbers  " } else { "         " }, l.trim());
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
    // A species absorbs when it has ε where a source sends photons (an inner filter too).
    let lit = |sp: &crate::network::Species| net.takes_light(sp);
    let n_abs = net.species.iter().filter(|x| lit(x)).count();
    let plural = |n: usize, one: &str, many: &str| format!("{n} {}", if n == 1 { one } else { many });
    let n_rev = net.thermal.iter().filter(|t| t.reverse_of.is_some()).count();
    let _ = writeln!(
        s,
        "holds    {} ({} absorbing), {}{}, {}, {}",
        plural(net.species.len(), "species", "species"),
        n_abs,
        plural(net.thermal.len() - n_rev, "thermal step", "thermal steps"),
        if n_rev > 0 {
            format!(" ({n_rev} reversible)")
        } else {
            String::new()
        },
        plural(net.photo.len(), "photochemical step", "photochemical steps"),
        plural(net.transients.len(), "transient", "transients")
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
        // The stated intensity is the whole source's; a from/to window cuts it (a filter).
        let emitted = if l.window_cuts() {
            format!("{} emitted, ", display::format_power(l.emitted_power))
        } else {
            String::new()
        };
        let _ = writeln!(
            s,
            "  {:<14} {:<42} {}{} = {} {}{} nm{}{} wavelength bin{})",
            l.name,
            what,
            emitted,
            display::format_power(l.power()),
            display::format_photon_flux(l.photon_flux()),
            if l.window_cuts() { "in " } else { "(" },
            // a line's range is one wavelength
            if sig(lo * 1e9, 4) == sig(hi * 1e9, 4) {
                sig(lo * 1e9, 4)
            } else {
                format!("{}–{}", sig(lo * 1e9, 4), sig(hi * 1e9, 4))
            },
            if l.window_cuts() {
                " (from/to cuts the emitted light; "
            } else {
                "; "
            },
            l.bins.len(),
            if l.bins.len() == 1 { "" } else { "s" }
        );
    }
    let _ = writeln!(s, "\nspecies");
    for (i, sp) in net.species.iter().enumerate() {
        let eps = match &sp.epsilon {
            None => String::new(),
            Some(e) => {
                // ε as the light meets it: weighted by each source's photons (what sets the
                // photons a thin sample takes), per source, in the trade's unit. The largest ε
                // over a band's quadrature sits in its far tails, where the source hardly emits.
                let per: Vec<(&str, f64)> = net
                    .lights
                    .iter()
                    .filter_map(|l| {
                        let total: f64 = l.bins.iter().map(|b| b.flux).sum();
                        let taken: f64 = l.bins.iter().map(|b| b.flux * e.at(b.wavelength)).sum();
                        (total > 0.0).then(|| (l.name.as_str(), taken / total))
                    })
                    .map(|(name, v)| (name, crate::units::epsilon_to_per_cm(v)))
                    .collect();
                if per.is_empty() {
                    String::new()
                } else if per.iter().all(|p| p.1 == 0.0) {
                    "  ε = 0 under the light".to_string()
                } else {
                    let list: Vec<String> = per.iter().map(|(n, v)| format!("{n} {}", sig(*v, 3))).collect();
                    format!("  ε over each source's photons: {} L/(mol cm)", list.join(", "))
                }
            }
        };
        // Those with a photochemical step say so.
        let absorbs = match (lit(sp), net.photo.iter().any(|p| p.absorber == i)) {
            (true, true) => "  absorbs, reacts",
            (false, true) => "  reacts by light, but has no ε under this light",
            (true, false) => "  absorbs (no photochemistry)",
            (false, false) => "",
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
            let derived = match &t.rate {
                crate::rates::RateLaw::Frequencies {
                    barrier, degeneracy, ..
                } => format!(
                    "   (computed: TST from frequencies, E0 = {}, σ = {}{})",
                    display::format_energy(*barrier, net.energy_unit),
                    sig(*degeneracy, 3),
                    t.rate
                        .tunnelling(c.temperature)
                        .map_or(String::new(), |w| format!(", Wigner κ = {}", sig(w, 4)))
                ),
                _ => String::new(),
            };
            let _ = writeln!(
                s,
                "  {:<40} k = {}{derived}",
                format!("{} -> {}", net.side(&t.reactants), net.side(&t.products)),
                display::format_rate_constant(t.k, t.order),
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
        let c0: Vec<f64> = net.species.iter().map(|x| x.initial).collect();
        for t in &net.transients {
            let _ = writeln!(s, "  {} ({})", t.name, t.kind.word());
            let total: f64 = t
                .channels
                .iter()
                .map(|c| match c.branching {
                    Branching::Rate { k, .. } => k,
                    Branching::Quenching { partner, k2, .. } => k2 * c0[partner],
                    _ => 0.0,
                })
                .sum();
            for ch in &t.channels {
                let to = match &ch.target {
                    Target::Species(ts) => net.side(ts),
                    Target::Transient(k) => net.transients[*k].name.clone(),
                };
                let how = match &ch.branching {
                    Branching::Fraction(x) => format!("fraction {}", sig(*x, 4)),
                    Branching::Hot {
                        fraction,
                        barrier,
                        energy,
                        cooling,
                        rate_at_start,
                    } => format!(
                        "hot yield {} (computed: RRKM over E0 = {} from {}, k = {} at the start, \
                         cooling τ = {})",
                        sig(*fraction, 4),
                        display::format_energy(*barrier, net.energy_unit),
                        display::format_energy(*energy, net.energy_unit),
                        display::format_rate_constant(*rate_at_start, 1),
                        display::format_time(*cooling)
                    ),
                    Branching::Rest if t.channels.iter().any(|c| matches!(c.branching, Branching::Hot { .. })) => {
                        let hot: f64 = t.channels.iter().filter_map(|c| c.branching.fixed_share()).sum();
                        format!("the rest: cools without reacting, {}", sig(1.0 - hot, 6))
                    }
                    Branching::Rest => "the rest".into(),
                    Branching::Rate { k, .. } => {
                        format!(
                            "k = {}, share {} % at the start",
                            display::format_rate_constant(*k, 1),
                            sig(100.0 * k / total.max(f64::MIN_POSITIVE), 3)
                        )
                    }
                    Branching::Quenching { partner, k2, .. } => format!(
                        "quenched by {}: k = {}, share {} % at the start",
                        net.species[*partner].name,
                        display::format_rate_constant(*k2, 2),
                        sig(100.0 * k2 * c0[*partner] / total.max(f64::MIN_POSITIVE), 3)
                    ),
                };
                let _ = writeln!(
                    s,
                    "    -> {:<30} {how}{}",
                    to,
                    if ch.returns { "   (return)" } else { "" }
                );
            }
            if let Some(e) = &t.energy_from {
                let _ = writeln!(s, "       {e}");
            }
        }
    }
    s
}

/// A readable summary of a kinetics run: final concentrations, the photon ledger, the cost
/// of each product, and which integrator ran.
pub fn run_summary(s: &crate::report::simulation::Summary) -> String {
    let mut o = String::new();
    let _ = writeln!(
        o,
        "{}{}: {} ({})",
        s.network,
        if s.invented { " (invented scenario)" } else { "" },
        crate::units::format_time(s.end_time_s),
        s.stopped_by
    );
    if let Some(d) = &s.light_schedule {
        let every = if d.period_s == 86400.0 {
            "a day".to_string()
        } else {
            format!("every {}", crate::units::format_time(d.period_s))
        };
        let _ = writeln!(
            o,
            "light on {} {every} (all sources together): lit {} of {}; the dark hours integrated with the light off",
            crate::units::format_time(d.lit_per_period_s),
            crate::units::format_time(d.lit_time_s),
            crate::units::format_time(s.end_time_s)
        );
    }
    if s.sun_around_the_clock {
        let _ = writeln!(
            o,
            "light on around the clock: the sun at its stated strength with no night (--sun-hours N for N lit hours a day)"
        );
    }
    let _ = writeln!(o, "\nfinal concentrations");
    // round-off within the integrator's absolute tolerance of zero reads 0 (summary.json keeps
    // the raw values beside its `atol`)
    let zero = crate::units::display::ZeroWithin(s.method.atol);
    for (n, c) in &s.final_concentrations_mol_per_l {
        let _ = writeln!(
            o,
            "  {n:<16} {:>12}",
            crate::units::display::format_concentration_within(*c, zero)
        );
    }
    let p = &s.photons;
    // One unit for the table, by its largest value (the display rule): µeinstein for a
    // cuvette's hour, einstein for a sunlit pool.
    let (pf, pu) = display::photons(display::largest([p.incident, p.background(), p.transmitted()]));
    let _ = writeln!(o, "\nphotons ({pu})");
    // A dark run (every source at zero) has no shares of the incident light to give.
    let dark = p.incident <= 0.0;
    // One table: labels in one column, numbers right-aligned in the next, notes after them.
    let mut rows: Vec<(String, String, String)> = Vec::new();
    let incident_note = if dark && !s.floored.lights.is_empty() {
        "(no light: below the light floor, see floors below)"
    } else if dark && p.sources.is_empty() {
        "(no light: the network has no light source)"
    } else if dark {
        "(no light: every source is at zero)"
    } else {
        ""
    };
    rows.push(("incident".into(), sig(p.incident / pf, 4), incident_note.into()));
    for a in &p.by_absorber {
        let share = if dark {
            "(no light)".to_string()
        } else if a.outcomes.is_empty() {
            format!(
                "({} % of incident; no photochemistry: an inner filter, its photons drive no reaction)",
                sig(100.0 * a.absorbed / p.incident, 3)
            )
        } else {
            format!(
                "({} % of incident; {} returned, {} productive)",
                sig(100.0 * a.absorbed / p.incident, 3),
                sig(a.returned / pf, 3),
                sig(a.productive / pf, 3)
            )
        };
        rows.push((format!("absorbed by {}", a.species), sig(a.absorbed / pf, 4), share));
    }
    rows.push(("background".into(), sig(p.background() / pf, 4), String::new()));
    rows.push(("transmitted".into(), sig(p.transmitted() / pf, 4), String::new()));
    let lw = rows.iter().map(|r| r.0.chars().count()).max().unwrap_or(0).max(14);
    let vw = rows.iter().map(|r| r.1.chars().count()).max().unwrap_or(0);
    for (label, value, note) in &rows {
        let line = format!("  {label:<lw$}  {value:>vw$}  {note}");
        let _ = writeln!(o, "{}", line.trim_end());
    }
    if !dark {
        let _ = writeln!(
            o,
            "  {:<lw$}  incident − absorbed − background − transmitted = {} of incident",
            "balance",
            sig(p.balance_error, 2)
        );
        let (figure, detail) = inner_filter_text(p);
        let pad = " ".repeat(lw + 4);
        let _ = writeln!(o, "  {:<lw$}  {figure}\n{pad}({detail})", "inner filter");
        let _ = writeln!(
            o,
            "  {:<lw$}  {} % of incident photons absorbed by species and led to no reaction (returned the molecule \
             unchanged, or taken by a species with no photochemistry; the background is its own line)",
            "no reaction",
            sig(100.0 * p.unproductive_fraction, 3)
        );
    }
    // an amount within the integrator's tolerance (atol × volume) is round-off: none formed,
    // and no photon cost is a ratio of it
    let zero_mol = crate::units::display::ZeroWithin(s.method.atol * s.volume_l);
    if !p.products.is_empty() {
        let _ = writeln!(
            o,
            "\nproducts reached through a photochemical step (formed by one, or the principal product, most atoms other than H, \
             of a thermal step fed by one)"
        );
        for pr in &p.products {
            let cost = pr.photons_per_molecule.filter(|_| zero_mol.shown(pr.formed) > 0.0);
            match cost {
                Some(n) => {
                    let _ = writeln!(
                        o,
                        "  {:<16} {} formed, {} photons absorbed per molecule (apparent Φ {}, per photon absorbed by the whole sample)",
                        pr.species,
                        display::format_amount(pr.formed),
                        sig(n, 4),
                        sig(1.0 / n, 3)
                    );
                }
                // Formed by dark steps alone: no photon cost to give.
                None if zero_mol.shown(pr.formed) > 0.0 => {
                    let _ = writeln!(
                        o,
                        "  {:<16} {} formed, no photons absorbed (formed by thermal steps alone)",
                        pr.species,
                        display::format_amount(pr.formed)
                    );
                }
                None => {
                    let _ = writeln!(o, "  {:<16} none formed", pr.species);
                }
            }
        }
    }
    if p.products.is_empty() && p.thermal_products.is_empty() && !dark {
        let _ = writeln!(
            o,
            "\nno photon cost per product: no species is marked `product = true`, and every species formed is \
             consumed again by some step, so none is taken as a product (mark the products in their [[species]] \
             blocks to get the photons absorbed per molecule formed)"
        );
    }
    if !p.thermal_products.is_empty() {
        let heading = if dark {
            "\nformed in the dark by thermal steps (no light reached the sample, so no photon cost)"
        } else {
            "\nformed by thermal steps, no photon cost (co-products: the other products of steps a photoproduct \
             feeds, and what steps no photoproduct feeds form)"
        };
        let _ = writeln!(o, "{heading}");
        for pr in &p.thermal_products {
            let _ = writeln!(
                o,
                "  {:<16} {} formed",
                pr.species,
                display::format_amount(zero_mol.shown(pr.formed))
            );
        }
    }
    let m = &s.method;
    let _ = writeln!(
        o,
        "\nintegrator  {} — {}; {} steps ({} rejected), {} RHS evaluations, {} Jacobian evaluations, {} LU factorisations{}, {} Jacobian-vector products",
        segments_text(&m.segments),
        m.reason,
        m.steps,
        m.rejected_steps,
        m.rhs_evaluations,
        m.jacobian_evaluations,
        m.jacobian_setups,
        if m.lu_kept > 0 {
            format!(" ({} more iteration matrices solved with earlier factors)", m.lu_kept)
        } else {
            String::new()
        },
        m.jacobian_products
    );
    if let Some(line) = s.floored.line() {
        let _ = writeln!(o, "floors      {line}");
    }
    let _ = writeln!(o, "assumes     {}", s.assumptions);
    if !s.cautions.is_empty() {
        let _ = writeln!(o, "caution: {}", s.cautions);
    }
    o
}

/// Which integrator took which stretch: "BDF from 0 s to 40 s", or with a hand-over each
/// stretch with its steps and right-hand sides, joined by "then".
fn segments_text(segments: &[crate::report::simulation::SegmentSummary]) -> String {
    let one = |g: &crate::report::simulation::SegmentSummary| {
        format!(
            "{} from {} to {}",
            g.method,
            crate::units::format_time(g.from_s),
            crate::units::format_time(g.to_s)
        )
    };
    match segments {
        [g] => one(g),
        _ => segments
            .iter()
            .map(|g| format!("{} ({} steps, {} RHS evaluations)", one(g), g.steps, g.rhs_evaluations))
            .collect::<Vec<_>>()
            .join(", then "),
    }
}

/// The inner filter in words: its share of the incident photons with what it means, and (second)
/// the reaction followed and who took the light.
pub fn inner_filter_text(p: &crate::kinetics::ledger::Ledger) -> (String, String) {
    let f = &p.inner_filter;
    let pct = |x: f64| {
        if p.incident > 0.0 {
            format!("{} %", sig(100.0 * x / p.incident, 3))
        } else {
            "0%".into()
        }
    };
    let followed = if f.followed.is_empty() {
        "every photoreaction".to_string()
    } else {
        f.followed.join(", ")
    };
    let reactants = if f.reactants.is_empty() {
        "no photochemical step leads to it, so all absorbed light counts".to_string()
    } else {
        format!("photoreactants {}", f.reactants.join(", "))
    };
    let mut taken: Vec<String> = f.by_species.iter().map(|(n, x)| format!("{n} {}", pct(*x))).collect();
    taken.push(format!("background {}", pct(f.background)));
    (
        format!(
            "{} % of incident photons: light absorbed by anything other than the photoreactants of the reaction followed",
            sig(100.0 * f.fraction, 3)
        ),
        format!("followed: {followed}; {reactants}; taken by {}", taken.join(", ")),
    )
}
