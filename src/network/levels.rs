//! Labelled sets of computed values carried by one network, one per method or level of theory
//! (the file's `[[level]]` tables, read in `build/levels.rs`). A set holds typed values at
//! parameter [`Key`]s and, for transients whose branching the file gives as trajectory counts,
//! the counts of that method's runs. [`Level::apply`] writes a set into a copy of the built
//! network through `params::set` (never as text), so every engine runs under it unchanged.
//!
//! Values are in the internal units of their keys (SI; mol/L for concentrations).

use super::Network;
use super::params::{self, Key};

/// The trajectory counts one set gives a transient whose branching is counted.
#[derive(Debug, Clone, PartialEq)]
pub struct LevelCounts {
    /// Index into `Network::transients`.
    pub transient: usize,
    /// Runs that left by each channel, in channel order.
    pub runs: Vec<u64>,
    /// Runs that reached no channel (None: the file's number is kept).
    pub unfinished: Option<u64>,
}

/// One labelled set of values.
#[derive(Debug, Clone, PartialEq)]
pub struct Level {
    /// The user's label, unique in the network.
    pub label: String,
    /// The file's note on it (empty when none).
    pub note: String,
    /// 1-based line of its `label` in the file (0 when unknown).
    pub line: usize,
    /// Values at keys, in file order, internal units.
    pub values: Vec<(Key, f64)>,
    /// Trajectory counts of counted transients.
    pub counts: Vec<LevelCounts>,
}

impl Level {
    /// Every value this set writes: its own values, then the count shares of its counted
    /// transients as the fractions of their channels.
    pub fn writes(&self) -> Vec<(Key, f64)> {
        let mut out = self.values.clone();
        for c in &self.counts {
            let total: u64 = c.runs.iter().sum();
            for (channel, &n) in c.runs.iter().enumerate() {
                let share = if total == 0 { f64::NAN } else { n as f64 / total as f64 };
                out.push((
                    Key::Fraction {
                        transient: c.transient,
                        channel,
                    },
                    share,
                ));
            }
        }
        out
    }

    /// `net` under this set: every value written with `params::set` (shares that fall written
    /// before those that rise, so a sum rule holds after every write), the counts recorded in
    /// the network's evidence so `uncertainty` draws from this method's counts. A value the
    /// network cannot take is refused with a message naming the key.
    pub fn apply(&self, net: &Network) -> Result<Network, String> {
        if let Some(c) = self.counts.iter().find(|c| c.runs.iter().sum::<u64>() == 0) {
            return Err(format!(
                "transient.{}.trajectories: no run reached any channel, so the counts give no shares",
                net.transients[c.transient].name
            ));
        }
        let mut out = net.clone();
        params::set_all(&mut out, &params::share_order(net, &self.writes()))?;
        for c in &self.counts {
            if let Some(e) = out.evidence.counts.iter_mut().find(|e| e.transient == c.transient) {
                e.runs = c.runs.clone();
                if let Some(u) = c.unfinished {
                    e.unfinished = u;
                }
            }
        }
        Ok(out)
    }
}

#[cfg(test)]
mod tests {
    use crate::file::parse_text;
    use crate::network::{Branching, Overrides, build};
    use std::path::Path;

    const NET: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "lamp"
kind = "line"
wavelength = "300 nm"
photon_flux = "1 µeinstein/s"

[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "300 nm", value = "1000 L/(mol cm)" }

[[species]]
name = "B"
product = true

[[species]]
name = "C"
product = true

[[photo]]
name = "excite"
absorber = "A"
excites = "S1"

[[transient]]
name = "S1"
kind = "excited"
channels = [ { to = "CI", trajectories = 30 }, { to = "A", trajectories = 10 } ]

[[transient]]
name = "CI"
kind = "intersection"
channels = [ { to = "B", fraction = 0.7 }, { to = "C", fraction = "rest" } ]

[[level]]
label = "one"
set = { "transient.S1.trajectories" = [10, 30], "transient.CI.channels[0].fraction" = 0.2 }
"#;

    #[test]
    fn a_level_writes_its_counts_as_shares_and_records_them() {
        let loaded = parse_text(Path::new("t.toml"), NET.into()).expect("parses");
        let net = build(&loaded, &Overrides::none()).expect("valid");
        assert_eq!(net.levels.len(), 1);
        let under = net.levels[0].apply(&net).expect("applies");
        // The S1 share to CI falls from 0.75 to 0.25 while the return rises: written in order.
        assert!(
            matches!(under.transients[0].channels[0].branching, Branching::Fraction(x) if (x - 0.25).abs() < 1e-15)
        );
        assert!(
            matches!(under.transients[0].channels[1].branching, Branching::Fraction(x) if (x - 0.75).abs() < 1e-15)
        );
        assert!(matches!(under.transients[1].channels[0].branching, Branching::Fraction(x) if (x - 0.2).abs() < 1e-15));
        assert_eq!(under.evidence.counts_of(0).expect("counted").runs, vec![10, 30]);
        // The network itself is untouched.
        assert!(matches!(net.transients[0].channels[0].branching, Branching::Fraction(x) if (x - 0.75).abs() < 1e-15));
    }
}
