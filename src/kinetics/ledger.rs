//! The photon ledger read off a state: where the photons went, and what they bought.

use crate::model::Model;
use crate::model::rhs::LedgerLayout;

/// Photon accounting for one light source, einstein.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct SourceLedger {
    /// Source name.
    pub source: String,
    /// Photons that entered the sample, einstein.
    pub incident: f64,
    /// Absorbed by each absorbing species (same order as [`Ledger::absorbers`]), einstein.
    pub absorbed: Vec<f64>,
    /// Absorbed by solvent and vessel, einstein.
    pub background: f64,
    /// Passed through, einstein.
    pub transmitted: f64,
}

/// Photons absorbed by one absorber and what came of them, einstein.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct AbsorberLedger {
    /// Species name.
    pub species: String,
    /// Absorbed from all sources, einstein.
    pub absorbed: f64,
    /// Per outcome label: photons whose absorption ended there, einstein.
    pub outcomes: Vec<(String, f64)>,
    /// Photons after which the molecule was back where it started (return channels and the
    /// unreactive remainder of the quantum yields), einstein.
    pub returned: f64,
    /// Photons that changed the molecule, einstein.
    pub productive: f64,
}

/// A product reached through a photochemical step ([`crate::model::lineage`]) and its photon
/// cost.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ProductCost {
    /// Species name.
    pub species: String,
    /// Amount formed, mol (final minus initial).
    pub formed: f64,
    /// Photons absorbed by the whole sample (all absorbing species, inner filters included; the
    /// background not counted) per molecule formed (None when none formed).
    pub photons_per_molecule: Option<f64>,
    /// Apparent quantum yield: molecules formed per photon absorbed by the whole sample (not per
    /// photon absorbed by the reactant, the usual measured Φ: IUPAC Glossary of terms used in
    /// photochemistry, 3rd ed., Pure Appl. Chem. 79 (2007) 293).
    pub apparent_quantum_yield: Option<f64>,
}

/// A thermal co-product (such as the water of a condensation or a scavenger's adduct): neither
/// formed by a photochemical step nor the principal product of a thermal step fed by a
/// photoproduct ([`crate::model::lineage`]). It has no photon cost.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct ThermalProduct {
    /// Species name.
    pub species: String,
    /// Amount formed, mol (final minus initial).
    pub formed: f64,
}

/// The inner filter of the followed reaction: light absorbed by anything other than its
/// photoreactants ([`crate::model::Model::follow`]).
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct InnerFilter {
    /// The species whose formation is followed (the named products or the target); empty:
    /// every photoreaction.
    pub followed: Vec<String>,
    /// The followed reaction's photoreactants: absorbers of the photochemical steps that lead
    /// to the followed species.
    pub reactants: Vec<String>,
    /// Photons absorbed by each other absorbing species, einstein.
    pub by_species: Vec<(String, f64)>,
    /// Photons absorbed by the background (solvent, vessel), einstein.
    pub background: f64,
    /// All of these (other species and background) as a fraction of the incident photons.
    pub fraction: f64,
}

/// The whole ledger at one time.
#[derive(Debug, Clone, PartialEq, serde::Serialize)]
pub struct Ledger {
    /// Time, s.
    pub time: f64,
    /// Per source.
    pub sources: Vec<SourceLedger>,
    /// Absorbing species names.
    pub absorbers: Vec<String>,
    /// Per absorber.
    pub by_absorber: Vec<AbsorberLedger>,
    /// Products reached through a photochemical step, with their photon costs.
    pub products: Vec<ProductCost>,
    /// Thermal co-products: no photon cost.
    pub thermal_products: Vec<ThermalProduct>,
    /// Incident photons in all, einstein.
    pub incident: f64,
    /// Absorbed by species in all, einstein.
    pub absorbed: f64,
    /// Relative mismatch |incident − absorbed − background − transmitted| / incident.
    pub balance_error: f64,
    /// The followed reaction's inner filter.
    pub inner_filter: InnerFilter,
    /// Photons absorbed by species that led to no reaction (returned the molecule unchanged, or
    /// taken by a species with no photochemistry), einstein; the background is not counted.
    pub unproductive: f64,
    /// [`Ledger::unproductive`] as a fraction of the incident photons.
    pub unproductive_fraction: f64,
}

impl Ledger {
    /// Absorbed by solvent and vessel from all sources, einstein.
    pub fn background(&self) -> f64 {
        total(self.sources.iter().map(|s| s.background))
    }

    /// Passed through the sample from all sources, einstein.
    pub fn transmitted(&self) -> f64 {
        total(self.sources.iter().map(|s| s.transmitted))
    }
}

/// The sum of photon counts, starting from +0: the standard library's float `Sum` starts from
/// −0 (so that a sum of −0 terms stays −0), which makes an empty sum, a network with no light
/// source, read "−0 einstein" in text, CSV and JSON. A count of no photons is +0.
pub fn total(counts: impl IntoIterator<Item = f64>) -> f64 {
    counts.into_iter().fold(0.0, |a, b| a + b)
}

/// Read the ledger at time `t` from state `y` of `model` (light on throughout).
pub fn read(model: &Model, layout: &LedgerLayout, t: f64, y: &[f64]) -> Ledger {
    read_lit(model, layout, t, t, y)
}

/// Read the ledger at time `t` from state `y` when the light was on for `lit` s of it
/// (a light schedule): the incident photons are the source fluxes times `lit`.
pub fn read_lit(model: &Model, layout: &LedgerLayout, t: f64, lit: f64, y: &[f64]) -> Ledger {
    let v = model.volume;
    let absorbers: Vec<String> = model.absorbers.iter().map(|&i| model.species[i].clone()).collect();
    let mut sources = Vec::new();
    let mut balance_num = 0.0;
    for (s, name) in model.sources.iter().enumerate() {
        let incident = model.source_flux(s) * lit;
        let absorbed: Vec<f64> = (0..model.absorbers.len())
            .map(|a| y[layout.absorbed(s, a)] * v)
            .collect();
        let background = y[layout.background(s)] * v;
        let transmitted = y[layout.transmitted(s)] * v;
        balance_num += incident - total(absorbed.iter().copied()) - background - transmitted;
        sources.push(SourceLedger {
            source: name.clone(),
            incident,
            absorbed,
            background,
            transmitted,
        });
    }
    let incident = total(sources.iter().map(|s| s.incident));
    let mut by_absorber = Vec::new();
    let background = total(sources.iter().map(|s| s.background));
    let mut unproductive = 0.0;
    for (slot, name) in absorbers.iter().enumerate() {
        let absorbed = total(sources.iter().map(|s| s.absorbed[slot]));
        let mut outcomes = Vec::new();
        let mut productive = 0.0;
        let mut returned_listed = 0.0;
        for (o, out) in model.outcomes.iter().enumerate() {
            if out.slot != slot {
                continue;
            }
            let p = y[layout.outcome(o)] * v;
            if out.returns {
                returned_listed += p;
            } else {
                productive += p;
            }
            outcomes.push((out.label.clone(), p));
        }
        unproductive += (absorbed - productive).max(0.0);
        let returned = (absorbed - productive).max(returned_listed);
        by_absorber.push(AbsorberLedger {
            species: name.clone(),
            absorbed,
            outcomes,
            returned,
            productive,
        });
    }
    let absorbed = total(by_absorber.iter().map(|a| a.absorbed));
    let products = model
        .photoproducts()
        .into_iter()
        .map(|i| {
            let formed = (y[i] - model.initial[i]) * v;
            let ok = formed > 0.0 && absorbed > 0.0;
            ProductCost {
                species: model.species[i].clone(),
                formed,
                photons_per_molecule: ok.then(|| absorbed / formed),
                apparent_quantum_yield: ok.then(|| formed / absorbed),
            }
        })
        .collect();
    let thermal_products = model
        .thermal_products()
        .into_iter()
        .map(|i| ThermalProduct {
            species: model.species[i].clone(),
            formed: (y[i] - model.initial[i]) * v,
        })
        .collect();
    let frac = |x: f64| if incident > 0.0 { x / incident } else { 0.0 };
    let mut reactants = Vec::new();
    let mut by_species = Vec::new();
    for (slot, a) in by_absorber.iter().enumerate() {
        if model.followed_reactant.get(slot).copied().unwrap_or(false) {
            reactants.push(a.species.clone());
        } else {
            by_species.push((a.species.clone(), a.absorbed));
        }
    }
    let other = total(by_species.iter().map(|x| x.1)) + background;
    let inner_filter = InnerFilter {
        followed: model.followed.iter().map(|&i| model.species[i].clone()).collect(),
        reactants,
        by_species,
        background,
        fraction: frac(other),
    };
    Ledger {
        time: t,
        sources,
        absorbers,
        by_absorber,
        products,
        thermal_products,
        incident,
        absorbed,
        balance_error: if incident > 0.0 {
            balance_num.abs() / incident
        } else {
            0.0
        },
        inner_filter,
        unproductive,
        unproductive_fraction: frac(unproductive),
    }
}
