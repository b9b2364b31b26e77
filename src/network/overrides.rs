//! Command-line overrides of values in a network file: `--set conditions.temperature="310 K"`.
//!
//! Every number a user would fit or sample has a dotted key (names are the network's own):
//!
//! | key | value |
//! |---|---|
//! | `conditions.temperature`, `.volume`, `.path_length`, `.irradiated_area` | a quantity with unit |
//! | `conditions.background` | a plain number (replaces a table) |
//! | `species.NAME.initial` | a concentration |
//! | `light.NAME.power`, `.photon_flux`, `.wavelength`, `.centre`, `.fwhm` | a quantity; `power` or `photon_flux` replaces the file's intensity either way |
//! | `light.NAME.scale` | a plain number (sunlight) |
//! | `photo.NAME.quantum_yield` | a number in [0, 1]; replaces a wavelength table by one value everywhere |
//! | `photo.NAME.efficiency` | a number in (0, 1] (long form) |
//! | `thermal.NAME.FIELD`, `thermal.NAME.reverse.FIELD` | the rate of a step or of its reverse |
//! | `transient.NAME.channels[J].fraction` | a number in [0, 1] for a channel with a numeric fraction (J counts from 0, as in messages; the "rest" channel follows) |
//! | `transient.NAME.channels[J].FIELD` | the rate of a channel |
//!
//! For a rate, FIELD mirrors the file's rate keys: `k` or `barrier` (Eyring ΔG‡) replace the way
//! the rate is given (a barrier keeps the file's `transmission`); `prefactor`, `activation`,
//! `enthalpy`, `entropy` and `transmission` change a field of the form the file already uses.
//! Unnamed steps are named by their display name (a thermal step by its equation, a short-form
//! photo step by "EQUATION (hν)").
//!
//! The builder parses each key once against the network built from the file and writes the
//! value as a typed parameter ([`super::params`]: [`parameter`] reads one, `params::set` writes
//! one), the same way fits, sweeps and uncertainty draws do; no `--set` text reaches the file's
//! fields. The last value given for a key wins.

/// Values given on the command line, each replacing the file's value at a dotted key.
#[derive(Debug, Default, Clone)]
pub struct Overrides {
    entries: Vec<(String, String)>,
}

/// The keys that can be overridden, for messages.
pub const ACCEPTED: &str = "conditions.temperature, conditions.volume, conditions.path_length, \
conditions.irradiated_area, conditions.background, species.NAME.initial, \
light.NAME.power|photon_flux|wavelength|centre|fwhm|scale, photo.NAME.quantum_yield|efficiency, \
thermal.NAME.RATE, thermal.NAME.reverse.RATE, transient.NAME.channels[J].fraction, \
transient.NAME.channels[J].RATE (RATE: k, barrier, prefactor, activation, enthalpy, entropy, transmission)";

/// The rate fields a key may end with.
pub const RATE_FIELDS: [&str; 7] = [
    "k",
    "barrier",
    "prefactor",
    "activation",
    "enthalpy",
    "entropy",
    "transmission",
];

impl Overrides {
    /// No overrides.
    pub fn none() -> Self {
        Self::default()
    }

    /// Parse `KEY=VALUE` strings (surrounding quotes on the value are removed).
    pub fn parse<S: AsRef<str>>(items: &[S]) -> Result<Self, String> {
        let mut entries = Vec::new();
        for it in items {
            let it = it.as_ref();
            let (k, v) = it
                .split_once('=')
                .ok_or_else(|| format!("--set \"{it}\": expected KEY=VALUE, e.g. conditions.temperature=\"310 K\""))?;
            let k = k.trim().to_string();
            let v = v.trim().trim_matches('"').trim_matches('\'').to_string();
            if k.is_empty() || v.is_empty() {
                return Err(format!("--set \"{it}\": both a key and a value are needed"));
            }
            entries.push((k, v));
        }
        Ok(Overrides { entries })
    }

    /// Add one override.
    pub fn with(mut self, key: &str, value: &str) -> Self {
        self.entries.push((key.to_string(), value.to_string()));
        self
    }

    /// The `(key, value)` pairs given, in order.
    pub fn pairs(&self) -> Vec<(String, String)> {
        self.entries.clone()
    }

    /// True when nothing is overridden.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}

pub use super::params::{Parameter, Range, keys as parameter_keys, parameter};

#[cfg(test)]
mod tests {
    use super::*;
    use crate::error::Error;
    use crate::file::parse_text;
    use crate::network::{Branching, Network};
    use crate::units;
    use std::path::Path;

    /// An invented network with one of each kind of addressable value.
    const NET: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "365 nm"
photon_flux = "1 µeinstein/s"

[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "1000 L/(mol cm)", from = "300 nm", to = "450 nm" }

[[species]]
name = "B"
epsilon = { at = "365 nm", value = "500 L/(mol cm)", from = "300 nm", to = "450 nm" }

[[species]]
name = "C"
epsilon = { at = "365 nm", value = "100 L/(mol cm)", from = "300 nm", to = "450 nm" }

[[species]]
name = "Q"
initial = "1 mM"

[[photo]]
name = "A to B"
equation = "A -> B"
quantum_yield = { wavelength_unit = "nm", points = [[300, 0.2], [400, 0.4]] }

[[photo]]
name = "B up"
absorber = "B"
excites = "B*"
efficiency = 0.9

[[transient]]
name = "B*"
kind = "excited"
channels = [
  { to = "C", rate = { k = "1e8 /s" } },
  { to = "B", rate = { barrier = "5 kcal/mol" } },
  { to = "B", quencher = "Q", rate = { k = "1e9 /(M s)" } },
]

[[transient]]
name = "X*"
kind = "other"
channels = [{ to = "C", fraction = 0.3 }, { to = "B", fraction = "rest" }]

[[photo]]
name = "C up"
absorber = "C"
excites = "X*"

[[thermal]]
name = "back"
equation = "B <=> A"
rate = { barrier = "22 kcal/mol" }
reverse = { prefactor = "1e12 /s", activation = "100 kJ/mol" }

[[thermal]]
equation = "C -> A"
rate = { k = "1e-3 /s" }
"#;

    fn built(sets: &[&str]) -> crate::error::Result<Network> {
        let l = parse_text(Path::new("t.toml"), NET.to_string()).unwrap();
        super::super::build(&l, &Overrides::parse(sets).unwrap())
    }

    fn value(sets: &[&str], key: &str) -> f64 {
        parameter(&built(sets).unwrap(), key).unwrap().value
    }

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    fn errors(sets: &[&str]) -> String {
        match built(sets) {
            Err(Error::Invalid(d)) => d
                .iter()
                .map(|d| format!("{} | {} | {:?}\n", d.field, d.message, d.help))
                .collect(),
            other => panic!("expected an invalid network, got {other:?}"),
        }
    }

    #[test]
    fn every_key_of_the_network_reads_sets_and_reads_back() {
        let net = built(&[]).unwrap();
        let keys = parameter_keys(&net);
        assert!(keys.len() > 20, "{keys:?}");
        for key in &keys {
            let p = parameter(&net, key).unwrap_or_else(|e| panic!("{e}"));
            // Move the value by 10 % (fractions towards the middle) and read it back.
            let v = match p.range {
                Range::Fraction => 0.5 * p.value + 0.25,
                _ => p.value * 1.1,
            };
            let set = format!("{key}={}", p.text(v));
            let again = built(&[set.as_str()]).unwrap_or_else(|e| panic!("{set}: {e:?}"));
            let back = parameter(&again, key).unwrap().value;
            assert!((back - v).abs() <= 1e-9 * v.abs(), "{set}: read back {back}");
            // The unit is the one spelling of the key's quantity, and the value as reports show
            // it (display unit, e.g. kJ/mol, M⁻¹ s⁻¹) sets the same value.
            assert_eq!(p.unit, p.quantity.map_or("", units::internal_spelling), "{key}");
            let (x, u) = units::display::quantity(p.quantity, v);
            let shown = format!("{key}={x:e} {u}");
            let again = built(&[shown.trim_end()]).unwrap_or_else(|e| panic!("{shown}: {e:?}"));
            let back = parameter(&again, key).unwrap().value;
            assert!((back - v).abs() <= 1e-9 * v.abs(), "{shown}: read back {back}");
        }
    }

    #[test]
    fn quantum_yield_number_replaces_a_table() {
        let net = built(&[]).unwrap();
        assert!(close(parameter(&net, "photo.A to B.quantum_yield").unwrap().value, 0.3));
        let net = built(&["photo.A to B.quantum_yield=0.25"]).unwrap();
        let s = &net.photo[0];
        assert!(close(s.yield_at(310e-9), 0.25) && close(s.yield_at(390e-9), 0.25));
        assert!(close(
            value(&["photo.B up.efficiency=0.5"], "photo.B up.efficiency"),
            0.5
        ));
    }

    #[test]
    fn rates_by_k_barrier_and_the_file_form() {
        // k replaces a barrier; barrier replaces a k; the Eyring ΔG‡ read from a k gives it back.
        let k = value(&["thermal.back.k=2e-3 /s"], "thermal.back.k");
        assert!(close(k, 2e-3));
        let g = value(&[], "thermal.C -> A.barrier");
        let k = value(&[&format!("thermal.C -> A.barrier={g:e} J/mol")], "thermal.C -> A.k");
        assert!((k - 1e-3).abs() < 1e-12, "{k}");
        assert!(close(
            value(&["thermal.back.barrier=20 kcal/mol"], "thermal.back.barrier"),
            20.0 * 4184.0
        ));
        // The reverse rate's own Arrhenius fields.
        assert!(close(
            value(
                &["thermal.back.reverse.activation=90 kJ/mol"],
                "thermal.back.reverse.activation"
            ),
            9e4
        ));
        assert!(close(
            value(
                &["thermal.back.reverse.prefactor=3e11 /s"],
                "thermal.back.reverse.prefactor"
            ),
            3e11
        ));
        // A channel's rate, quenching constant and fraction.
        let net = built(&[
            "transient.B*.channels[0].k=5e7 /s",
            "transient.B*.channels[2].k=2e9 /(M s)",
            "transient.X*.channels[0].fraction=0.6",
        ])
        .unwrap();
        let b = &net.transients[0].channels;
        assert!(matches!(b[0].branching, Branching::Rate { k, .. } if close(k, 5e7)));
        assert!(matches!(b[2].branching, Branching::Quenching { k2, .. } if close(k2, 2e9)));
        assert_eq!(net.transients[1].channels[0].branching, Branching::Fraction(0.6));
        assert!(
            parameter(&net, "transient.X*.channels[1].fraction")
                .unwrap_err()
                .contains("takes the rest")
        );
        assert!(errors(&["transient.X*.channels[1].fraction=0.5"]).contains("--set transient.X*.channels[1].fraction"));
    }

    #[test]
    fn power_replaces_a_file_photon_flux() {
        let net = built(&["light.lamp.power=10 mW"]).unwrap();
        assert!(close(parameter(&net, "light.lamp.power").unwrap().value, 0.01));
        assert!(close(value(&["species.Q.initial=2 mM"], "species.Q.initial"), 2e-3));
    }

    #[test]
    fn unknown_or_misapplied_keys_are_clear_errors() {
        let e = errors(&["thermal.bak.k=1 /s"]);
        assert!(
            e.contains("--set thermal.bak.k") && e.contains("thermal names here: back, C -> A"),
            "{e}"
        );
        let e = errors(&["photo.A to C.quantum_yield=0.2"]);
        assert!(e.contains("photo names here: A to B, B up, C up"), "{e}");
        // prefactor applies only to a rate given by Arrhenius.
        let e = errors(&["thermal.back.prefactor=1e12 /s"]);
        assert!(e.contains("--set thermal.back.prefactor"), "{e}");
        // A fraction on a rate channel, and a channel that does not exist.
        assert!(errors(&["transient.B*.channels[0].fraction=0.5"]).contains("channels[0].fraction"));
        assert!(errors(&["transient.B*.channels[7].k=1 /s"]).contains("channels[7].k"));
        // Values out of range name the key as typed, the value as written and the rule.
        let e = errors(&["photo.A to B.quantum_yield=1.5"]);
        assert!(
            e.contains("photo.A to B.quantum_yield") && e.contains("\"1.5\" is not a number in [0, 1]"),
            "{e}"
        );
        let e = errors(&["thermal.back.k=-1 /s"]);
        assert!(
            e.contains("thermal.back.k") && e.contains("\"-1 /s\" must be positive"),
            "{e}"
        );
        let e = errors(&["thermal.back.transmission=2"]);
        assert!(e.contains("transmission") && e.contains("(0, 1]"), "{e}");
        // parameter() on unknown names suggests the closest key.
        let net = built(&[]).unwrap();
        let m = parameter(&net, "thermal.bakc.k").unwrap_err();
        assert!(m.contains("did you mean thermal.back.k?"), "{m}");
        let m = parameter(&net, "photo.B up.quantum_yield").unwrap_err();
        assert!(m.contains("long-form"), "{m}");
        assert!(parameter(&net, "species.A.epsilon").is_err());
    }

    /// Two steps written the same way: the second unnamed one is "EQUATION #2" (a warning says
    /// so) and each key reaches its own step; a name given twice is an error.
    #[test]
    fn steps_written_alike_get_distinct_keys() {
        let twice = format!("{NET}\n[[thermal]]\nequation = \"C -> A\"\nrate = {{ k = \"3 /s\" }}\n");
        let l = parse_text(Path::new("t.toml"), twice.clone()).unwrap();
        let net = super::super::build(&l, &Overrides::parse(&["thermal.C -> A #2.k=5 /s"]).unwrap()).unwrap();
        assert!(
            net.warnings.iter().any(|w| w.message.contains("\"C -> A #2\"")),
            "{:?}",
            net.warnings
        );
        let first = parameter(&net, "thermal.C -> A.k").unwrap().value;
        assert!(close(parameter(&net, "thermal.C -> A #2.k").unwrap().value, 5.0));
        assert!(!close(first, 5.0), "the first step moved: {first}");
        let named = twice.replace(
            "equation = \"C -> A\"\nrate = { k = \"3 /s\" }",
            "name = \"back\"\nequation = \"C -> A\"\nrate = { k = \"3 /s\" }",
        );
        let l = parse_text(Path::new("t.toml"), named).unwrap();
        match super::super::build(&l, &Overrides::none()) {
            Err(Error::Invalid(d)) => assert!(
                d.iter()
                    .any(|d| d.message.contains("names an earlier thermal step too")),
                "{d:?}"
            ),
            other => panic!("a name given twice was accepted: {other:?}"),
        }
    }
}
