//! Why a `--set` key matched nothing: no such light, species or step, or a field that does not
//! apply to how the value is given; each with the names this network has.

use crate::error::Diagnostic;
use crate::file::Loaded;
use crate::file::schema::Text;
use crate::network::overrides::ACCEPTED;
use crate::network::suggest_name;

/// Explain why an override key matched nothing.
pub(super) fn unused_override(loaded: &Loaded, key: &str) -> Diagnostic {
    let field = format!("--set {key}");
    let parts: Vec<&str> = key.splitn(3, '.').collect();
    let generic = || {
        Diagnostic::error(&field, "no such field in this network")
            .with_help(format!("keys that can be set: {ACCEPTED}"))
    };
    match parts.as_slice() {
        ["light", name, f] => {
            let lights: Vec<(String, String)> = loaded
                .doc
                .light
                .iter()
                .enumerate()
                .map(|(i, l)| {
                    let l = l.get_ref();
                    (
                        l.name
                            .as_ref()
                            .map_or(format!("light{}", i + 1), |n| n.get_ref().trim().to_string()),
                        l.kind
                            .as_ref()
                            .map_or(String::new(), |k| k.get_ref().trim().to_string()),
                    )
                })
                .collect();
            match lights.iter().find(|l| l.0 == *name) {
                Some((_, kind)) => Diagnostic::error(
                    &field,
                    format!("`{f}` does not apply to the light \"{name}\" of kind \"{kind}\""),
                )
                .with_help(match kind.as_str() {
                    "line" => "a line takes wavelength, power or photon_flux",
                    "band" => "a band takes centre, fwhm, power or photon_flux",
                    "lamp" => "a lamp takes power or photon_flux",
                    _ => "sunlight takes scale (and conditions.irradiated_area)",
                }),
                None => {
                    let hint = suggest_name(name, lights.iter().map(|l| l.0.as_str()))
                        .map_or("no light has that name".to_string(), |c| {
                            format!("did you mean light.{c}.{f}?")
                        });
                    Diagnostic::error(&field, format!("no light called \"{name}\"")).with_help(hint)
                }
            }
        }
        ["species", name, _] => {
            let names: Vec<String> = loaded
                .doc
                .species
                .iter()
                .filter_map(|s| s.get_ref().name.as_ref().map(|n| n.get_ref().trim().to_string()))
                .collect();
            let hint = suggest_name(name, names.iter().map(|s| s.as_str()))
                .map_or(format!("keys that can be set: {ACCEPTED}"), |c| {
                    format!("did you mean species.{c}.initial?")
                });
            Diagnostic::error(&field, format!("no species called \"{name}\", or no such field")).with_help(hint)
        }
        ["transient", ..] if counted_channel(loaded, key) => Diagnostic::error(
            &field,
            "this channel's share comes from trajectory counts, so it has no fraction to set",
        )
        .with_help("change the channels' `trajectories` in the file; `uncertainty` draws the shares from the counts"),
        [section @ ("photo" | "thermal" | "transient"), ..] => {
            let doc = &loaded.doc;
            let text = |t: &Option<Text>| t.as_ref().map(|t| t.get_ref().trim().to_string());
            let names: Vec<String> = match *section {
                "photo" => doc
                    .photo
                    .iter()
                    .filter_map(|s| {
                        let s = s.get_ref();
                        text(&s.name).or_else(|| text(&s.equation).map(|e| format!("{e} (hν)")))
                    })
                    .collect(),
                "thermal" => doc
                    .thermal
                    .iter()
                    .filter_map(|s| text(&s.get_ref().name).or_else(|| text(&s.get_ref().equation)))
                    .collect(),
                _ => doc.transient.iter().filter_map(|s| text(&s.get_ref().name)).collect(),
            };
            let names = if names.is_empty() {
                format!("this network has no {section} entries")
            } else {
                format!("{section} names here: {}", names.join(", "))
            };
            Diagnostic::error(
                &field,
                "no such field in this network, or it does not apply to how the value is given",
            )
            .with_help(format!("{names}; keys that can be set: {ACCEPTED}"))
        }
        _ => generic(),
    }
}

/// True when `key` is `transient.NAME.channels[J].FIELD` for a channel given as a trajectory count.
fn counted_channel(loaded: &Loaded, key: &str) -> bool {
    let Some((name, tail)) = key.strip_prefix("transient.").and_then(|r| r.rsplit_once(".channels[")) else {
        return false;
    };
    let Some(j) = tail.split_once(']').and_then(|(j, _)| j.parse::<usize>().ok()) else {
        return false;
    };
    loaded.doc.transient.iter().any(|t| {
        let t = t.get_ref();
        t.name.as_ref().is_some_and(|n| n.get_ref().trim() == name)
            && t.channels.get(j).is_some_and(|c| c.get_ref().trajectories.is_some())
    })
}
