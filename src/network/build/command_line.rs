//! `--set` values put into the network built from the file, as typed parameters: each key is
//! parsed once against the built network ([`Key::parse`], the same keys fits, sweeps and
//! uncertainty use), its value read in the parameter's quantity, and written with
//! [`params::set_quietly`], which checks it and recomputes what depends on it (rate constants,
//! light bins, hot yields). The whole-network checks run afterwards, so a value that breaks one
//! (a line moved away from a single ε) is refused as if the file had said it.

use super::Builder;
use super::unused::unused_override;
use crate::error::Origin;
use crate::network::Network;
use crate::network::diagnostics::Field;
use crate::network::params::{self, Key};
use crate::units;

impl Builder<'_> {
    /// Write every `--set` value into `net`, reporting each one that cannot be used at its key.
    pub(super) fn put_command_line(&mut self, net: &mut Network) {
        // The last value given for a key wins.
        let mut last: Vec<(String, String)> = Vec::new();
        for (k, v) in self.overrides.pairs() {
            match last.iter_mut().find(|e| e.0 == k) {
                Some(e) => e.1 = v,
                None => last.push((k, v)),
            }
        }
        let mut typed: Vec<(Key, f64)> = Vec::new();
        let mut given: Vec<(Key, String, String)> = Vec::new();
        for (k, v) in last {
            let counted = |key: &Key| matches!(*key, Key::Fraction { transient, .. } if net.evidence.counts_of(transient).is_some());
            let key = match Key::parse(net, &k) {
                // A share from trajectory counts is set by its counts, not by a number.
                Ok(key) if counted(&key) => {
                    self.sink
                        .push(unused_override(self.loaded, &k).in_file(&self.loaded.path));
                    continue;
                }
                Ok(key) => key,
                Err(why) => {
                    let mut d = unused_override(self.loaded, &k);
                    if d.message == "no such field in this network" {
                        // The key names things this network has, in a way it cannot take.
                        d.message = why.strip_prefix(&format!("{k}: ")).unwrap_or(&why).to_string();
                    }
                    self.sink.push(d.in_file(&self.loaded.path));
                    continue;
                }
            };
            let field = Field {
                value: v.clone(),
                origin: Origin::CommandLine,
                key: Some(k.clone()),
            };
            let value = match params::get(net, key).quantity {
                Some(q) => self.sink.quantity(&k, &field, q),
                None => match units::fraction(&v) {
                    Ok(x) => Some(x),
                    Err(m) => {
                        let help = "a plain number such as 0.25, or a percentage such as \"25 %\"";
                        self.sink.error(&k, &Origin::CommandLine, m, Some(help.into()));
                        None
                    }
                },
            };
            if let Some(x) = value {
                typed.push((key, x));
                given.push((key, k, v));
            }
        }
        for (key, x) in params::share_order(net, &typed) {
            let accepted = params::get(net, key)
                .quantity
                .map(|q| format!("expected {}", q.accepted()));
            if let Err(why) = params::set_quietly(net, key, x) {
                let (_, k, v) = given.iter().find(|g| g.0 == key).expect("each typed value was given");
                self.sink
                    .error(k, &Origin::CommandLine, format!("\"{v}\" {why}"), accepted);
            }
        }
    }
}
