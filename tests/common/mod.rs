//! Shared by the integration tests: the splitmix64 generator (Steele, Lea & Flood, "Fast
//! splittable pseudorandom number generators", OOPSLA 2014), an invented random network, and
//! Robertson's problem with its reference values.
// Each test binary uses part of this module.
#![allow(dead_code)]

/// splitmix64, seeded: uniform draws in [0, 1).
pub struct SplitMix(pub u64);
impl SplitMix {
    /// The next draw in [0, 1).
    pub fn next(&mut self) -> f64 {
        self.0 = self.0.wrapping_add(0x9E37_79B9_7F4A_7C15);
        let mut z = self.0;
        z = (z ^ (z >> 30)).wrapping_mul(0xBF58_476D_1CE4_E5B9);
        z = (z ^ (z >> 27)).wrapping_mul(0x94D0_49BB_1331_11EB);
        z ^= z >> 31;
        (z >> 11) as f64 / (1u64 << 53) as f64
    }
    fn below(&mut self, n: usize) -> usize {
        ((self.next() * n as f64) as usize).min(n - 1)
    }
    /// Log-uniform between 10^lo and 10^hi.
    fn decades(&mut self, lo: f64, hi: f64) -> f64 {
        10f64.powf(lo + (hi - lo) * self.next())
    }
}

/// An invented random network: species S0..S{n−1} (S0 and S1 absorb at 365 nm, the last is a
/// product), a chain of first-order steps S_i -> S_{i+1} so every species reaches the product,
/// extra first-order and bimolecular steps (one by an Eyring barrier), a short-form photo step
/// of S0 and S1, an excitation of S0 into T0 (rate channels, oxygen quenching, a barrier) and
/// a hot transient T1 with fixed fractions and "rest". Quantum yields of one absorber stay
/// below 0.9 and fractions below 0.8, away from the upper bounds.
pub fn random_network(seed: u64) -> String {
    let mut r = SplitMix(seed);
    let n = 4 + r.below(4);
    let mut s = String::from(
        "[conditions]\ntemperature = \"298.15 K\"\nvolume = \"1 mL\"\npath_length = \"1 cm\"\n\
         [[light]]\nkind = \"line\"\nwavelength = \"365 nm\"\npower = \"10 mW\"\n",
    );
    for i in 0..n {
        s.push_str(&format!("[[species]]\nname = \"S{i}\"\n"));
        if i < 2 {
            s.push_str(&format!(
                "initial = \"{:.3} µM\"\nepsilon = {{ at = \"365 nm\", value = \"{:.0} L/(mol cm)\" }}\n",
                1.0 + 20.0 * r.next(),
                200.0 + 5000.0 * r.next()
            ));
        }
        if i == n - 1 {
            s.push_str("product = true\n");
        }
    }
    s.push_str("[[species]]\nname = \"O2\"\ninitial = \"0.25 mM\"\n");
    let other = |r: &mut SplitMix, not: usize| {
        let j = 1 + r.below(n - 1);
        if j == not { (j % (n - 1)) + 1 } else { j }
    };
    for i in 0..n - 1 {
        s.push_str(&format!(
            "[[thermal]]\nequation = \"S{i} -> S{}\"\nrate = {{ k = \"{:.4e} /s\" }}\n",
            i + 1,
            r.decades(-4.0, 0.0)
        ));
    }
    for _ in 0..1 + r.below(3) {
        let a = r.below(n - 1);
        let b = other(&mut r, a);
        s.push_str(&format!(
            "[[thermal]]\nequation = \"S{a} -> S{b}\"\nrate = {{ k = \"{:.4e} /s\" }}\n",
            r.decades(-4.0, 0.0)
        ));
    }
    let a = 2 + r.below(n - 2);
    s.push_str(&format!(
        "[[thermal]]\nequation = \"S{} + S1 -> S{}\"\nrate = {{ k = \"{:.4e} /(M s)\" }}\n",
        a.min(n - 2),
        n - 1,
        r.decades(0.0, 4.0)
    ));
    s.push_str(&format!(
        "[[thermal]]\nequation = \"S1 -> S0\"\nrate = {{ barrier = \"{:.3} kcal/mol\" }}\n",
        19.0 + 3.0 * r.next()
    ));
    let (q0, eta) = (0.05 + 0.35 * r.next(), 0.1 + 0.4 * r.next());
    s.push_str(&format!(
        "[[photo]]\nname = \"S0 direct\"\nequation = \"S0 -> S{}\"\nquantum_yield = {q0:.4}\n",
        other(&mut r, 0)
    ));
    s.push_str(&format!(
        "[[photo]]\nname = \"S1 direct\"\nequation = \"S1 -> S{}\"\nquantum_yield = {:.4}\n",
        other(&mut r, 1),
        0.05 + 0.6 * r.next()
    ));
    s.push_str(&format!(
        "[[photo]]\nname = \"S0 excitation\"\nabsorber = \"S0\"\nexcites = \"T0\"\nefficiency = {eta:.4}\n"
    ));
    s.push_str(&format!(
        "[[transient]]\nname = \"T0\"\nkind = \"excited\"\nchannels = [\n  {{ to = \"S0\", rate = {{ k = \"{:.4e} /s\" }} }},\n  \
         {{ to = \"T1\", rate = {{ k = \"{:.4e} /s\" }} }},\n  {{ to = \"S{}\", rate = {{ barrier = \"{:.3} kcal/mol\" }} }},\n  \
         {{ to = \"S0\", quencher = \"O2\", rate = {{ k = \"{:.4e} /(M s)\" }} }},\n]\n",
        r.decades(7.0, 9.0),
        r.decades(7.0, 9.0),
        other(&mut r, 0),
        3.0 + 3.0 * r.next(),
        r.decades(9.0, 10.3),
    ));
    let (f1, f2) = (0.05 + 0.35 * r.next(), 0.05 + 0.35 * r.next());
    s.push_str(&format!(
        "[[transient]]\nname = \"T1\"\nkind = \"hot\"\nchannels = [\n  {{ to = \"S{}\", fraction = {f1:.4} }},\n  \
         {{ to = \"S{}\", fraction = {f2:.4} }},\n  {{ to = \"S0\", fraction = \"rest\" }},\n]\n",
        other(&mut r, 0),
        n - 1
    ));
    s
}

/// Robertson's problem (Robertson 1966; Hairer & Wanner, Solving ODEs II, §IV.10 uses it as
/// a stiff test problem) as a thermal network: it looks non-stiff at t = 0 (the only rate is
/// 0.04 /s) and turns stiff within a few milliseconds, once y2 has formed.
pub const ROBERTSON: &str = r#"
[conditions]
temperature = "298.15 K"
volume = "1 L"
path_length = "1 cm"
[[species]]
name = "y1"
initial = "1 M"
[[species]]
name = "y2"
[[species]]
name = "y3"
[[thermal]]
equation = "y1 -> y2"
rate = { k = "0.04 /s" }
[[thermal]]
equation = "2 y2 -> y2 + y3"
rate = { k = "3e7 /(M s)" }
[[thermal]]
equation = "y2 + y3 -> y1 + y3"
rate = { k = "1e4 /(M s)" }
"#;

/// Enright & Pryce, ACM TOMS 13(1), 1987, stiff test set problem D2 (Robertson rescaled:
/// Y2 = 1e4 y2, Y3 = 100 y3): y(40 s).
// The published digits, kept as printed even where f64 rounds the last one.
#[allow(clippy::excessive_precision)]
pub const ROBERTSON_40: [f64; 3] = [0.7158270687193941, 9.185534764557338e-6, 0.2841637457458413];
