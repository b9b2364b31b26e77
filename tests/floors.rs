//! Light and thermal rates below their floors (`model::floor`) are taken as zero, said so by
//! `check` and by each command, and a plan under such light answers "no light (below floor)"
//! with exit 5 (README, *Exit codes*) instead of "nothing left to convert".
//!
//! Every network here is invented. The floors rest on the age of the universe (from memory,
//! about 13.8 Gyr) and the Avogadro constant (CODATA 2018, exact): fewer than one photon in
//! that time, or under 1e-12 of a reactant converted (`model::floor`).

use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::model::floor::{LIGHT_FLOOR, RATE_FLOOR};
use photoledger::network::{Overrides, build as build_network};
use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// Two species under sunlight scaled by `scale`, with a thermal step of rate constant `k` (s⁻¹).
fn network(scale: &str, k: &str) -> String {
    format!(
        "# invented\n[about]\nname = \"faint\"\ninvented = true\n\
         [conditions]\ntemperature = \"298.15 K\"\nvolume = \"3 mL\"\npath_length = \"1 cm\"\nirradiated_area = \"3 cm2\"\n\
         [[light]]\nname = \"sun\"\nkind = \"sun\"\nscale = {scale}\n\
         [[species]]\nname = \"A\"\ninitial = \"50 uM\"\n\
         epsilon = {{ wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[300, 10000], [400, 5000], [500, 0]] }}\n\
         [[species]]\nname = \"B\"\ninitial = \"0 M\"\n\
         [[photo]]\nname = \"A to B\"\nequation = \"A -> B\"\nquantum_yield = 0.5\n\
         [[thermal]]\nname = \"slow\"\nequation = \"B -> A\"\nrate = {{ k = \"{k}\" }}\n"
    )
}

fn model(text: &str) -> Model {
    let l = parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    Model::compile(&build_network(&l, &Overrides::none()).expect("builds"))
}

fn scratch(tag: &str, text: &str) -> PathBuf {
    let dir = std::env::temp_dir().join(format!("photoledger-floors-{}-{tag}", std::process::id()));
    let _ = std::fs::remove_dir_all(&dir);
    std::fs::create_dir_all(&dir).unwrap();
    std::fs::write(dir.join("net.toml"), text).unwrap();
    dir
}

fn run(dir: &Path, args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .current_dir(dir)
        .args(args)
        .output()
        .unwrap()
}

#[test]
fn light_and_rates_under_their_floors_compile_as_zero() {
    let m = model(&network("1e-300", "1e-40 /s"));
    assert!(m.bins.iter().all(|b| b.flux == 0.0), "a 1e-300 sun is dark");
    assert_eq!(m.floored.sources, vec![0]);
    assert_eq!(m.reactions[0].k, 0.0);
    assert_eq!(m.floored.reactions, vec![0]);
    // No bin is left subnormal at any scale: each is zero or at least the floor.
    for scale in ["1e-30", "1e-20", "1"] {
        let m = model(&network(scale, "1e-3 /s"));
        assert!(m.total_flux() > 0.0, "scale {scale} is light");
        assert!(
            m.bins.iter().all(|b| b.flux == 0.0 || b.flux >= LIGHT_FLOOR),
            "scale {scale}"
        );
        assert!(m.floored.sources.is_empty() && m.floored.reactions.is_empty());
        assert_eq!(m.reactions[0].k, 1e-3);
    }
    // A rate just above the floor stays.
    let m = model(&network("1", &format!("{:e} /s", 10.0 * RATE_FLOOR)));
    assert_eq!(m.reactions[0].k, 10.0 * RATE_FLOOR);
}

#[test]
fn check_and_simulate_say_what_they_took_as_zero() {
    let dir = scratch("say", &network("1e-300", "1e-40 /s"));
    let out = run(&dir, &["check", "net.toml"]);
    let err = String::from_utf8_lossy(&out.stderr);
    assert_eq!(out.status.code(), Some(0), "{err}");
    assert!(
        err.contains("light \"sun\"") && err.contains("fewer than one photon in the age of the universe"),
        "{err}"
    );
    assert!(err.contains("taken as no light"), "{err}");
    assert!(
        err.contains("thermal \"slow\"") && err.contains("taken as zero"),
        "{err}"
    );
    let out = run(&dir, &["simulate", "net.toml", "--until", "1 h", "--out", "run"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(0), "{text}");
    assert!(text.contains("no light: below the light floor"), "{text}");
    assert!(
        text.lines()
            .any(|l| l.starts_with("floors") && l.contains("\"sun\"") && l.contains("\"slow\"")),
        "{text}"
    );
    let json = std::fs::read_to_string(dir.join("run/summary.json")).unwrap();
    assert!(json.contains("\"floored\""), "{json}");
}

#[test]
fn a_plan_under_light_below_the_floor_is_not_reachable_for_want_of_light() {
    let dir = scratch("plan", &network("1e-300", "1e-3 /s"));
    let out = run(&dir, &["plan", "net.toml", "--target", "B > 50 %", "--out", "plan"]);
    let text = String::from_utf8_lossy(&out.stdout);
    assert_eq!(out.status.code(), Some(5), "{text}");
    assert!(text.contains("NOT REACHABLE: no light (below floor)"), "{text}");
    assert!(!text.contains("nothing left to convert"), "{text}");
}
