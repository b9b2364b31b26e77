//! Writing network-file TOML from typed values: the only place besides [`schema`](super::schema)
//! that knows the layout.
//!
//! [`put_values`] puts values into an existing network file at their `--set` keys, keeping
//! comments and layout (`toml_edit`): `fit` writes its fitted network this way. [`light_block`]
//! writes a `[[light]]` block that pastes into a network file: the actinometer's result. Callers
//! pass numbers with the unit they are written in (chosen by `units::display`); nothing here
//! reads them back.

use crate::error::{Error, Result};
use crate::light::LightKind;
use crate::units::sig;
use std::fmt::Write;
use toml_edit::{DocumentMut, InlineTable, Item, Value, value};

/// A value to write at a key.
#[derive(Debug, Clone, PartialEq)]
pub enum Written {
    /// A plain number (a fraction, a quantum yield, a transmission coefficient), written as a
    /// TOML number.
    Number(f64),
    /// A quantity: `value` in `unit` (empty for a dimensionless value written as text), written
    /// as the string "VALUE UNIT" with 7 significant figures.
    Quantity {
        /// The number in `unit`.
        value: f64,
        /// The unit's spelling, as `units::display` gives it.
        unit: String,
    },
}

impl Written {
    fn toml(&self) -> Value {
        match self {
            Written::Number(x) => Value::from(*x),
            Written::Quantity { value, unit } if unit.is_empty() => Value::from(sig(*value, 7)),
            Written::Quantity { value, unit } => Value::from(format!("{} {unit}", sig(*value, 7))),
        }
    }
}

/// The network file `text` with each `(key, value)` put in at its `--set` key, comments and
/// layout kept, and `comment` written above it (each line as a TOML comment).
///
/// Each key is found as the `--set` machinery reads it: `conditions.FIELD`,
/// `[[species]]`/`[[light]]`/`[[photo]]`/`[[thermal]]`/`[[transient]]` entries by name (an unnamed
/// thermal or photo step by its equation, a long-form photo step by "ABSORBER + hν -> TRANSIENT"),
/// `thermal.NAME[.reverse].FIELD` in the `rate` (or `reverse`) table and
/// `transient.NAME.channels[J].FIELD` in that channel. A `k` or `barrier` replaces the whole
/// rate table (a barrier keeps `transmission`); a light's `power` replaces its `photon_flux` and
/// back. A key that cannot be located is a usage error.
pub fn put_values(text: &str, values: &[(String, Written)], comment: &[String]) -> Result<String> {
    let mut doc: DocumentMut = text
        .parse()
        .map_err(|e| Error::Usage(format!("the network file cannot be edited: {e}")))?;
    for (key, v) in values {
        if !put(&mut doc, key, v.toml()) {
            return Err(Error::Usage(format!(
                "{key}: cannot be located in the network file to write it back"
            )));
        }
    }
    let mut head = String::new();
    for line in comment {
        let _ = writeln!(head, "# {line}");
    }
    Ok(format!("{head}{doc}"))
}

/// Put `new` at `key`; false when the key cannot be located.
fn put(doc: &mut DocumentMut, key: &str, new: Value) -> bool {
    if let Some(field) = key.strip_prefix("conditions.") {
        return doc
            .get_mut("conditions")
            .and_then(|c| c.as_table_like_mut())
            .map(|c| c.insert(field, value(new)))
            .is_some();
    }
    let Some((section, rest)) = key.split_once('.') else {
        return false;
    };
    match section {
        "species" | "light" | "photo" => {
            let Some((name, field)) = rest.rsplit_once('.') else {
                return false;
            };
            let Some(i) = find(doc, section, name) else {
                return false;
            };
            let Some(t) = doc[section].as_array_of_tables_mut().and_then(|a| a.get_mut(i)) else {
                return false;
            };
            // A light's intensity is given one way: a power replaces a photon flux and back.
            match (section, field) {
                ("light", "power") => drop(t.remove("photon_flux")),
                ("light", "photon_flux") => drop(t.remove("power")),
                _ => {}
            }
            t.insert(field, value(new));
            true
        }
        "thermal" => {
            let Some((head, field)) = rest.rsplit_once('.') else {
                return false;
            };
            let (name, which) = match head.strip_suffix(".reverse") {
                Some(n) if find(doc, "thermal", n).is_some() => (n, "reverse"),
                _ => (head, "rate"),
            };
            let Some(i) = find(doc, "thermal", name) else {
                return false;
            };
            doc["thermal"]
                .as_array_of_tables_mut()
                .and_then(|a| a.get_mut(i))
                .and_then(|t| t.get_mut(which))
                .is_some_and(|item| set_rate(item, field, new))
        }
        "transient" => put_channel(doc, rest, new),
        _ => false,
    }
}

/// `NAME.channels[J].FIELD` of a transient: a fraction, or a field of the channel's rate.
fn put_channel(doc: &mut DocumentMut, rest: &str, new: Value) -> bool {
    let parsed = rest.rsplit_once(".channels[").and_then(|(name, tail)| {
        let (j, field) = tail.split_once("].")?;
        Some((name, j.parse::<usize>().ok()?, field))
    });
    let Some((name, j, field)) = parsed else {
        return false;
    };
    let Some(i) = find(doc, "transient", name) else {
        return false;
    };
    let ch = doc["transient"]
        .as_array_of_tables_mut()
        .and_then(|a| a.get_mut(i))
        .and_then(|t| t.get_mut("channels"))
        .and_then(|c| c.as_array_mut())
        .and_then(|a| a.get_mut(j))
        .and_then(|c| c.as_inline_table_mut());
    match ch {
        Some(c) if field == "fraction" => {
            c.insert("fraction", new);
            true
        }
        Some(c) => match c.get_mut("rate") {
            Some(r) => {
                let mut item = Item::Value(r.clone());
                let ok = set_rate(&mut item, field, new);
                if let Item::Value(v) = item {
                    *r = v;
                }
                ok
            }
            None => false,
        },
        None => false,
    }
}

/// The index of the entry of the array of tables `array` called `name` (by `name`, else an
/// unnamed step by its equation or its long form).
fn find(doc: &DocumentMut, array: &str, name: &str) -> Option<usize> {
    let arr = doc.get(array)?.as_array_of_tables()?;
    arr.iter().position(|t| {
        let text = |k: &str| t.get(k).and_then(|x| x.as_str()).map(str::trim);
        let n = text("name");
        let eq = text("equation");
        let long = match (text("absorber"), text("excites")) {
            (Some(a), Some(x)) => Some(format!("{a} + hν -> {x}")),
            _ => None,
        };
        n == Some(name)
            || (n.is_none()
                && (eq == Some(name)
                    || eq.map(|e| format!("{e} (hν)")).as_deref() == Some(name)
                    || long.as_deref() == Some(name)))
    })
}

/// Put `field` = `new` into the rate table `item` (an inline table or a table).
fn set_rate(item: &mut Item, field: &str, new: Value) -> bool {
    let keep_t = item.get("transmission").cloned();
    if field == "k" || field == "barrier" {
        let mut t = InlineTable::new();
        t.insert(field, new);
        if field == "barrier"
            && let Some(Item::Value(kv)) = keep_t
        {
            t.insert("transmission", kv);
        }
        *item = Item::Value(Value::InlineTable(t));
        return true;
    }
    match item {
        Item::Value(Value::InlineTable(t)) => {
            t.insert(field, new);
            true
        }
        Item::Table(t) => {
            t.insert(field, value(new));
            true
        }
        _ => false,
    }
}

/// A `[[light]]` block from typed fields: what `light_block` writes.
#[derive(Debug, Clone, PartialEq)]
pub struct LightBlock<'a> {
    /// Comment lines above the block (without the `#`).
    pub comments: Vec<String>,
    /// The light's name.
    pub name: &'a str,
    /// Its kind and shape; a sunlight's `scale` is written as is.
    pub kind: &'a LightKind,
    /// The `from`/`to` window, m, written when it is finite and above zero.
    pub window: Option<(f64, f64)>,
    /// The whole source's photon flux, einstein/s (not written for sunlight).
    pub photon_flux: f64,
}

/// A `[[light]]` block that pastes into a network file.
pub fn light_block(b: &LightBlock) -> String {
    let mut o = String::new();
    for c in &b.comments {
        let _ = writeln!(o, "# {c}");
    }
    let _ = writeln!(o, "[[light]]");
    let _ = writeln!(o, "name = {}", toml_string(b.name));
    let nm = |m: f64| format!("\"{} nm\"", sig(m * 1e9, 6));
    match b.kind {
        LightKind::Line { wavelength } => {
            let _ = writeln!(o, "kind = \"line\"\nwavelength = {}", nm(*wavelength));
        }
        LightKind::Band { centre, fwhm } => {
            let _ = writeln!(o, "kind = \"band\"\ncentre = {}\nfwhm = {}", nm(*centre), nm(*fwhm));
        }
        LightKind::Lamp { file, .. } => {
            let _ = writeln!(
                o,
                "kind = \"lamp\"\nfile = {}   # as named in the original network file",
                toml_string(file)
            );
        }
        LightKind::Sun { scale, .. } => {
            // Sunlight has no photon flux key: the flux is expressed as its scale.
            let _ = writeln!(o, "kind = \"sun\"\nscale = {}", sig(*scale, 8));
        }
    }
    if !matches!(b.kind, LightKind::Sun { .. }) {
        let _ = writeln!(o, "photon_flux = \"{:.6e} einstein/s\"", b.photon_flux);
    }
    if let Some((a, z)) = b.window
        && a > 0.0
        && z.is_finite()
    {
        let _ = writeln!(o, "from = {}\nto = {}", nm(a), nm(z));
    }
    o
}

/// A TOML basic string.
fn toml_string(s: &str) -> String {
    format!("\"{}\"", s.replace('\\', "\\\\").replace('"', "\\\""))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_light_block_reads_back_as_the_same_light() {
        let kind = LightKind::Band {
            centre: 365e-9,
            fwhm: 12e-9,
        };
        let text = light_block(&LightBlock {
            comments: vec!["from a test".into()],
            name: "LED \"A\"",
            kind: &kind,
            window: Some((350e-9, 380e-9)),
            photon_flux: 2.5e-7,
        });
        assert!(text.starts_with("# from a test\n[[light]]\n"), "{text}");
        let doc: crate::file::NetworkFile = toml::from_str(&text).unwrap();
        let l = doc.light[0].get_ref();
        assert_eq!(l.name.as_ref().unwrap().get_ref(), "LED \"A\"");
        assert_eq!(l.centre.as_ref().unwrap().get_ref(), "365 nm");
        assert_eq!(l.photon_flux.as_ref().unwrap().get_ref(), "2.500000e-7 einstein/s");
        assert_eq!(l.to.as_ref().unwrap().get_ref(), "380 nm");
    }

    #[test]
    fn values_go_to_their_keys_and_an_unknown_key_is_an_error() {
        let text = "# kept\n[conditions]\ntemperature = \"298 K\"\n\n[[thermal]]\nequation = \"A -> B\"\n\
                    rate = { barrier = \"20 kcal/mol\", transmission = 0.5 }\n";
        let out = put_values(
            text,
            &[
                (
                    "conditions.temperature".into(),
                    Written::Quantity {
                        value: 310.0,
                        unit: "K".into(),
                    },
                ),
                (
                    "thermal.A -> B.barrier".into(),
                    Written::Quantity {
                        value: 21.5,
                        unit: "kcal/mol".into(),
                    },
                ),
            ],
            &["head".into()],
        )
        .unwrap();
        assert!(out.starts_with("# head\n# kept\n"), "{out}");
        assert!(out.contains("temperature = \"310 K\""), "{out}");
        assert!(
            out.contains("rate = { barrier = \"21.5 kcal/mol\", transmission = 0.5 }"),
            "{out}"
        );
        assert!(put_values(text, &[("thermal.C -> D.k".into(), Written::Number(1.0))], &[]).is_err());
    }
}
