//! Origins (`origin = "..."` beside a rate, a fraction or a quantum yield) and the `[spreads]`
//! table, read into `Network::evidence` once the network is built (so each origin is tied to
//! the typed key of the number it describes). Trajectory counts are read with the channels
//! (`transients.rs`).

use super::Builder;
use crate::file::evidence::{ORIGINS, SpreadRow as FileRow};
use crate::file::schema::{self, Text};
use crate::network::diagnostics::span;
use crate::network::evidence::{ShareSd, Source, Spread, SpreadRow, Stated};
use crate::network::params::{Key, RateAt, RateField};
use crate::network::{Branching, Network, PhotoOutcome};
use crate::rates::RateLaw;
use crate::units::{self, Quantity};
use toml::Spanned;

/// The field of a rate law whose spread an origin gives: the barrier of the form it is written
/// in (ΔG‡, Ea, ΔH‡, E₀), or `k` for a rate constant given as such.
pub(crate) fn rate_field(law: &RateLaw) -> RateField {
    match law {
        RateLaw::Constant(_) => RateField::K,
        RateLaw::Arrhenius { .. } => RateField::Activation,
        RateLaw::EyringEnthalpy { .. } => RateField::Enthalpy,
        RateLaw::EyringFree { .. } | RateLaw::Frequencies { .. } => RateField::Barrier,
    }
}

impl Builder<'_> {
    /// Read every `origin` and the `[spreads]` table into `net.evidence`, with the trajectory
    /// counts already found.
    pub(super) fn evidence(&mut self, doc: &schema::NetworkFile, net: &mut Network) {
        let mut ev = std::mem::take(&mut self.evidence);
        if let Some(s) = &doc.spreads {
            let s = s.get_ref();
            for (source, row) in Source::ALL.into_iter().zip([
                &s.measured,
                &s.computed_ground_state,
                &s.computed_excited_state,
                &s.estimated,
            ]) {
                if let Some(r) = row {
                    self.spread_row(source, r, ev.spreads.of_mut(source));
                }
            }
        }
        // Thermal steps: both halves of a reversible equation were written at the entry.
        for (i, t) in doc.thermal.iter().enumerate() {
            let e = t.get_ref();
            // Most steps state no origin: look up the built steps only for those that do, so
            // building stays linear in the number of steps.
            let stated = |r: &Option<Spanned<schema::Rate>>| r.as_ref().is_some_and(|r| r.get_ref().origin.is_some());
            if !stated(&e.rate) && !stated(&e.reverse) {
                continue;
            }
            let at = span(t);
            let field = format!("thermal[{i}]");
            let steps: Vec<usize> = (0..net.thermal.len())
                .filter(|&j| self.at.thermal.get(j) == Some(&at))
                .collect();
            for (rate, reverse) in [(&e.rate, false), (&e.reverse, true)] {
                let Some(r) = rate else { continue };
                let Some(o) = &r.get_ref().origin else { continue };
                let which = if reverse { "reverse" } else { "rate" };
                let Some(source) = self.source(&format!("{field}.{which}.origin"), o) else {
                    continue;
                };
                let step = steps
                    .iter()
                    .copied()
                    .find(|&j| net.thermal[j].reverse_of.is_some() == reverse);
                if let Some(j) = step {
                    let key = Key::Rate {
                        at: RateAt::Thermal(j),
                        field: rate_field(&net.thermal[j].rate),
                    };
                    ev.stated.push(self.stated(key, source, o));
                }
            }
        }
        for (i, p) in doc.photo.iter().enumerate() {
            let Some(o) = &p.get_ref().origin else { continue };
            let Some(source) = self.source(&format!("photo[{i}].origin"), o) else {
                continue;
            };
            let at = span(p);
            if let Some(j) = (0..net.photo.len()).find(|&j| self.at.photo.get(j) == Some(&at)) {
                let key = match net.photo[j].outcome {
                    PhotoOutcome::Products(_) => Key::QuantumYield(j),
                    PhotoOutcome::Transient(_) => Key::Efficiency(j),
                };
                ev.stated.push(self.stated(key, source, o));
            }
        }
        for (ti, t) in doc.transient.iter().enumerate() {
            let Some(tr) = net.transients.get(ti) else { continue };
            let aligned = tr.channels.len() == t.get_ref().channels.len();
            for (ci, c) in t.get_ref().channels.iter().enumerate() {
                let cf = format!("transient \"{}\".channels[{ci}]", tr.name);
                let e = c.get_ref();
                let (o, from_rate) = match (&e.origin, e.rate.as_ref().and_then(|r| r.get_ref().origin.as_ref())) {
                    (Some(o), _) => (o, false),
                    (None, Some(o)) => (o, true),
                    (None, None) => continue,
                };
                let f = if from_rate {
                    format!("{cf}.rate.origin")
                } else {
                    format!("{cf}.origin")
                };
                let Some(source) = self.source(&f, o) else { continue };
                if !aligned {
                    continue;
                }
                let at = RateAt::Channel {
                    transient: ti,
                    channel: ci,
                };
                let key = match (&tr.channels[ci].branching, from_rate) {
                    (Branching::Fraction(_), false) if ev.counts_of(ti).is_none() => Key::Fraction {
                        transient: ti,
                        channel: ci,
                    },
                    (Branching::Rate { law, .. } | Branching::Quenching { law, .. }, true) => Key::Rate {
                        at,
                        field: rate_field(law),
                    },
                    (Branching::Rate { .. } | Branching::Quenching { .. }, false) => {
                        self.error(
                            &f,
                            &span(o),
                            "a channel's rate states its origin inside the rate",
                            Some("write rate = { barrier = \"...\", origin = \"...\" }".into()),
                        );
                        continue;
                    }
                    _ => {
                        self.error(
                            &f,
                            &span(o),
                            "this channel has no number of its own to give an origin to",
                            Some("an origin applies to a fixed fraction (not \"rest\") or to a rate".into()),
                        );
                        continue;
                    }
                };
                ev.stated.push(self.stated(key, source, o));
            }
        }
        net.evidence = ev;
    }

    fn stated(&self, key: Key, source: Source, o: &Text) -> Stated {
        Stated {
            key,
            source,
            line: crate::error::line_col(&self.loaded.text, o.span().start).0,
        }
    }

    /// The origin written at `o`, or an error listing the accepted words.
    fn source(&mut self, field: &str, o: &Text) -> Option<Source> {
        let s = Source::from_word(o.get_ref());
        if s.is_none() {
            self.error(
                field,
                &span(o),
                format!("\"{}\" is not an origin", o.get_ref()),
                Some(format!("one of {}", quoted(&ORIGINS))),
            );
        }
        s
    }

    /// Read one `[spreads.ORIGIN]` row over the defaults in `row`.
    fn spread_row(&mut self, source: Source, r: &Spanned<FileRow>, row: &mut SpreadRow) {
        let base = format!("spreads.{}", source.word());
        let e = r.get_ref();
        if let Some(b) = &e.barrier {
            let f = format!("{base}.barrier");
            let v = b.get_ref().trim();
            row.barrier = if v == "none" {
                Spread {
                    value: None,
                    default: false,
                }
            } else {
                match spread_energy(v) {
                    Ok(x) if x > 0.0 => Spread {
                        value: Some(x),
                        default: false,
                    },
                    Ok(_) => {
                        self.error(
                            &f,
                            &span(b),
                            "the spread must be above zero",
                            Some("e.g. \"1.5 kcal/mol\", or \"none\"".into()),
                        );
                        return;
                    }
                    Err(m) => {
                        self.error(
                            &f,
                            &span(b),
                            m,
                            Some(format!(
                                "a standard deviation in {}, e.g. \"1.5 kcal/mol\", or \"none\"",
                                Quantity::MolarEnergy.accepted()
                            )),
                        );
                        return;
                    }
                }
            };
        }
        if let Some(k) = &e.rate_factor {
            let f = format!("{base}.rate_factor");
            row.rate_factor = match k.get_ref() {
                toml::Value::String(s) if s.trim() == "none" => Spread {
                    value: None,
                    default: false,
                },
                toml::Value::Float(x) if *x > 1.0 && x.is_finite() => Spread {
                    value: Some(*x),
                    default: false,
                },
                toml::Value::Integer(x) if *x > 1 => Spread {
                    value: Some(*x as f64),
                    default: false,
                },
                other => {
                    self.error(
                        &f,
                        &span(k),
                        format!("{other} is not a factor above 1"),
                        Some("the geometric standard deviation of k, e.g. rate_factor = 2 (k/2 .. 2k holds about 68 %), or \"none\"".into()),
                    );
                    return;
                }
            };
        }
        for (name, given, slot) in [
            ("fraction", &e.fraction, &mut row.fraction),
            ("quantum_yield", &e.quantum_yield, &mut row.quantum_yield),
        ] {
            let Some(v) = given else { continue };
            match share_sd(v.get_ref()) {
                Ok(sd) => {
                    *slot = Spread {
                        value: sd,
                        default: false,
                    }
                }
                Err(m) => self.error(
                    &format!("{base}.{name}"),
                    &span(v),
                    m,
                    Some("an absolute standard deviation such as 0.05, a percentage of the value such as \"10 %\", or \"none\"".into()),
                ),
            }
        }
    }
}

/// `"1.5 kcal/mol"` as a difference of energies, J/mol.
fn spread_energy(text: &str) -> Result<f64, String> {
    units::parse(text, Quantity::MolarEnergy).map_err(|e| e.to_string())
}

/// A share's standard deviation: a number (absolute), "N %" (relative), or "none".
fn share_sd(v: &toml::Value) -> Result<Option<ShareSd>, String> {
    let positive = |x: f64| {
        if x > 0.0 && x.is_finite() {
            Ok(x)
        } else {
            Err(format!("{x} is not above zero"))
        }
    };
    match v {
        toml::Value::Float(x) => Ok(Some(ShareSd::Absolute(positive(*x)?))),
        toml::Value::Integer(x) => Ok(Some(ShareSd::Absolute(positive(*x as f64)?))),
        toml::Value::String(s) if s.trim() == "none" => Ok(None),
        toml::Value::String(s) => match s.trim().strip_suffix('%') {
            Some(p) => match p.trim().parse::<f64>() {
                Ok(x) => Ok(Some(ShareSd::Relative(positive(x / 100.0)?))),
                Err(_) => Err(format!("\"{s}\" is not a percentage")),
            },
            None => Err(format!("\"{s}\" is not a number or a percentage")),
        },
        other => Err(format!("{other} is not a number or a percentage")),
    }
}

fn quoted(words: &[&str]) -> String {
    words.iter().map(|w| format!("\"{w}\"")).collect::<Vec<_>>().join(", ")
}
