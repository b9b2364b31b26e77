//! Rate laws (a constant, Arrhenius, Eyring ΔG‡ or ΔH‡/ΔS‡; from frequencies in
//! `../derived.rs`), the `--set` values that replace them, and shares (fractions, quantum
//! yields, efficiencies).

use super::Builder;
use crate::error::Origin;
use crate::file::schema::{self, Text};
use crate::network::diagnostics::{Field, origin, span};
use crate::rates::RateLaw;
use crate::units::{self, Quantity};
use toml::Spanned;

impl Builder<'_> {
    /// A rate law.
    pub(super) fn rate_law(&mut self, field: &str, r: &Spanned<schema::Rate>, order: u32) -> Option<RateLaw> {
        let at = span(r);
        let e = r.get_ref();
        let f = |t: &Option<Text>| t.as_ref().map(Field::of);
        let ways = "one of: k = \"0.04 /s\"; prefactor + activation (Arrhenius); barrier = \"20 kcal/mol\" (Eyring ΔG‡); enthalpy + entropy (Eyring ΔH‡, ΔS‡); barrier + reactant_frequencies + ts_frequencies (transition-state theory)";
        if e.reactant_frequencies.is_some() || e.ts_frequencies.is_some() {
            // The rate with its `--set` values put in (E₀ and κ may come from the command line).
            return self.derived().rate_from_frequencies(field, &at, e, order);
        }
        for (key, given) in [
            ("tunnelling", e.tunnelling.is_some()),
            ("degeneracy", e.degeneracy.is_some()),
        ] {
            if given {
                self.error(
                    &format!("{field}.{key}"),
                    &at,
                    "applies only to a rate from frequencies",
                    Some("add reactant_frequencies and ts_frequencies (barrier is then E0), or remove the key".into()),
                );
                return None;
            }
        }
        let given = [
            e.k.is_some(),
            e.prefactor.is_some() || e.activation.is_some(),
            e.barrier.is_some(),
            e.enthalpy.is_some() || e.entropy.is_some(),
        ];
        if given.iter().filter(|g| **g).count() != 1 {
            self.error(field, &at, "give the rate exactly one way", Some(ways.into()));
            return None;
        }
        let transmission = self.sink.transmission(field, &e.transmission)?;
        if let Some(k) = &e.transmission
            && (e.k.is_some() || e.prefactor.is_some())
        {
            self.error(
                &format!("{field}.transmission"),
                &origin(k),
                "applies only to Eyring rates (barrier, or enthalpy + entropy)",
                None,
            );
            return None;
        }
        if let Some(k) = f(&e.k) {
            return self
                .positive(&format!("{field}.k"), &k, Quantity::RateConstant(order))
                .map(RateLaw::Constant);
        }
        if given[1] {
            let (Some(a), Some(ea)) = (f(&e.prefactor), f(&e.activation)) else {
                self.error(
                    field,
                    &at,
                    "Arrhenius needs both prefactor and activation",
                    Some(ways.into()),
                );
                return None;
            };
            let a = self.positive(&format!("{field}.prefactor"), &a, Quantity::RateConstant(order));
            let ea = self.quantity(&format!("{field}.activation"), &ea, Quantity::MolarEnergy);
            return Some(RateLaw::Arrhenius {
                prefactor: a?,
                activation: ea?,
            });
        }
        if let Some(g) = f(&e.barrier) {
            let v = self.quantity(&format!("{field}.barrier"), &g, Quantity::MolarEnergy)?;
            if v < 0.0 {
                self.warn(
                    &format!("{field}.barrier"),
                    &g.origin,
                    format!("\"{}\" is a negative barrier", g.value),
                    None,
                );
            }
            return Some(RateLaw::EyringFree {
                barrier: v,
                transmission,
            });
        }
        let (Some(h), Some(s)) = (f(&e.enthalpy), f(&e.entropy)) else {
            self.error(
                field,
                &at,
                "Eyring from ΔH‡ needs both enthalpy and entropy",
                Some(ways.into()),
            );
            return None;
        };
        let h = self.quantity(&format!("{field}.enthalpy"), &h, Quantity::MolarEnergy);
        let s = self.quantity(&format!("{field}.entropy"), &s, Quantity::MolarEntropy);
        Some(RateLaw::EyringEnthalpy {
            enthalpy: h?,
            entropy: s?,
            transmission,
        })
    }

    /// A share from the file: a number, or a percentage string such as "12 %" (= 0.12); range
    /// checks are the caller's.
    pub(super) fn share(&mut self, field: &str, at: &Origin, v: &toml::Value) -> Option<f64> {
        let r = match v {
            toml::Value::Float(x) => Ok(*x),
            toml::Value::Integer(x) => Ok(*x as f64),
            toml::Value::String(s) => units::fraction(s),
            other => Err(format!("{other} is not a number")),
        };
        match r {
            Ok(x) => Some(x),
            Err(m) => {
                self.error(
                    field,
                    at,
                    m,
                    Some("a number such as 0.3, or a percentage such as \"30 %\"".into()),
                );
                None
            }
        }
    }
}

pub(super) fn example_k(order: u32) -> &'static str {
    match order {
        1 => "0.04 /s",
        2 => "1e4 /(M s)",
        _ => "1e8 /(M2 s)",
    }
}
