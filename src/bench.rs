//! Generated networks for benchmarks and property tests: a reproducible large mechanism
//! written as network-file text, so that it exercises the same path as a user's file.

use std::fmt::Write;

/// Size of a generated network.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Size {
    /// Number of species.
    pub species: usize,
    /// Number of thermal steps.
    pub steps: usize,
    /// Number of absorbing species (each with a short-form photochemical step).
    pub absorbers: usize,
}

/// A small linear congruential generator (Knuth's MMIX constants), so the network is the same
/// on every machine without a random-number dependency.
struct Lcg(u64);

impl Lcg {
    fn next(&mut self) -> f64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        (self.0 >> 11) as f64 / (1u64 << 53) as f64
    }
    fn below(&mut self, n: usize) -> usize {
        ((self.next() * n as f64) as usize).min(n - 1)
    }
}

/// Network-file text of an invented random network: first-order isomerisations and
/// bimolecular associations with rate constants spread over six decades, `absorbers`
/// species with UV absorption bands and quantum yields, under sunlight from 300 to 400 nm
/// (about 200 wavelength bins of the ASTM G173-03 table).
pub fn large_network(size: Size, seed: u64) -> String {
    let mut r = Lcg(seed);
    let mut s = String::new();
    let _ = writeln!(
        s,
        "# Invented: a generated benchmark network ({} species, {} steps); no real chemistry.",
        size.species, size.steps
    );
    let _ = writeln!(s, "[about]\nname = \"generated benchmark\"\ninvented = true\n");
    let _ = writeln!(
        s,
        "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"1 L\"\npath_length = \"1 cm\"\nirradiated_area = \"100 cm2\"\n"
    );
    let _ = writeln!(
        s,
        "[[light]]\nname = \"sun\"\nkind = \"sun\"\nfrom = \"300 nm\"\nto = \"400 nm\"\n"
    );
    for i in 0..size.species {
        let _ = writeln!(s, "[[species]]\nname = \"S{i}\"");
        if i < size.species / 10 {
            let _ = writeln!(s, "initial = \"{} mM\"", 0.1 + r.next());
        }
        if i < size.absorbers {
            let peak = 300.0 + 100.0 * r.next();
            let eps = 1000.0 + 9000.0 * r.next();
            let _ = writeln!(
                s,
                "epsilon = {{ wavelength_unit = \"nm\", unit = \"L/(mol cm)\", points = [[{:.1}, 0], [{:.1}, {eps:.0}], [{:.1}, 0]] }}",
                peak - 40.0,
                peak,
                peak + 40.0
            );
        }
        s.push('\n');
    }
    // A step drawn twice is a parallel route: it gets a name of its own, so the network loads
    // without the builder's warning about steps written alike.
    let mut written: std::collections::HashMap<String, usize> = std::collections::HashMap::new();
    let parallel = |written: &mut std::collections::HashMap<String, usize>, eq: &str| -> String {
        let n = written.entry(eq.to_string()).or_insert(0);
        *n += 1;
        if *n == 1 {
            String::new()
        } else {
            format!("\nname = \"{eq} (parallel route {n})\"")
        }
    };
    for _ in 0..size.steps {
        let a = r.below(size.species);
        let mut b = r.below(size.species);
        if b == a {
            b = (a + 1) % size.species;
        }
        let k = 10f64.powf(-3.0 + 6.0 * r.next());
        if r.next() < 0.7 {
            let eq = format!("S{a} -> S{b}");
            let _ = writeln!(
                s,
                "[[thermal]]\nequation = \"{eq}\"{}\nrate = {{ k = \"{k:.4e} /s\" }}\n",
                parallel(&mut written, &eq)
            );
        } else {
            let mut c = r.below(size.species);
            if c == a || c == b {
                c = (a.max(b) + 1) % size.species;
            }
            let eq = format!("S{a} + S{b} -> S{c}");
            let _ = writeln!(
                s,
                "[[thermal]]\nequation = \"{eq}\"{}\nrate = {{ k = \"{:.4e} /(M s)\" }}\n",
                parallel(&mut written, &eq),
                k * 100.0
            );
        }
    }
    for i in 0..size.absorbers {
        let p = (i + 1 + r.below(size.species - 1)) % size.species;
        let p = if p == i { (i + 1) % size.species } else { p };
        let _ = writeln!(
            s,
            "[[photo]]\nequation = \"S{i} -> S{p}\"\nquantum_yield = {:.3}\n",
            0.05 + 0.5 * r.next()
        );
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn generated_network_is_valid_and_reproducible() {
        let size = Size {
            species: 40,
            steps: 120,
            absorbers: 5,
        };
        let a = large_network(size, 7);
        assert_eq!(a, large_network(size, 7));
        let l = crate::file::parse_text(std::path::Path::new("gen.toml"), a).unwrap();
        let n = crate::network::build(&l, &crate::network::Overrides::none()).unwrap();
        assert_eq!(n.species.len(), 40);
        assert_eq!(n.thermal.len(), 120);
        assert_eq!(n.photo.len(), 5);
        assert!(n.lights[0].bins.len() > 150, "{}", n.lights[0].bins.len());
        // 120 steps over 40 species draw some step twice: each repeat is named, so the
        // generated file loads without a warning.
        let repeats = n.thermal.iter().filter(|t| t.name.contains("parallel route")).count();
        assert!(repeats > 0, "the seed draws no repeat: choose another");
        assert!(n.warnings.is_empty(), "{:?}", n.warnings);
    }
}
