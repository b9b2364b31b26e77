//! Growth from below the tolerance: a species that only its own presence makes (every step that
//! forms it has it among its reactants: an autocatalyst, a replicator, the predator of a
//! predator–prey scheme) cannot recover from zero, and below the absolute tolerance the
//! integrator does not resolve how close to zero it is. When such a species falls to within the
//! tolerance of zero and later grows back by itself, when it grows back, and whatever it
//! consumes afterwards, is set by values the run did not resolve: the run says so
//! ([`find`]), with what to do. Common practice: a result that depends on sub-tolerance values
//! is no result until tightened.

use crate::model::Model;
use crate::units::display::{format_concentration, format_time};

/// How far above the absolute tolerance a species must grow back to be reported (common
/// practice: three orders of magnitude is well clear of round-off).
pub const REGROWN: f64 = 1e3;

/// A species that grew back from within the tolerance of zero.
#[derive(Debug, Clone, PartialEq)]
pub struct Regrowth {
    /// The species.
    pub species: String,
    /// When it was lowest before growing back, s.
    pub low_time: f64,
    /// Its lowest value there, mol/L (may be a small undershoot below zero).
    pub low: f64,
    /// The first output at which it was back above [`REGROWN`] × the tolerance, s.
    pub high_time: f64,
    /// Its value there, mol/L.
    pub high: f64,
    /// The run's absolute tolerance, mol/L.
    pub atol: f64,
}

impl std::fmt::Display for Regrowth {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        write!(
            f,
            "{} fell to within the absolute tolerance ({}) of zero at {} and grew back by itself to {} at {}: \
             it is formed only where it already is, so when it came back, and what it used up after that, \
             rests on values the run did not resolve; integrate again with a smaller absolute tolerance \
             (simulate --atol, well below {}) before trusting the course after {}",
            self.species,
            format_concentration(self.atol),
            format_time(self.low_time),
            format_concentration(self.high),
            format_time(self.high_time),
            format_concentration(self.low.abs().max(self.atol * 1e-3)),
            format_time(self.low_time),
        )
    }
}

/// The species every forming step of which has the species itself among its reactants (and
/// that at least one step forms). Steps with a zero rate constant (floored) form nothing.
pub fn self_made(model: &Model) -> Vec<usize> {
    let n = model.n_species();
    let mut formed = vec![false; n];
    let mut from_elsewhere = vec![false; n];
    for r in model.reactions.iter().filter(|r| r.k > 0.0) {
        for &(i, v) in &r.net {
            if v > 0.0 {
                formed[i] = true;
                if !r.reactants.iter().any(|&(s, _)| s == i) {
                    from_elsewhere[i] = true;
                }
            }
        }
    }
    for out in &model.outcomes {
        let absorber = model.absorbers[out.slot];
        for &(i, v) in &out.net {
            if v > 0.0 {
                formed[i] = true;
                if i != absorber {
                    from_elsewhere[i] = true;
                }
            }
        }
    }
    (0..n).filter(|&i| formed[i] && !from_elsewhere[i]).collect()
}

/// The first growth back from within `atol` (mol/L) of zero of each self-made species, over the
/// outputs `times` (s) and `states` of a run.
pub fn find(model: &Model, times: &[f64], states: &[Vec<f64>], atol: f64) -> Vec<Regrowth> {
    let mut found = Vec::new();
    for i in self_made(model) {
        let mut low: Option<(f64, f64)> = None;
        for (&t, y) in times.iter().zip(states) {
            let c = y[i];
            if c < atol {
                if low.is_none_or(|(_, l)| c < l) {
                    low = Some((t, c));
                }
            } else if let Some((low_time, l)) = low
                && c > REGROWN * atol
            {
                found.push(Regrowth {
                    species: model.species[i].clone(),
                    low_time,
                    low: l,
                    high_time: t,
                    high: c,
                    atol,
                });
                break;
            }
        }
    }
    found
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::file::parse_text;
    use crate::network::{Overrides, build};
    use std::path::Path;

    fn model(steps: &str) -> Model {
        let text = format!(
            "[about]\nname = \"t\"\ninvented = true\n[conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\n\
             path_length = \"1 cm\"\n[[species]]\nname = \"A\"\ninitial = \"1 M\"\n[[species]]\nname = \"X\"\n\
             initial = \"1 mM\"\n[[species]]\nname = \"P\"\ninitial = \"0 M\"\n{steps}"
        );
        let l = parse_text(Path::new("t.toml"), text).unwrap();
        Model::compile(&build(&l, &Overrides::none()).unwrap())
    }

    #[test]
    fn an_autocatalyst_is_self_made_and_a_product_of_others_is_not() {
        let m = model(
            "[[thermal]]\nequation = \"A + X -> X + X\"\nrate = { k = \"1 L/(mol s)\" }\n\
             [[thermal]]\nequation = \"X -> P\"\nrate = { k = \"1 /s\" }\n",
        );
        let x = m.species.iter().position(|s| s == "X").unwrap();
        assert_eq!(self_made(&m), vec![x]);
        // X also made from A alone: not self-made
        let m = model(
            "[[thermal]]\nequation = \"A + X -> X + X\"\nrate = { k = \"1 L/(mol s)\" }\n\
             [[thermal]]\nequation = \"A -> X\"\nrate = { k = \"1 /s\" }\n",
        );
        assert!(self_made(&m).is_empty());
    }

    #[test]
    fn growth_back_from_within_the_tolerance_is_found_once() {
        let m = model("[[thermal]]\nequation = \"A + X -> X + X\"\nrate = { k = \"1 L/(mol s)\" }\n");
        let x = m.species.iter().position(|s| s == "X").unwrap();
        let at = |v: f64| {
            let mut y = vec![0.0; 3];
            y[x] = v;
            y
        };
        let times = [0.0, 1.0, 2.0, 3.0, 4.0];
        let states = [at(1e-3), at(1e-13), at(-2e-13), at(5e-9), at(1e-3)];
        let found = find(&m, &times, &states, 1e-12);
        assert_eq!(found.len(), 1);
        assert_eq!(
            (found[0].low_time, found[0].low, found[0].high_time),
            (2.0, -2e-13, 3.0)
        );
        // never back above a thousand times the tolerance: nothing to say
        let states = [at(1e-3), at(1e-13), at(5e-10), at(8e-10), at(9e-10)];
        assert!(find(&m, &times, &states, 1e-12).is_empty());
    }
}
