//! A typed write (and `--set`, which takes the same path) equals the network built from the file
//! edited at that key, for every key of every bundled network; refused values leave the network
//! unchanged.

use super::*;
use crate::network::{Overrides, build};
use std::path::PathBuf;

/// The parts of a network a parameter can move, as exact text (Debug prints the shortest
/// representation that reads back to the same f64).
fn state(net: &Network) -> String {
    format!(
        "{:?}\n{:?}\n{:?}\n{:?}\n{:?}\n{:?}",
        net.conditions, net.lights, net.species, net.thermal, net.photo, net.transients
    )
}

fn bundled() -> Vec<PathBuf> {
    let dir = PathBuf::from(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut v: Vec<PathBuf> = std::fs::read_dir(dir)
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    v.sort();
    assert!(v.len() >= 3, "{v:?}");
    v
}

/// A value to move `p` to: fractions towards the middle, energies by 2 kJ/mol, others by 10 %.
fn moved(p: &Parameter) -> f64 {
    match p.range {
        Range::Fraction => 0.5 * p.value + 0.1,
        Range::Real => p.value + 2000.0,
        Range::Positive => p.value * 1.1,
    }
}

#[test]
fn a_typed_write_equals_the_file_edited_at_that_key_for_every_key_of_every_bundled_network() {
    use crate::file::write::{Written, put_values};
    let mut checked = 0;
    for path in bundled() {
        let loaded = crate::file::load(&path).unwrap();
        let base = build(&loaded, &Overrides::none()).unwrap();
        for key in addresses(&base) {
            let p = get(&base, key);
            // The value as the file will hold it (7 significant figures), read back.
            let written = match p.quantity {
                Some(_) => Written::Quantity {
                    value: moved(&p),
                    unit: p.unit.to_string(),
                },
                None => Written::Number(moved(&p)),
            };
            let v = match &written {
                Written::Quantity { value, unit } => p
                    .parse_value(&format!("{} {unit}", crate::units::sig(*value, 7)))
                    .unwrap(),
                Written::Number(x) => *x,
            };
            let text = put_values(&loaded.text, &[(p.key.clone(), written)], &[])
                .unwrap_or_else(|e| panic!("{}: {}: {e}", path.display(), p.key));
            let edited = crate::file::parse_text(&path, text).unwrap();
            let by_file = match build(&edited, &Overrides::none()) {
                Ok(n) => n,
                // A value the file's checks refuse must be refused by the typed write too.
                Err(_) => {
                    let mut typed = base.clone();
                    assert!(
                        set(&mut typed, key, v).is_err() || p.range == Range::Fraction,
                        "{}: {}={v} is refused in the file but accepted typed",
                        path.display(),
                        p.key
                    );
                    continue;
                }
            };
            let mut typed = base.clone();
            set(&mut typed, key, v).unwrap_or_else(|m| panic!("{}: {m}", path.display()));
            assert_eq!(
                state(&typed),
                state(&by_file),
                "{}: {}={v}: the typed write differs from the edited file",
                path.display(),
                p.key
            );
            // `--set` takes the same path as the typed write.
            let given = format!("{}={}", p.key, p.text(v));
            let by_set = build(&loaded, &Overrides::parse(&[given.as_str()]).unwrap()).unwrap();
            assert_eq!(state(&by_set), state(&typed), "{given}");
            assert_eq!(Key::parse(&base, &p.key), Ok(key), "{}", p.key);
            checked += 1;
        }
    }
    assert!(checked > 60, "only {checked} keys checked");
}

#[test]
fn temperature_moves_every_rate_and_refused_values_change_nothing() {
    let path = bundled().into_iter().find(|p| p.ends_with("photoswitch.toml")).unwrap();
    let loaded = crate::file::load(&path).unwrap();
    let base = build(&loaded, &Overrides::none()).unwrap();
    let t = Key::parse(&base, "conditions.temperature").unwrap();
    let mut warm = base.clone();
    set(&mut warm, t, 310.0).unwrap();
    let by_text = build(&loaded, &Overrides::none().with("conditions.temperature", "310 K")).unwrap();
    assert_eq!(state(&warm), state(&by_text));
    assert!(warm.thermal.iter().zip(&base.thermal).all(|(a, b)| a.k != b.k));
    for (key, bad) in [
        ("conditions.temperature", -1.0),
        ("conditions.temperature", f64::NAN),
        ("conditions.volume", 0.0),
    ] {
        let mut n = base.clone();
        let k = Key::parse(&base, key).unwrap();
        let m = set(&mut n, k, bad).unwrap_err();
        assert!(m.starts_with(key), "{m}");
        assert_eq!(state(&n), state(&base), "{key}={bad} left a change");
    }
    // A quantum yield above 1, and a barrier so low that k overflows.
    for key in keys(&base) {
        let k = Key::parse(&base, &key).unwrap();
        let p = get(&base, k);
        let bad = match p.range {
            Range::Fraction => 1.5,
            Range::Real if key.ends_with(".barrier") => -1e9,
            _ => continue,
        };
        let mut n = base.clone();
        assert!(set(&mut n, k, bad).is_err(), "{key}={bad} accepted");
        assert_eq!(state(&n), state(&base), "{key}={bad} left a change");
    }
}

#[test]
fn keys_spell_back_to_themselves_and_every_read_is_finite() {
    for path in bundled() {
        let net = build(&crate::file::load(&path).unwrap(), &Overrides::none()).unwrap();
        for key in addresses(&net) {
            let p = get(&net, key);
            assert_eq!(Key::parse(&net, &p.key), Ok(key));
            assert!(p.value.is_finite(), "{}: {}", path.display(), p.key);
            assert_eq!(p.unit, p.quantity.map_or("", units::internal_spelling));
        }
    }
}

/// `light."blue LED".power` (a TOML dotted key's quoting) names the same parameter as
/// `light.blue LED.power`; the quotes used to become part of the name.
#[test]
fn a_quoted_name_in_a_key_is_the_same_key() {
    let quote = |spelled: &str| -> Option<String> {
        let (kind, rest) = spelled.split_once('.')?;
        let (name, tail) = match kind {
            "conditions" => return None,
            "transient" => {
                let (n, t) = rest.rsplit_once(".channels[")?;
                (n.to_string(), format!(".channels[{t}"))
            }
            _ => {
                let (head, field) = rest.rsplit_once('.')?;
                match head.strip_suffix(".reverse") {
                    Some(n) if kind == "thermal" => (n.to_string(), format!(".reverse.{field}")),
                    _ => (head.to_string(), format!(".{field}")),
                }
            }
        };
        Some(format!("{kind}.\"{name}\"{tail}"))
    };
    let mut tried = 0;
    for path in bundled() {
        let net = build(&crate::file::load(&path).unwrap(), &Overrides::none()).unwrap();
        for key in addresses(&net) {
            let p = get(&net, key);
            let Some(quoted) = quote(&p.key) else { continue };
            assert_eq!(Key::parse(&net, &quoted), Ok(key), "{quoted}");
            tried += 1;
        }
    }
    assert!(tried > 20, "{tried}");
}
