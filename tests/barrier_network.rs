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
    // energy = "photon": the mean molar photon energy of what the product (the absorber of
    // the step that reaches product-hot) takes up, each bin weighted by ε(λ)·Φ·q(λ) (optically thin).
    let product = &net.species[net.species_index("product").unwrap()];
    let eps = product.epsilon.as_ref().unwrap();
    let bins: Vec<_> = net.lights.iter().flat_map(|l| l.bins.iter()).collect();
    let w: f64 = bins.iter().map(|b| eps.at(b.wavelength) * b.flux).sum();
    let we: f64 = bins
        .iter()
        .map(|b| eps.at(b.wavelength) * b.flux * PLANCK * SPEED_OF_LIGHT * AVOGADRO / b.wavelength)
        .sum();
    let photon = we / w;
    assert!((energy - photon).abs() < 1e-9 * photon, "{energy} vs {photon}");
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
                "net.toml:21:8: thermal \"A + C -> B\".rate",
                "for unimolecular steps",
                "molecularity 2",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000, 500], ts_frequencies = [1000] }"),
            vec![
                "thermal \"A -> B\".rate.ts_frequencies",
                "no imaginary frequency",
                "negative number",
            ],
        ),
        (
            thermal(
                "{ barrier = \"20 kcal/mol\", reactant_frequencies = [1000, -500], ts_frequencies = [1000, -500] }",
            ),
            vec![
                "thermal \"A -> B\".rate.reactant_frequencies",
                "a reactant has only real ones",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", reactant_frequencies = \"broken.txt\", ts_frequencies = [-500] }"),
            vec![
                "broken.txt:2:1",
                "thermal \"A -> B\".rate.reactant_frequencies -> reactant frequency",
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
                "thermal \"A -> B\".rate.tunnelling",
                "\"bell\" is not a tunnelling correction",
                "\"wigner\"",
            ],
        ),
        (
            thermal("{ barrier = \"20 kcal/mol\", tunnelling = \"wigner\" }"),
            vec![
                "thermal \"A -> B\".rate.tunnelling",
                "applies only to a rate from frequencies",
            ],
        ),
        (
            thermal("{ reactant_frequencies = [1000, 500], ts_frequencies = [1000, -400] }"),
            vec![
                "thermal \"A -> B\".rate",
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

/// `hot_text` with A absorbing only below 420 nm (a table, zero beyond) and `lights` as the light.
fn hot_text_lit(lights: &str) -> String {
    let base_light = "[[light]]\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"10 mW\"\n";
    hot_text("14 kcal/mol", "18 kcal/mol", "photon", "3 ps")
        .replacen(base_light, lights, 1)
        .replacen(
            "epsilon = { at = \"365 nm\", value = \"2000 L/(mol cm)\" }",
            "epsilon = { wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[300, 1000], [365, 2000], [420, 0]] }",
            1,
        )
}

fn hot_energy(net: &Network) -> f64 {
    match net.transients[0].channels[0].branching {
        Branching::Hot { energy, .. } => energy,
        _ => panic!("the first channel is hot"),
    }
}

fn line(name: &str, nm: f64, mw: f64) -> String {
    format!("[[light]]\nname = \"{name}\"\nkind = \"line\"\nwavelength = \"{nm} nm\"\npower = \"{mw} mW\"\n")
}

// energy = "photon" is the mean energy of the photons the absorber takes up: a line it does not
// absorb changes neither the energy nor the yields; with two absorbed lines it is the ε·q-weighted
// mean, E = Σ εᵢ qᵢ Eᵢ / Σ εᵢ qᵢ with qᵢ = Pᵢ / Eᵢ and Eᵢ = h c N_A / λᵢ (CODATA 2018), i.e.
// Σ εᵢ Pᵢ / Σ εᵢ qᵢ (optically thin weighting, common practice).
#[test]
fn photon_energy_counts_only_the_photons_the_absorber_takes_up() {
    let dir = scratch("hot-photon");
    write_ts_c(&dir);
    let one = net_in(&dir, &hot_text_lit(&line("uv", 365.0, 10.0))).unwrap();
    let extra = format!("{}{}", line("uv", 365.0, 10.0), line("red", 650.0, 3000.0));
    let two = net_in(&dir, &hot_text_lit(&extra)).unwrap();
    let e365 = PLANCK * SPEED_OF_LIGHT * AVOGADRO / 365e-9;
    assert!((hot_energy(&one) - e365).abs() < 1e-9 * e365, "{}", hot_energy(&one));
    assert_eq!(hot_energy(&one), hot_energy(&two));
    assert_eq!(hot_fractions(&one), hot_fractions(&two));
    // Two absorbed lines: 10 mW at 365 nm (ε 2000) and 20 mW at 400 nm (ε 2000·20/55 on the table).
    let both = format!("{}{}", line("uv", 365.0, 10.0), line("violet", 400.0, 20.0));
    let net = net_in(&dir, &hot_text_lit(&both)).unwrap();
    let (eps1, eps2) = (2000.0, 2000.0 * 20.0 / 55.0);
    let (p1, p2) = (10e-3, 20e-3);
    let e400 = PLANCK * SPEED_OF_LIGHT * AVOGADRO / 400e-9;
    let want = (eps1 * p1 + eps2 * p2) / (eps1 * p1 / e365 + eps2 * p2 / e400);
    assert!(
        (hot_energy(&net) - want).abs() < 1e-9 * want,
        "{} vs {want}",
        hot_energy(&net)
    );
    // and not the plain mean of the incident photons (the two differ by about 7 kJ/mol here)
    let plain = (p1 + p2) / (p1 / e365 + p2 / e400);
    assert!((want - plain).abs() > 1000.0, "{want} {plain}");
    // a line the absorber takes up none of, alone: a clear error on the energy key
    let err = net_in(&dir, &hot_text_lit(&line("red", 650.0, 3000.0))).unwrap_err();
    assert!(
        err.contains("energy") && err.contains("take up none of the light"),
        "{err}"
    );
}

// The reviewer's case: an unrelated 650 nm, 3 W line added to the flow reactor (the product does
// not absorb beyond 435 nm) leaves the product-hot yield as it was.
#[test]
fn an_unabsorbed_line_leaves_the_flow_hot_yield_alone() {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let text = std::fs::read_to_string(dir.join("flow-cyclization.toml")).unwrap();
    let red = "\n[[light]]\nname = \"red\"\nkind = \"line\"\nwavelength = \"650 nm\"\npower = \"3 W\"\n";
    let plain = net_in(&dir, &text).unwrap();
    let lit = net_in(&dir, &format!("{text}{red}")).unwrap();
    let y = |n: &Network| {
        let i = n.transient_index("product-hot").unwrap();
        match n.transients[i].channels[0].branching {
            Branching::Hot { fraction, energy, .. } => (fraction, energy),
            _ => panic!("hot channel"),
        }
    };
    assert_eq!(y(&plain), y(&lit));
    assert!(y(&plain).0 > 0.0);
}

// A catalysed step A + cat -> B + cat: the catalyst is not used up, so A decays first order
// with k[cat]₀ and t½ = ln 2 / (k [cat]₀) (integrated first-order law, common practice); the
// verdict follows A, not the catalyst at its lower concentration.
#[test]
fn a_catalyst_is_not_the_limiting_reactant() {
    let text = r#"
[about]
name = "invented catalysed step"
invented = true
[conditions]
temperature = "298.15 K"
volume = "1 mL"
path_length = "1 cm"
[[species]]
name = "A"
initial = "10 mM"
[[species]]
name = "cat"
initial = "1 mM"
[[species]]
name = "B"
[[thermal]]
name = "catalysed"
equation = "A + cat -> B + cat"
rate = { k = "2 /(M s)" }
"#;
    let net = net_in(&scratch("cat"), text).unwrap();
    let v = photoledger::barrier::network_verdicts(&net, 3600.0, 0.5, None).unwrap();
    assert!(v[0].name.contains("[per A]"), "{}", v[0].name);
    let want = std::f64::consts::LN_2 / (2.0 * 1e-3);
    assert!(
        (v[0].half_life - want).abs() < 1e-8 * want,
        "{} vs {want}",
        v[0].half_life
    );
    assert!((v[0].rate - 2.0 * 1e-3).abs() < 1e-15);
}

/// A TST step named "ring" (unimolecular, κ and E₀ in the file) for the `--set` tests.
fn ring_text() -> String {
    format!(
        "{BASE}{}",
        r#"
[[thermal]]
name = "ring"
equation = "A -> B"
rate = { barrier = "21 kcal/mol", reactant_frequencies = [3010, 1650, 1220, 980, 640, 410, 180], ts_frequencies = [3005, 1600, 1190, 950, 400, 150, -1150] }
"#
    )
}

fn build_with(dir: &Path, text: &str, set: &[&str]) -> photoledger::error::Result<Network> {
    let loaded = parse_text(&dir.join("net.toml"), text.to_string()).unwrap();
    build(&loaded, &Overrides::parse(set).unwrap())
}

// `--set` reaches a rate from frequencies: `barrier` is E₀ and `transmission` is κ. In TST
// k = κ σ (k_B T / h) (Q‡ / Q) exp(−E₀ / RT) (Eyring, J. Chem. Phys. 3 (1935) 107, `from memory`
// as above), so with the same frequencies k(E₀ − 1 kcal/mol, κ = 0.5) / k(E₀, κ = 1) =
// 0.5 exp(1 kcal/mol / RT).
#[test]
fn set_barrier_and_transmission_reach_a_rate_from_frequencies() {
    let dir = scratch("set-tst");
    let text = ring_text();
    let k0 = build_with(&dir, &text, &[]).unwrap().thermal[0].k;
    let net = build_with(
        &dir,
        &text,
        &["thermal.ring.barrier=20 kcal/mol", "thermal.ring.transmission=0.5"],
    )
    .unwrap();
    let t = 310.0;
    let want = 0.5 * (1000.0 * CALORIE / AVOGADRO / (BOLTZMANN * t)).exp();
    let ratio = net.thermal[0].k / k0;
    assert!((ratio - want).abs() / want < 1e-9, "k ratio {ratio}, expected {want}");
    match &net.thermal[0].rate {
        photoledger::rates::RateLaw::Frequencies { transmission, .. } => assert_eq!(*transmission, 0.5),
        other => panic!("the rate is no longer from frequencies: {other:?}"),
    }
}

// A bad `--set` value on a rate from frequencies is an error of the command line named by the
// key as typed, not of a line of the file (the value carries no position in the file).
#[test]
fn a_bad_set_value_on_a_rate_from_frequencies_names_the_command_line() {
    let dir = scratch("set-tst-bad");
    let text = ring_text();
    for (set, field, says) in [
        (
            "thermal.ring.transmission=2",
            "thermal.ring.transmission",
            "\"2\" must lie in (0, 1]",
        ),
        (
            "thermal.ring.barrier=-3 kcal/mol",
            "thermal.ring.barrier",
            "\"-3 kcal/mol\" is below zero",
        ),
    ] {
        let Err(photoledger::error::Error::Invalid(ds)) = build_with(&dir, &text, &[set]) else {
            panic!("--set {set} was accepted");
        };
        let d = ds
            .iter()
            .find(|d| d.field == field)
            .unwrap_or_else(|| panic!("no diagnostic at {field}: {ds:?}"));
        assert!(d.message.contains(says), "{d}");
        assert!(d.from_command_line, "not located on the command line: {d}");
        assert_eq!(d.line_col, None, "located at a line of the file: {d}");
        assert!(d.to_string().contains("(value given with --set)"), "{d}");
    }
}
