//! Growth from below the tolerance: a species that only its own presence makes (every step that
//! forms it has it among its reactants: an autocatalyst, a replicator, the predator of a
//! predator–prey scheme) cannot recover from zero, and below the absolute tolerance the
//! integrator does not resolve how close to zero it is. When such a species falls to within the
//! tolerance of zero and later grows back by itself, when it grows back, and whatever it
//! consumes afterwards, is set by values the run did not resolve: the run says so
//! ([`find`]), with what to do. Common practice: a result that depends on sub-tolerance values
//! is no result until tightened.

use crate::model::Model;
use crate::units::constants::AVOGADRO;
use crate::units::display::{VOLUME, format, format_concentration, format_time};

/// How far above the absolute tolerance a species must grow back to be reported (common
/// practice: three orders of magnitude is well clear of round-off).
pub const REGROWN: f64 = 1e3;

/// A species that grew back from within the tolerance of zero, or from below one molecule in
/// the sample.
#[derive(Debug, Clone, PartialEq)]
pub struct Regrowth {
    /// The species.
    pub species: String,
    /// When it first came within the floor (the run's absolute tolerance, or one molecule in the
    /// sample when that is larger) before growing back, s; the run's start when it started there.
    pub entered: f64,
    /// Whether it was within the floor from the first output on.
    pub started_within: bool,
    /// When it was lowest before growing back, s.
    pub low_time: f64,
    /// Its lowest value there, mol/L (may be a small undershoot below zero).
    pub low: f64,
    /// The first output at which it was back above [`REGROWN`] × the floor, s.
    pub high_time: f64,
    /// Its value there, mol/L.
    pub high: f64,
    /// The run's absolute tolerance, mol/L.
    pub atol: f64,
    /// One molecule in the sample (the model's volume), mol/L.
    pub one_molecule: f64,
    /// The sample's volume (the model's irradiated volume), L.
    pub volume: f64,
}

/// Below this many molecules in the sample a species' return is an extinction question, not a
/// tolerance one (common practice: at a handful of molecules chance decides).
pub const FEW: f64 = 10.0;

impl Regrowth {
    /// Whether the floor it fell under was at most [`FEW`] molecules in the sample (the run
    /// resolved values that low): then no tolerance makes the course after it a sample's.
    pub fn few_molecules(&self) -> bool {
        self.atol < FEW * self.one_molecule
    }
}

impl std::fmt::Display for Regrowth {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        let c = format_concentration;
        let sample = format!("the {} sample", format(self.volume * 1e-3, &VOLUME));
        let molecule = format!("one molecule in {sample} ({})", c(self.one_molecule));
        // the floor in words, and its value for the parenthesis
        let (floor, value) = if self.atol < self.one_molecule {
            (format!("below one molecule in {sample}"), self.one_molecule)
        } else if self.few_molecules() {
            let n = (self.atol / self.one_molecule).round();
            let count = if n <= 1.0 {
                "about one molecule".to_string()
            } else {
                format!("about {n} molecules")
            };
            (
                format!("to within the absolute tolerance of zero, {count} in {sample}"),
                self.atol,
            )
        } else {
            ("to within the absolute tolerance of zero".to_string(), self.atol)
        };
        let undershoot = if self.low < 0.0 {
            ", an undershoot below zero"
        } else {
            ""
        };
        let (verb, when) = if self.started_within {
            ("started", String::new())
        } else {
            ("fell", format!(" at {}", format_time(self.entered)))
        };
        let floor = if self.started_within {
            floor.replacen("to within", "within", 1)
        } else {
            floor
        };
        write!(
            f,
            "{} {verb}{when} {floor} ({}; lowest {} at {}{undershoot}) and grew back by itself to {} at {}: \
             every step that forms it needs it as a reactant, so ",
            self.species,
            c(value),
            c(self.low),
            format_time(self.low_time),
            c(self.high),
            format_time(self.high_time),
        )?;
        if self.few_molecules() {
            return write!(
                f,
                "a real sample with so few molecules would most likely have lost it for good; the rate \
                 equations follow fractions of a molecule there, so the course after {} is not what a \
                 sample does, and no tolerance changes that",
                format_time(self.entered)
            );
        }
        let target = self.low.abs().max(self.atol * 1e-3);
        let tighter = if target < 1e3 * self.one_molecule {
            format!("down to about {molecule}")
        } else {
            format!("well below {}", c(target))
        };
        write!(
            f,
            "when it came back, and what it used up after that, rests on values the run did not \
             resolve; integrate again with a smaller absolute tolerance (simulate --atol, {tighter}) \
             before trusting the course after {}",
            format_time(self.entered)
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

/// The first growth back of each self-made species from within its floor over the outputs
/// `times` (s) and `states` of a run: the floor is `atol` (mol/L), or one molecule in the
/// model's volume when that is larger.
pub fn find(model: &Model, times: &[f64], states: &[Vec<f64>], atol: f64) -> Vec<Regrowth> {
    let one_molecule = 1.0 / (AVOGADRO * model.volume);
    let floor = atol.max(one_molecule);
    let mut found = Vec::new();
    for i in self_made(model) {
        // (entered, low time, low) from the first time within the floor on (a rise that stays
        // below REGROWN × the floor does not end it)
        let mut dip: Option<(f64, f64, f64)> = None;
        for (&t, y) in times.iter().zip(states) {
            let c = y[i];
            if c < floor {
                match &mut dip {
                    None => dip = Some((t, t, c)),
                    Some((_, lt, l)) if c < *l => (*lt, *l) = (t, c),
                    Some(_) => {}
                }
            } else if let Some((entered, low_time, low)) = dip
                && c > REGROWN * floor
            {
                found.push(Regrowth {
                    species: model.species[i].clone(),
                    entered,
                    started_within: entered == times[0],
                    low_time,
                    low,
                    high_time: t,
                    high: c,
                    atol,
                    one_molecule,
                    volume: model.volume,
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
            (found[0].entered, found[0].low_time, found[0].low, found[0].high_time),
            (1.0, 2.0, -2e-13, 3.0)
        );
        assert!(!found[0].started_within && !found[0].few_molecules());
        let says = found[0].to_string();
        assert!(
            says.starts_with("X fell at 1 s to within the absolute tolerance of zero (1 pM; lowest"),
            "{says}"
        );
        assert!(
            says.contains("well below 0.2 pM") && says.contains("course after 1 s"),
            "{says}"
        );
        // started there
        let states = [at(1e-13), at(-2e-13), at(5e-9), at(1e-3), at(1e-3)];
        let found = find(&m, &times, &states, 1e-12);
        assert!(found[0].started_within);
        assert!(
            found[0]
                .to_string()
                .starts_with("X started within the absolute tolerance of zero (1 pM; lowest")
        );
        // never back above a thousand times the tolerance: nothing to say
        let states = [at(1e-3), at(1e-13), at(5e-10), at(8e-10), at(9e-10)];
        assert!(find(&m, &times, &states, 1e-12).is_empty());
    }

    /// Resolved below one molecule in the sample (3 mL: 5.5e-22 M) and back: no tolerance
    /// helps, and the note says so.
    #[test]
    fn growth_back_from_below_one_molecule_is_an_extinction_question() {
        let m = model("[[thermal]]\nequation = \"A + X -> X + X\"\nrate = { k = \"1 L/(mol s)\" }\n");
        let x = m.species.iter().position(|s| s == "X").unwrap();
        let at = |v: f64| {
            let mut y = vec![0.0; 3];
            y[x] = v;
            y
        };
        let times = [0.0, 1.0, 2.0, 3.0];
        let states = [at(1e-3), at(1e-24), at(1e-26), at(1e-6)];
        // a tolerance above one molecule: the dip is within it, the usual advice
        let found = find(&m, &times, &states, 1e-12);
        assert!(!found[0].few_molecules());
        // a tolerance of about one molecule: the verdict, not advice to go down to one molecule
        let found = find(&m, &times, &states, 5.6e-22);
        assert!(found[0].few_molecules());
        let says = found[0].to_string();
        assert!(
            says.contains("of zero, about one molecule in the 3 mL sample (")
                && says.contains("no tolerance changes that"),
            "{says}"
        );
        assert!(!says.contains("simulate --atol"), "{says}");
        // a tolerance far below: the dip is below one molecule, resolved, and no tolerance helps
        let found = find(&m, &times, &states, 1e-30);
        assert_eq!(found.len(), 1);
        assert!(found[0].few_molecules());
        let one = 1.0 / (crate::units::constants::AVOGADRO * 3e-3);
        assert!((found[0].one_molecule / one - 1.0).abs() < 1e-12);
        let says = found[0].to_string();
        assert!(
            says.contains("fell at 1 s below one molecule in the 3 mL sample"),
            "{says}"
        );
        assert!(says.contains("no tolerance changes that"), "{says}");
        // a dip that stays above one molecule and within a tiny tolerance's reach says nothing
        let states = [at(1e-3), at(1e-18), at(1e-19), at(1e-6)];
        assert!(find(&m, &times, &states, 1e-30).is_empty());
    }
}
