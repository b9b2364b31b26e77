//! Quantities with their units written out: `"365 nm"`, `"50 mW"`, `"10 mM"`, `"25 kcal/mol"`.
//!
//! This is the only module that knows unit spellings. Every dimensional value in a network
//! file passes through [`parse`], which reads a number followed by a unit expression
//! (products by space or `*`, quotients by `/`, parentheses, exponents as `^2`, `2` or `²`),
//! checks its dimension against the [`Quantity`] the field expects, and returns the value
//! in photoledger's internal units:
//!
//! | quantity | internal unit |
//! |---|---|
//! | length, wavelength | m |
//! | area | m² |
//! | volume | m³ |
//! | time | s |
//! | temperature | K |
//! | concentration | mol/L (the one chemistry exception to SI) |
//! | power | W |
//! | photon flux | einstein/s (mol of photons per second) |
//! | irradiance | W/m² |
//! | molar energy | J/mol |
//! | molar entropy | J/(mol K) |
//! | rate constant of order n | (L/mol)^(n−1) s⁻¹ |
//! | molar absorption coefficient | L mol⁻¹ m⁻¹ (so that A = ε c l with c in mol/L and l in m) |

pub mod constants;
pub mod display;

pub use display::{format_concentration, format_time};

use constants::{AVOGADRO, CALORIE, CELSIUS_ZERO, ELEMENTARY_CHARGE, PLANCK, SPEED_OF_LIGHT};

/// What a field holds; decides which dimensions are accepted and the internal unit returned.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum Quantity {
    /// Vacuum wavelength of light, returned in m.
    Wavelength,
    /// A length (path length, tube diameter), returned in m.
    Length,
    /// An area (irradiated face), returned in m².
    Area,
    /// A volume, returned in m³.
    Volume,
    /// A duration, returned in s.
    Time,
    /// Absolute temperature (K or °C), returned in K.
    Temperature,
    /// Concentration, returned in mol/L.
    Concentration,
    /// Radiant power, returned in W.
    Power,
    /// Photon flux, returned in einstein/s.
    PhotonFlux,
    /// Irradiance, returned in W/m².
    Irradiance,
    /// Energy per mole (kJ/mol, kcal/mol; eV and cm⁻¹ per molecule), returned in J/mol.
    MolarEnergy,
    /// Entropy per mole, returned in J/(mol K).
    MolarEntropy,
    /// Rate constant of the given reaction order, returned in (L/mol)^(order−1) s⁻¹.
    RateConstant(u32),
    /// Molar absorption coefficient, returned in L mol⁻¹ m⁻¹.
    MolarAbsorption,
}

impl Quantity {
    /// A plain-words name of the quantity for messages.
    pub fn describe(self) -> String {
        match self {
            Quantity::Wavelength => "a wavelength".into(),
            Quantity::Length => "a length".into(),
            Quantity::Area => "an area".into(),
            Quantity::Volume => "a volume".into(),
            Quantity::Time => "a duration".into(),
            Quantity::Temperature => "a temperature".into(),
            Quantity::Concentration => "a concentration".into(),
            Quantity::Power => "a power".into(),
            Quantity::PhotonFlux => "a photon flux".into(),
            Quantity::Irradiance => "an irradiance".into(),
            Quantity::MolarEnergy => "a molar energy".into(),
            Quantity::MolarEntropy => "a molar entropy".into(),
            Quantity::RateConstant(n) => format!("a rate constant of order {n}"),
            Quantity::MolarAbsorption => "a molar absorption coefficient".into(),
        }
    }

    /// What is accepted, with an example, for messages.
    pub fn accepted(self) -> String {
        match self {
            Quantity::Wavelength => "a number with nm, µm or m, e.g. \"365 nm\"".into(),
            Quantity::Length => "a number with cm, mm, µm or m, e.g. \"1 cm\"".into(),
            Quantity::Area => "a number with cm2, mm2 or m2, e.g. \"4 cm2\"".into(),
            Quantity::Volume => "a number with L, mL, µL or m3, e.g. \"3 mL\"".into(),
            Quantity::Time => "a number with fs, ps, ns, µs, ms, s, min, h, d (day), e.g. \"30 min\"".into(),
            Quantity::Temperature => "a number with K or °C, e.g. \"298.15 K\"".into(),
            Quantity::Concentration => "a number with M, mM, µM, nM or mol/L, e.g. \"10 mM\"".into(),
            Quantity::Power => "a number with W, mW or µW, e.g. \"50 mW\"".into(),
            Quantity::PhotonFlux => {
                "a number with einstein/s, µeinstein/s or photons/s, e.g. \"2.5 µeinstein/s\"".into()
            }
            Quantity::Irradiance => "a number with W/m2 or mW/cm2, e.g. \"1000 W/m2\"".into(),
            Quantity::MolarEnergy => "a number with kJ/mol, kcal/mol, eV or cm-1, e.g. \"25 kcal/mol\"".into(),
            Quantity::MolarEntropy => "a number with J/(mol K) or cal/(mol K), e.g. \"-10 J/(mol K)\"".into(),
            Quantity::RateConstant(0) => "a number with M/s (or mol/(L s)), e.g. \"1e-6 M/s\"".into(),
            Quantity::RateConstant(1) => "a number with /s, /min, /h, e.g. \"0.04 /s\"".into(),
            Quantity::RateConstant(2) => "a number with /(M s) or L/(mol s), e.g. \"1e4 /(M s)\"".into(),
            Quantity::RateConstant(n) => format!("a number with /(M{} s), e.g. \"1 /(M{} s)\"", n - 1, n - 1),
            Quantity::MolarAbsorption => "a number with L/(mol cm) or M-1 cm-1, e.g. \"12000 L/(mol cm)\"".into(),
        }
    }
}

/// Why a quantity could not be read; `parse` callers add file, line and field.
#[derive(Debug, Clone, PartialEq)]
pub struct UnitError {
    /// What went wrong, in words.
    pub problem: String,
}

impl std::fmt::Display for UnitError {
    fn fmt(&self, f: &mut std::fmt::Formatter<'_>) -> std::fmt::Result {
        f.write_str(&self.problem)
    }
}

/// Exponents of the base dimensions: m, kg, s, mol, K, photon-amount (einstein).
type Dim = [i32; 6];

const LENGTH: Dim = [1, 0, 0, 0, 0, 0];
const AREA: Dim = [2, 0, 0, 0, 0, 0];
const VOLUME: Dim = [3, 0, 0, 0, 0, 0];
const TIME: Dim = [0, 0, 1, 0, 0, 0];
const TEMPERATURE: Dim = [0, 0, 0, 0, 1, 0];
const CONCENTRATION: Dim = [-3, 0, 0, 1, 0, 0];
const POWER: Dim = [2, 1, -3, 0, 0, 0];
const PHOTON_FLUX: Dim = [0, 0, -1, 0, 0, 1];
const IRRADIANCE: Dim = [0, 1, -3, 0, 0, 0];
const ENERGY: Dim = [2, 1, -2, 0, 0, 0];
const MOLAR_ENERGY: Dim = [2, 1, -2, -1, 0, 0];
const MOLAR_ENTROPY: Dim = [2, 1, -2, -1, -1, 0];
const WAVENUMBER: Dim = [-1, 0, 0, 0, 0, 0];
const MOLAR_ABSORPTION: Dim = [2, 0, 0, -1, 0, 0];
const NONE: Dim = [0; 6];

/// A unit: a factor to SI and its dimension.
#[derive(Debug, Clone, Copy)]
struct Unit {
    scale: f64,
    dim: Dim,
}

impl Unit {
    fn mul(self, o: Unit) -> Unit {
        let mut dim = self.dim;
        for (d, e) in dim.iter_mut().zip(o.dim) {
            *d += e;
        }
        Unit {
            scale: self.scale * o.scale,
            dim,
        }
    }
    fn powi(self, n: i32) -> Unit {
        Unit {
            scale: self.scale.powi(n),
            dim: self.dim.map(|d| d * n),
        }
    }
}

fn base(name: &str) -> Option<Unit> {
    let u = |scale: f64, dim: Dim| Some(Unit { scale, dim });
    match name {
        "m" => u(1.0, LENGTH),
        "g" => u(1e-3, [0, 1, 0, 0, 0, 0]),
        "s" | "sec" => u(1.0, TIME),
        "min" => u(60.0, TIME),
        "h" | "hr" | "hour" | "hours" => u(3600.0, TIME),
        "d" | "day" | "days" => u(86400.0, TIME),
        "week" | "weeks" => u(7.0 * 86400.0, TIME),
        // The Julian year (common practice), as `display` writes long durations.
        "yr" | "year" | "years" => u(display::YEAR, TIME),
        "mol" => u(1.0, [0, 0, 0, 1, 0, 0]),
        "M" => u(1000.0, CONCENTRATION),
        "L" | "l" => u(1e-3, VOLUME),
        "K" => u(1.0, TEMPERATURE),
        "J" => u(1.0, ENERGY),
        "W" => u(1.0, POWER),
        "eV" => u(ELEMENTARY_CHARGE, ENERGY),
        "cal" => u(CALORIE, ENERGY),
        "einstein" | "einsteins" | "E" => u(1.0, [0, 0, 0, 0, 0, 1]),
        "photon" | "photons" => u(1.0 / AVOGADRO, [0, 0, 0, 0, 0, 1]),
        "Hz" => u(1.0, [0, 0, -1, 0, 0, 0]),
        _ => None,
    }
}

/// Base symbols that take SI prefixes.
const PREFIXABLE: &[&str] = &[
    "m", "g", "s", "mol", "M", "L", "l", "J", "W", "eV", "cal", "einstein", "E", "Hz",
];

fn prefix(p: &str) -> Option<f64> {
    Some(match p {
        "f" => 1e-15,
        "p" => 1e-12,
        "n" => 1e-9,
        "µ" | "μ" | "u" => 1e-6,
        "m" => 1e-3,
        "c" => 1e-2,
        "d" => 1e-1,
        "k" => 1e3,
        "M" => 1e6,
        "G" => 1e9,
        _ => return None,
    })
}

fn symbol(name: &str) -> Option<Unit> {
    if let Some(u) = base(name) {
        return Some(u);
    }
    for b in PREFIXABLE {
        if let Some(p) = name.strip_suffix(b)
            && let Some(f) = prefix(p)
        {
            let u = base(b)?;
            return Some(Unit {
                scale: u.scale * f,
                dim: u.dim,
            });
        }
    }
    None
}

/// Normalise typography: unicode minus, superscripts, middle dots.
fn normalise(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.trim().chars() {
        match c {
            '−' | '–' => out.push('-'),
            '·' | '⋅' | '×' => out.push('*'),
            '⁻' => out.push_str("^-"),
            '⁰' => out.push('0'),
            '¹' => out.push('1'),
            '²' => out.push('2'),
            '³' => out.push('3'),
            '⁴' => out.push('4'),
            _ => out.push(c),
        }
    }
    // "^-" followed by a digit that was already preceded by '^' from a superscript minus.
    out.replace("^^", "^")
}

/// Split "12.5e-3 mM" into the number and the unit text.
fn split_number(s: &str) -> Result<(f64, &str), UnitError> {
    let end = s
        .char_indices()
        .take_while(|(_, c)| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-'))
        .map(|(i, c)| i + c.len_utf8())
        .last()
        .unwrap_or(0);
    // Take the longest prefix that parses, so "2eV" reads as 2 and "eV".
    for cut in (1..=end).rev() {
        if !s.is_char_boundary(cut) {
            continue;
        }
        if let Ok(v) = s[..cut].parse::<f64>() {
            return Ok((v, s[cut..].trim()));
        }
    }
    let lower = s.trim_start_matches(['+', '-']).to_ascii_lowercase();
    if lower.starts_with("inf") || lower.starts_with("nan") {
        return Err(UnitError {
            problem: format!("\"{s}\" is not a finite number"),
        });
    }
    Err(UnitError {
        problem: format!("\"{s}\" does not start with a number"),
    })
}

struct UnitParser<'a> {
    chars: Vec<char>,
    pos: usize,
    text: &'a str,
}

impl UnitParser<'_> {
    fn peek(&self) -> Option<char> {
        self.chars.get(self.pos).copied()
    }
    fn skip_ws(&mut self) -> bool {
        let start = self.pos;
        while self.peek().is_some_and(char::is_whitespace) {
            self.pos += 1;
        }
        self.pos > start
    }
    fn err(&self, what: &str) -> UnitError {
        UnitError {
            problem: format!("cannot read the unit \"{}\": {what}", self.text),
        }
    }

    /// expr := factor ((ws | '*' | '/') factor)*; after '/', juxtaposed factors stay in the
    /// denominator until the next '*' or '/', so "J/mol K" reads as J/(mol K).
    fn expr(&mut self) -> Result<Unit, UnitError> {
        let mut acc = Unit { scale: 1.0, dim: NONE };
        let mut dividing = false;
        self.skip_ws();
        if self.peek() == Some('/') {
            // "/s" is 1/s
            self.pos += 1;
            dividing = true;
            self.skip_ws();
        }
        let mut depth_guard = 0;
        loop {
            depth_guard += 1;
            if depth_guard > 64 {
                return Err(self.err("too long"));
            }
            let f = self.factor()?;
            acc = acc.mul(if dividing { f.powi(-1) } else { f });
            self.skip_ws();
            match self.peek() {
                None | Some(')') => return Ok(acc),
                Some('*') => {
                    self.pos += 1;
                    dividing = false;
                    self.skip_ws();
                }
                Some('/') => {
                    self.pos += 1;
                    dividing = true;
                    self.skip_ws();
                }
                Some(_) => {} // juxtaposition
            }
        }
    }

    fn exponent(&mut self) -> Result<i32, UnitError> {
        let mut had_caret = false;
        if self.peek() == Some('^') {
            self.pos += 1;
            had_caret = true;
        }
        let start = self.pos;
        if self.peek() == Some('-') || self.peek() == Some('+') {
            self.pos += 1;
        }
        while self.peek().is_some_and(|c| c.is_ascii_digit()) {
            self.pos += 1;
        }
        let s: String = self.chars[start..self.pos].iter().collect();
        if s.is_empty() {
            if had_caret {
                return Err(self.err("'^' without an exponent"));
            }
            return Ok(1);
        }
        s.parse::<i32>()
            .ok()
            .filter(|n| n.abs() <= 12)
            .ok_or_else(|| self.err("bad exponent"))
    }

    fn factor(&mut self) -> Result<Unit, UnitError> {
        match self.peek() {
            Some('(') => {
                self.pos += 1;
                let inner = self.expr()?;
                if self.peek() != Some(')') {
                    return Err(self.err("missing ')'"));
                }
                self.pos += 1;
                let n = self.exponent()?;
                Ok(inner.powi(n))
            }
            Some('1') => {
                self.pos += 1;
                Ok(Unit { scale: 1.0, dim: NONE })
            }
            Some('°') => Err(self.err("°C is accepted only on its own, for temperatures")),
            Some(c) if c.is_alphabetic() => {
                let start = self.pos;
                while self.peek().is_some_and(|c| c.is_alphabetic()) {
                    self.pos += 1;
                }
                let name: String = self.chars[start..self.pos].iter().collect();
                let u = symbol(&name).ok_or_else(|| self.err(&format!("unknown unit symbol \"{name}\"")))?;
                let n = self.exponent()?;
                Ok(u.powi(n))
            }
            Some(c) => Err(self.err(&format!("unexpected '{c}'"))),
            None => Err(self.err("it ends too early")),
        }
    }
}

fn parse_unit(text: &str) -> Result<Unit, UnitError> {
    let mut p = UnitParser {
        chars: text.chars().collect(),
        pos: 0,
        text,
    };
    let u = p.expr()?;
    if p.pos != p.chars.len() {
        return Err(p.err("unbalanced ')'"));
    }
    Ok(u)
}

/// Read `text` as the quantity `q` and return it in the internal unit (see the module table).
///
/// A missing unit, an unknown symbol or a unit of the wrong dimension is an error that
/// says what was found; callers add the file, line and field.
pub fn parse(text: &str, q: Quantity) -> Result<f64, UnitError> {
    let norm = normalise(text);
    let (value, unit_text) = split_number(&norm)?;
    if !value.is_finite() {
        return Err(UnitError {
            problem: format!("\"{text}\" is not a finite number"),
        });
    }
    if unit_text.is_empty() {
        return Err(UnitError {
            problem: format!("\"{text}\" has no unit"),
        });
    }
    if q == Quantity::Temperature {
        match unit_text {
            "K" => return Ok(value),
            "°C" | "degC" | "ºC" | "℃" => return Ok(value + CELSIUS_ZERO),
            _ => {}
        }
    }
    let unit = parse_unit(unit_text)?;
    let si = value * unit.scale;
    let wrong = || UnitError {
        problem: format!(
            "\"{text}\" is not {}: its unit \"{unit_text}\" has the wrong dimension",
            q.describe()
        ),
    };
    let want = |d: Dim| if unit.dim == d { Ok(si) } else { Err(wrong()) };
    match q {
        Quantity::Wavelength | Quantity::Length => want(LENGTH),
        Quantity::Area => want(AREA),
        Quantity::Volume => want(VOLUME),
        Quantity::Time => want(TIME),
        Quantity::Temperature => want(TEMPERATURE),
        Quantity::Concentration => want(CONCENTRATION).map(|v| v / 1000.0),
        Quantity::Power => want(POWER),
        Quantity::PhotonFlux => want(PHOTON_FLUX),
        Quantity::Irradiance => want(IRRADIANCE),
        Quantity::MolarEnergy => match unit.dim {
            MOLAR_ENERGY => Ok(si),
            // Per molecule only in electronvolts: "23.5 kcal" without /mol is a slip, not a choice.
            ENERGY if unit_text.trim().ends_with("eV") => Ok(si * AVOGADRO),
            WAVENUMBER => Ok(si * PLANCK * SPEED_OF_LIGHT * AVOGADRO),
            _ => Err(wrong()),
        },
        Quantity::MolarEntropy => want(MOLAR_ENTROPY),
        Quantity::RateConstant(n) => {
            let k = n.min(8) as i32 - 1;
            // (m³/mol)^(n-1) / s
            let dim: Dim = [3 * k, 0, -1, -k, 0, 0];
            want(dim).map(|v| v * 1000f64.powi(k))
        }
        // m²/mol -> L/(mol m): 1 m²/mol = 1000 L/(mol m)
        Quantity::MolarAbsorption => want(MOLAR_ABSORPTION).map(|v| v * 1000.0),
    }
}

/// Every quantity a field can hold, in the order [`identify`] tries them (rate constants of
/// order 0 to 4).
pub const ALL: [Quantity; 17] = [
    Quantity::Length,
    Quantity::Area,
    Quantity::Volume,
    Quantity::Time,
    Quantity::Temperature,
    Quantity::Concentration,
    Quantity::Power,
    Quantity::PhotonFlux,
    Quantity::Irradiance,
    Quantity::MolarEnergy,
    Quantity::MolarEntropy,
    Quantity::RateConstant(0),
    Quantity::RateConstant(1),
    Quantity::RateConstant(2),
    Quantity::RateConstant(3),
    Quantity::RateConstant(4),
    Quantity::MolarAbsorption,
];

/// Which quantity `text` ("23.5 kcal/mol", "20 mW") is, and its value in the internal unit:
/// the first of [`ALL`] it parses as. Wavelengths come back as [`Quantity::Length`] (same unit).
pub fn identify(text: &str) -> Result<(Quantity, f64), UnitError> {
    let mut first_err = None;
    for q in ALL {
        match parse(text, q) {
            Ok(v) => return Ok((q, v)),
            Err(e) => {
                first_err.get_or_insert(e);
            }
        }
    }
    let norm = normalise(text);
    let (_, unit_text) = split_number(&norm)?;
    if unit_text.is_empty() {
        return Err(first_err.unwrap_or(UnitError {
            problem: format!("\"{text}\" has no unit"),
        }));
    }
    Err(UnitError {
        problem: format!("\"{text}\": the unit \"{unit_text}\" is not one a network value can have"),
    })
}

/// A unit spelling that [`parse`] reads as exactly one internal unit of `q`, so that
/// `format!("{v:e} {}", internal_spelling(q))` writes an internal value back as text.
///
/// The one source of these spellings: `--set` values, fit and uncertainty files use it. Rate
/// constants of order above 8 are spelled as order 8 (the parser reads orders up to 8).
pub fn internal_spelling(q: Quantity) -> &'static str {
    match q {
        Quantity::Wavelength | Quantity::Length => "m",
        Quantity::Area => "m2",
        Quantity::Volume => "m3",
        Quantity::Time => "s",
        Quantity::Temperature => "K",
        Quantity::Concentration => "M",
        Quantity::Power => "W",
        Quantity::PhotonFlux => "einstein/s",
        Quantity::Irradiance => "W/m2",
        Quantity::MolarEnergy => "J/mol",
        Quantity::MolarEntropy => "J/(mol K)",
        Quantity::RateConstant(n) => {
            const RATE: [&str; 9] = [
                "M/s", "/s", "/(M s)", "/(M2 s)", "/(M3 s)", "/(M4 s)", "/(M5 s)", "/(M6 s)", "/(M7 s)",
            ];
            RATE[(n as usize).min(RATE.len() - 1)]
        }
        Quantity::MolarAbsorption => "L/(mol m)",
    }
}

/// A dimensionless share (quantum yield, efficiency, channel fraction): a plain number, or a
/// percentage written with `%` ("12 %" = 0.12). Range checks are the caller's.
pub fn fraction(text: &str) -> Result<f64, String> {
    let t = text.trim();
    let (num, per) = match t.strip_suffix('%') {
        Some(n) => (n.trim_end(), 100.0),
        None => (t, 1.0),
    };
    match num.parse::<f64>() {
        Ok(x) if x.is_finite() => Ok(x / per),
        _ => Err(format!(
            "\"{text}\" is not a number or a percentage (write 0.12 or \"12 %\")"
        )),
    }
}

/// Convert a molar absorption coefficient from the trade's L mol⁻¹ cm⁻¹ to the internal L mol⁻¹ m⁻¹.
pub fn epsilon_from_per_cm(eps_l_per_mol_cm: f64) -> f64 {
    eps_l_per_mol_cm * 100.0
}

/// Convert an internal molar absorption coefficient (L mol⁻¹ m⁻¹) to L mol⁻¹ cm⁻¹ for display.
pub fn epsilon_to_per_cm(eps_l_per_mol_m: f64) -> f64 {
    eps_l_per_mol_m / 100.0
}

/// `v` rounded to `n` significant figures, without trailing zeros, in plain or e-notation.
/// Zero reads "0" whatever its sign bit: −0 (an empty float sum, a product with −1) is no
/// quantity a reader should see signed.
pub fn sig(v: f64, n: usize) -> String {
    if v == 0.0 {
        return "0".into();
    }
    if !v.is_finite() {
        return format!("{v}");
    }
    let mag = v.abs().log10().floor() as i32;
    if !(-4..6).contains(&mag) {
        return format!("{:.*e}", n.saturating_sub(1), v);
    }
    let decimals = (n as i32 - 1 - mag).max(0) as usize;
    let s = format!("{v:.decimals$}");
    if s.contains('.') {
        s.trim_end_matches('0').trim_end_matches('.').to_string()
    } else {
        s
    }
}

#[cfg(test)]
mod tests {
    #[test]
    fn zero_has_no_sign_when_shown() {
        assert_eq!(super::sig(-0.0, 4), "0");
        assert_eq!(super::sig(0.0, 4), "0");
        assert_eq!(super::sig(-1.5e-20, 2), "-1.5e-20");
        assert_eq!(super::display::format_concentration(-0.0), "0 M");
    }

    #[test]
    fn internal_spelling_reads_back_as_one_internal_unit() {
        for q in ALL {
            let text = format!("2.5e-3 {}", internal_spelling(q));
            let v = parse(&text, q).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!((v - 2.5e-3).abs() <= 1e-15 * 2.5e-3 + 1e-300, "{text} -> {v}");
            assert_eq!(identify(&text).map(|x| x.0), Ok(q), "{text}");
        }
        assert_eq!(identify("23.5 kcal/mol").map(|x| x.0), Ok(Quantity::MolarEnergy));
        assert!(identify("3 furlongs").is_err());
        assert!(identify("3").is_err());
        // Every order the parser reads back from its spelling, 0..=4 in particular.
        for n in 0..=8 {
            let q = Quantity::RateConstant(n);
            let v = parse(&format!("7 {}", internal_spelling(q)), q).unwrap_or_else(|e| panic!("order {n}: {e}"));
            assert!((v - 7.0).abs() < 1e-12, "order {n}: {v}");
        }
        assert_eq!(internal_spelling(Quantity::RateConstant(0)), "M/s");
        assert_eq!(internal_spelling(Quantity::RateConstant(4)), "/(M3 s)");
    }

    use super::*;

    fn close(a: f64, b: f64) -> bool {
        (a - b).abs() <= 1e-12 * b.abs().max(1e-300)
    }

    #[test]
    fn reads_the_everyday_units() {
        assert!(close(parse("365 nm", Quantity::Wavelength).unwrap(), 365e-9));
        assert!(close(parse("50 mW", Quantity::Power).unwrap(), 0.05));
        assert!(close(parse("10 mM", Quantity::Concentration).unwrap(), 0.01));
        assert!(close(parse("2.5 µM", Quantity::Concentration).unwrap(), 2.5e-6));
        assert!(close(parse("3 mL", Quantity::Volume).unwrap(), 3e-6));
        assert!(close(parse("1 cm", Quantity::Length).unwrap(), 0.01));
        assert!(close(parse("4 cm2", Quantity::Area).unwrap(), 4e-4));
        assert!(close(parse("4 cm²", Quantity::Area).unwrap(), 4e-4));
        assert!(close(parse("30 min", Quantity::Time).unwrap(), 1800.0));
        assert!(close(parse("2 days", Quantity::Time).unwrap(), 172800.0));
        assert!(close(parse("150 fs", Quantity::Time).unwrap(), 150e-15));
        assert!(close(parse("25 °C", Quantity::Temperature).unwrap(), 298.15));
        assert!(close(parse("310 K", Quantity::Temperature).unwrap(), 310.0));
        assert!(close(parse("2 µeinstein/s", Quantity::PhotonFlux).unwrap(), 2e-6));
        assert!(close(parse("1000 W/m2", Quantity::Irradiance).unwrap(), 1000.0));
        assert!(close(parse("100 mW/cm2", Quantity::Irradiance).unwrap(), 1000.0));
    }

    #[test]
    fn photons_per_second_use_avogadro() {
        // CODATA 2018: N_A = 6.02214076e23 /mol exactly.
        let q = parse("6.02214076e17 photons/s", Quantity::PhotonFlux).unwrap();
        assert!(close(q, 1e-6), "{q}");
    }

    #[test]
    fn molar_energies() {
        // 1 kcal = 4.184 kJ (thermochemical calorie, exact by definition).
        assert!(close(parse("25 kcal/mol", Quantity::MolarEnergy).unwrap(), 104_600.0));
        assert!(close(parse("95 kJ/mol", Quantity::MolarEnergy).unwrap(), 95_000.0));
        // 1 eV per molecule = e N_A J/mol = 96485.33212 J/mol (CODATA 2018 exact e and N_A).
        let ev = parse("1 eV", Quantity::MolarEnergy).unwrap();
        assert!((ev - 96_485.332_12).abs() < 1e-4, "{ev}");
        // 1 cm-1 = h c N_A × 100 J/mol = 11.962656 J/mol.
        let wn = parse("1 cm-1", Quantity::MolarEnergy).unwrap();
        assert!((wn - 11.962_656).abs() < 1e-5, "{wn}");
        let wn2 = parse("1 cm⁻¹", Quantity::MolarEnergy).unwrap();
        assert!(close(wn, wn2));
        let s = parse("-10 J/(mol K)", Quantity::MolarEntropy).unwrap();
        assert!(close(s, -10.0));
        let s2 = parse("-10 J/mol K", Quantity::MolarEntropy).unwrap();
        assert!(close(s2, -10.0));
        let s3 = parse("-10 J mol-1 K-1", Quantity::MolarEntropy).unwrap();
        assert!(close(s3, -10.0));
    }

    #[test]
    fn rate_constants_of_each_order() {
        assert!(close(parse("0.04 /s", Quantity::RateConstant(1)).unwrap(), 0.04));
        assert!(close(parse("0.04 s-1", Quantity::RateConstant(1)).unwrap(), 0.04));
        assert!(close(parse("6 /min", Quantity::RateConstant(1)).unwrap(), 0.1));
        assert!(close(parse("3e7 /(M s)", Quantity::RateConstant(2)).unwrap(), 3e7));
        assert!(close(parse("3e7 L/(mol s)", Quantity::RateConstant(2)).unwrap(), 3e7));
        assert!(close(parse("3e7 M-1 s-1", Quantity::RateConstant(2)).unwrap(), 3e7));
        assert!(close(parse("1e-6 M/s", Quantity::RateConstant(0)).unwrap(), 1e-6));
        assert!(close(parse("2 /(M2 s)", Quantity::RateConstant(3)).unwrap(), 2.0));
        assert!(parse("3e7 /s", Quantity::RateConstant(2)).is_err());
    }

    #[test]
    fn molar_absorption_in_internal_units() {
        let e = parse("12000 L/(mol cm)", Quantity::MolarAbsorption).unwrap();
        assert!(close(e, epsilon_from_per_cm(12000.0)));
        let e2 = parse("12000 M-1 cm-1", Quantity::MolarAbsorption).unwrap();
        assert!(close(e2, e));
    }

    #[test]
    fn errors_say_what_was_found() {
        let e = parse("365", Quantity::Wavelength).unwrap_err();
        assert!(e.problem.contains("no unit"), "{e}");
        let e = parse("365 mW", Quantity::Wavelength).unwrap_err();
        assert!(e.problem.contains("wrong dimension"), "{e}");
        let e = parse("5 furlongs", Quantity::Length).unwrap_err();
        assert!(e.problem.contains("furlongs"), "{e}");
        let e = parse("nm", Quantity::Length).unwrap_err();
        assert!(e.problem.contains("number"), "{e}");
        assert!(parse("inf nm", Quantity::Length).is_err());
        assert!(parse("NaN nm", Quantity::Length).is_err());
        assert!(parse("1 (nm", Quantity::Length).is_err());
        assert!(parse("1 nm)", Quantity::Length).is_err());
        assert!(parse("1 nm^", Quantity::Length).is_err());
    }

    #[test]
    fn significant_figures() {
        assert_eq!(sig(4.56789, 3), "4.57");
        assert_eq!(sig(1200.0, 3), "1200");
        assert_eq!(sig(0.000_123_4, 2), "0.00012");
        assert_eq!(sig(1.5e-9, 2), "1.5e-9");
        assert_eq!(format_time(5400.0), "1.5 h");
        assert_eq!(format_concentration(0.01), "10 mM");
    }

    #[test]
    fn fractions_and_percentages() {
        // 12 % = 0.12, 0.12 % = 0.0012 (common practice: per cent is a factor 1/100).
        assert_eq!(fraction("12 %").unwrap(), 0.12);
        assert!((fraction("0.12%").unwrap() - 0.0012).abs() < 1e-18);
        assert_eq!(fraction(" 0.3 ").unwrap(), 0.3);
        assert!(fraction("12 percent").is_err());
        assert!(fraction("%").is_err());
        assert!(fraction("inf %").is_err());
    }
}
