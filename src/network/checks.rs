//! Checks that need the whole network: ways out of transients, return paths, quantum-yield
//! sums, element balance, and warnings about light, spectra and unused species. Also builds
//! the petgraph graph.

use super::diagnostics::{Places, Sink};
use super::formula::{self, Composition};
use super::*;
use crate::error::Origin;
use crate::units::sig;
use std::collections::BTreeSet;

/// How far (m) a light's photons may lie from the wavelength of a single ε value: 1 nm, about
/// the spectral bandwidth of a bench spectrophotometer and the precision to which lines and
/// spectra are quoted (common practice).
pub const SINGLE_EPSILON_TOLERANCE: f64 = 1e-9;

/// Run every whole-network check on `net` (built from the file whose item positions are
/// `at`), reporting into `sink`, and mark the channels that return to an excited species.
pub(super) fn check_network(sink: &mut Sink, at: &Places, net: &mut Network) {
    Checks { sink, at }.all(net);
}

/// The whole-network checks, reporting into a sink.
struct Checks<'s, 'a> {
    sink: &'s mut Sink<'a>,
    /// Where each item of the network was written.
    at: &'s Places,
}

impl Checks<'_, '_> {
    fn all(&mut self, net: &mut Network) {
        self.check_exits(net);
        mark_returns(net);
        self.check_yield_sums(net);
        self.check_balance(net);
        self.check_light(net);
        self.check_geometry(net);
        self.check_unused(net);
        super::ranges::check(self.sink, self.at, net);
    }

    /// The lit column (irradiated area × path length) cannot hold more solution than the
    /// volume: if it does, all the light that crosses it would be put into the smaller volume and
    /// every rate per volume would be too high by their ratio. A lit column smaller than the
    /// volume is a stirred vessel partly in the light and is fine.
    fn check_geometry(&mut self, net: &Network) {
        let c = &net.conditions;
        let Some(area) = c.irradiated_area else {
            return;
        };
        let column = area * c.path_length;
        if column <= c.volume * 1.01 {
            return;
        }
        let vol = |v: f64| {
            if v >= 1e-3 {
                format!("{} L", sig(v * 1e3, 4))
            } else {
                format!("{} mL", sig(v * 1e6, 4))
            }
        };
        let area_s = if area >= 1e-2 {
            format!("{} m2", sig(area, 4))
        } else {
            format!("{} cm2", sig(area * 1e4, 4))
        };
        self.sink.warn(
            "conditions.irradiated_area",
            &self.at.irradiated_area,
            format!(
                "irradiated_area × path_length = {area_s} × {} cm = {} of lit solution, more than conditions.volume = \
                 {} ({}×): impossible geometry, the light crossing that column would all go into the smaller volume \
                 and rates per volume would be {}× too high",
                sig(c.path_length * 100.0, 4),
                vol(column),
                vol(c.volume),
                sig(column / c.volume, 3),
                sig(column / c.volume, 3)
            ),
            Some(format!(
                "make volume at least irradiated_area × path_length ({}), or reduce irradiated_area or path_length; \
                 a lit column smaller than the volume (a stirred vessel partly lit) is fine",
                vol(column)
            )),
        );
    }

    fn transient_at(&self, i: usize) -> Origin {
        self.at.transients.get(i).cloned().unwrap_or_default()
    }

    /// Every transient must reach a species through channels of positive share.
    fn check_exits(&mut self, net: &Network) {
        let n = net.transients.len();
        let mut exits = vec![false; n];
        // Fixed point: a transient exits if a channel with positive share goes to a species
        // or to a transient that exits.
        loop {
            let mut changed = false;
            for (i, t) in net.transients.iter().enumerate() {
                if exits[i] {
                    continue;
                }
                let fixed: f64 = t
                    .channels
                    .iter()
                    .map(|c| c.branching.fixed_share().unwrap_or(0.0))
                    .sum();
                let open = t.channels.iter().any(|c| {
                    let positive = match c.branching {
                        Branching::Fraction(x) | Branching::Hot { fraction: x, .. } => x > 0.0,
                        Branching::Rest => fixed < 1.0 - 1e-12,
                        Branching::Rate { k, .. } => k > 0.0,
                        Branching::Quenching { k2, .. } => k2 > 0.0,
                    };
                    positive
                        && match c.target {
                            Target::Species(_) => true,
                            Target::Transient(j) => exits[j],
                        }
                });
                if open {
                    exits[i] = true;
                    changed = true;
                }
            }
            if !changed {
                break;
            }
        }
        let stuck: Vec<usize> = (0..n)
            .filter(|&i| !exits[i] && !net.transients[i].name.is_empty() && !net.transients[i].channels.is_empty())
            .collect();
        if !stuck.is_empty() {
            let names: Vec<String> = stuck
                .iter()
                .map(|&i| format!("\"{}\"", net.transients[i].name))
                .collect();
            let at = self.transient_at(stuck[0]);
            self.sink.error(
                &format!("transient {}", names[0]),
                &at,
                format!(
                    "no way out to a species: {} only lead{} to each other",
                    names.join(", "),
                    if names.len() == 1 { "s" } else { "" }
                ),
                Some(
                    "give one of them a channel to a ground-state species (a product, or the return to the absorber)"
                        .into(),
                ),
            );
        }
        // Quenching-only transients depend on the partner being present.
        for (i, t) in net.transients.iter().enumerate() {
            if !t.channels.is_empty()
                && t.channels
                    .iter()
                    .all(|c| matches!(c.branching, Branching::Quenching { .. }))
            {
                let at = self.transient_at(i);
                self.sink.warn(
                    &format!("transient \"{}\"", t.name),
                    &at,
                    "all its channels are bimolecular quenching: with no quencher present it has no way out",
                    Some("add a unimolecular decay channel (rate = { k = ... })".into()),
                );
            }
        }
        // Transients nothing reaches.
        let mut reached = vec![false; n];
        for p in &net.photo {
            if let PhotoOutcome::Transient(t) = p.outcome {
                reached[t] = true;
            }
        }
        for t in &net.transients {
            for c in &t.channels {
                if let Target::Transient(j) = c.target {
                    reached[j] = true;
                }
            }
        }
        for (i, t) in net.transients.iter().enumerate() {
            if !reached[i] && !t.name.is_empty() {
                let at = self.transient_at(i);
                self.sink.warn(
                    &format!("transient \"{}\"", t.name),
                    &at,
                    "no photochemical step or channel leads to it",
                    None,
                );
            }
        }
    }

    /// The quantum yields of one absorber's steps must not sum above 1 at any wavelength.
    fn check_yield_sums(&mut self, net: &Network) {
        let mut wavelengths: Vec<f64> = net
            .lights
            .iter()
            .flat_map(|l| l.bins.iter().map(|b| b.wavelength))
            .collect();
        for p in &net.photo {
            if let Spectrum::Table { points, .. } = &p.quantum_yield {
                wavelengths.extend(points.iter().map(|x| x.0));
            }
        }
        if wavelengths.is_empty() {
            wavelengths.push(500e-9);
        }
        for a in net.species_absorbing() {
            let steps: Vec<usize> = (0..net.photo.len()).filter(|&i| net.photo[i].absorber == a).collect();
            let worst = wavelengths
                .iter()
                .map(|&w| (w, steps.iter().map(|&i| net.photo[i].yield_at(w)).sum::<f64>()))
                .max_by(|x, y| x.1.total_cmp(&y.1));
            if let Some((w, s)) = worst
                && s > 1.0 + 1e-9
            {
                let at = self.at.photo.get(steps[0]).cloned().unwrap_or_default();
                self.sink.error(
                    &format!("photo steps of \"{}\"", net.species[a].name),
                    &at,
                    format!(
                        "quantum yields and efficiencies sum to {} at {} nm, above 1",
                        crate::units::sig(s, 6),
                        crate::units::sig(w * 1e9, 5)
                    ),
                    Some(
                        "the photons one absorber takes up are shared among its steps: their yields sum to at most 1"
                            .into(),
                    ),
                );
            }
        }
    }

    fn check_balance(&mut self, net: &Network) {
        let comp = |terms: &[Term]| -> Option<Composition> {
            let mut parts = Vec::new();
            for t in terms {
                parts.push((net.species[t.species].composition.as_ref()?, t.coefficient));
            }
            Some(formula::total(parts))
        };
        for (i, s) in net.thermal.iter().enumerate() {
            if s.reverse_of.is_some() {
                continue;
            }
            if let (Some(l), Some(r)) = (comp(&s.reactants), comp(&s.products)) {
                let d = formula::imbalance(&l, &r);
                if !d.is_empty() {
                    let at = self.at.thermal.get(i).cloned().unwrap_or_default();
                    self.sink.error(
                        &format!("thermal \"{}\"", s.name),
                        &at,
                        format!(
                            "{} -> {} is not balanced: products − reactants = {d}",
                            net.side(&s.reactants),
                            net.side(&s.products)
                        ),
                        Some("check the formulas of these species and the coefficients".into()),
                    );
                }
            }
        }
        for (i, p) in net.photo.iter().enumerate() {
            let at = self.at.photo.get(i).cloned().unwrap_or_default();
            let Some(a) = net.species[p.absorber].composition.clone() else {
                continue;
            };
            let mut ends: Vec<(String, Vec<Term>)> = Vec::new();
            match &p.outcome {
                PhotoOutcome::Products(t) => ends.push((String::new(), t.clone())),
                PhotoOutcome::Transient(t) => collect_ends(net, *t, &mut vec![false; net.transients.len()], &mut ends),
            }
            for (label, terms) in ends {
                if let Some(r) = comp(&terms) {
                    let d = formula::imbalance(&a, &r);
                    if !d.is_empty() {
                        self.sink.error(
                            &format!("photo \"{}\"", p.name),
                            &at,
                            format!("{} -> {}{label} is not balanced: products − absorber = {d}", net.species[p.absorber].name, net.side(&terms)),
                            Some("photochemical outcomes keep the absorber's atoms; a partner's atoms enter through thermal steps".into()),
                        );
                    }
                }
            }
        }
    }

    fn check_light(&mut self, net: &Network) {
        if net.lights.is_empty() && !net.photo.is_empty() {
            self.sink.warn(
                "light",
                &Origin::Span(0..0),
                "there are photochemical steps but no light source",
                Some("add a [[light]] table".into()),
            );
            return;
        }
        for a in net.species_absorbing() {
            let s = &net.species[a];
            let at = self.at.species.get(a).cloned().unwrap_or_default();
            match &s.epsilon {
                None => self.sink.warn(
                    &format!("species \"{}\".epsilon", s.name),
                    &at,
                    "it absorbs in a photochemical step but has no molar absorption coefficient, so it takes no light",
                    Some(
                        "add epsilon over the light's wavelengths, e.g. epsilon = { wavelength_unit = \"nm\", \
                         unit = \"L/(mol cm)\", points = [[350, 4000], [365, 5000], [380, 3000]] }"
                            .into(),
                    ),
                ),
                Some(eps) => {
                    let absorbs = net
                        .lights
                        .iter()
                        .flat_map(|l| &l.bins)
                        .any(|b| eps.at(b.wavelength) > 0.0);
                    if !absorbs {
                        self.sink.warn(
                            &format!("species \"{}\".epsilon", s.name),
                            &at,
                            "is zero at every wavelength of the light, so it takes no light",
                            None,
                        );
                    }
                }
            }
        }
        self.check_single_epsilon(net);
    }

    /// A single ε `value` given `at` one wavelength describes the absorber there and nowhere
    /// else: it is used only when every photon of every light (switched on or not) lies within
    /// [`SINGLE_EPSILON_TOLERANCE`] of that wavelength. Under anything broader, or a line
    /// elsewhere, it is an error naming the light; the fix is a table, or a window (`from`/`to`)
    /// in which the value holds.
    fn check_single_epsilon(&mut self, net: &Network) {
        let nm = |m: f64| format!("{} nm", crate::units::sig(m * 1e9, 5));
        for (i, s) in net.species.iter().enumerate() {
            let Some(Spectrum::Constant { value, at: Some(w) }) = s.epsilon else {
                continue;
            };
            let far: Vec<String> = net
                .lights
                .iter()
                .filter_map(|l| Some((l, l.extent()?)))
                .filter(|(_, (lo, hi))| {
                    (lo - w).abs() > SINGLE_EPSILON_TOLERANCE || (hi - w).abs() > SINGLE_EPSILON_TOLERANCE
                })
                .map(|(l, (lo, hi))| {
                    if lo == hi {
                        format!("\"{}\" is a line at {}", l.name, nm(lo))
                    } else {
                        format!(
                            "\"{}\" spans {}–{} nm",
                            l.name,
                            crate::units::sig(lo * 1e9, 5),
                            crate::units::sig(hi * 1e9, 5)
                        )
                    }
                })
                .collect();
            if far.is_empty() {
                continue;
            }
            let at = self.at.epsilon.get(i).cloned().unwrap_or_default();
            let v = crate::units::sig(crate::units::epsilon_to_per_cm(value), 5);
            let (lo, hi) = (nm(w - 10e-9), nm(w + 10e-9));
            self.sink.error(
                &format!("species \"{}\".epsilon", s.name),
                &at,
                format!(
                    "one value given at {} would stand for ε at every wavelength of the light, but the light {}",
                    nm(w),
                    far.join(" and the light ")
                ),
                Some(format!(
                    "a single ε holds at its own wavelength (within {}) only: give ε over the light's wavelengths \
                     as a table (points = [[...]] with wavelength_unit and unit, or file = \"x.csv\"), or state the \
                     window where this value holds, zero outside it: \
                     epsilon = {{ at = \"{}\", value = \"{v} L/(mol cm)\", from = \"{lo}\", to = \"{hi}\" }}",
                    nm(SINGLE_EPSILON_TOLERANCE),
                    nm(w),
                )),
            );
        }
    }

    fn check_unused(&mut self, net: &Network) {
        let mut used = BTreeSet::new();
        for s in &net.thermal {
            used.extend(s.reactants.iter().chain(&s.products).map(|t| t.species));
        }
        for p in &net.photo {
            used.insert(p.absorber);
            if let PhotoOutcome::Products(t) = &p.outcome {
                used.extend(t.iter().map(|t| t.species));
            }
        }
        for t in &net.transients {
            for c in &t.channels {
                if let Target::Species(ts) = &c.target {
                    used.extend(ts.iter().map(|t| t.species));
                }
                if let Branching::Quenching { partner, .. } = c.branching {
                    used.insert(partner);
                }
            }
        }
        for (i, s) in net.species.iter().enumerate() {
            if !used.contains(&i) {
                let at = self.at.species.get(i).cloned().unwrap_or_default();
                let absorbs = s.epsilon.as_ref().is_some_and(|e| e.max() > 0.0);
                let note = if absorbs {
                    " (it still absorbs light: an inner filter)"
                } else {
                    ""
                };
                self.sink.warn(
                    &format!("species \"{}\"", s.name),
                    &at,
                    format!("nothing produces or consumes it{note}"),
                    None,
                );
            }
        }
    }
}

/// Every species outcome reachable from transient `t` through channels, each with the
/// transient it leaves. Each transient is visited once, so long ladders of transients stay
/// linear in their size.
fn collect_ends(net: &Network, t: usize, seen: &mut Vec<bool>, out: &mut Vec<(String, Vec<Term>)>) {
    if seen[t] {
        return;
    }
    seen[t] = true;
    for c in &net.transients[t].channels {
        match &c.target {
            Target::Species(terms) => out.push((format!(" (via {})", net.transients[t].name), terms.clone())),
            Target::Transient(j) => collect_ends(net, *j, seen, out),
        }
    }
}

/// Mark channels that send the molecule back to a species that was excited into the transient.
fn mark_returns(net: &mut Network) {
    let n = net.transients.len();
    let mut origins: Vec<BTreeSet<usize>> = vec![BTreeSet::new(); n];
    for p in &net.photo {
        if let PhotoOutcome::Transient(t) = p.outcome {
            origins[t].insert(p.absorber);
        }
    }
    loop {
        let mut changed = false;
        for i in 0..n {
            for c in &net.transients[i].channels {
                if let Target::Transient(j) = c.target {
                    let add: Vec<usize> = origins[i].difference(&origins[j]).copied().collect();
                    if !add.is_empty() {
                        origins[j].extend(add);
                        changed = true;
                    }
                }
            }
        }
        if !changed {
            break;
        }
    }
    for (i, t) in net.transients.iter_mut().enumerate() {
        for c in &mut t.channels {
            if let Target::Species(terms) = &c.target {
                c.returns = terms.len() == 1 && terms[0].coefficient == 1.0 && origins[i].contains(&terms[0].species);
            }
        }
    }
}

/// The bipartite graph of the network.
pub(super) fn graph(net: &Network) -> DiGraph<Node, Edge> {
    let mut g = DiGraph::new();
    let sp: Vec<NodeIndex> = (0..net.species.len()).map(|i| g.add_node(Node::Species(i))).collect();
    let tr: Vec<NodeIndex> = (0..net.transients.len())
        .map(|i| g.add_node(Node::Transient(i)))
        .collect();
    for (i, s) in net.thermal.iter().enumerate() {
        let n = g.add_node(Node::Thermal(i));
        for t in &s.reactants {
            g.add_edge(sp[t.species], n, Edge::Reactant(t.coefficient));
        }
        for t in &s.products {
            g.add_edge(n, sp[t.species], Edge::Product(t.coefficient));
        }
    }
    for (i, p) in net.photo.iter().enumerate() {
        let n = g.add_node(Node::Photo(i));
        g.add_edge(sp[p.absorber], n, Edge::Absorbs);
        match &p.outcome {
            PhotoOutcome::Products(ts) => {
                for t in ts {
                    g.add_edge(n, sp[t.species], Edge::Product(t.coefficient));
                }
            }
            PhotoOutcome::Transient(t) => {
                g.add_edge(n, tr[*t], Edge::Excites);
            }
        }
    }
    for (i, t) in net.transients.iter().enumerate() {
        for (j, c) in t.channels.iter().enumerate() {
            match &c.target {
                Target::Species(ts) => {
                    for x in ts {
                        g.add_edge(tr[i], sp[x.species], Edge::Channel(j));
                    }
                }
                Target::Transient(k) => {
                    g.add_edge(tr[i], tr[*k], Edge::Channel(j));
                }
            }
            if let Branching::Quenching { partner, .. } = c.branching {
                g.add_edge(sp[partner], tr[i], Edge::Quenches(j));
            }
        }
    }
    g
}
