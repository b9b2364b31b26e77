//! Command-line overrides of values in a network file: `--set conditions.temperature="310 K"`.
//!
//! Accepted keys: `conditions.temperature`, `conditions.volume`, `conditions.path_length`,
//! `conditions.irradiated_area`, `conditions.background` (a number), `species.NAME.initial`,
//! and `light.NAME.FIELD` for `power`, `photon_flux`, `wavelength`, `centre`, `fwhm`, `scale`.

use std::cell::RefCell;
use std::collections::BTreeSet;

/// Values given on the command line, each replacing the file's value at a dotted key.
#[derive(Debug, Default, Clone)]
pub struct Overrides {
    entries: Vec<(String, String)>,
    used: RefCell<BTreeSet<String>>,
}

/// The keys that can be overridden, for messages.
pub const ACCEPTED: &str = "conditions.temperature, conditions.volume, conditions.path_length, \
conditions.irradiated_area, conditions.background, species.NAME.initial, \
light.NAME.power|photon_flux|wavelength|centre|fwhm|scale";

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
        Ok(Overrides {
            entries,
            used: RefCell::new(BTreeSet::new()),
        })
    }

    /// Add one override.
    pub fn with(mut self, key: &str, value: &str) -> Self {
        self.entries.push((key.to_string(), value.to_string()));
        self
    }

    /// The value given for `key` (the last one wins), marking it used.
    pub fn get(&self, key: &str) -> Option<&str> {
        let v = self
            .entries
            .iter()
            .rev()
            .find(|(k, _)| k == key)
            .map(|(_, v)| v.as_str());
        if v.is_some() {
            self.used.borrow_mut().insert(key.to_string());
        }
        v
    }

    /// Keys given that no field asked for.
    pub fn unused(&self) -> Vec<String> {
        let used = self.used.borrow();
        self.entries
            .iter()
            .filter(|(k, _)| !used.contains(k))
            .map(|(k, _)| k.clone())
            .collect()
    }

    /// True when nothing is overridden.
    pub fn is_empty(&self) -> bool {
        self.entries.is_empty()
    }
}
