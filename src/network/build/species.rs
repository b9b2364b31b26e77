//! `[[species]]` (initial concentration, formula, ε), the names of transients, and resolving a
//! name written in an equation or a channel to a species.

use super::{Builder, Names};
use crate::error::Origin;
use crate::file::schema::{self, Text};
use crate::light::Outside;
use crate::network::diagnostics::span;
use crate::network::{Species, Term, TransientKind, equation, formula};
use crate::units::Quantity;
use std::collections::BTreeMap;

/// The longest name (species, transient, step, light) a network may use, characters.
pub const MAX_NAME: usize = 200;

impl Builder<'_> {
    pub(super) fn species(&mut self, doc: &schema::NetworkFile, names: &mut BTreeMap<String, Origin>) -> Vec<Species> {
        let mut out = Vec::new();
        for (i, s) in doc.species.iter().enumerate() {
            let at = span(s);
            let e = s.get_ref();
            let field = format!("species[{i}]");
            let Some(name) = self.name(&field, e.name.as_ref(), &at, names) else {
                continue;
            };
            let field = format!("species \"{name}\"");
            let initial = match self.field(e.initial.as_ref()) {
                Some(f) => match self.quantity(&format!("{field}.initial"), &f, Quantity::Concentration) {
                    Some(v) if v < 0.0 => {
                        self.error(
                            &format!("{field}.initial"),
                            &f.origin,
                            format!("\"{}\" is negative", f.value),
                            Some(format!(
                                "a concentration of zero or more: {}",
                                Quantity::Concentration.accepted()
                            )),
                        );
                        0.0
                    }
                    Some(v) => v,
                    None => 0.0,
                },
                None => 0.0,
            };
            let (formula, composition) = match &e.formula {
                Some(f) => match formula::parse(f.get_ref()) {
                    Ok(c) => (Some(f.get_ref().clone()), Some(c)),
                    Err(m) => {
                        self.error(
                            &format!("{field}.formula"),
                            &span(f),
                            m,
                            Some("e.g. \"C6H12O6\", \"Fe(C2O4)3^3-\", \"H+\"".into()),
                        );
                        (None, None)
                    }
                },
                None => (None, None),
            };
            let epsilon = match &e.epsilon {
                Some(v) => self.spectrum(
                    &format!("{field}.epsilon"),
                    v,
                    Some(Quantity::MolarAbsorption),
                    Outside::Zero,
                ),
                None => None,
            };
            self.at.species.push(at.clone());
            self.at.epsilon.push(e.epsilon.as_ref().map_or(at.clone(), span));
            out.push(Species {
                name,
                initial,
                formula,
                composition,
                epsilon,
                product: e.product.as_ref().is_some_and(|b| *b.get_ref()),
            });
        }
        out
    }

    pub(super) fn name(
        &mut self,
        field: &str,
        n: Option<&Text>,
        at: &Origin,
        names: &mut BTreeMap<String, Origin>,
    ) -> Option<String> {
        let Some(n) = n else {
            self.error(&format!("{field}.name"), at, "is missing", None);
            return None;
        };
        let name = n.get_ref().trim().to_string();
        if self.too_long(&format!("{field}.name"), &name, &span(n)) {
            return None;
        }
        let bad = name.is_empty()
            || name.chars().any(|c| c.is_whitespace() || c == '"' || c == ',')
            || name.parse::<f64>().is_ok()
            || name.contains("->")
            || name.contains("<=>");
        if bad {
            self.error(
                &format!("{field}.name"),
                &span(n),
                format!("\"{name}\" cannot be used as a name"),
                Some(
                    "a name has no spaces, commas or arrows and is not a number, e.g. \"Z-azo\", \"S1\", \"Fe3+\""
                        .into(),
                ),
            );
            return None;
        }
        if let Some(prev) = names.get(&name) {
            let line = self.sink.line(prev);
            self.error(
                &format!("{field}.name"),
                &span(n),
                format!("\"{name}\" is already defined (line {line})"),
                Some("species and transients share one set of names".into()),
            );
            return None;
        }
        names.insert(name.clone(), span(n));
        Some(name)
    }

    /// True (and an error recorded) when `name` is longer than [`MAX_NAME`] characters: every
    /// output repeats a name on each row, so a runaway one would fill memory and disk.
    pub(super) fn too_long(&mut self, field: &str, name: &str, at: &Origin) -> bool {
        let n = name.chars().count();
        if n <= MAX_NAME {
            return false;
        }
        let head: String = name.chars().take(24).collect();
        self.error(
            field,
            at,
            format!("\"{head}…\" is {n} characters long; a name may have at most {MAX_NAME}"),
            None,
        );
        true
    }

    pub(super) fn transient_heads(
        &mut self,
        doc: &schema::NetworkFile,
        names: &mut BTreeMap<String, Origin>,
    ) -> Vec<(String, TransientKind)> {
        let mut out = Vec::new();
        for (i, t) in doc.transient.iter().enumerate() {
            let at = span(t);
            let e = t.get_ref();
            let field = format!("transient[{i}]");
            let Some(name) = self.name(&field, e.name.as_ref(), &at, names) else {
                // keep indices aligned with the file
                out.push((String::new(), TransientKind::Other));
                continue;
            };
            let kind = match e.kind.as_ref().map(|k| (k.get_ref().trim(), span(k))) {
                None => TransientKind::Other,
                Some(("excited", _)) => TransientKind::Excited,
                Some(("intersection", _)) => TransientKind::Intersection,
                Some(("hot", _)) => TransientKind::Hot,
                Some(("other", _)) => TransientKind::Other,
                Some((k, o)) => {
                    self.error(
                        &format!("transient \"{name}\".kind"),
                        &o,
                        format!("\"{k}\" is not a kind of transient"),
                        Some("one of \"excited\", \"intersection\", \"hot\", \"other\"".into()),
                    );
                    TransientKind::Other
                }
            };
            out.push((name, kind));
        }
        out
    }

    /// Resolve a species name, reporting an unknown one with the closest name.
    pub(super) fn resolve_species(&mut self, field: &str, at: &Origin, name: &str, names: &Names) -> Option<usize> {
        if let Some(&i) = names.index.get(name) {
            return Some(i);
        }
        if names.transients.iter().any(|t| t.0 == name) {
            self.error(
                field,
                at,
                format!("\"{name}\" is a transient, which is not followed as a concentration"),
                Some("reach transients with a [[photo]] step's `excites` or a channel's `to`".into()),
            );
            return None;
        }
        let all = names
            .species
            .iter()
            .map(|s| s.name.as_str())
            .chain(names.transients.iter().map(|t| t.0.as_str()));
        let help = match crate::network::suggest_name(name, all) {
            Some(c) => format!("did you mean \"{c}\"?"),
            None => "declare it in a [[species]] table".into(),
        };
        self.error(field, at, format!("unknown species \"{name}\""), Some(help));
        None
    }

    pub(super) fn terms(
        &mut self,
        field: &str,
        at: &Origin,
        raw: &[equation::RawTerm],
        names: &Names,
    ) -> Option<Vec<Term>> {
        let mut out = Vec::new();
        let mut ok = true;
        for t in raw {
            match self.resolve_species(field, at, &t.name, names) {
                Some(species) => out.push(Term {
                    species,
                    coefficient: t.coefficient,
                }),
                None => ok = false,
            }
        }
        ok.then_some(out)
    }
}
