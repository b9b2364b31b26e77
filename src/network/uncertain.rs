//! Reading `[[uncertain]]` entries of a loaded network file into [`Parameter`]s: units through
//! `units`, every problem a located [`Diagnostic`] naming the entry's field. The `uncertainty`
//! engine takes the typed parameters (re-exported there as `uncertainty::spec`) and never the
//! file.

use crate::error::{Diagnostic, Error, Origin, Result};
use crate::file::Loaded;
use crate::file::uncertain::{Amount, Uncertain};
use crate::network::params::Transform;
use crate::units::{self, Quantity};
use toml::Spanned;

/// A probability distribution of one value, in the parameter's unit.
#[derive(Debug, Clone, PartialEq)]
pub enum Distribution {
    /// Normal with mean and standard deviation.
    Normal {
        /// Mean.
        mean: f64,
        /// Standard deviation (> 0).
        sd: f64,
    },
    /// Normal with mean and standard deviation, a draw below `low` taken as `low` (a barrier
    /// drawn below zero is no barrier).
    NormalAtLeast {
        /// Mean.
        mean: f64,
        /// Standard deviation (> 0).
        sd: f64,
        /// The least value.
        low: f64,
    },
    /// Uniform on [low, high).
    Uniform {
        /// Lower end.
        low: f64,
        /// Upper end (> low).
        high: f64,
    },
    /// Beta(alpha, beta) stretched onto [low, high].
    Beta {
        /// First shape parameter.
        alpha: f64,
        /// Second shape parameter.
        beta: f64,
        /// Lower end.
        low: f64,
        /// Upper end.
        high: f64,
    },
    /// Log-normal: ln X ~ N(ln median, ln factor).
    LogNormal {
        /// Median (> 0).
        median: f64,
        /// Geometric standard deviation (> 1).
        factor: f64,
    },
    /// One channel's share of a transient whose branching is given as trajectory counts: the
    /// channels are drawn together from Dirichlet(`alphas`) (see `sampling`, `evidence`).
    Counts {
        /// The count share (the value in the network).
        share: f64,
        /// The Dirichlet parameters of every channel of the transient: count + prior.
        alphas: Vec<f64>,
        /// This channel's index among them.
        channel: usize,
        /// The transient's index: coordinates with the same block are one draw.
        block: usize,
    },
    /// One coordinate of a multivariate normal from a fit (drawn jointly, see `fitcov`).
    FromFit {
        /// Best value, in the parameter's unit.
        value: f64,
        /// Map to the scale on which the covariance holds.
        transform: Transform,
    },
}

impl Distribution {
    /// A central value (mean, midpoint, median or best value): used to check the key once.
    pub fn nominal(&self) -> f64 {
        match *self {
            Distribution::Normal { mean, .. } | Distribution::NormalAtLeast { mean, .. } => mean,
            Distribution::Uniform { low, high } => 0.5 * (low + high),
            Distribution::Beta { alpha, beta, low, high } => low + (high - low) * alpha / (alpha + beta),
            Distribution::LogNormal { median, .. } => median,
            Distribution::FromFit { value, .. } => value,
            Distribution::Counts { share, .. } => share,
        }
    }

    /// A short description, e.g. "normal(9.8e4, 8.4e3)".
    pub fn describe(&self) -> String {
        self.describe_in(1.0, "")
    }

    /// [`Self::describe`] with every value of the parameter's kind divided by `per_unit` and
    /// followed by `unit` (a display unit, e.g. 1000 and "kJ/mol"): "normal(mean 95 kJ/mol, sd 5 kJ/mol)".
    /// Shape numbers (beta's α and β, a lognormal's factor) stay plain.
    pub fn describe_in(&self, per_unit: f64, unit: &str) -> String {
        let g = |v: f64| {
            let x = units::sig(v / per_unit, 4);
            if unit.is_empty() { x } else { format!("{x} {unit}") }
        };
        let n = |v: f64| units::sig(v, 4);
        match *self {
            Distribution::Normal { mean, sd } => format!("normal(mean {}, sd {})", g(mean), g(sd)),
            Distribution::NormalAtLeast { mean, sd, low } => {
                format!(
                    "normal(mean {}, sd {}), draws below {} taken as {}",
                    g(mean),
                    g(sd),
                    g(low),
                    g(low)
                )
            }
            Distribution::Uniform { low, high } => format!("uniform({}, {})", g(low), g(high)),
            Distribution::Beta { alpha, beta, low, high } => {
                format!("beta({}, {}) on [{}, {}]", n(alpha), n(beta), g(low), g(high))
            }
            Distribution::LogNormal { median, factor } => {
                format!("lognormal(median {}, factor {})", g(median), n(factor))
            }
            Distribution::Counts {
                ref alphas, channel, ..
            } => {
                let a0: f64 = alphas.iter().sum();
                format!(
                    "Dirichlet over {} channels, this one beta({}, {})",
                    alphas.len(),
                    n(alphas[channel]),
                    n(a0 - alphas[channel])
                )
            }
            Distribution::FromFit { value, transform } => match transform {
                Transform::Identity => format!("fit covariance, best {}", g(value)),
                t => format!("fit covariance, best {}, drawn on the {} scale", g(value), t.word()),
            },
        }
    }
}

/// One uncertain value: the `--set` key it replaces, its unit and its distribution.
#[derive(Debug, Clone, PartialEq)]
pub struct Parameter {
    /// The dotted `--set` key.
    pub key: String,
    /// The unit values are drawn in and written with ("" for plain numbers). For file entries
    /// this is the internal unit's spelling (`J/mol`, `W`, `M`, ...); for fit entries the unit
    /// the fit's JSON states.
    pub unit: String,
    /// The distribution, in `unit`.
    pub distribution: Distribution,
    /// 1-based line of the entry in the network file, if it came from there.
    pub line: Option<usize>,
    /// The distribution as written in the file (for reports), or "" when not from the file.
    pub written: String,
}

impl Parameter {
    /// The text given to `--set` for a drawn value (shortest form that reads back exactly).
    pub fn override_text(&self, v: f64) -> String {
        if self.unit.is_empty() {
            format!("{v:e}")
        } else {
            format!("{v:e} {}", self.unit)
        }
    }
}

/// Collects the problems of all entries.
struct Reader<'a> {
    loaded: &'a Loaded,
    diags: Vec<Diagnostic>,
}

/// A value read from the file: internal value and its quantity (None: plain number).
#[derive(Clone, Copy)]
struct Read {
    value: f64,
    quantity: Option<Quantity>,
}

impl Reader<'_> {
    fn error(&mut self, field: &str, origin: &Origin, msg: impl Into<String>, help: impl Into<String>) {
        let d = Diagnostic::error(field, msg)
            .with_help(help)
            .at(&self.loaded.path, &self.loaded.text, origin);
        self.diags.push(d);
    }

    /// A number or a quantity with unit.
    fn amount(&mut self, field: &str, origin: &Origin, a: &Amount) -> Option<Read> {
        match a {
            Amount::Number(v) if v.is_finite() => Some(Read {
                value: *v,
                quantity: None,
            }),
            Amount::Number(v) => {
                self.error(field, origin, format!("{v} is not a finite number"), "write a number");
                None
            }
            Amount::Text(t) => self.text(field, origin, t),
        }
    }

    fn text(&mut self, field: &str, origin: &Origin, t: &str) -> Option<Read> {
        let t = t.trim();
        if let Ok(v) = t.parse::<f64>() {
            return v.is_finite().then_some(Read {
                value: v,
                quantity: None,
            });
        }
        match units::identify(t) {
            Ok((q, v)) => Some(Read {
                value: v,
                quantity: Some(q),
            }),
            Err(e) => {
                self.error(
                    field,
                    origin,
                    e.problem,
                    "a plain number, or a number with the unit of the value the key names, e.g. \"23.5 kcal/mol\", \"20 mW\", \"10 mM\", \"0.04 /s\"",
                );
                None
            }
        }
    }

    /// A spread (sd, bound difference): the internal size of `t` as a difference, so that
    /// "2 °C" is 2 K.
    fn spread(&mut self, field: &str, origin: &Origin, t: &str) -> Option<Read> {
        let r = self.text(field, origin, t)?;
        let Some(q) = r.quantity else { return Some(r) };
        let unit = t
            .trim()
            .trim_start_matches(|c: char| c.is_ascii_digit() || ".eE+-".contains(c));
        let zero = units::parse(&format!("0 {}", unit.trim()), q).unwrap_or(0.0);
        Some(Read {
            value: r.value - zero,
            quantity: Some(q),
        })
    }

    fn same_quantity(&mut self, field: &str, origin: &Origin, a: Read, b: Read) -> Option<Option<Quantity>> {
        if a.quantity == b.quantity {
            return Some(a.quantity);
        }
        let w = |q: Option<Quantity>| q.map_or("a plain number".to_string(), |q| q.describe());
        self.error(
            field,
            origin,
            format!("the values disagree: {} and {}", w(a.quantity), w(b.quantity)),
            "give both in units of the same kind (or both as plain numbers)",
        );
        None
    }

    fn entry(&mut self, i: usize, e: &Spanned<Uncertain>) -> Option<(String, Option<Quantity>, Distribution, Origin)> {
        let at = Origin::Span(e.span());
        let u = e.get_ref();
        let base = format!("uncertain[{i}]");
        let Some(key) = &u.key else {
            self.error(
                &base,
                &at,
                "no `key`",
                "write the `--set` key of the value, e.g. key = \"light.UV LED.power\"",
            );
            return None;
        };
        let key_text = key.get_ref().trim().to_string();
        let given = [
            u.normal.is_some(),
            u.uniform.is_some(),
            u.beta.is_some(),
            u.lognormal.is_some(),
        ];
        if given.iter().filter(|g| **g).count() != 1 {
            self.error(
                &format!("{base} \"{key_text}\""),
                &at,
                "give exactly one distribution",
                "one of normal = \"23.5 kcal/mol ± 2 kcal/mol\", uniform = [0.1, 0.3], \
beta = { alpha = 2, beta = 5 }, lognormal = { median = \"1e6 /s\", factor = 2 }",
            );
            return None;
        }
        let field = |f: &str| format!("uncertain[{i}] \"{key_text}\".{f}");
        if let Some(n) = &u.normal {
            let o = Origin::Span(n.span());
            let f = field("normal");
            let text = n.get_ref().replace("+/-", "±").replace("+-", "±");
            let Some((m, s)) = text.split_once('±') else {
                self.error(
                    &f,
                    &o,
                    format!("\"{}\" has no ±", n.get_ref()),
                    "write \"MEAN ± SD\", e.g. \"23.5 kcal/mol ± 2 kcal/mol\" or \"0.3 ± 10 %\"",
                );
                return None;
            };
            let mean = self.text(&f, &o, m)?;
            let s = s.trim();
            let sd = if let Some(p) = s.strip_suffix('%') {
                match p.trim().parse::<f64>() {
                    Ok(p) if p.is_finite() => Read {
                        value: mean.value.abs() * p / 100.0,
                        quantity: mean.quantity,
                    },
                    _ => {
                        self.error(&f, &o, format!("\"{s}\" is not a percentage"), "write e.g. \"± 10 %\"");
                        return None;
                    }
                }
            } else {
                self.spread(&f, &o, s)?
            };
            let q = self.same_quantity(&f, &o, mean, sd)?;
            if sd.value.partial_cmp(&0.0) != Some(std::cmp::Ordering::Greater) {
                self.error(
                    &f,
                    &o,
                    "the standard deviation must be positive",
                    "write \"MEAN ± SD\" with SD > 0",
                );
                return None;
            }
            return Some((
                key_text,
                q,
                Distribution::Normal {
                    mean: mean.value,
                    sd: sd.value,
                },
                at,
            ));
        }
        if let Some(un) = &u.uniform {
            let o = Origin::Span(un.span());
            let f = field("uniform");
            let v = un.get_ref();
            if v.len() != 2 {
                self.error(
                    &f,
                    &o,
                    format!("{} values given", v.len()),
                    "write [LOW, HIGH], e.g. [0.1, 0.3] or [\"15 mW\", \"25 mW\"]",
                );
                return None;
            }
            let lo = self.amount(&f, &o, &v[0])?;
            let hi = self.amount(&f, &o, &v[1])?;
            let q = self.same_quantity(&f, &o, lo, hi)?;
            if lo.value >= hi.value {
                self.error(&f, &o, "LOW must be below HIGH", "write [LOW, HIGH]");
                return None;
            }
            return Some((
                key_text,
                q,
                Distribution::Uniform {
                    low: lo.value,
                    high: hi.value,
                },
                at,
            ));
        }
        if let Some(b) = &u.beta {
            let o = Origin::Span(b.span());
            let f = field("beta");
            let bt = b.get_ref();
            if !(bt.alpha > 0.0 && bt.beta > 0.0 && bt.alpha.is_finite() && bt.beta.is_finite()) {
                self.error(
                    &f,
                    &o,
                    "alpha and beta must be positive numbers",
                    "e.g. beta = { alpha = 2, beta = 5 }",
                );
                return None;
            }
            let lo = match &bt.low {
                Some(a) => self.amount(&f, &o, a)?,
                None => Read {
                    value: 0.0,
                    quantity: None,
                },
            };
            let hi = match &bt.high {
                Some(a) => self.amount(&f, &o, a)?,
                None => Read {
                    value: 1.0,
                    quantity: None,
                },
            };
            let q = self.same_quantity(&f, &o, lo, hi)?;
            if lo.value >= hi.value {
                self.error(
                    &f,
                    &o,
                    "low must be below high",
                    "e.g. beta = { alpha = 2, beta = 5, low = 0.1, high = 0.6 }",
                );
                return None;
            }
            return Some((
                key_text,
                q,
                Distribution::Beta {
                    alpha: bt.alpha,
                    beta: bt.beta,
                    low: lo.value,
                    high: hi.value,
                },
                at,
            ));
        }
        let l = u.lognormal.as_ref()?;
        let o = Origin::Span(l.span());
        let f = field("lognormal");
        let ln = l.get_ref();
        let med = self.amount(&f, &o, &ln.median)?;
        if med.value <= 0.0 {
            self.error(
                &f,
                &o,
                "the median must be positive",
                "e.g. lognormal = { median = \"1e6 /s\", factor = 2 }",
            );
            return None;
        }
        if !(ln.factor > 1.0 && ln.factor.is_finite()) {
            self.error(
                &f,
                &o,
                format!("factor {} is not above 1", ln.factor),
                "the factor is the geometric standard deviation, e.g. 2 (median/2 .. median×2 holds about 68 %)",
            );
            return None;
        }
        Some((
            key_text,
            med.quantity,
            Distribution::LogNormal {
                median: med.value,
                factor: ln.factor,
            },
            at,
        ))
    }
}

/// The `[[uncertain]]` entries of `loaded` as parameters (values in internal units), or every
/// problem found. A key given twice is an error. Whether each key exists in the network is
/// checked by the caller (by building the network once with each nominal value).
pub fn read(loaded: &Loaded) -> Result<Vec<Parameter>> {
    let mut r = Reader {
        loaded,
        diags: Vec::new(),
    };
    let mut out: Vec<Parameter> = Vec::new();
    for (i, e) in loaded.doc.uncertain.iter().enumerate() {
        let Some((key, q, dist, at)) = r.entry(i, e) else {
            continue;
        };
        if out.iter().any(|p| p.key == key) {
            r.error(
                &format!("uncertain[{i}].key"),
                &at,
                format!("\"{key}\" has a distribution already"),
                "give each key once",
            );
            continue;
        }
        let line = match &at {
            Origin::Span(s) => Some(crate::error::line_col(&loaded.text, s.start).0),
            _ => None,
        };
        let written = written(&loaded.text, e.get_ref());
        out.push(Parameter {
            key,
            unit: q.map(|q| units::internal_spelling(q).to_string()).unwrap_or_default(),
            distribution: dist,
            line,
            written,
        });
    }
    if r.diags.is_empty() {
        Ok(out)
    } else {
        Err(Error::Invalid(r.diags))
    }
}

/// The distribution as written, e.g. `normal = "2.8 kcal/mol ± 1 kcal/mol"`.
fn written(text: &str, u: &Uncertain) -> String {
    let spans = [
        ("normal", u.normal.as_ref().map(|v| v.span())),
        ("uniform", u.uniform.as_ref().map(|v| v.span())),
        ("beta", u.beta.as_ref().map(|v| v.span())),
        ("lognormal", u.lognormal.as_ref().map(|v| v.span())),
    ];
    spans
        .into_iter()
        .find_map(|(w, s)| Some(format!("{w} = {}", text.get(s?)?.trim())))
        .unwrap_or_default()
}
