//! Rates and yields that a network file derives from frequencies: a thermal step by
//! transition-state theory against the partition-function formula written out here, hot
//! ground-state channels against the hot-molecule engine, yields that add up to one, the bundled
//! networks, bad blocks, and `barrier --channel` through the binary.

use photoledger::file::parse_text;
use photoledger::model::Model;
use photoledger::network::{Branching, Network, Overrides, build};
use photoledger::rates::hot::{HotReaction, rrkm_yields};
use photoledger::rates::partition::Modes;
use photoledger::units::constants::{AVOGADRO, BOLTZMANN, CALORIE, PLANCK, SPEED_OF_LIGHT};
use proptest::prelude::*;
use std::path::{Path, PathBuf};
use std::process::Command;

fn scratch(tag: &str) -> PathBuf {
    let d = std::env::temp_dir().join(format!("photoledger-barrier-net-{}-{tag}", std::process::id()));
    let _ = std::fs::remove_dir_all(&d);
    std::fs::create_dir_all(&d).unwrap();
    d
}

/// Build the network `text` as if it were `dir/net.toml` (frequency files resolve there).
fn net_in(dir: &Path, text: &str) -> Result<Network, String> {
    let loaded = parse_text(&dir.join("net.toml"), text.to_string()).map_err(|e| e.to_string())?;
    build(&loaded, &Overrides::none()).map_err(|e| e.to_string())
}

/// The default grain of the state counts, "10 cm-1", read as the library reads it (a frequency
/// on a half-grain boundary rounds by the last bit of the grain, so use the very same number).
fn default_grain() -> f64 {
    photoledger::units::parse("10 cm-1", photoledger::units::Quantity::MolarEnergy).unwrap()
}

/// ν̃ cm⁻¹ as J/mol read as the library reads a frequency (state counts round frequencies to
/// whole grains, and a frequency on a half-grain boundary rounds by its last bit).
fn cm_read(v: f64) -> f64 {
    photoledger::units::parse(&format!("{v} cm-1"), photoledger::units::Quantity::MolarEnergy).unwrap()
}

fn modes(v: &[f64]) -> Modes {
    Modes {
        vibrations: v.iter().map(|x| cm_read(*x)).collect(),
        ..Default::default()
    }
}

const BASE: &str = r#"
[conditions]
temperature = "310 K"
volume = "1 mL"
path_length = "1 cm"
[[light]]
kind = "line"
wavelength = "365 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = { at = "365 nm", value = "2000 L/(mol cm)" }
[[species]]
name = "B"
[[species]]
name = "C"
"#;

const REACTANT: [f64; 7] = [3010.0, 1650.0, 1220.0, 980.0, 640.0, 410.0, 180.0];
const TS: [f64; 6] = [3005.0, 1600.0, 1190.0, 950.0, 400.0, 150.0];

// Transition-state theory from partition functions (Eyring, J. Chem. Phys. 3 (1935) 107;
// Steinfeld, Francisco & Hase, Chemical Kinetics and Dynamics, 2nd ed., Prentice Hall 1999,
// ch. 10, `from memory` for the chapter): k = κ σ (k_B T / h) (Q‡ / Q) exp(−E₀ / RT), with
// harmonic q = Π 1 / (1 − exp(−h c ν̃ / k_B T)) from each species' zero-point level, and
// Wigner's κ = 1 + (h c ν‡ / k_B T)² / 24 (Wigner, Z. Phys. Chem. B 19 (1932) 203, `from
// memory`). Written out here from the CODATA 2018 constants, not through the library.
#[test]
fn thermal_step_from_frequencies_is_the_tst_rate() {
    let dir = scratch("tst");
    std::fs::write(
        dir.join("ts.txt"),
        "# invented transition state\n3005 1600 1190\n950 400 150\n-1150\n",
    )
    .unwrap();
    let text = format!(
        "{BASE}{}",
        r#"
[[thermal]]
equation = "A -> B"
rate = { barrier = "21 kcal/mol", reactant_frequencies = [3010, 1650, 1220, 980, 640, 410, 180], ts_frequencies = "ts.txt", tunnelling = "wigner", degeneracy = 2 }
"#
    );
    let net = net_in(&dir, &text).unwrap();
    let t = 310.0;
    let q = |v: &[f64]| -> f64 {
        v.iter()
            .map(|x| 1.0 / (1.0 - (-PLANCK * SPEED_OF_LIGHT * 100.0 * x / (BOLTZMANN * t)).exp()))
            .product()
    };
    let u = PLANCK * SPEED_OF_LIGHT * 100.0 * 1150.0 / (BOLTZMANN * t);
    let kappa = 1.0 + u * u / 24.0;
    let e0 = 21.0 * 1000.0 * CALORIE / AVOGADRO; // per molecule
    let want = kappa * 2.0 * BOLTZMANN * t / PLANCK * q(&TS) / q(&REACTANT) * (-e0 / (BOLTZMANN * t)).exp();
    let k = net.thermal[0].k;
    assert!((k - want).abs() / want < 1e-9, "{k} vs {want}");
    // and it flows through the compiled model like any other rate constant
    let model = Model::compile(&net);
    assert_eq!(model.reactions[0].k, k);
    // without tunnelling the rate is smaller by exactly κ
    let plain = net_in(&dir, &text.replace(", tunnelling = \"wigner\"", "")).unwrap();
    assert!((plain.thermal[0].k * kappa - k).abs() / k < 1e-12);
}

/// A hot transient with channels to B and C from the text's barriers.
fn hot_text(e0_b: &str, e0_c: &str, energy: &str, cooling: &str) -> String {
    format!(
        r#"{BASE}
[[photo]]
absorber = "A"
excites = "A-hot"
[[transient]]
name = "A-hot"
kind = "hot"
energy = "{energy}"
cooling_time = "{cooling}"
frequencies = [3010, 1650, 1220, 980, 640, 410, 180]
channels = [
  {{ to = "B", hot = {{ barrier = "{e0_b}", ts_frequencies = [3005, 1600, 1190, 950, 400, 150, -1150] }} }},
  {{ to = "C", hot = {{ barrier = "{e0_c}", ts_frequencies = "ts-c.txt" }} }},
  {{ to = "A", fraction = "rest" }},
]
"#
    )
}

const TS_C: [f64; 6] = [3000.0, 1640.0, 1200.0, 900.0, 600.0, 300.0];

fn write_ts_c(dir: &Path) {
    std::fs::write(
        dir.join("ts-c.txt"),
        "# invented\ndegeneracy 2\n[reactant]\n1000\n[transition state]\n3000 1640 1200 900 600 300\n800i\n",
    )
    .unwrap();
}

fn hot_fractions(net: &Network) -> Vec<f64> {
    net.transients[0]
        .channels
        .iter()
        .filter_map(|c| match c.branching {
            Branching::Hot { fraction, .. } => Some(fraction),
            _ => None,
        })
        .collect()
}

// The hot channels' yields are those of the hot-molecule engine (rates::hot::rrkm_yields, the
// same computation the `barrier` command uses), the molar photon energy at 365 nm is
// h c N_A / λ = 327.74 kJ/mol (CODATA 2018), and the model's collapse sends the rest back to A.
#[test]
fn hot_channels_take_the_engine_yields_and_the_rest_cools() {
    let dir = scratch("hot");
    write_ts_c(&dir);
    let net = net_in(&dir, &hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps")).unwrap();
    let f = hot_fractions(&net);
    let photon = PLANCK * SPEED_OF_LIGHT / 365e-9 * AVOGADRO;
    assert!((photon - 327.74e3).abs() < 10.0, "{photon}");
    let reactant = modes(&REACTANT);
    let mut ts_b = modes(&TS);
    ts_b.imaginary = Some(cm_read(1150.0));
    let ts_c = modes(&TS_C);
    let kcal = 1000.0 * CALORIE;
    let grain = default_grain();
    let y = rrkm_yields(
        &reactant,
        &[
            HotReaction {
                ts: &ts_b,
                barrier: 14.0 * kcal,
                degeneracy: 1.0,
            },
            HotReaction {
                ts: &ts_c,
                barrier: 18.0 * kcal,
                degeneracy: 2.0, // from the file's degeneracy line
            },
        ],
        photon,
        Some(3e-12),
        grain,
    )
    .unwrap();
    for (got, want) in f.iter().zip(&y.probabilities) {
        assert!((got - want).abs() <= 1e-9 * want.max(1e-300), "{got} vs {want}");
    }
    assert!(f[0] > 0.0 && f[1] > 0.0 && f[0] + f[1] < 1.0, "{f:?}");
    let model = Model::compile(&net);
    let x = model.collapse.solve(&[1e-3, 0.0, 0.0], false).x;
    // ends in channel order: B, C, A (the rest)
    assert!((x[(0, 0)] - f[0]).abs() < 1e-15);
    assert!((x[(0, 1)] - f[1]).abs() < 1e-15);
    assert!((x[(0, 2)] - y.cooled).abs() < 1e-9);
    // the barrier verdicts list the hot channels with the same yields, the starting energy and
    // τ from the file, and k(E)·τ from RRKM at the starting energy
    let hv = photoledger::barrier::hot_verdicts(&net);
    assert_eq!(hv.len(), 2);
    for (v, want) in hv.iter().zip(&y.probabilities) {
        assert!((v.fraction - want).abs() <= 1e-9 * want.max(1e-300));
        assert!((v.energy - photon).abs() < 1e-6 * photon && (v.cooling - 3e-12).abs() < 1e-24);
    }
    let k_b = photoledger::rates::rrkm::Rrkm::new(&reactant, &ts_b, 14.0 * kcal, 1.0, grain, photon + grain)
        .unwrap()
        .rate(photon)
        .unwrap();
    assert!(
        (hv[0].rate_at_start - k_b).abs() <= 1e-6 * k_b,
        "{} vs {k_b}",
        hv[0].rate_at_start
    );
    assert!(hv[0].words().contains("%"));
    // a higher barrier lowers that channel's yield (a monotonic check on the computed values)
    let higher = net_in(&dir, &hot_text("16 kcal/mol", "18 kcal/mol", "photon", "3 ps")).unwrap();
    assert!(hot_fractions(&higher)[0] < f[0]);
}

proptest! {
    #![proptest_config(ProptestConfig::with_cases(12))]

    // The shares out of a hot transient are probabilities that add up to one: Σ hot yields +
    // the cooled rest = 1 (conservation of molecules, common practice).
    #[test]
    fn hot_yields_and_the_rest_sum_to_one(
        b in 2.0f64..40.0,
        c in 2.0f64..40.0,
        energy in 20.0f64..90.0,
        tau in 0.2f64..50.0,
    ) {
        let dir = scratch(&format!("prop-{}", (b * 1e6) as u64));
        write_ts_c(&dir);
        let text = hot_text(
            &format!("{b} kcal/mol"),
            &format!("{c} kcal/mol"),
            &format!("{energy} kcal/mol"),
            &format!("{tau} ps"),
        );
        let net = net_in(&dir, &text).unwrap();
        let f = hot_fractions(&net);
        prop_assert!(f.iter().all(|p| (0.0..=1.0).contains(p)), "{:?}", f);
        let x = Model::compile(&net).collapse.solve(&[1e-3, 0.0, 0.0], false).x;
        let row: f64 = x.row(0).sum();
        prop_assert!((row - 1.0).abs() < 1e-12, "{}", row);
        prop_assert!((x[(0, 2)] - (1.0 - f[0] - f[1])).abs() < 1e-12);
    }
}

fn bundled() -> Vec<PathBuf> {
    let mut v: Vec<PathBuf> = std::fs::read_dir(concat!(env!("CARGO_MANIFEST_DIR"), "/networks"))
        .unwrap()
        .map(|e| e.unwrap().path())
        .filter(|p| p.extension().is_some_and(|x| x == "toml"))
        .collect();
    v.sort();
    v
}

// Every bundled network still validates, and the flow reactor's hot product branch is the
// engine's yield for the invented frequencies of demo-data/frequencies/flow-product.txt at the
// mean photon energy of its LED.
#[test]
fn bundled_networks_validate_and_the_flow_hot_branch_is_computed() {
    for p in bundled() {
        let net = photoledger::network::load(&p, &Overrides::none());
        assert!(net.is_ok(), "{}: {}", p.display(), net.unwrap_err());
    }
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks/flow-cyclization.toml");
    let net = photoledger::network::load(&p, &Overrides::none()).unwrap();
    let i = net.transient_index("product-hot").expect("the hot product branch");
    let Branching::Hot {
        fraction,
        barrier,
        energy,
        cooling,
        ..
    } = net.transients[i].channels[0].branching
    else {
        panic!("the first channel of product-hot is a hot channel");
    };
    let flux: f64 = net.lights.iter().map(|l| l.photon_flux()).sum();
    let photon: f64 = net.lights.iter().map(|l| l.power()).sum::<f64>() / flux;
    assert!((energy - photon).abs() < 1e-9 * photon);
    let freq = Path::new(env!("CARGO_MANIFEST_DIR")).join("demo-data/frequencies/flow-product.txt");
    let f = photoledger::file::frequencies::read(&freq).unwrap();
    let ts = f.ts.unwrap();
    let y = rrkm_yields(
        &f.reactant,
        &[HotReaction {
            ts: &ts,
            barrier,
            degeneracy: 1.0,
        }],
        energy,
        Some(cooling),
        default_grain(),
    )
    .unwrap();
    assert!((fraction - y.probabilities[0]).abs() < 1e-12, "{fraction} vs {:?}", y);
    assert!(fraction > 0.0 && fraction < 0.1, "{fraction}");
}

// Bad blocks are named by file, line, field and what is accepted.
#[test]
fn bad_blocks_give_clear_errors() {
    let dir = scratch("bad");
    write_ts_c(&dir);
    std::fs::write(dir.join("broken.txt"), "3000 1600\nabc\n").unwrap();
    let thermal = |rate: &str| format!("{BASE}\n[[thermal]]\nequation = \"A -> B\"\nrate = {rate}\n");
    let cases: Vec<(String, Vec<&str>)> = vec![
        (
            format!(
                "{BASE}\n[[thermal]]\nequation = \"A + C -> B\"\nrate = {{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000], ts_frequencies = [-500] }}\n"
            ),
            vec![
                "net.toml:21:8: thermal[0].rate",
                "for unimolecular steps",
                "molecularity 2",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000, 500], ts_frequencies = [1000] }"),
            vec![
                "thermal[0].rate.ts_frequencies",
                "no imaginary frequency",
                "negative number",
            ],
        ),
        (
            thermal(
                "{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000, -500], ts_frequencies = [1000, -500] }",
            ),
            vec!["thermal[0].rate.reactant_frequencies", "a reactant has only real ones"],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", reactant_frequencies = \"broken.txt\", ts_frequencies = [-500] }"),
            vec![
                "broken.txt:2:1",
                "thermal[0].rate.reactant_frequencies -> reactant frequency",
                "\"abc\" is not a number",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", reactant_frequencies = \"missing.txt\", ts_frequencies = [-500] }"),
            vec![
                "net.toml:21:",
                "cannot read the frequency file \"missing.txt\"",
                "relative to the network file",
            ],
        ),
        (
            thermal(
                "{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000, 500], ts_frequencies = [1000, -400], tunnelling = \"bell\" }",
            ),
            vec![
                "thermal[0].rate.tunnelling",
                "\"bell\" is not a tunnelling correction",
                "\"wigner\"",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", tunnelling = \"wigner\" }"),
            vec!["thermal[0].rate.tunnelling", "applies only to a rate from frequencies"],
        ),
        (
            thermal("{ reactant_frequencies = [1000, 500], ts_frequencies = [1000, -400] }"),
            vec![
                "thermal[0].rate",
                "needs barrier, reactant_frequencies and ts_frequencies",
            ],
        ),
        (
            hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps").replace("kind = \"hot\"", "kind = \"excited\""),
            vec![
                "transient \"A-hot\".kind",
                "has hot channels but is of kind \"excited\"",
                "kind = \"hot\"",
            ],
        ),
        (
            hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps").replace("fraction = \"rest\"", "fraction = 0.5"),
            vec![
                "transient \"A-hot\".channels",
                "exactly one other channel, fraction = \"rest\"",
            ],
        ),
        (
            hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps").replace("cooling_time = \"3 ps\"\n", ""),
            vec!["transient \"A-hot\".cooling_time", "is missing", "e.g. \"5 ps\""],
        ),
        (
            hot_text("14 kcal/mol", "18 kcal/mol", "warm", "3 ps"),
            vec!["transient \"A-hot\".energy", "expected"],
        ),
        (
            hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps")
                .replace("hot = { barrier = \"14 kcal/mol\",", "rate = { k = \"1 /s\" }, hot = {"),
            vec!["transient \"A-hot\".channels[0]", "takes no fraction, rate or quencher"],
        ),
        (
            hot_text("-3 kcal/mol", "18 kcal/mol", "photon", "3 ps"),
            vec![
                "transient \"A-hot\".channels[0].hot.barrier",
                "zero-point-corrected barrier is zero or more",
            ],
        ),
        (
            format!(
                "{BASE}\n[[transient]]\nname = \"X\"\nkind = \"hot\"\ncooling_time = \"3 ps\"\nchannels = [{{ to = \"A\", fraction = 1 }}]\n"
            ),
            vec![
                "transient \"X\".cooling_time",
                "applies only to a hot ground state with hot channels",
            ],
        ),
    ];
    for (text, wants) in cases {
        let e = net_in(&dir, &text).expect_err(&text);
        for w in wants {
            assert!(e.contains(w), "missing {w:?} in:\n{e}");
        }
    }
}

fn run(args: &[&str]) -> (i32, String, String) {
    let out = Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .output()
        .expect("run photoledger");
    (
        out.status.code().unwrap_or(-1),
        String::from_utf8_lossy(&out.stdout).into(),
        String::from_utf8_lossy(&out.stderr).into(),
    )
}

/// The yield column of a `barrier --channel` table row starting with `name`.
fn yield_of(out: &str, name: &str) -> f64 {
    let line = out
        .lines()
        .find(|l| l.trim_start().starts_with(name))
        .unwrap_or_else(|| panic!("no row {name} in\n{out}"));
    line.split_whitespace().last().unwrap().parse().unwrap()
}

// `barrier --channel` (repeatable): each channel's yield is the engine's, and the yields and
// the cooled remainder add up to one.
#[test]
fn cli_several_hot_channels() {
    let dir = scratch("cli");
    let r = dir.join("r.txt");
    std::fs::write(&r, "# invented\n3010 1650 1220 980 640 410 180\n").unwrap();
    let b = dir.join("b.txt");
    std::fs::write(&b, "# invented\n3005 1600 1190 950 400 150\n-1150\n").unwrap();
    write_ts_c(&dir);
    let c = dir.join("ts-c.txt");
    let (rs, bs, cs) = (r.to_str().unwrap(), b.to_str().unwrap(), c.to_str().unwrap());
    let cb = format!("{bs}=60 kJ/mol");
    let cc = format!("{cs}=75 kJ/mol");
    let (code, out, err) = run(&[
        "barrier",
        "--energy",
        "300 kJ/mol",
        "--frequencies",
        rs,
        "--cooling",
        "3 ps",
        "--channel",
        &cb,
        "--channel",
        &cc,
    ]);
    assert_eq!(code, 0, "{err}");
    let (yb, yc, cooled) = (
        yield_of(&out, bs),
        yield_of(&out, cs),
        yield_of(&out, "cooled without reacting"),
    );
    assert!((yb + yc + cooled - 1.0).abs() < 1e-6, "{out}");
    let ts_b = modes(&TS);
    let ts_c = modes(&TS_C);
    let y = rrkm_yields(
        &modes(&REACTANT),
        &[
            HotReaction {
                ts: &ts_b,
                barrier: 60e3,
                degeneracy: 1.0,
            },
            HotReaction {
                ts: &ts_c,
                barrier: 75e3,
                degeneracy: 2.0,
            },
        ],
        300e3,
        Some(3e-12),
        default_grain(),
    )
    .unwrap();
    assert!(
        (yb - y.probabilities[0]).abs() < 2e-6 * y.probabilities[0].max(1e-6),
        "{out}"
    );
    assert!(
        (yc - y.probabilities[1]).abs() < 2e-6 * y.probabilities[1].max(1e-6),
        "{out}"
    );
    // a channel written without its barrier is a usage error naming the form
    let (code, _, err) = run(&[
        "barrier",
        "--energy",
        "300 kJ/mol",
        "--frequencies",
        rs,
        "--cooling",
        "3 ps",
        "--channel",
        bs,
    ]);
    assert_eq!(code, 2);
    assert!(err.contains("write FILE=E0"), "{err}");
}
