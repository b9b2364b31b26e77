//! The compiled model every engine shares: index arrays over species, thermal reactions,
//! light bins, absorbers and photochemical outcomes, built once from a [`Network`].
//!
//! Units: concentrations in mol/L, times in s, photon fluxes in einstein/s, the volume in L,
//! the path length in m and ε in L mol⁻¹ m⁻¹, so an absorbance is ε c l.
//!
//! Photochemistry is compiled into *outcomes*: for each photochemical step, each way the
//! absorbed photon can end (the short form's products, or every species outcome reachable
//! through the transients). An outcome's yield at light bin b is `base[b]` (the quantum
//! yield or efficiency at that wavelength) times, for outcomes through transients, the
//! probability of that end from the exactly collapsed transient chain ([`transients`]),
//! which is recomputed as quencher concentrations change.

pub mod absorption;
mod flat_thermal;
pub mod floor;
pub mod jacobian;
pub mod lineage;
pub mod rhs;
pub mod transients;

use crate::network::{Network, PhotoOutcome};
use transients::Collapse;

/// A thermal elementary reaction in index form.
#[derive(Debug, Clone, PartialEq)]
pub struct Reaction {
    /// Display name.
    pub name: String,
    /// Reactant species and their (whole) coefficients: r = k Π c^ν.
    pub reactants: Vec<(usize, u32)>,
    /// Net change of each species per unit of reaction.
    pub net: Vec<(usize, f64)>,
    /// Rate constant at the model temperature, (L/mol)^(n−1) s⁻¹.
    pub k: f64,
    /// For each reactant: true when the step forms more of it than it uses (an autocatalyst of
    /// this step). Its value below zero, an integrator's undershoot, counts as zero in this
    /// rate ([`Reaction::seen`]).
    pub autocatalytic: Vec<bool>,
}

impl Reaction {
    /// The concentration (mol/L) reactant `p` enters the rate with: `c` itself, or zero for an
    /// autocatalyst below zero. Without this floor a negative undershoot of an autocatalyst runs
    /// its own formation backwards (X + Y -> 2Y at Y < 0 makes Y more negative and X more
    /// positive, faster the further it goes): a run whose autocatalyst passes within the
    /// tolerance of zero ran away to ±10¹¹ M and stopped (`tests/long_runs.rs`). Its other
    /// steps (a decay Y -> P) still pull an undershoot back to zero, and every step's flux is
    /// taken from and given to its species by its stoichiometry, so what a step conserves stays
    /// conserved. A NaN stays NaN.
    #[inline]
    pub fn seen(&self, p: usize, c: f64) -> f64 {
        if self.autocatalytic[p] && c < 0.0 { 0.0 } else { c }
    }
}

/// Photons of one wavelength from one source.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct Bin {
    /// Wavelength, m.
    pub wavelength: f64,
    /// Photon flux entering the sample, einstein/s.
    pub flux: f64,
    /// Index of the light source.
    pub source: usize,
}

/// One way an absorbed photon can end for one photochemical step.
#[derive(Debug, Clone, PartialEq)]
pub struct Outcome {
    /// Display label, e.g. "E-azo -> Z-azo" or "A -> B via S1 -> CI".
    pub label: String,
    /// Index of the photochemical step.
    pub step: usize,
    /// Absorber slot (index into [`Model::absorbers`]).
    pub slot: usize,
    /// Net change of each species per photon taking this outcome.
    pub net: Vec<(usize, f64)>,
    /// True when the molecule comes back unchanged (a return path).
    pub returns: bool,
    /// Yield per light bin before the transient collapse (quantum yield or efficiency).
    pub base: Vec<f64>,
    /// For outcomes through transients: (entry transient, end index) into the collapse.
    pub via: Option<(usize, usize)>,
}

/// The compiled model.
#[derive(Debug, Clone)]
pub struct Model {
    /// Species names, in state-vector order.
    pub species: Vec<String>,
    /// Initial concentrations, mol/L.
    pub initial: Vec<f64>,
    /// Temperature, K.
    pub temperature: f64,
    /// Irradiated volume, L.
    pub volume: f64,
    /// Optical path length, m.
    pub path: f64,
    /// Thermal reactions (each direction of a reversible step separately).
    pub reactions: Vec<Reaction>,
    /// Light source names.
    pub sources: Vec<String>,
    /// All light bins of all sources.
    pub bins: Vec<Bin>,
    /// Background absorbance per bin.
    pub background: Vec<f64>,
    /// Species that absorb (every species with an ε), by slot.
    pub absorbers: Vec<usize>,
    /// ε per (slot, bin), row-major: `eps[slot * bins.len() + b]`, L mol⁻¹ m⁻¹.
    pub eps: Vec<f64>,
    /// Photochemical outcomes.
    pub outcomes: Vec<Outcome>,
    /// The transient chain, for outcomes through transients.
    pub collapse: Collapse,
    /// Species named as products, or produced and never consumed (the chain's absorbing states).
    pub products: Vec<usize>,
    /// What each species becomes, and which species a photon made ([`lineage`]).
    pub lineage: lineage::Lineage,
    /// The species whose formation the ledger follows: the network's named products, or a
    /// command's target ([`Model::follow`]); empty: every photoreaction.
    pub followed: Vec<usize>,
    /// Per absorber slot: true when one of its photochemical steps leads to a followed species
    /// (every absorber with a photochemical step when nothing is followed): the followed
    /// reaction's photoreactants.
    pub followed_reactant: Vec<bool>,
    /// Light and thermal rates under their floors ([`floor`]), taken as zero here.
    pub floored: floor::Floored,
}

impl Model {
    /// Compile `net`.
    ///
    /// Light under [`floor::LIGHT_FLOOR`] and thermal rate constants under
    /// [`floor::RATE_FLOOR`] are compiled as zero and listed in [`Model::floored`].
    pub fn compile(net: &Network) -> Model {
        let species: Vec<String> = net.species.iter().map(|s| s.name.clone()).collect();
        let initial: Vec<f64> = net.species.iter().map(|s| s.initial).collect();
        let mut reactions: Vec<Reaction> = net
            .thermal
            .iter()
            .map(|t| {
                let mut net_change: Vec<(usize, f64)> = Vec::new();
                let mut add = |i: usize, v: f64| match net_change.iter_mut().find(|x| x.0 == i) {
                    Some(x) => x.1 += v,
                    None => net_change.push((i, v)),
                };
                for r in &t.reactants {
                    add(r.species, -r.coefficient);
                }
                for p in &t.products {
                    add(p.species, p.coefficient);
                }
                net_change.retain(|x| x.1 != 0.0);
                let autocatalytic = t
                    .reactants
                    .iter()
                    .map(|r| net_change.iter().any(|&(i, v)| i == r.species && v > 0.0))
                    .collect();
                Reaction {
                    name: t.name.clone(),
                    reactants: t.reactants.iter().map(|r| (r.species, r.coefficient as u32)).collect(),
                    net: net_change,
                    k: t.k,
                    autocatalytic,
                }
            })
            .collect();
        let sources = net.lights.iter().map(|l| l.name.clone()).collect();
        let bins: Vec<Bin> = net
            .lights
            .iter()
            .enumerate()
            .flat_map(|(s, l)| {
                l.bins.iter().map(move |b| Bin {
                    wavelength: b.wavelength,
                    flux: b.flux,
                    source: s,
                })
            })
            .collect();
        let background = bins
            .iter()
            .map(|b| net.conditions.background.at(b.wavelength))
            .collect();
        let absorbers: Vec<usize> = (0..net.species.len())
            .filter(|&i| net.species[i].epsilon.as_ref().is_some_and(|e| e.max() > 0.0))
            .collect();
        let mut eps = Vec::with_capacity(absorbers.len() * bins.len());
        for &a in &absorbers {
            let e = net.species[a].epsilon.as_ref().expect("absorbers have ε");
            eps.extend(bins.iter().map(|b| e.at(b.wavelength)));
        }
        let collapse = Collapse::new(net);
        // Which ends each transient can reach (structurally): solve with every quencher at
        // 1 mol/L and at zero, and keep what is non-zero in either.
        let probe = |q: f64| {
            let mut c = vec![0.0; net.species.len()];
            for &i in &collapse.quenchers {
                c[i] = q;
            }
            collapse.solve(&c, false).x
        };
        let (x1, x0) = (probe(1.0), probe(0.0));
        let mut outcomes = Vec::new();
        for (pi, p) in net.photo.iter().enumerate() {
            let Some(slot) = absorbers.iter().position(|&a| a == p.absorber) else {
                continue; // no ε: never absorbs (a warning was given)
            };
            let base: Vec<f64> = bins.iter().map(|b| p.yield_at(b.wavelength)).collect();
            let a_name = &net.species[p.absorber].name;
            match &p.outcome {
                PhotoOutcome::Products(terms) => {
                    let mut n: Vec<(usize, f64)> = vec![(p.absorber, -1.0)];
                    for t in terms {
                        match n.iter_mut().find(|x| x.0 == t.species) {
                            Some(x) => x.1 += t.coefficient,
                            None => n.push((t.species, t.coefficient)),
                        }
                    }
                    n.retain(|x| x.1 != 0.0);
                    outcomes.push(Outcome {
                        label: format!("{a_name} -> {}", net.side(terms)),
                        step: pi,
                        slot,
                        returns: n.is_empty(),
                        net: n,
                        base,
                        via: None,
                    });
                }
                PhotoOutcome::Transient(t) => {
                    for (e, end) in collapse.ends.iter().enumerate() {
                        if x1[(*t, e)] <= 0.0 && x0[(*t, e)] <= 0.0 {
                            continue;
                        }
                        let mut n: Vec<(usize, f64)> = vec![(p.absorber, -1.0)];
                        for &(s, k) in &end.products {
                            match n.iter_mut().find(|x| x.0 == s) {
                                Some(x) => x.1 += k,
                                None => n.push((s, k)),
                            }
                        }
                        n.retain(|x| x.1 != 0.0);
                        let terms: Vec<crate::network::Term> = end
                            .products
                            .iter()
                            .map(|&(s, k)| crate::network::Term {
                                species: s,
                                coefficient: k,
                            })
                            .collect();
                        outcomes.push(Outcome {
                            label: format!("{a_name} -> {} via {}", net.side(&terms), net.transients[end.from].name),
                            step: pi,
                            slot,
                            returns: n.is_empty(),
                            net: n,
                            base: base.clone(),
                            via: Some((*t, e)),
                        });
                    }
                }
            }
        }
        let mut consumed = vec![false; net.species.len()];
        let mut produced = vec![false; net.species.len()];
        for r in &reactions {
            let r: &Reaction = r;
            for &(s, v) in &r.net {
                if v > 0.0 {
                    produced[s] = true;
                }
            }
        }
        for o in &outcomes {
            for &(s, v) in &o.net {
                if v > 0.0 {
                    produced[s] = true;
                }
            }
        }
        for t in &net.thermal {
            for r in &t.reactants {
                consumed[r.species] = true;
            }
        }
        for o in &outcomes {
            for &(s, v) in &o.net {
                if v < 0.0 {
                    consumed[s] = true;
                }
            }
        }
        let products = (0..net.species.len())
            .filter(|&i| net.species[i].product || (produced[i] && !consumed[i]))
            .collect();
        let lineage = lineage::Lineage::new(net, &reactions, &outcomes);
        let named: Vec<usize> = (0..net.species.len()).filter(|&i| net.species[i].product).collect();
        let mut floored = floor::Floored::default();
        for (i, (r, t)) in reactions.iter_mut().zip(&net.thermal).enumerate() {
            if floor::rate_below_floor(r.k, t.order) {
                r.k = 0.0;
                floored.reactions.push(i);
            }
        }
        let mut model = Model {
            floored,
            species,
            initial,
            temperature: net.conditions.temperature,
            volume: net.conditions.volume_litres(),
            path: net.conditions.path_length,
            reactions,
            sources,
            bins,
            background,
            absorbers,
            eps,
            outcomes,
            collapse,
            products,
            lineage,
            followed: Vec::new(),
            followed_reactant: Vec::new(),
        };
        model.follow(named);
        model.floor_light();
        model
    }

    /// Apply the light floor to the bins as they stand ([`floor::floor_light`]), recording
    /// the sources it darkened and the bins it zeroed.
    fn floor_light(&mut self) {
        let n = self.sources.len();
        let mut bins: Vec<(usize, &mut f64)> = self.bins.iter_mut().map(|b| (b.source, &mut b.flux)).collect();
        let (dark, zeroed) = floor::floor_light(&mut bins, n);
        for s in dark {
            if !self.floored.sources.contains(&s) {
                self.floored.sources.push(s);
            }
        }
        self.floored.bins += zeroed;
    }

    /// Follow the formation of `species` in the photon ledger (empty: every photoreaction):
    /// its photoreactants are the absorbers of the photochemical steps that form one of them
    /// or a species that becomes one of them ([`lineage::Lineage`]).
    pub fn follow(&mut self, species: Vec<usize>) {
        let mut reactant = vec![false; self.absorbers.len()];
        let toward = self.lineage.leads_to(&species);
        for o in &self.outcomes {
            let leads = species.is_empty() || o.net.iter().any(|&(s, v)| v > 0.0 && toward[s]);
            if leads && !o.returns {
                reactant[o.slot] = true;
            }
        }
        self.followed = species;
        self.followed_reactant = reactant;
    }

    /// The model's products reached through a photochemical step, in [`Model::products`] order.
    pub fn photoproducts(&self) -> Vec<usize> {
        self.products
            .iter()
            .copied()
            .filter(|&p| self.lineage.photoproduct[p])
            .collect()
    }

    /// The model's thermal co-products (such as the water of a condensation): neither formed by
    /// a photochemical step nor the principal product of a thermal step fed by a photoproduct
    /// ([`lineage`]); no photon cost.
    pub fn thermal_products(&self) -> Vec<usize> {
        self.products
            .iter()
            .copied()
            .filter(|&p| !self.lineage.photoproduct[p])
            .collect()
    }

    /// Number of species (the length of a concentration vector).
    pub fn n_species(&self) -> usize {
        self.species.len()
    }

    /// Total photon flux entering the sample from source `s`, einstein/s.
    pub fn source_flux(&self, s: usize) -> f64 {
        self.bins.iter().filter(|b| b.source == s).map(|b| b.flux).sum()
    }

    /// Why no light reaches the sample when [`Model::total_flux`] is zero, for messages:
    /// every source at zero, or the light under its floor ([`floor::LIGHT_FLOOR`]).
    pub fn dark_words(&self) -> &'static str {
        if self.floored.sources.is_empty() {
            "every source is at zero"
        } else {
            "the light is below its floor: fewer than one photon in the age of the universe"
        }
    }

    /// Total photon flux of all sources, einstein/s; +0 with no light source (the float `Sum`
    /// starts from −0, so an empty sum would read "−0").
    pub fn total_flux(&self) -> f64 {
        self.bins.iter().map(|b| b.flux).fold(0.0, |a, b| a + b)
    }

    /// A copy with every light bin's photon flux multiplied by `factor` (0 for darkness).
    pub fn with_light_scale(&self, factor: f64) -> Model {
        let mut m = self.clone();
        m.bins.iter_mut().for_each(|b| b.flux *= factor);
        m.floor_light();
        m
    }

    /// A copy with source `source`'s photon flux multiplied by `factor`.
    pub fn with_source_scale(&self, source: usize, factor: f64) -> Model {
        let mut m = self.clone();
        m.bins
            .iter_mut()
            .filter(|b| b.source == source)
            .for_each(|b| b.flux *= factor);
        m.floor_light();
        m
    }

    /// Radiant power of source `s`, W.
    pub fn source_power(&self, s: usize) -> f64 {
        self.bins
            .iter()
            .filter(|b| b.source == s)
            .map(|b| b.flux * crate::units::constants::molar_photon_energy(b.wavelength))
            .sum()
    }

    /// Total radiant power of all sources, W (photon flux × molar photon energy per bin).
    pub fn total_power(&self) -> f64 {
        self.bins
            .iter()
            .map(|b| b.flux * crate::units::constants::molar_photon_energy(b.wavelength))
            .fold(0.0, |a, b| a + b)
    }

    /// Index of species `name`.
    pub fn species_index(&self, name: &str) -> Option<usize> {
        self.species.iter().position(|s| s == name)
    }
}
