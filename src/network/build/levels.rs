//! `[[level]]` tables: labelled sets of computed values, one per method or level of theory.
//! Each set's keys are read against the built network (`params::Key::parse`, the `--set`
//! spellings) and its values against each key's quantity; the set is then tried on the network
//! (`Level::apply`), so a value out of range is reported at its line when the file is read.
//! Every problem names the file, line, field and what is accepted.

use super::super::diagnostics::span;
use super::super::levels::{Level, LevelCounts};
use super::super::params::{self, Key};
use super::Builder;
use crate::error::Origin;
use crate::file::levels::{TRAJECTORIES, UNFINISHED};
use crate::file::schema::NetworkFile;
use crate::network::Network;
use toml::Spanned;

const SET_HELP: &str = "set = { KEY = VALUE, ... } with the keys --set takes (README, Overrides), \
e.g. \"transient.S1.channels[0].barrier\" = \"3 kcal/mol\", and transient.NAME.trajectories = [41, 12] \
for a transient the file gives as trajectory counts";

impl Builder<'_> {
    /// Every `[[level]]` of `doc`, read against `net`; problems go to the sink.
    pub(super) fn levels(&mut self, doc: &NetworkFile, net: &Network) -> Vec<Level> {
        let mut out: Vec<Level> = Vec::new();
        // Every label met, with its line, whether or not its set was sound.
        let mut seen: Vec<(String, usize)> = Vec::new();
        for (i, l) in doc.level.iter().enumerate() {
            let at = span(l);
            let e = l.get_ref();
            let Some(label) = &e.label else {
                self.error(
                    &format!("level[{i}]"),
                    &at,
                    "a set of values needs a label",
                    Some("label = \"your name for the method\", unique in the file".into()),
                );
                continue;
            };
            let name = label.get_ref().trim().to_string();
            let field = format!("level \"{name}\"");
            if name.is_empty() {
                self.error(
                    &format!("level[{i}].label"),
                    &span(label),
                    "the label is empty",
                    Some("label = \"your name for the method\", unique in the file".into()),
                );
                continue;
            }
            let line = self.sink.line(&span(label));
            if let Some((_, first)) = seen.iter().find(|o| o.0 == name) {
                self.error(
                    &format!("{field}.label"),
                    &span(label),
                    format!("the label \"{name}\" is used twice (first at line {first})"),
                    Some("give each set its own label".into()),
                );
                continue;
            }
            seen.push((name.clone(), line));
            let Some(set) = &e.set else {
                self.error(&field, &at, "the set gives no values", Some(SET_HELP.into()));
                continue;
            };
            let mut entries: Vec<(&String, &Spanned<toml::Value>)> = set.get_ref().iter().collect();
            if entries.is_empty() {
                self.error(
                    &format!("{field}.set"),
                    &span(set),
                    "the set gives no values",
                    Some(SET_HELP.into()),
                );
                continue;
            }
            entries.sort_by_key(|(_, v)| v.span().start);
            let mut level = Level {
                label: name.clone(),
                note: e
                    .note
                    .as_ref()
                    .map_or(String::new(), |n| n.get_ref().trim().to_string()),
                line,
                values: Vec::new(),
                counts: Vec::new(),
            };
            let mut ok = true;
            let mut unfinished: Vec<(usize, u64, Origin)> = Vec::new();
            for (key, value) in entries {
                let kf = format!("{field}.set.\"{key}\"");
                ok &= self.level_entry(net, &kf, key, value, &mut level, &mut unfinished);
            }
            for (t, u, at) in unfinished {
                match level.counts.iter_mut().find(|c| c.transient == t) {
                    Some(c) => c.unfinished = Some(u),
                    None => {
                        let tn = &net.transients[t].name;
                        self.error(
                            &format!("{field}.set.\"transient.{tn}{UNFINISHED}\""),
                            &at,
                            "unfinished runs without this set's counts",
                            Some(format!("give transient.{tn}{TRAJECTORIES} = [...] in the same set")),
                        );
                        ok = false;
                    }
                }
            }
            if !ok {
                continue;
            }
            if let Err(m) = level.apply(net) {
                self.error(
                    &format!("{field}.set"),
                    &span(set),
                    format!("the network cannot take this set: {m}"),
                    Some("values in their ranges: shares and quantum yields in [0, 1] with sums at most 1, rates and concentrations above zero".into()),
                );
                continue;
            }
            out.push(level);
        }
        out
    }

    /// One `KEY = VALUE` of a set; false after an error.
    fn level_entry(
        &mut self,
        net: &Network,
        field: &str,
        key: &str,
        value: &Spanned<toml::Value>,
        level: &mut Level,
        unfinished: &mut Vec<(usize, u64, Origin)>,
    ) -> bool {
        let at = span(value);
        let counted = |suffix: &str| {
            key.strip_prefix("transient.")
                .and_then(|r| r.strip_suffix(suffix))
                .map(|name| (name, net.transient_index(name)))
        };
        if let Some((name, t)) = counted(TRAJECTORIES).or_else(|| counted(UNFINISHED)) {
            let Some(t) = t else {
                let names: Vec<&str> = net.transients.iter().map(|t| t.name.as_str()).collect();
                self.error(
                    field,
                    &at,
                    format!("no transient called \"{name}\""),
                    Some(format!("transients here: {}", names.join(", "))),
                );
                return false;
            };
            let Some(base) = net.evidence.counts_of(t) else {
                self.error(
                    field,
                    &at,
                    format!("the file does not give \"{name}\"'s branching as trajectory counts"),
                    Some(format!(
                        "give its channels trajectories = N in the [[transient]] table, or set its shares with transient.{name}.channels[J].fraction"
                    )),
                );
                return false;
            };
            let channels = base.runs.len();
            if key.ends_with(UNFINISHED) {
                return match whole(value.get_ref()) {
                    Some(u) => {
                        unfinished.push((t, u, at));
                        true
                    }
                    None => {
                        self.error(
                            field,
                            &at,
                            format!("{} is not a whole number ≥ 0", value.get_ref()),
                            Some("the runs that reached no channel, e.g. 4".into()),
                        );
                        false
                    }
                };
            }
            let runs: Option<Vec<u64>> = match value.get_ref() {
                toml::Value::Array(a) => a.iter().map(whole).collect(),
                _ => None,
            };
            return match runs {
                Some(runs) if runs.len() == channels => {
                    level.counts.push(LevelCounts {
                        transient: t,
                        runs,
                        unfinished: None,
                    });
                    true
                }
                Some(runs) => {
                    self.error(
                        field,
                        &at,
                        format!("{} counts for {channels} channels", runs.len()),
                        Some(format!(
                            "one whole number per channel of \"{name}\", in channel order (0 for a channel no run took)"
                        )),
                    );
                    false
                }
                None => {
                    self.error(
                        field,
                        &at,
                        format!("{} is not a list of whole numbers ≥ 0", value.get_ref()),
                        Some(format!(
                            "one count per channel of \"{name}\", in channel order, e.g. [41, 12]"
                        )),
                    );
                    false
                }
            };
        }
        let k = match Key::parse(net, key) {
            Ok(k) => k,
            Err(m) => {
                self.error(field, &at, m, Some(SET_HELP.into()));
                return false;
            }
        };
        if let Key::Fraction { transient, .. } = k
            && net.evidence.counts_of(transient).is_some()
        {
            let name = &net.transients[transient].name;
            self.error(
                field,
                &at,
                "this channel's share comes from trajectory counts, so it has no fraction to set",
                Some(format!(
                    "give this set's counts: transient.{name}{TRAJECTORIES} = [...], one per channel"
                )),
            );
            return false;
        }
        if let Some((other, _)) = level.values.iter().find(|(o, _)| o.target() == k.target()) {
            self.error(
                field,
                &at,
                format!("{key} and {} write the same value in one set", other.spell(net)),
                Some("give one of them".into()),
            );
            return false;
        }
        let p = params::get(net, k);
        let v = match (value.get_ref(), p.quantity) {
            (toml::Value::String(s), _) => p.parse_value(s),
            (toml::Value::Float(x), None) => Ok(*x),
            (toml::Value::Integer(x), None) => Ok(*x as f64),
            (_, Some(q)) => Err(format!("{} has no unit; expected {}", value.get_ref(), q.accepted())),
            (other, None) => Err(format!("{other} is not a number")),
        };
        match v {
            Ok(v) => {
                level.values.push((k, v));
                true
            }
            Err(m) => {
                let help = p
                    .quantity
                    .map_or("a plain number, or a percentage such as \"45 %\"".to_string(), |q| {
                        format!("expected {}", q.accepted())
                    });
                self.error(field, &at, m, Some(help));
                false
            }
        }
    }
}

/// A whole number ≥ 0 from the file (an integer, or a float with no fraction).
fn whole(v: &toml::Value) -> Option<u64> {
    match v {
        toml::Value::Integer(n) if *n >= 0 => Some(*n as u64),
        toml::Value::Float(x) if *x >= 0.0 && x.fract() == 0.0 && *x < 1e15 => Some(*x as u64),
        _ => None,
    }
}
