//! What `photoledger check` adds to the network summary: every settable number beside the key
//! `--set`, `--free` and `[[uncertain]]` take for it, and the machine-readable form of the
//! validated network (`check --json`).

use crate::light::{LightKind, Spectrum};
use crate::network::params::{self, ConditionField, Key, Parameter};
use crate::network::{Network, PhotoOutcome, Target};
use crate::units::{Quantity, display, internal_spelling, sig};
use serde_json::{Value, json};
use std::fmt::Write;

/// Every settable number of `net` in file order, read through the parameter layer.
pub fn parameters(net: &Network) -> Vec<Parameter> {
    params::addresses(net)
        .into_iter()
        .map(|k| params::get(net, k))
        .collect()
}

/// The "settable values" section: one row a key, its current value in the display unit beside
/// it, so a value can be changed with `--set KEY=VALUE` without opening the file.
pub fn settable_text(net: &Network) -> String {
    let ps = parameters(net);
    let mut s = String::new();
    if ps.is_empty() {
        return s;
    }
    let width = ps.iter().map(|p| p.key.chars().count()).max().unwrap_or(0).min(60);
    let _ = writeln!(s, "\nsettable values (the keys of --set, --free and [[uncertain]])");
    for p in &ps {
        let (v, unit) = display::quantity_in(p.quantity, p.value, net.energy_unit);
        let shown = if unit.is_empty() {
            sig(v, 5)
        } else {
            format!("{} {unit}", sig(v, 5))
        };
        let pad = width.saturating_sub(p.key.chars().count());
        let table = if of_table(net, p.address) {
            "  (mean of a table; --set replaces the table by one value)"
        } else if counted(net, p.address) {
            "  (from trajectory counts: change the counts in the file; --set and --free refuse it)"
        } else {
            ""
        };
        let _ = writeln!(s, "  {}{}  {shown}{table}", p.key, " ".repeat(pad));
    }
    s
}

/// True when the value at `key` stands for a table (a quantum yield or background given per
/// wavelength): its value is the table's mean.
fn of_table(net: &Network, key: Key) -> bool {
    let table = |x: &Spectrum| matches!(x, Spectrum::Table { .. });
    match key {
        Key::QuantumYield(i) | Key::Efficiency(i) => table(&net.photo[i].quantum_yield),
        Key::Condition(ConditionField::Background) => table(&net.conditions.background),
        _ => false,
    }
}

/// True when the value at `key` is a channel's share computed from trajectory counts: the
/// counts set it, so `--set` and `--free` refuse the key.
fn counted(net: &Network, key: Key) -> bool {
    matches!(key, Key::Fraction { transient, .. } if net.evidence.counts_of(transient).is_some())
}

/// A parameter as JSON: its key, value in SI (mol/L for concentrations) and that unit's
/// spelling ("" for a plain number).
fn parameter_json(net: &Network, p: &Parameter) -> Value {
    json!({
        "key": p.key,
        "value": p.value,
        "unit": p.unit,
        "mean_of_table": of_table(net, p.address),
        "from_trajectory_counts": counted(net, p.address),
    })
}

/// The unit of a rate constant of molecularity `order`, in the internal spelling.
fn rate_unit(order: u32) -> &'static str {
    internal_spelling(Quantity::RateConstant(order))
}

/// The validated network as `check --json` prints it: species, steps, transients, lights, every
/// settable key with its value and unit, warnings. Numbers in SI (concentrations in mol/L), each
/// field named with its unit or beside a `unit` field.
pub fn network_json(net: &Network, file: &str) -> Value {
    let c = &net.conditions;
    let species: Vec<Value> = net
        .species
        .iter()
        .enumerate()
        .map(|(i, sp)| {
            json!({
                "name": sp.name,
                "initial_mol_per_l": sp.initial,
                "formula": sp.formula,
                // Takes up light here (an ε above zero where a source sends photons, inner
                // filter included), as the text's "(N absorbing)" counts; `photoreactive`: the
                // absorber of a photochemical step.
                "absorbs": net.takes_light(sp),
                "photoreactive": net.photo.iter().any(|p| p.absorber == i),
                "product": sp.product,
            })
        })
        .collect();
    let thermal: Vec<Value> = net
        .thermal
        .iter()
        .map(|t| {
            json!({
                "name": t.name,
                "equation": format!("{} -> {}", net.side(&t.reactants), net.side(&t.products)),
                "order": t.order,
                "rate_constant": t.k,
                "rate_constant_unit": rate_unit(t.order),
            })
        })
        .collect();
    let photo: Vec<Value> = net
        .photo
        .iter()
        .map(|p| {
            let to = match &p.outcome {
                PhotoOutcome::Products(t) => net.side(t),
                PhotoOutcome::Transient(t) => net.transients[*t].name.clone(),
            };
            json!({
                "name": p.name,
                "absorber": net.species[p.absorber].name,
                "to": to,
                "quantum_yield_mean": p.quantum_yield.mean(),
                "leads_to_transient": matches!(p.outcome, PhotoOutcome::Transient(_)),
            })
        })
        .collect();
    let transients: Vec<Value> = net
        .transients
        .iter()
        .map(|t| {
            let channels: Vec<Value> = t
                .channels
                .iter()
                .map(|ch| {
                    let to = match &ch.target {
                        Target::Species(ts) => net.side(ts),
                        Target::Transient(k) => net.transients[*k].name.clone(),
                    };
                    json!({"to": to, "returns": ch.returns, "fixed_share": ch.branching.fixed_share()})
                })
                .collect();
            json!({"name": t.name, "kind": t.kind.word(), "channels": channels})
        })
        .collect();
    let lights: Vec<Value> = net
        .lights
        .iter()
        .map(|l| {
            let kind = match &l.kind {
                LightKind::Line { .. } => "line",
                LightKind::Band { .. } => "band",
                LightKind::Lamp { .. } => "lamp",
                LightKind::Sun { .. } => "sun",
            };
            let (lo, hi) = l.extent().unwrap_or((0.0, 0.0));
            json!({
                "name": l.name,
                "kind": kind,
                "power_w": l.power(),
                "emitted_power_w": l.emitted_power,
                "photon_flux_einstein_per_s": l.photon_flux(),
                "from_m": lo,
                "to_m": hi,
                "wavelength_bins": l.bins.len(),
            })
        })
        .collect();
    let warnings: Vec<Value> = net
        .warnings
        .iter()
        .map(|w| {
            json!({
                "field": w.field,
                "line": w.line_col.map(|(l, _)| l),
                "message": w.message,
                "help": w.help,
            })
        })
        .collect();
    json!({
        "file": file,
        "network": net.about.name,
        "invented": net.about.invented,
        "valid": true,
        "conditions": {
            "temperature_k": c.temperature,
            "volume_m3": c.volume,
            "path_length_m": c.path_length,
            "irradiated_area_m2": c.irradiated_area,
        },
        "species": species,
        "thermal_steps": thermal,
        "photochemical_steps": photo,
        "transients": transients,
        "lights": lights,
        "parameters": parameters(net).iter().map(|p| parameter_json(net, p)).collect::<Vec<_>>(),
        "warnings": warnings,
    })
}
