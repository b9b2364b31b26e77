//! Display units: the one place that decides in which unit a value is shown.
//!
//! **The rule.** A value is shown in the largest unit of its ladder in which its magnitude is at
//! least 1 ("5400 s" is "1.5 h", "5e-5 M" is "50 µM"); a magnitude below the smallest unit uses
//! the smallest unit. Zero, NaN and infinite values use the ladder's internal unit (s, M, W,
//! einstein). A set of values shown together (a plot axis, a table column, a histogram) uses the
//! unit of its largest finite magnitude ([`largest`]), so a plot and a table of the same run pick
//! the same unit. The sign never changes the choice.
//!
//! Every spelling here reads back with [`super::parse`] (tested), so a displayed value can be
//! pasted into a network file or a `--set` value.

use super::{Quantity, sig};

/// A ladder of (how many internal units one display unit is, its spelling), largest first.
pub type Ladder = [(f64, &'static str)];

/// The Julian year, 365.25 d, in s (common practice for "yr").
pub const YEAR: f64 = 365.25 * 86_400.0;

/// Durations (from s).
pub const TIME: [(f64, &str); 10] = [
    (YEAR, "yr"),
    (86_400.0, "d"),
    (3600.0, "h"),
    (60.0, "min"),
    (1.0, "s"),
    (1e-3, "ms"),
    (1e-6, "µs"),
    (1e-9, "ns"),
    (1e-12, "ps"),
    (1e-15, "fs"),
];

/// Concentrations (from mol/L).
pub const CONCENTRATION: [(f64, &str); 5] = [(1.0, "M"), (1e-3, "mM"), (1e-6, "µM"), (1e-9, "nM"), (1e-12, "pM")];

/// Photon amounts (from einstein, mol of photons). No "meinstein": the trade writes µeinstein
/// from 1e-6 up to 1e-3 einstein and einstein above (common practice).
pub const EINSTEIN: [(f64, &str); 4] = [
    (1.0, "einstein"),
    (1e-6, "µeinstein"),
    (1e-9, "neinstein"),
    (1e-12, "peinstein"),
];

/// Photon fluxes (from einstein/s), with the prefixes of [`EINSTEIN`].
pub const PHOTON_FLUX: [(f64, &str); 4] = [
    (1.0, "einstein/s"),
    (1e-6, "µeinstein/s"),
    (1e-9, "neinstein/s"),
    (1e-12, "peinstein/s"),
];

/// Amounts of substance (from mol).
pub const AMOUNT: [(f64, &str); 5] = [
    (1.0, "mol"),
    (1e-3, "mmol"),
    (1e-6, "µmol"),
    (1e-9, "nmol"),
    (1e-12, "pmol"),
];

/// Volumes in m³ (a reactor's litres to a cuvette's microlitres).
pub const VOLUME: [(f64, &str); 3] = [(1e-3, "L"), (1e-6, "mL"), (1e-9, "µL")];

/// Lengths in m from 10 µm up (path lengths, channel sizes): m, cm, mm, µm.
pub const LENGTH: [(f64, &str); 4] = [(1.0, "m"), (1e-2, "cm"), (1e-3, "mm"), (1e-6, "µm")];

/// Radiant powers (from W).
pub const POWER: [(f64, &str); 5] = [(1e3, "kW"), (1.0, "W"), (1e-3, "mW"), (1e-6, "µW"), (1e-9, "nW")];

/// Amounts of energy (from J): radiant and electrical energy into a sample. kWh, the unit a
/// wall socket is billed in, above 3.6 MJ (common practice).
pub const ENERGY: [(f64, &str); 4] = [(3.6e6, "kWh"), (1e3, "kJ"), (1.0, "J"), (1e-3, "mJ")];

/// An amount of energy in J for reading: "56 mJ", "2.1 kWh" (see [`format`]).
pub fn format_energy_amount(joule: f64) -> String {
    format(joule, &ENERGY)
}

/// The family of molar energies a network file was written in: its barriers, activation
/// energies and E₀ are shown in it everywhere (text, tables, the fitted network written back),
/// with the other family beside it in tables. JSON and CSV keep J/mol. Set once by the network
/// builder from the units the file's energies were written with (`Network::energy_unit`).
#[derive(Debug, Clone, Copy, PartialEq, Eq, Default)]
pub enum EnergyUnit {
    /// kJ/mol (also the choice for files written in J/mol, eV or cm⁻¹).
    #[default]
    KjPerMol,
    /// kcal/mol (thermochemical calorie, 4.184 J exactly).
    KcalPerMol,
}

impl EnergyUnit {
    /// The spelling: "kJ/mol" or "kcal/mol".
    pub fn spelling(self) -> &'static str {
        match self {
            EnergyUnit::KjPerMol => "kJ/mol",
            EnergyUnit::KcalPerMol => "kcal/mol",
        }
    }

    /// J/mol in one unit of the family.
    pub fn factor(self) -> f64 {
        match self {
            EnergyUnit::KjPerMol => 1000.0,
            EnergyUnit::KcalPerMol => 1000.0 * super::constants::CALORIE,
        }
    }

    /// The other family (shown beside in tables).
    pub fn other(self) -> EnergyUnit {
        match self {
            EnergyUnit::KjPerMol => EnergyUnit::KcalPerMol,
            EnergyUnit::KcalPerMol => EnergyUnit::KjPerMol,
        }
    }

    /// The family a written molar energy ("23.5 kcal/mol", "96 kJ/mol") belongs to; `None` for
    /// other spellings (eV, cm⁻¹, a plain number), which choose no family.
    pub fn of_text(text: &str) -> Option<EnergyUnit> {
        let unit: String = text
            .trim()
            .trim_start_matches(|c: char| c.is_ascii_digit() || matches!(c, '.' | 'e' | 'E' | '+' | '-' | '−'))
            .chars()
            .filter(|c| !c.is_whitespace())
            .collect::<String>()
            .to_lowercase();
        if unit.starts_with("kcal/mol") || unit.starts_with("cal/mol") {
            Some(EnergyUnit::KcalPerMol)
        } else if unit.starts_with("kj/mol") || unit.starts_with("j/mol") {
            Some(EnergyUnit::KjPerMol)
        } else {
            None
        }
    }
}

/// A molar energy in J/mol in `family`, 4 significant figures: "23.5 kcal/mol".
pub fn format_energy(j_per_mol: f64, family: EnergyUnit) -> String {
    format!("{} {}", sig(j_per_mol / family.factor(), 4), family.spelling())
}

/// A molar energy in J/mol in `family` with the other family beside it, for tables and
/// verdicts: "23.5 kcal/mol (98.32 kJ/mol)".
pub fn format_energy_beside(j_per_mol: f64, family: EnergyUnit) -> String {
    format!(
        "{} ({})",
        format_energy(j_per_mol, family),
        format_energy(j_per_mol, family.other())
    )
}

/// A rate constant of reaction order `order` (internal unit, (L/mol)^(order−1) s⁻¹), 4
/// significant figures and its unit: "3.695e-5 s⁻¹", "8 M⁻¹ s⁻¹".
pub fn format_rate_constant(k: f64, order: u32) -> String {
    format!("{} {}", sig(k, 4), rate_constant(order))
}

/// A radiant power in W for reading: "175 W", "20 mW" (see [`format`]).
pub fn format_power(watt: f64) -> String {
    format(watt, &POWER)
}

/// An amount of substance in mol for reading: "1.58 µmol" (see [`format`]).
pub fn format_amount(mol: f64) -> String {
    format(mol, &AMOUNT)
}

/// A photon amount in einstein for reading: "626 µeinstein", "25.9 neinstein" (see [`format`]).
pub fn format_photons(einstein: f64) -> String {
    format(einstein, &EINSTEIN)
}

/// A photon flux in einstein/s for reading: "25.9 neinstein/s" (see [`format`]).
pub fn format_photon_flux(einstein_per_s: f64) -> String {
    format(einstein_per_s, &PHOTON_FLUX)
}

/// The unit of `ladder` for `value` by the module's rule: (internal units per display unit,
/// spelling). Divide the value by the first to show it in the second.
pub fn pick(value: f64, ladder: &Ladder) -> (f64, &'static str) {
    let a = value.abs();
    if a == 0.0 || !a.is_finite() {
        return ladder
            .iter()
            .copied()
            .find(|(f, _)| *f == 1.0)
            .or_else(|| ladder.last().copied())
            .unwrap_or((1.0, ""));
    }
    ladder
        .iter()
        .copied()
        .find(|(f, _)| a >= *f)
        .or_else(|| ladder.last().copied())
        .unwrap_or((1.0, ""))
}

/// The largest finite magnitude of `values` (0 when there is none): what a set of values shown
/// together picks its unit by.
pub fn largest(values: impl IntoIterator<Item = f64>) -> f64 {
    values
        .into_iter()
        .filter(|v| v.is_finite())
        .fold(0.0, |m, v| m.max(v.abs()))
}

/// The display unit of a duration in s: (s per unit, spelling), e.g. `time(7200.0) == (3600.0, "h")`.
pub fn time(seconds: f64) -> (f64, &'static str) {
    pick(seconds, &TIME)
}

/// The display unit of a concentration in mol/L, e.g. `concentration(5e-5) == (1e-6, "µM")`.
pub fn concentration(mol_per_l: f64) -> (f64, &'static str) {
    pick(mol_per_l, &CONCENTRATION)
}

/// The display unit of a photon amount in einstein.
pub fn photons(einstein: f64) -> (f64, &'static str) {
    pick(einstein, &EINSTEIN)
}

/// The display unit of a radiant power in W.
pub fn power(watt: f64) -> (f64, &'static str) {
    pick(watt, &POWER)
}

/// `value` (internal unit of `ladder`) in its display unit with 3 significant figures,
/// trailing zeros dropped: "1.5 h", "10 mM", "0 s", "NaN s".
/// The unit is picked on the value rounded to the 3 figures shown, so 3599.99 s reads "1 h",
/// never "60 min".
pub fn format(value: f64, ladder: &Ladder) -> String {
    let (f, u) = pick(round_sig(value, 3), ladder);
    format!("{} {u}", sig(value / f, 3))
}

/// `v` rounded to `n` significant figures (unchanged when zero or not finite).
fn round_sig(v: f64, n: i32) -> f64 {
    if v == 0.0 || !v.is_finite() {
        return v;
    }
    let scale = 10f64.powi(v.abs().log10().floor() as i32 - (n - 1));
    (v / scale).round() * scale
}

/// A duration in s for reading: "1.5 h", "45 ms" (see [`format`]).
pub fn format_time(seconds: f64) -> String {
    format(seconds, &TIME)
}

/// A concentration in mol/L for reading: "10 mM", "2.5 µM" (see [`format`]).
pub fn format_concentration(mol_per_l: f64) -> String {
    format(mol_per_l, &CONCENTRATION)
}

/// A plain number for reading, 4 significant figures, trailing zeros dropped: "2.019", "150",
/// "0.0125"; scientific only below 1e-4 or from 1e6 in magnitude ("1.5e7"). For ratios and
/// factors, which have no unit.
pub fn number(value: f64) -> String {
    sig(value, 4)
}

/// The round-off limit of a computed value: magnitudes at most this are not distinguishable
/// from zero by the computation that made them (an integrator's absolute tolerance, in the
/// value's internal unit). Shown values within it read 0; CSV and JSON keep the raw number and
/// state the limit beside it.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct ZeroWithin(pub f64);

/// Relative round-off of a statistic of the Markov-chain solve (a yield, a quantum yield, their
/// standard deviation): a sparse LU solve in double precision is good to about 1e-13 to 1e-12
/// of the largest value on well-conditioned chains (machine ε ≈ 2.2e-16 times a condition
/// number up to ~1e3 times growth); 1e-10 leaves a margin of a hundred for worse ones.
pub const CHAIN_ROUNDOFF: f64 = 1e-10;

impl ZeroWithin {
    /// No limit: every value shown as computed.
    pub const NONE: ZeroWithin = ZeroWithin(0.0);

    /// `rel` of the magnitude `scale` (e.g. [`CHAIN_ROUNDOFF`] of a mean).
    pub fn relative(scale: f64, rel: f64) -> Self {
        ZeroWithin((scale.abs() * rel).max(0.0))
    }

    /// The limit of an exact derivative dY/dp when each Y carries round-off `rel` of `scale`: a
    /// derivative whose effect over a unit relative change of p, |dY/dp|·|p|, stays within the
    /// round-off rel·scale is not a dependence. E.g. a yield pinned at 1 by [`CHAIN_ROUNDOFF`],
    /// p = 0.5: |dY/dp| ≤ 2e-10 reads 0. A p of 0 (or not finite) gives no limit.
    pub fn derivative(scale: f64, rel: f64, p: f64) -> Self {
        let span = p.abs();
        if span > 0.0 && span.is_finite() {
            ZeroWithin((scale.abs() * rel / span).max(0.0))
        } else {
            ZeroWithin::NONE
        }
    }

    /// The value to show: 0 when its magnitude is within the limit (so round-off such as
    /// −1.6e-15 mol/L reads 0, never a negative concentration), otherwise the value itself.
    /// NaN and infinite values pass through unchanged.
    pub fn shown(self, value: f64) -> f64 {
        if value.abs() <= self.0 { 0.0 } else { value }
    }
}

/// [`format_concentration`] of a computed concentration with round-off limit `zero` (the
/// integrator's absolute tolerance): "0 M" within it, e.g. for −1.58e-15 mol/L at atol 1e-12.
pub fn format_concentration_within(mol_per_l: f64, zero: ZeroWithin) -> String {
    format_concentration(zero.shown(mol_per_l))
}

/// The unit of a rate constant of reaction order `order` for display, with superscripts:
/// "M s⁻¹" (order 0), "s⁻¹", "M⁻¹ s⁻¹", "M⁻² s⁻¹", ... The value is the internal one
/// ((L/mol)^(order−1) s⁻¹, see [`super::internal_spelling`]): no factor to apply.
pub fn rate_constant(order: u32) -> &'static str {
    const SPELLINGS: [&str; 9] = [
        "M s⁻¹",
        "s⁻¹",
        "M⁻¹ s⁻¹",
        "M⁻² s⁻¹",
        "M⁻³ s⁻¹",
        "M⁻⁴ s⁻¹",
        "M⁻⁵ s⁻¹",
        "M⁻⁶ s⁻¹",
        "M⁻⁷ s⁻¹",
    ];
    SPELLINGS[(order as usize).min(SPELLINGS.len() - 1)]
}

/// The display unit of quantity `q` (None: a plain number) for values of magnitude up to
/// `magnitude` in the internal unit: (internal units per display unit, spelling; "" for a plain
/// number). Divide a value by the first to show it in the second.
///
/// Energies in kJ/mol, entropies in J/(mol K), rate constants by order ([`rate_constant`]),
/// lengths and wavelengths below 10 µm in nm (the trade's unit for light), longer lengths and
/// volumes by their ladders (cm, mL),
/// molar absorption coefficients in L mol⁻¹ cm⁻¹ (common practice); durations, concentrations,
/// powers and photon fluxes by their ladders and the module's rule.
pub fn unit(q: Option<Quantity>, magnitude: f64) -> (f64, String) {
    unit_in(q, magnitude, EnergyUnit::KjPerMol)
}

/// [`unit`] with molar energies in `family` (a network's [`EnergyUnit`]).
pub fn unit_in(q: Option<Quantity>, magnitude: f64, family: EnergyUnit) -> (f64, String) {
    let from = |ladder: &Ladder| {
        let (f, u) = pick(magnitude, ladder);
        (f, u.to_string())
    };
    match q {
        None => (1.0, String::new()),
        Some(Quantity::MolarEnergy) => (family.factor(), family.spelling().into()),
        Some(Quantity::RateConstant(n)) => (1.0, rate_constant(n).into()),
        Some(Quantity::Wavelength | Quantity::Length) if magnitude.abs() < 1e-5 => (1e-9, "nm".into()),
        Some(Quantity::Length) => from(&LENGTH),
        Some(Quantity::Volume) => from(&VOLUME),
        Some(Quantity::Time) => from(&TIME),
        Some(Quantity::Concentration) => from(&CONCENTRATION),
        Some(Quantity::Power) => from(&POWER),
        Some(Quantity::PhotonFlux) => from(&PHOTON_FLUX),
        Some(Quantity::MolarAbsorption) => (super::epsilon_from_per_cm(1.0), "L/(mol cm)".into()),
        Some(q) => (1.0, super::internal_spelling(q).into()),
    }
}

/// A value of quantity `q` given in the internal unit, in its display unit ([`unit`]):
/// (value in the display unit, spelling).
pub fn quantity(q: Option<Quantity>, v: f64) -> (f64, String) {
    quantity_in(q, v, EnergyUnit::KjPerMol)
}

/// [`quantity`] with molar energies in `family`.
pub fn quantity_in(q: Option<Quantity>, v: f64, family: EnergyUnit) -> (f64, String) {
    let (f, u) = unit_in(q, v, family);
    (v / f, u)
}

/// The quantity whose internal unit `unit` spells: [`super::internal_spelling`] ("J/mol",
/// "/(M s)", "M", ...) or any other spelling of exactly one internal unit ("mol/L", "L/(mol s)").
/// `None` for "" (a plain number) and for anything else.
pub fn quantity_of_spelling(unit: &str) -> Option<Quantity> {
    let unit = unit.trim();
    if unit.is_empty() {
        return None;
    }
    if let Some(q) = super::ALL.into_iter().find(|q| super::internal_spelling(*q) == unit) {
        return Some(q);
    }
    match super::identify(&format!("1 {unit}")) {
        Ok((q, v)) if (v - 1.0).abs() < 1e-12 => Some(q),
        _ => None,
    }
}

/// [`unit`] for values whose internal unit is spelled `spelling` ("" for a plain number); a
/// spelling of no internal unit is kept as it is, with factor 1.
pub fn readable_unit(spelling: &str, magnitude: f64) -> (f64, String) {
    readable_unit_in(spelling, magnitude, EnergyUnit::KjPerMol)
}

/// [`readable_unit`] with molar energies in `family`.
pub fn readable_unit_in(spelling: &str, magnitude: f64, family: EnergyUnit) -> (f64, String) {
    match quantity_of_spelling(spelling) {
        Some(q) => unit_in(Some(q), magnitude, family),
        None => (1.0, spelling.trim().to_string()),
    }
}

/// [`readable`] with molar energies in `family`: (value in the display unit, spelling).
pub fn readable_in(spelling: &str, v: f64, family: EnergyUnit) -> (f64, String) {
    let (f, u) = readable_unit_in(spelling, v, family);
    (v / f, u)
}

/// [`quantity`] for a value whose internal unit is spelled `spelling` (see [`readable_unit`]).
pub fn readable(spelling: &str, v: f64) -> (f64, String) {
    let (f, u) = readable_unit(spelling, v);
    (v / f, u)
}

#[cfg(test)]
mod tests {
    use super::super::{ALL, parse};
    use super::*;

    #[test]
    fn the_largest_unit_with_a_value_of_at_least_one() {
        assert_eq!(time(7200.0), (3600.0, "h"));
        assert_eq!(time(3600.0), (3600.0, "h"));
        assert_eq!(time(3599.0), (60.0, "min"));
        assert_eq!(time(5400.0), (3600.0, "h"));
        assert_eq!(time(59.0), (1.0, "s"));
        assert_eq!(time(2.0 * YEAR), (YEAR, "yr"));
        assert_eq!(time(150e-15), (1e-15, "fs"));
        assert_eq!(time(1e-20), (1e-15, "fs"));
        assert_eq!(concentration(5e-5), (1e-6, "µM"));
        assert_eq!(concentration(1e-3), (1e-3, "mM"));
        assert_eq!(concentration(55.3), (1.0, "M"));
        assert_eq!(concentration(1e-20), (1e-12, "pM"));
        assert_eq!(photons(2.5e-4), (1e-6, "µeinstein"));
        assert_eq!(photons(2.5), (1.0, "einstein"));
        // No "meinstein": 25 meinstein reads 25000 µeinstein.
        assert_eq!(photons(2.5e-2), (1e-6, "µeinstein"));
        assert_eq!(format_photons(6.259e-4), "626 µeinstein");
        assert_eq!(format_photon_flux(2.591e-8), "25.9 neinstein/s");
        assert_eq!(power(0.05), (1e-3, "mW"));
        // The sun on a pool: 175 W, not "175065 mW".
        assert_eq!(format_power(175.065), "175 W");
        assert_eq!(format_power(3.0), "3 W");
        assert_eq!(format_time(3.5e-15), "3.5 fs");
        assert_eq!(format_time(5400.0), "1.5 h");
        assert_eq!(format_time(7200.0), "2 h");
        assert_eq!(format_time(0.045), "45 ms");
        assert_eq!(format_time(3599.999), "1 h");
        assert_eq!(format_time(59.9996), "1 min");
        assert_eq!(format_concentration(0.01), "10 mM");
        assert_eq!(format_concentration(2.5e-6), "2.5 µM");
    }

    #[test]
    fn zero_negative_nan_and_infinite_values_do_not_panic() {
        assert_eq!(time(0.0), (1.0, "s"));
        assert_eq!(time(f64::NAN), (1.0, "s"));
        assert_eq!(time(f64::INFINITY), (1.0, "s"));
        assert_eq!(concentration(f64::NEG_INFINITY), (1.0, "M"));
        assert_eq!(concentration(-5e-5), (1e-6, "µM"));
        assert_eq!(format_time(0.0), "0 s");
        assert_eq!(format_time(-7200.0), "-2 h");
        assert_eq!(format_time(f64::NAN), "NaN s");
        assert_eq!(format_concentration(f64::INFINITY), "inf M");
        assert_eq!(largest([f64::NAN, -3.0, 2.0, f64::INFINITY]), 3.0);
        assert_eq!(largest([]), 0.0);
        assert_eq!(pick(1.0, &[]), (1.0, ""));
    }

    #[test]
    fn round_off_within_the_tolerance_reads_zero_and_factors_read_plainly() {
        // An integrator's absolute tolerance of 1e-12 mol/L: -1.58e-15 is round-off, -2e-12 is not.
        let atol = ZeroWithin(1e-12);
        assert_eq!(format_concentration_within(-1.58e-15, atol), "0 M");
        assert_eq!(format_concentration_within(-0.0, atol), "0 M");
        assert_eq!(format_concentration_within(-2e-12, atol), "-2 pM");
        assert_eq!(format_concentration_within(5e-5, atol), "50 µM");
        assert!(atol.shown(f64::NAN).is_nan());
        // A chain statistic: sd 7.067e-14 of a mean of 1 is round-off.
        assert_eq!(ZeroWithin::relative(1.0, CHAIN_ROUNDOFF).shown(7.067e-14), 0.0);
        assert_eq!(ZeroWithin::relative(1.0, CHAIN_ROUNDOFF).shown(1e-6), 1e-6);
        // A yield pinned at 1: an exact derivative of 4.4e-12 at p = 1 is round-off (limit
        // 1e-10 of the yield); 1e-6 is a dependence.
        let d = ZeroWithin::derivative(1.0, CHAIN_ROUNDOFF, 1.0);
        assert_eq!(d.shown(4.441e-12), 0.0);
        assert_eq!(d.shown(-9e-11), 0.0);
        assert_eq!(d.shown(1e-6), 1e-6);
        assert_eq!(ZeroWithin::derivative(1.0, CHAIN_ROUNDOFF, 0.0), ZeroWithin::NONE);
        assert_eq!(number(2.019), "2.019");
        assert_eq!(number(150.0), "150");
        assert_eq!(number(0.0125), "0.0125");
    }

    #[test]
    fn a_plot_axis_and_a_table_of_the_same_values_agree() {
        // Times of a 2 h run: the axis picks by its largest value, the table writes each value.
        let times: Vec<f64> = (0..=24).map(|i| i as f64 * 300.0).collect();
        let axis = time(largest(times.iter().copied()));
        assert_eq!(axis, (3600.0, "h"));
        assert!(format_time(*times.last().unwrap()).ends_with(" h"));
        let conc = [0.01, 4e-3, 2.5e-4];
        let axis = concentration(largest(conc));
        assert!(format_concentration(conc[0]).ends_with(axis.1));
    }

    #[test]
    fn every_spelling_reads_back_with_its_factor() {
        let ladders: [(&Ladder, Quantity); 4] = [
            (&TIME, Quantity::Time),
            (&CONCENTRATION, Quantity::Concentration),
            (&POWER, Quantity::Power),
            (&PHOTON_FLUX, Quantity::PhotonFlux),
        ];
        for (f, u) in EINSTEIN {
            // A photon amount has no quantity of its own: it reads back per second as a flux.
            let v = parse(&format!("2 {u}/s"), Quantity::PhotonFlux).unwrap_or_else(|e| panic!("{u}: {e}"));
            assert!((v - 2.0 * f).abs() <= 1e-12 * 2.0 * f, "{u}: {v}");
        }
        for family in [EnergyUnit::KjPerMol, EnergyUnit::KcalPerMol] {
            let text = format_energy(98_324.0, family);
            let v = parse(&text, Quantity::MolarEnergy).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!((v - 98_324.0).abs() < 0.5e-3 * 98_324.0, "{text} -> {v}");
            assert_eq!(EnergyUnit::of_text(&text), Some(family), "{text}");
        }
        for order in 0..=3 {
            let text = format_rate_constant(3.695e-5, order);
            let v = parse(&text, Quantity::RateConstant(order)).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!((v - 3.695e-5).abs() < 1e-12, "{text} -> {v}");
        }
        for (ladder, q) in ladders {
            for (f, u) in ladder {
                let v = parse(&format!("2 {u}"), q).unwrap_or_else(|e| panic!("{u}: {e}"));
                assert!((v - 2.0 * f).abs() <= 1e-12 * 2.0 * f, "{u}: {v}");
            }
        }
        for order in 0..=4 {
            let q = Quantity::RateConstant(order);
            let v = parse(&format!("3 {}", rate_constant(order)), q).unwrap_or_else(|e| panic!("{order}: {e}"));
            assert!((v - 3.0).abs() < 1e-12, "order {order}: {v}");
        }
        for q in ALL {
            let (x, u) = quantity(Some(q), 2.5e-3);
            let text = if u.is_empty() {
                format!("{x}")
            } else {
                format!("{x} {u}")
            };
            let v = parse(&text, q).unwrap_or_else(|e| panic!("{text}: {e}"));
            assert!((v - 2.5e-3).abs() <= 1e-9 * 2.5e-3, "{text} -> {v}");
        }
    }

    #[test]
    fn energies_stay_in_the_family_of_the_file() {
        // 23.5 kcal/mol = 98.324 kJ/mol (thermochemical calorie, 4.184 J exactly; common practice).
        let e = 23.5 * 4184.0;
        assert_eq!(format_energy(e, EnergyUnit::KcalPerMol), "23.5 kcal/mol");
        assert_eq!(
            format_energy_beside(e, EnergyUnit::KcalPerMol),
            "23.5 kcal/mol (98.32 kJ/mol)"
        );
        assert_eq!(format_energy(e, EnergyUnit::KjPerMol), "98.32 kJ/mol");
        assert_eq!(EnergyUnit::of_text("23.5 kcal/mol"), Some(EnergyUnit::KcalPerMol));
        assert_eq!(EnergyUnit::of_text(" 96 kJ / mol"), Some(EnergyUnit::KjPerMol));
        assert_eq!(EnergyUnit::of_text("1.2e3 cm-1"), None);
        assert_eq!(EnergyUnit::of_text("2 eV"), None);
        assert_eq!(format_rate_constant(3.695e-5, 1), "3.695e-5 s⁻¹");
        assert_eq!(format_rate_constant(8.0, 2), "8 M⁻¹ s⁻¹");
    }

    #[test]
    fn internal_spellings_map_to_display_units() {
        assert_eq!(readable("J/mol", 95_000.0), (95.0, "kJ/mol".into()));
        assert_eq!(readable("/(M s)", 3e7), (3e7, "M⁻¹ s⁻¹".into()));
        assert_eq!(readable("/s", 0.04), (0.04, "s⁻¹".into()));
        assert_eq!(readable("M", 0.002), (2.0, "mM".into()));
        assert_eq!(readable("", 0.3), (0.3, String::new()));
        assert_eq!(readable("furlong", 2.0), (2.0, "furlong".into()));
        assert_eq!(quantity_of_spelling("M/s"), Some(Quantity::RateConstant(0)));
        assert_eq!(quantity_of_spelling("/(M3 s)"), Some(Quantity::RateConstant(4)));
        assert_eq!(quantity_of_spelling("mol/L"), Some(Quantity::Concentration));
        assert_eq!(quantity_of_spelling("mM"), None);
        assert_eq!(readable_unit("mol/L", 2e-3), (1e-3, "mM".into()));
        assert_eq!(readable("s", 7200.0), (2.0, "h".into()));
    }
}
