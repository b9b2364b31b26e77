//! Photon costs, selectivities and the inner filter on the paths a photochemist takes:
//! products a photon made versus thermal co-products (the network's lineage), selectivity
//! only against a reagent a product comes from, and the inner filter of the reaction followed.

use photoledger::kinetics::{self, Options, Trajectory, ledger};
use photoledger::model::Model;
use photoledger::network::{Network, Overrides, build, load};
use photoledger::plan::{self, PlanOptions};
use std::path::Path;

fn bundled(name: &str) -> Network {
    let p = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks").join(name);
    load(&p, &Overrides::none()).expect("bundled network is valid")
}

fn inline(text: &str) -> Network {
    let loaded = photoledger::file::parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
    build(&loaded, &Overrides::none()).expect("valid")
}

fn run(model: &Model, until: f64) -> Trajectory {
    kinetics::simulate(model, &Options::until(until), &mut |_| {}).expect("integrates")
}

fn names<T>(v: &[T], f: impl Fn(&T) -> &str) -> Vec<String> {
    v.iter().map(|x| f(x).to_string()).collect()
}

/// A --hν--> B, then B + C -> D + E in the dark (invented). `formulas` gives every species a
/// formula (E is water, D carries B's skeleton).
fn small(formulas: bool) -> String {
    let f = |x: &str| {
        if formulas {
            format!("formula = \"{x}\"")
        } else {
            String::new()
        }
    };
    format!(
        r#"
[about]
name = "small"
description = "invented"
provenance = "invented"
invented = true
[conditions]
temperature = "298 K"
volume = "10 mL"
path_length = "1 cm"
[[light]]
name = "led"
kind = "line"
wavelength = "365 nm"
power = "50 mW"
[[species]]
name = "A"
initial = "10 mM"
{}
epsilon = {{ at = "365 nm", value = "2000 L/(mol cm)" }}
[[species]]
name = "B"
{}
[[species]]
name = "C"
initial = "50 mM"
{}
[[species]]
name = "D"
product = true
{}
epsilon = {{ at = "365 nm", value = "1000 L/(mol cm)" }}
[[species]]
name = "E"
{}
[[photo]]
name = "A to B"
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
name = "condense"
equation = "B + C -> D + E"
rate = {{ k = "1 /(M s)" }}
"#,
        f("C10H12O"),
        f("C10H12O"),
        f("CH4O"),
        f("C11H14O"),
        f("H2O")
    )
}

#[test]
fn water_of_a_dark_condensation_has_no_photon_cost() {
    // Issue: the pool's water, formed by the dark condensation that feeds the chromophore,
    // was given "286.8 photons absorbed per molecule".
    let net = bundled("prebiotic-pool.toml");
    let model = Model::compile(&net);
    let tr = run(&model, 30.0 * 86400.0);
    let l = ledger::read(&model, &tr.layout, *tr.times.last().unwrap(), tr.last());
    assert_eq!(names(&l.products, |p| &p.species), ["product", "fragment", "HCN"]);
    assert_eq!(names(&l.thermal_products, |p| &p.species), ["H2O"]);
    assert!(l.thermal_products[0].formed > 0.0);
    let text = photoledger::report::summary::run_summary(&photoledger::report::simulation::summary(
        &net, &model, &tr, 1e-6, 1e-12,
    ));
    let water = text
        .lines()
        .find(|l| l.trim_start().starts_with("H2O ") && l.contains("formed"))
        .unwrap();
    assert!(!water.contains("photons"), "{water}");
    assert!(text.contains("formed by thermal steps, no photon cost"), "{text}");
}

#[test]
fn the_hi_scavengers_adduct_is_a_thermal_coproduct() {
    // dihydro + I2 -> product + 2 HI: the product carries the photon-made skeleton, HI does not;
    // the iodohydrin HI forms with the epoxide is thermal too.
    let net = bundled("flow-cyclization.toml");
    let model = Model::compile(&net);
    let lin = &model.lineage;
    let idx = |n: &str| net.species_index(n).unwrap();
    for p in ["dihydro", "product", "degradate"] {
        assert!(lin.photoproduct[idx(p)], "{p}");
    }
    for p in ["HI", "iodohydrin", "I2", "epoxide", "O2"] {
        assert!(!lin.photoproduct[idx(p)], "{p}");
    }
    let tr = run(&model, 600.0);
    let csv = photoledger::report::simulation::photons_csv(&model, &tr);
    let header = csv.lines().next().unwrap();
    assert!(header.contains("photons per product"), "{header}");
    assert!(!header.contains("photons per iodohydrin"), "{header}");
}

#[test]
fn principal_product_by_atoms_other_than_hydrogen_and_all_without_formulas() {
    let with = Model::compile(&inline(&small(true)));
    let d = with.species.iter().position(|s| s == "D").unwrap();
    let e = with.species.iter().position(|s| s == "E").unwrap();
    assert!(with.lineage.photoproduct[d]);
    assert!(!with.lineage.photoproduct[e]);
    assert_eq!(with.thermal_products(), vec![e]);
    // Without formulas the step's products cannot be told apart: both count (README).
    let without = Model::compile(&inline(&small(false)));
    assert!(without.lineage.photoproduct[d] && without.lineage.photoproduct[e]);
}

#[test]
fn selectivity_only_against_a_reagent_the_product_comes_from() {
    // Issue: the iodohydrin was given a selectivity on the substrate above what the
    // stoichiometry of the product allows.
    let net = bundled("flow-cyclization.toml");
    let model = Model::compile(&net);
    let idx = |n: &str| net.species_index(n).unwrap();
    let target = plan::target::parse("product > 90 %", &model).unwrap();
    let opts = PlanOptions {
        products: Some(vec![idx("product"), idx("degradate"), idx("iodohydrin")]),
        ..PlanOptions::default()
    };
    let p = plan::time_to_target(&model, &target, &opts).unwrap();
    let by = |n: &str| p.products.iter().find(|s| s.species == n).unwrap();
    assert_eq!(by("iodohydrin").selectivity, None);
    assert!(by("iodohydrin").formed > 0.0);
    for n in ["product", "degradate"] {
        let s = by(n);
        // One product per substrate along the route (mass balance, common practice).
        assert_eq!(s.stoichiometric_max, Some(1.0), "{n}");
        assert!(s.selectivity.unwrap() <= 1.0 + 1e-9, "{n}: {:?}", s.selectivity);
    }
    let text = photoledger::report::plan::selectivity_text(by("iodohydrin"));
    assert!(text.starts_with("no selectivity"), "{text}");
}

#[test]
fn a_fragmentation_states_its_stoichiometric_ceiling() {
    // A --hν--> 2 B: two B per A consumed (mass balance, common practice); the dark step
    // slowed so that B stays.
    let text = small(false)
        .replace("equation = \"A -> B\"", "equation = \"A -> 2 B\"")
        .replace("k = \"1 /(M s)\"", "k = \"1e-12 /(M s)\"");
    let model = Model::compile(&inline(&text));
    let b = model.species.iter().position(|s| s == "B").unwrap();
    let target = plan::target::parse("A < 50 %", &model).unwrap();
    let opts = PlanOptions {
        products: Some(vec![b]),
        ..PlanOptions::default()
    };
    let p = plan::time_to_target(&model, &target, &opts).unwrap();
    let s = &p.products[0];
    assert_eq!(s.stoichiometric_max, Some(2.0));
    let sel = s.selectivity.unwrap();
    assert!(sel > 1.0 && sel <= 2.0 + 1e-9, "{sel}");
    let text = photoledger::report::plan::selectivity_text(s);
    assert!(text.contains("the stoichiometry allows up to 200 %"), "{text}");
}

#[test]
fn the_inner_filter_counts_the_product_that_takes_the_light() {
    // Inner filter: light absorbed by anything other than the reactant of the photoreaction
    // (IUPAC Glossary of terms used in photochemistry, 3rd ed., Pure Appl. Chem. 79 (2007) 293,
    // "inner filter effect", `from memory` for the wording).
    let net = bundled("flow-cyclization.toml");
    let mut model = Model::compile(&net);
    let tr = run(&model, 600.0);
    let t = *tr.times.last().unwrap();
    let l = ledger::read(&model, &tr.layout, t, tr.last());
    let abs = |n: &str| l.by_absorber.iter().find(|a| a.species == n).unwrap();
    assert_eq!(l.inner_filter.followed, ["product"]);
    assert_eq!(l.inner_filter.reactants, ["substrate"]);
    let bg: f64 = l.sources.iter().map(|s| s.background).sum();
    let expect = (abs("product").absorbed + abs("I2").absorbed + bg) / l.incident;
    assert!((l.inner_filter.fraction - expect).abs() < 1e-12 * expect.max(1.0));
    assert!(l.inner_filter.fraction > abs("product").absorbed / l.incident);
    // Absorbed and led to no reaction: every absorber's photons less the productive ones.
    let none: f64 = l.by_absorber.iter().map(|a| a.absorbed - a.productive).sum();
    assert!((l.unproductive - none).abs() < 1e-12 * none);
    let s = photoledger::report::simulation::summary(&net, &model, &tr, 1e-6, 1e-12);
    let text = photoledger::report::summary::run_summary(&s);
    assert!(
        text.contains("anything other than the photoreactants of the reaction followed"),
        "{text}"
    );
    assert!(text.contains("led to no reaction"), "{text}");
    // Following every photoreaction: the product's own photochemistry makes it a reactant, and
    // the figure is what is taken by species with no photochemistry and the background.
    model.follow(Vec::new());
    let l = ledger::read(&model, &tr.layout, t, tr.last());
    assert_eq!(l.inner_filter.reactants, ["substrate", "product"]);
    let expect = (abs("I2").absorbed + bg) / l.incident;
    assert!((l.inner_filter.fraction - expect).abs() < 1e-12);
}

/// A photoproduct that is not named `product = true` and is consumed again (a thermal back
/// step) is no product, so it gets no photon cost; `simulate` says why instead of leaving the
/// line out silently; once named, its amount is in the display
/// rule's unit (µmol, not "1.581e-6 mol"). Invented network; the rule is common practice.
#[test]
fn simulate_says_why_an_unnamed_photoproduct_has_no_photon_cost() {
    let dir = std::env::temp_dir().join(format!("photoledger-unnamed-{}", std::process::id()));
    std::fs::create_dir_all(&dir).unwrap();
    let text = |named: bool| {
        format!(
            r#"[about]
name = "A to B under a violet LED (invented)"
invented = true
[conditions]
temperature = "25 °C"
volume = "2 mL"
path_length = "1 cm"
[[light]]
name = "violet LED"
kind = "band"
centre = "405 nm"
fwhm = "15 nm"
power = "10 mW"
[[species]]
name = "A"
initial = "1 mM"
epsilon = {{ wavelength_unit = "nm", unit = "L/(mol cm)", points = [[360, 800], [405, 400], [450, 0]] }}
[[species]]
name = "B"
{}
[[photo]]
name = "A to B"
equation = "A -> B"
quantum_yield = 0.3
[[thermal]]
name = "back"
equation = "B -> A"
rate = {{ barrier = "90 kJ/mol" }}
"#,
            if named { "product = true" } else { "" }
        )
    };
    let run = |named: bool| {
        let file = dir.join(format!("ab-{named}.toml"));
        std::fs::write(&file, text(named)).unwrap();
        let out = std::process::Command::new(env!("CARGO_BIN_EXE_photoledger"))
            .args(["simulate", file.to_str().unwrap(), "--until", "1 h"])
            .current_dir(&dir)
            .output()
            .unwrap();
        assert!(out.status.success(), "{}", String::from_utf8_lossy(&out.stderr));
        String::from_utf8_lossy(&out.stdout).to_string()
    };
    let unnamed = run(false);
    assert!(unnamed.contains("no species is marked `product = true`"), "{unnamed}");
    let named = run(true);
    assert!(!named.contains("no species is marked"), "{named}");
    let line = named
        .lines()
        .find(|l| l.trim_start().starts_with("B ") && l.contains("formed"))
        .expect(&named);
    assert!(line.contains("µmol formed"), "{line}");
    let _ = std::fs::remove_dir_all(&dir);
}
