//! Thermal steps (`[[thermal]]`: equation, molecularity, rate and reverse rate) and
//! photochemical steps (`[[photo]]`: the short form with a quantum yield, the long form exciting
//! a transient, the wavelength range).

use super::rates::example_k;
use super::{Builder, Names};
use crate::error::Origin;
use crate::file::schema::{self, Text};
use crate::light::{Outside, Spectrum};
use crate::network::diagnostics::{Field, span};
use crate::network::{PhotoOutcome, PhotoStep, Term, ThermalStep, equation};
use crate::rates::RateLaw;
use crate::units::Quantity;
use std::collections::HashMap;
use toml::Spanned;

impl Builder<'_> {
    /// A step's name, distinct among the steps of its `kind` so that every key (`--set`,
    /// `--free`, `[[uncertain]]`) and every report line addresses one step. A name given twice
    /// is an error; an unnamed step written like an earlier one is called "EQUATION #2" (a
    /// warning says so).
    fn distinct(
        &mut self,
        kind: &str,
        seen: &mut HashMap<String, usize>,
        name: String,
        explicit: bool,
        field: &str,
        at: &Origin,
    ) -> Option<String> {
        let n = seen.entry(name.clone()).or_insert(0);
        *n += 1;
        if *n == 1 {
            return Some(name);
        }
        if explicit {
            self.error(
                &format!("{field}.name"),
                at,
                format!("\"{name}\" names an earlier {kind} step too"),
                Some("give each step its own name: keys (--set, --free, [[uncertain]]) and reports address steps by name".into()),
            );
            return None;
        }
        let called = format!("{name} #{n}");
        self.warn(
            field,
            at,
            format!("is written like an earlier {kind} step; it is called \"{called}\" in keys and reports"),
            Some("give it a name (name = \"...\") to choose another".into()),
        );
        seen.insert(called.clone(), 1);
        Some(called)
    }

    pub(super) fn thermal(&mut self, doc: &schema::NetworkFile, names: &Names, temperature: f64) -> Vec<ThermalStep> {
        let mut out = Vec::new();
        let mut seen = HashMap::new();
        for (i, s) in doc.thermal.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = step_field("thermal", i, e.name.as_ref(), e.equation.as_ref());
            let Some(eq) = &e.equation else {
                self.error(
                    &format!("{field}.equation"),
                    &at,
                    "is missing",
                    Some("e.g. equation = \"A + B -> C\"".into()),
                );
                continue;
            };
            let eq_at = span(eq);
            let raw = match equation::parse(eq.get_ref()) {
                Ok(r) => r,
                Err(m) => {
                    self.error(
                        &format!("{field}.equation"),
                        &eq_at,
                        m,
                        Some("e.g. \"2 M -> D\", \"A + B <=> C\"".into()),
                    );
                    continue;
                }
            };
            let (Some(left), Some(right)) = (
                self.terms(&format!("{field}.equation"), &eq_at, &raw.left, names),
                self.terms(&format!("{field}.equation"), &eq_at, &raw.right, names),
            ) else {
                continue;
            };
            let name = e
                .name
                .as_ref()
                .map_or(eq.get_ref().trim().to_string(), |n| n.get_ref().clone());
            if e.name.is_some() && self.too_long(&format!("{field}.name"), &name, &at) {
                continue;
            }
            let Some(name) = self.distinct("thermal", &mut seen, name, e.name.is_some(), &field, &at) else {
                continue;
            };
            let order_of = |t: &[Term]| t.iter().map(|x| x.coefficient).sum::<f64>();
            let whole = |o: f64| (o.fract() == 0.0 && (1.0..=3.0).contains(&o)).then_some(o as u32);
            let Some(order) = whole(order_of(&left)) else {
                self.error(
                    &format!("{field}.equation"),
                    &eq_at,
                    format!(
                        "molecularity {} is not 1, 2 or 3 (mass action needs whole-number elementary steps)",
                        order_of(&left)
                    ),
                    None,
                );
                continue;
            };
            let reverse_order = whole(order_of(&right));
            let Some(rate) = &e.rate else {
                self.error(
                    &format!("{field}.rate"),
                    &at,
                    "is missing",
                    Some(format!("e.g. rate = {{ k = \"{}\" }}", example_k(order))),
                );
                continue;
            };
            let Some(law) = self.rate_law(&format!("{field}.rate"), rate, order) else {
                continue;
            };
            let k = law.rate_constant(temperature, order);
            let forward = out.len();
            let reverse_law = self.reverse_law(&field, s, raw.reversible, reverse_order, &eq_at);
            if raw.reversible && reverse_law.is_none() {
                continue;
            }
            out.push(ThermalStep {
                name: name.clone(),
                reactants: left.clone(),
                products: right.clone(),
                rate: law,
                order,
                k,
                reverse_of: None,
            });
            self.at.thermal.push(at.clone());
            if let Some((law, o2)) = reverse_law {
                self.at.thermal.push(at.clone());
                let k = law.rate_constant(temperature, o2);
                out.push(ThermalStep {
                    name: format!("{name} (reverse)"),
                    reactants: right,
                    products: left,
                    rate: law,
                    order: o2,
                    k,
                    reverse_of: Some(forward),
                });
            }
        }
        out
    }

    pub(super) fn window(&mut self, field: &str, r: &Spanned<Vec<String>>) -> Option<(f64, f64)> {
        let at = span(r);
        let v = r.get_ref();
        if v.len() != 2 {
            self.error(
                field,
                &at,
                "needs two wavelengths",
                Some("e.g. range = [\"300 nm\", \"400 nm\"]".into()),
            );
            return None;
        }
        let lo = self.positive(
            field,
            &Field {
                value: v[0].clone(),
                origin: at.clone(),
                key: None,
            },
            Quantity::Wavelength,
        )?;
        let hi = self.positive(
            field,
            &Field {
                value: v[1].clone(),
                origin: at.clone(),
                key: None,
            },
            Quantity::Wavelength,
        )?;
        if lo >= hi {
            self.error(field, &at, "the first wavelength must be the shorter", None);
            return None;
        }
        Some((lo, hi))
    }

    pub(super) fn photo(&mut self, doc: &schema::NetworkFile, names: &Names) -> Vec<PhotoStep> {
        let mut out = Vec::new();
        let mut seen = HashMap::new();
        for (i, s) in doc.photo.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = step_field("photo", i, e.name.as_ref(), e.equation.as_ref());
            let window = match &e.range {
                Some(r) => match self.window(&format!("{field}.range"), r) {
                    Some(w) => Some(w),
                    None => continue,
                },
                None => None,
            };
            let forms = "the short form: equation = \"A -> B\" with quantum_yield; or the long form: absorber = \"A\", excites = \"A*\" (a transient)";
            match (&e.equation, &e.absorber, &e.excites) {
                (Some(eq), None, None) => {
                    if let Some(mut p) = self.photo_short(&field, s, eq, window, names)
                        && let Some(n) = self.distinct("photo", &mut seen, p.name, e.name.is_some(), &field, &at)
                    {
                        p.name = n;
                        out.push(p);
                    }
                }
                (None, Some(a), Some(x)) => {
                    if let Some(mut p) = self.photo_long(&field, s, (a, x), window, names)
                        && let Some(n) = self.distinct("photo", &mut seen, p.name, e.name.is_some(), &field, &at)
                    {
                        p.name = n;
                        out.push(p);
                    }
                }
                (None, Some(_), None) => self.error(
                    &format!("{field}.excites"),
                    &at,
                    "is missing: the long form names the transient reached",
                    Some(forms.into()),
                ),
                (None, None, Some(_)) => self.error(
                    &format!("{field}.absorber"),
                    &at,
                    "is missing: the long form names the absorbing species",
                    Some(forms.into()),
                ),
                (None, None, None) => self.error(
                    &field,
                    &at,
                    "says neither what absorbs nor what happens",
                    Some(forms.into()),
                ),
                (Some(_), _, _) => self.error(&field, &at, "mixes the short and the long form", Some(forms.into())),
            }
        }
        out
    }

    /// The reverse rate of a reversible step (`<=>`), with its molecularity; a `reverse` on a
    /// one-way step or a reversible step without one is reported.
    pub(super) fn reverse_law(
        &mut self,
        field: &str,
        s: &Spanned<schema::Thermal>,
        reversible: bool,
        reverse_order: Option<u32>,
        eq_at: &Origin,
    ) -> Option<(RateLaw, u32)> {
        let at = span(s);
        let e = s.get_ref();
        match (&e.reverse, reversible) {
            (Some(r), true) => match reverse_order {
                Some(o2) => self.rate_law(&format!("{field}.reverse"), r, o2).map(|l| (l, o2)),
                None => {
                    self.error(
                        &format!("{field}.equation"),
                        eq_at,
                        "the reverse of a reversible step needs 1, 2 or 3 whole product molecules",
                        None,
                    );
                    None
                }
            },
            (None, true) => {
                self.error(
                    &format!("{field}.reverse"),
                    &at,
                    "is missing for a reversible (<=>) equation",
                    Some("e.g. reverse = { k = \"1e-3 /s\" }, or write -> for one direction".into()),
                );
                None
            }
            (Some(r), false) => {
                self.error(
                    &format!("{field}.reverse"),
                    &span(r),
                    "is given but the equation is one-way (->)",
                    Some("write <=> for a reversible step".into()),
                );
                None
            }
            (None, false) => None,
        }
    }

    /// The short form: `equation = "A -> B"` with a quantum yield (a number or a table).
    pub(super) fn photo_short(
        &mut self,
        field: &str,
        s: &Spanned<schema::Photo>,
        eq: &Text,
        window: Option<(f64, f64)>,
        names: &Names,
    ) -> Option<PhotoStep> {
        let at = span(s);
        let e = s.get_ref();
        if let Some(x) = &e.efficiency {
            self.error(
                &format!("{field}.efficiency"),
                &span(x),
                "belongs to the long form (absorber + excites)",
                Some("the short form takes quantum_yield".into()),
            );
            return None;
        }
        let eq_at = span(eq);
        let raw = match equation::parse(eq.get_ref()) {
            Ok(r) => r,
            Err(m) => {
                self.error(&format!("{field}.equation"), &eq_at, m, Some("e.g. \"A -> B\"".into()));
                return None;
            }
        };
        if raw.reversible {
            self.error(
                &format!("{field}.equation"),
                &eq_at,
                "a photochemical step runs one way",
                Some("write two [[photo]] steps, A -> B and B -> A".into()),
            );
            return None;
        }
        if raw.left.len() != 1 || raw.left[0].coefficient != 1.0 {
            self.error(
                &format!("{field}.equation"),
                &eq_at,
                "one photon is absorbed by one molecule: the left side must be a single species",
                Some(
                    "for a reaction of the excited molecule with a partner, use a transient with a `quencher` channel"
                        .into(),
                ),
            );
            return None;
        }
        // The species and the quantum yield are checked apart, so a misspelt species does not
        // hide a quantum yield above 1 in the same step.
        let left = self.terms(&format!("{field}.equation"), &eq_at, &raw.left, names);
        let right = self.terms(&format!("{field}.equation"), &eq_at, &raw.right, names);
        let qy = self.photo_quantum_yield(field, e, &at);
        let (Some(left), Some(right), Some(qy)) = (left, right, qy) else {
            return None;
        };
        let name = e
            .name
            .as_ref()
            .map_or(format!("{} (hν)", eq.get_ref().trim()), |n| n.get_ref().clone());
        if e.name.is_some() && self.too_long(&format!("{field}.name"), &name, &at) {
            return None;
        }
        self.at.photo.push(at.clone());
        Some(PhotoStep {
            name,
            absorber: left[0].species,
            outcome: PhotoOutcome::Products(right),
            quantum_yield: qy,
            window,
        })
    }

    /// The quantum yield of a short-form step: present, readable, at most 1.
    fn photo_quantum_yield(&mut self, field: &str, e: &schema::Photo, at: &Origin) -> Option<Spectrum> {
        let Some(qy) = &e.quantum_yield else {
            self.error(
                &format!("{field}.quantum_yield"),
                at,
                "is missing",
                Some("a number in [0, 1], or a table over wavelength".into()),
            );
            return None;
        };
        let spectrum = self.spectrum(&format!("{field}.quantum_yield"), qy, None, Outside::Nearest)?;
        if spectrum.max() > 1.0 + 1e-12 {
            self.error(
                &format!("{field}.quantum_yield"),
                &span(qy),
                format!("{} is above 1", spectrum.max()),
                Some("a quantum yield lies in [0, 1]; a chain reaction is written as thermal steps".into()),
            );
            return None;
        }
        Some(spectrum)
    }

    /// The long form: `absorber` and the transient it `excites`, with an optional efficiency.
    pub(super) fn photo_long(
        &mut self,
        field: &str,
        s: &Spanned<schema::Photo>,
        (a, x): (&Text, &Text),
        window: Option<(f64, f64)>,
        names: &Names,
    ) -> Option<PhotoStep> {
        let at = span(s);
        let e = s.get_ref();
        if let Some(q) = &e.quantum_yield {
            self.error(
                &format!("{field}.quantum_yield"),
                &span(q),
                "belongs to the short form (equation)",
                Some(
                    "in the long form, set the transient's channels, and `efficiency` for the share reaching it".into(),
                ),
            );
            return None;
        }
        let absorber = self.resolve_species(&format!("{field}.absorber"), &span(a), a.get_ref().trim(), names)?;
        let xn = x.get_ref().trim();
        let Some(t) = names.transients.iter().position(|t| t.0 == xn) else {
            let help = match crate::network::suggest_name(xn, names.transients.iter().map(|t| t.0.as_str())) {
                Some(c) => format!("did you mean \"{c}\"?"),
                None => "declare it in a [[transient]] table".into(),
            };
            self.error(
                &format!("{field}.excites"),
                &span(x),
                format!("unknown transient \"{xn}\""),
                Some(help),
            );
            return None;
        };
        let name = e
            .name
            .as_ref()
            .map_or(format!("{} + hν -> {}", names.species[absorber].name, xn), |n| {
                n.get_ref().clone()
            });
        let eff = match &e.efficiency {
            Some(v) => {
                let x = self.share(&format!("{field}.efficiency"), &span(v), v.get_ref())?;
                if !(0.0..=1.0).contains(&x) || x == 0.0 {
                    self.error(
                        &format!("{field}.efficiency"),
                        &span(v),
                        format!("{x} must lie in (0, 1]"),
                        None,
                    );
                    return None;
                }
                x
            }
            None => 1.0,
        };
        self.at.photo.push(at.clone());
        Some(PhotoStep {
            name,
            absorber,
            outcome: PhotoOutcome::Transient(t),
            quantum_yield: Spectrum::Constant { value: eff, at: None },
            window,
        })
    }
}

/// How an error names step `i` of `table`: by its name (`thermal "ring closure"`), else by its
/// equation (`photo "A -> B"`), else by position (`photo[2]`).
fn step_field(table: &str, i: usize, name: Option<&schema::Text>, equation: Option<&schema::Text>) -> String {
    match name.or(equation).map(|n| n.get_ref().trim()) {
        Some(n) if !n.is_empty() => format!("{table} \"{n}\""),
        _ => format!("{table}[{i}]"),
    }
}
