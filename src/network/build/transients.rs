//! Transients (`[[transient]]`) and their channels: where each leads, its share (a fraction,
//! the rest, a rate, quenching by a partner, a count of dynamics trajectories, or a hot channel
//! whose yield is computed in `../derived.rs`), and the sums of fixed fractions.

use super::{Builder, Names};
use crate::error::Origin;
use crate::file::schema;
use crate::network::derived::AbsorbedEnergy;
use crate::network::diagnostics::{origin, span};
use crate::network::evidence::{Counts, DEFAULT_PRIOR};
use crate::network::{Branching, Channel, Target, Transient, TransientKind, equation};
use crate::units;
use toml::Spanned;

impl Builder<'_> {
    pub(super) fn transients(
        &mut self,
        doc: &schema::NetworkFile,
        names: &Names,
        heads: &[(String, TransientKind)],
        temperature: f64,
        photon: &[AbsorbedEnergy],
    ) -> Vec<Transient> {
        let mut out = Vec::new();
        for (i, t) in doc.transient.iter().enumerate() {
            let (name, kind) = heads[i].clone();
            let at = span(t);
            self.at.transients.push(at.clone());
            if name.is_empty() {
                out.push(Transient {
                    name,
                    kind,
                    channels: Vec::new(),
                    energy_from: None,
                    hot: None,
                });
                continue;
            }
            let field = format!("transient \"{name}\"");
            let mut channels = Vec::new();
            let mut hot = Vec::new();
            let mut hot_broken = false;
            // Trajectory counts of the channels that give them, in channel order.
            let mut runs: Vec<u64> = Vec::new();
            for (j, c) in t.get_ref().channels.iter().enumerate() {
                let cat = span(c);
                let cf = format!("{field}.channels[{j}]");
                let e = c.get_ref();
                let Some(target) = self.channel_target(&cf, c, heads, names) else {
                    continue;
                };
                if let Some(h) = &e.hot {
                    if e.fraction.is_some() || e.rate.is_some() || e.quencher.is_some() {
                        self.error(
                            &cf,
                            &cat,
                            "a hot channel takes no fraction, rate or quencher: its yield is computed",
                            Some("give hot = { barrier, ts_frequencies } alone".into()),
                        );
                        hot_broken = true;
                        continue;
                    }
                    match self.derived().hot_spec(&format!("{cf}.hot"), h, channels.len()) {
                        Some(spec) => hot.push(spec),
                        None => {
                            hot_broken = true;
                            continue;
                        }
                    }
                    channels.push((
                        Channel {
                            target,
                            branching: Branching::Hot {
                                fraction: f64::NAN,
                                barrier: f64::NAN,
                                energy: f64::NAN,
                                cooling: f64::NAN,
                                rate_at_start: f64::NAN,
                            },
                            returns: false,
                        },
                        cat,
                    ));
                    continue;
                }
                if let Some(n) = &e.trajectories {
                    let Some(n) = self.trajectory_count(&cf, c, n) else {
                        continue;
                    };
                    runs.push(n);
                    channels.push((
                        Channel {
                            target,
                            // The count share, set once every channel is read.
                            branching: Branching::Fraction(f64::NAN),
                            returns: false,
                        },
                        cat,
                    ));
                    continue;
                }
                let Some(branching) = self.branching(&cf, c, names, temperature) else {
                    continue;
                };
                channels.push((
                    Channel {
                        target,
                        branching,
                        returns: false,
                    },
                    cat,
                ));
            }
            // A channel already reported as broken would only add follow-on errors about sums.
            let complete = channels.len() == t.get_ref().channels.len() && !hot_broken;
            let counted = complete && self.count_shares(&field, t, i, &runs, &mut channels);
            if !complete && !runs.is_empty() {
                // A broken count was reported: give the others their share among themselves so
                // the whole-network checks do not add follow-on errors about the NaN placeholder.
                let total = runs.iter().sum::<u64>().max(1) as f64;
                let mut counts = runs.iter();
                for (c, _) in channels.iter_mut() {
                    if matches!(c.branching, Branching::Fraction(x) if x.is_nan()) {
                        c.branching = Branching::Fraction(counts.next().map_or(0.0, |&n| n as f64 / total));
                    }
                }
            }
            let (hot_ok, hot_model) = if complete {
                self.derived()
                    .hot_yields(&field, t, kind, &hot, &mut channels, &photon[i])
            } else {
                (false, None)
            };
            let photon_energy = t
                .get_ref()
                .energy
                .as_ref()
                .is_some_and(|e| e.get_ref().trim() == "photon");
            if complete && hot_ok && counted {
                self.check_channels(&field, &at, &channels);
            }
            out.push(Transient {
                name,
                kind,
                channels: channels.into_iter().map(|c| c.0).collect(),
                energy_from: (photon_energy && !hot.is_empty()).then(|| photon[i].describe()),
                hot: hot_model,
            });
        }
        out
    }

    pub(super) fn check_channels(&mut self, field: &str, at: &Origin, channels: &[(Channel, Origin)]) {
        if channels.is_empty() {
            self.error(
                &format!("{field}.channels"),
                at,
                "the transient has no channels, so no way out",
                Some("add channels, e.g. channels = [{ to = \"A\", fraction = \"rest\" }]".into()),
            );
            return;
        }
        let fixed = channels
            .iter()
            .filter(|c| c.0.branching.fixed_share().is_some() || c.0.branching == Branching::Rest)
            .count();
        if fixed != 0 && fixed != channels.len() {
            self.error(
                &format!("{field}.channels"),
                at,
                "mixes fixed fractions with rates",
                Some("give every channel a fraction (with one \"rest\"), or every channel a rate: the shares then follow from the rates".into()),
            );
            return;
        }
        if fixed == 0 {
            return;
        }
        let rests: Vec<&Origin> = channels
            .iter()
            .filter(|c| c.0.branching == Branching::Rest)
            .map(|c| &c.1)
            .collect();
        if rests.len() > 1 {
            self.error(
                &format!("{field}.channels"),
                rests[1],
                "more than one channel takes the rest",
                Some("only one channel can be \"rest\"".into()),
            );
            return;
        }
        let sum: f64 = channels
            .iter()
            .map(|c| c.0.branching.fixed_share().unwrap_or(0.0))
            .sum();
        if sum > 1.0 + 1e-9 {
            self.error(
                &format!("{field}.channels"),
                at,
                format!("the fractions sum to {}, above 1", units::sig(sum, 6)),
                Some("fractions out of one transient sum to at most 1".into()),
            );
        } else if sum < 1.0 - 1e-9 && rests.is_empty() {
            self.error(
                &format!("{field}.channels"),
                at,
                format!(
                    "the fractions sum to {} and no channel takes the rest",
                    units::sig(sum, 6)
                ),
                Some(
                    "add a return channel, e.g. { to = \"A\", fraction = \"rest\" }, or make the fractions sum to 1"
                        .into(),
                ),
            );
        }
    }

    /// Where channel `cf` leads: a transient by name, or species (products).
    pub(super) fn channel_target(
        &mut self,
        cf: &str,
        c: &Spanned<schema::Channel>,
        heads: &[(String, TransientKind)],
        names: &Names,
    ) -> Option<Target> {
        let cat = span(c);
        let e = c.get_ref();
        let Some(to) = &e.to else {
            self.error(
                &format!("{cf}.to"),
                &cat,
                "is missing",
                Some("a transient name, or products such as \"B\" or \"B + C\"".into()),
            );
            return None;
        };
        let to_s = to.get_ref().trim();
        if let Some(k) = heads.iter().position(|h| h.0 == to_s) {
            Some(Target::Transient(k))
        } else {
            let raw = match equation::parse_side(to_s) {
                Ok(r) => r,
                Err(m) => {
                    self.error(&format!("{cf}.to"), &span(to), m, None);
                    return None;
                }
            };
            if raw.is_empty() {
                self.error(
                    &format!("{cf}.to"),
                    &span(to),
                    "leads nowhere",
                    Some("name a species or a transient".into()),
                );
                return None;
            }
            let terms = self.terms(&format!("{cf}.to"), &span(to), &raw, names)?;
            Some(Target::Species(terms))
        }
    }

    /// The share of a channel that is not hot: a fixed fraction (or the rest), a first-order
    /// rate, or bimolecular quenching.
    pub(super) fn branching(
        &mut self,
        cf: &str,
        c: &Spanned<schema::Channel>,
        names: &Names,
        temperature: f64,
    ) -> Option<Branching> {
        let cat = span(c);
        let e = c.get_ref();
        let fraction = match (&e.fraction, &e.rate) {
            // The channel taking the rest has no number of its own to set.
            (Some(f), None) if !matches!(f.get_ref(), toml::Value::String(s) if s.trim() == "rest") => Some(f.clone()),
            _ => e.fraction.clone(),
        };
        let branching = match (&fraction, &e.rate, &e.quencher) {
            (Some(f), None, None) => match f.get_ref() {
                toml::Value::String(s) if s.trim() == "rest" => Branching::Rest,
                toml::Value::Float(_) | toml::Value::Integer(_) | toml::Value::String(_) => {
                    let x = self.share(&format!("{cf}.fraction"), &origin(f), f.get_ref())?;
                    if !(0.0..=1.0).contains(&x) {
                        self.error(
                            &format!("{cf}.fraction"),
                            &origin(f),
                            format!("{x} is outside [0, 1]"),
                            Some("a fraction lies in [0, 1], or \"rest\"".into()),
                        );
                        return None;
                    }
                    Branching::Fraction(x)
                }
                other => {
                    self.error(
                        &format!("{cf}.fraction"),
                        &origin(f),
                        format!("{other} is not a fraction"),
                        Some("a number in [0, 1], or \"rest\"".into()),
                    );
                    return None;
                }
            },
            (None, Some(r), None) => {
                let law = self.rate_law(&format!("{cf}.rate"), r, 1)?;
                let k = law.rate_constant(temperature, 1);
                Branching::Rate { law, k }
            }
            (None, Some(r), Some(q)) => {
                let partner = self.resolve_species(&format!("{cf}.quencher"), &span(q), q.get_ref().trim(), names)?;
                let law = self.rate_law(&format!("{cf}.rate"), r, 2)?;
                let k2 = law.rate_constant(temperature, 2);
                Branching::Quenching { partner, law, k2 }
            }
            (None, None, Some(_)) => {
                self.error(
                    &format!("{cf}.rate"),
                    &cat,
                    "a quenching channel needs its bimolecular rate constant",
                    Some("e.g. rate = { k = \"1e10 /(M s)\" }".into()),
                );
                return None;
            }
            (None, None, None) => {
                self.error(cf, &cat, "needs a fraction or a rate", Some("fraction = 0.3, fraction = \"rest\", rate = { k = \"1e9 /s\" }, rate = { barrier = \"5 kcal/mol\" }, or quencher + rate".into()));
                return None;
            }
            (Some(_), Some(_), _) | (Some(_), None, Some(_)) => {
                self.error(
                    cf,
                    &cat,
                    "has both a fraction and a rate",
                    Some("give one: a channel's share is a fixed fraction or follows from its rate".into()),
                );
                return None;
            }
        };
        Some(branching)
    }
}

/// How runs that ended nowhere are written and treated (for messages).
const UNFINISHED_HELP: &str = "unfinished_trajectories = N on the transient counts the runs that reached no channel; they are left out of the shares";

impl Builder<'_> {
    /// The `trajectories` count of channel `cf`: a whole number ≥ 0, on a channel with no other
    /// share.
    fn trajectory_count(&mut self, cf: &str, c: &Spanned<schema::Channel>, n: &Spanned<toml::Value>) -> Option<u64> {
        let e = c.get_ref();
        if e.fraction.is_some() || e.rate.is_some() || e.quencher.is_some() || e.hot.is_some() {
            self.error(
                cf,
                &span(c),
                "has trajectory counts and another share (fraction, rate, quencher or hot)",
                Some("give one: trajectories = 41 (the share is the count over all runs that reached a channel), or a fraction or rate".into()),
            );
            return None;
        }
        if let Some(o) = &e.origin {
            self.error(
                &format!("{cf}.origin"),
                &span(o),
                "a share from trajectory counts has no origin to state",
                Some("the counts carry their own uncertainty (a Dirichlet over the channels); remove origin".into()),
            );
            return None;
        }
        self.whole_count(&format!("{cf}.trajectories"), n)
    }

    /// A whole number of runs ≥ 0.
    fn whole_count(&mut self, field: &str, n: &Spanned<toml::Value>) -> Option<u64> {
        match n.get_ref() {
            toml::Value::Integer(k) if *k >= 0 => Some(*k as u64),
            other => {
                self.error(
                    field,
                    &span(n),
                    format!("{other} is not a number of runs"),
                    Some("a whole number ≥ 0, e.g. trajectories = 41".into()),
                );
                None
            }
        }
    }

    /// Set the count shares of transient `t` (index `ti`) when its channels give trajectory
    /// counts, and record the counts; false after an error. Every channel must give a count.
    fn count_shares(
        &mut self,
        field: &str,
        t: &Spanned<schema::Transient>,
        ti: usize,
        runs: &[u64],
        channels: &mut [(Channel, Origin)],
    ) -> bool {
        let e = t.get_ref();
        if runs.is_empty() {
            for (key, v) in [
                ("unfinished_trajectories", e.unfinished_trajectories.as_ref().map(span)),
                ("trajectory_prior", e.trajectory_prior.as_ref().map(span)),
            ] {
                if let Some(at) = v {
                    self.error(
                        &format!("{field}.{key}"),
                        &at,
                        "applies only when the channels give trajectory counts",
                        Some("give every channel trajectories = N, or remove the key".into()),
                    );
                    return false;
                }
            }
            return true;
        }
        if runs.len() != channels.len() {
            self.error(
                &format!("{field}.channels"),
                &span(t),
                "mixes trajectory counts with fractions or rates",
                Some("give every channel trajectories = N (0 for a channel no run took)".into()),
            );
            return false;
        }
        let unfinished = match &e.unfinished_trajectories {
            Some(n) => match self.whole_count(&format!("{field}.unfinished_trajectories"), n) {
                Some(u) => u,
                None => return false,
            },
            None => 0,
        };
        let prior = match &e.trajectory_prior {
            None => DEFAULT_PRIOR,
            Some(p) => {
                let v = match p.get_ref() {
                    toml::Value::Float(x) => *x,
                    toml::Value::Integer(x) => *x as f64,
                    _ => f64::NAN,
                };
                if !(v > 0.0 && v.is_finite()) {
                    self.error(
                        &format!("{field}.trajectory_prior"),
                        &span(p),
                        format!("{} is not a positive number", p.get_ref()),
                        Some(
                            "the pseudo-count added to every channel: 0.5 (Jeffreys, the default) or 1 (uniform)"
                                .into(),
                        ),
                    );
                    return false;
                }
                v
            }
        };
        let total: u64 = runs.iter().sum();
        if total == 0 {
            self.error(
                &format!("{field}.channels"),
                &span(t),
                "no run reached any channel: the counts give no shares",
                Some(format!(
                    "count the runs by the channel each left through; {UNFINISHED_HELP}"
                )),
            );
            return false;
        }
        for ((c, _), &n) in channels.iter_mut().zip(runs) {
            c.branching = Branching::Fraction(n as f64 / total as f64);
        }
        self.evidence.counts.push(Counts {
            transient: ti,
            runs: runs.to_vec(),
            unfinished,
            prior,
            prior_given: e.trajectory_prior.is_some(),
        });
        true
    }
}
