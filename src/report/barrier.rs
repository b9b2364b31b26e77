//! What `barrier` reports: window answers and network verdicts as text, k(E) tables as CSV and
//! SVG. Energies are shown in kJ/mol and kcal/mol (the engine works in J/mol), densities per
//! cm⁻¹.

use crate::barrier::{HotVerdict, KRow, Verdict};
use crate::report::csv_out::CsvTable;
use crate::report::{palette, ticks};
use crate::units::display::{self, EnergyUnit};
use crate::units::{Quantity, parse, sig};
use plotters::prelude::*;
use std::fmt::Write;

/// One cm⁻¹ as a molar energy, J/mol.
fn wavenumber() -> f64 {
    parse("1 cm-1", Quantity::MolarEnergy).unwrap_or(11.962_656)
}

/// "22.53 kcal/mol (94.27 kJ/mol)" for a molar energy in J/mol, in `family` with the other
/// beside it (`units::display::format_energy_beside`).
pub fn energy(e: f64, family: EnergyUnit) -> String {
    display::format_energy_beside(e, family)
}

/// A duration in s by the display rule (`units::display::format_time`): "150 fs", "1 h",
/// "2.1e4 yr"; "never" when infinite.
pub fn duration(t: f64) -> String {
    if !t.is_finite() {
        return "never".into();
    }
    display::format_time(t)
}

/// The verdict table of a network; barriers in `family` (the network's) with the other beside.
pub fn verdicts_text(rows: &[Verdict], window: f64, probability: f64, temperature: f64, family: EnergyUnit) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "steps at {temperature:.2} K against a window of {} (probability {:.0} %)",
        duration(window),
        probability * 100.0
    );
    let width = rows.iter().map(|r| r.name.chars().count()).max().unwrap_or(4).max(4);
    let (main, other) = (family.spelling(), family.other().spelling());
    let _ = writeln!(
        s,
        "{:<width$} {:>14} {:>12} {:>12} {:>14}  verdict",
        "step",
        format!("ΔG‡ {main}"),
        format!("({other})"),
        "k (s⁻¹)",
        "half-life"
    );
    for r in rows {
        let mark = if r.barrier_given { " " } else { "*" };
        let _ = writeln!(
            s,
            "{:<width$} {:>13}{mark} {:>12} {:>12} {:>14}  {}",
            r.name,
            sig(r.barrier / family.factor(), 4),
            format!("({})", sig(r.barrier / family.other().factor(), 4)),
            sig(r.rate, 4),
            duration(r.half_life),
            r.words()
        );
    }
    let _ = writeln!(
        s,
        "Each thermal step is taken alone from the initial concentrations and follows its own integrated rate law \
         (second-order laws for A + B and 2 A, per molecule of the limiting reactant in brackets); k is its loss rate \
         per molecule at the start. Quenching is pseudo-first-order at the initial quencher concentration. A step with \
         a reactant (or quencher) at 0 M at the start is judged instead where its rate is largest in a kinetics run of \
         the network over the window, taken alone from the concentrations there (its verdict says when and at what). \
         ΔG‡ for bimolecular steps is for 1 mol/L. Channels set by fixed fractions carry no rate and are not listed."
    );
    if rows.iter().any(|r| !r.barrier_given) {
        let _ = writeln!(
            s,
            "* rate given as a plain k: ΔG‡ is only what Eyring's equation would need for it, not a barrier \
             (fluorescence or internal conversion has none)."
        );
    }
    let _ = writeln!(s, "{}", crate::barrier::tally(rows));
    s
}

/// One competing reaction of a hot molecule, for [`hot_yields_text`].
#[derive(Debug, Clone, PartialEq)]
pub struct HotRow {
    /// Display name (the transition state's frequency file).
    pub name: String,
    /// Zero-point-corrected barrier E₀, J/mol.
    pub barrier: f64,
    /// Reaction-path degeneracy σ.
    pub degeneracy: f64,
    /// k(E) at the starting energy, s⁻¹ (None where the density is zero).
    pub rate_at_start: Option<f64>,
    /// Yield before cooling.
    pub probability: f64,
}

/// The yields of competing hot-molecule reactions and the share that cools, starting at
/// `energy` J/mol with cooling time constant `cooling` s on a grain written as `grain`.
pub fn hot_yields_text(
    rows: &[HotRow],
    cooled: f64,
    energy: f64,
    cooling: f64,
    grain: &str,
    family: EnergyUnit,
) -> String {
    let mut s = String::new();
    let _ = writeln!(
        s,
        "hot molecule with {} above its zero-point level, cooling exponentially with τ = {}",
        self::energy(energy, family),
        duration(cooling)
    );
    let width = rows.iter().map(|r| r.name.chars().count()).max().unwrap_or(0).max(23);
    let _ = writeln!(
        s,
        "  {:<width$}  {:>33}  {:>4}  {:>11}  {:>12}",
        "channel", "E0", "σ", "k(E) (s⁻¹)", "yield"
    );
    for r in rows {
        let _ = writeln!(
            s,
            "  {:<width$}  {:>33}  {:>4}  {:>11}  {:>12.6e}",
            r.name,
            self::energy(r.barrier, family),
            r.degeneracy,
            r.rate_at_start.map_or("-".to_string(), |k| sig(k, 5)),
            r.probability
        );
    }
    let _ = writeln!(
        s,
        "  {:<width$}  {:>33}  {:>4}  {:>11}  {:>12.6e}",
        "cooled without reacting", "", "", "", cooled
    );
    let _ = writeln!(
        s,
        "  RRKM k(E) from Beyer–Swinehart counts on a {grain} grain; the channels compete while the energy decays"
    );
    s
}

/// The hot ground-state channels of a network: yields before cooling, for which a time window
/// does not apply. Empty when the network has none.
pub fn hot_verdicts_text(rows: &[HotVerdict], family: EnergyUnit) -> String {
    let mut s = String::new();
    if rows.is_empty() {
        return s;
    }
    let _ = writeln!(
        s,
        "Hot ground-state channels (they react or cool within a few τ of the photon, so the window does not apply):"
    );
    let width = rows.iter().map(|r| r.name.chars().count()).max().unwrap_or(4).max(4);
    let _ = writeln!(
        s,
        "{:<width$} {:>30} {:>30} {:>12} {:>12} {:>10}  verdict",
        "channel", "E0", "E", "k(E) (s⁻¹)", "τ", "k(E)·τ"
    );
    for r in rows {
        let _ = writeln!(
            s,
            "{:<width$} {:>30} {:>30} {:>12} {:>12} {:>10}  {}",
            r.name,
            energy(r.barrier, family),
            energy(r.energy, family),
            sig(r.rate_at_start, 4),
            duration(r.cooling),
            sig(r.competition(), 4),
            r.words()
        );
    }
    let _ = writeln!(
        s,
        "E is the excess energy at the start; the yield integrates RRKM k(E) while the energy decays with τ."
    );
    s
}

/// k(E) table as CSV, units in the header.
pub fn k_csv(rows: &[KRow]) -> String {
    let wn = wavenumber();
    let mut t = CsvTable::new([
        "energy (kJ/mol)",
        "energy (cm-1)",
        "k (1/s)",
        "rho (states per cm-1)",
        "W reactant",
        "W transition state",
    ]);
    for r in rows {
        t.row([
            format!("{:.4}", r.energy / 1000.0),
            format!("{:.2}", r.energy / wn),
            r.rate.map(|k| format!("{k:.6e}")).unwrap_or_default(),
            format!("{:.6e}", r.density * wn),
            format!("{:.6e}", r.sum),
            format!("{:.6e}", r.ts_sum),
        ]);
    }
    t.finish()
}

/// k(E) on a log axis against E (upper panel) and ρ(E), W(E) on a log axis (lower panel), SVG;
/// energies in `family` (the one `--barrier` was written in).
pub fn k_svg(rows: &[KRow], title: &str, family: EnergyUnit) -> String {
    let per = family.factor();
    let eu = family.spelling();
    let wn = wavenumber();
    let mut svg = String::new();
    {
        let root = SVGBackend::with_string(&mut svg, (900, 760)).into_drawing_area();
        let _ = root.fill(&WHITE);
        let (upper, lower) = root.split_vertically(400);
        let x0 = rows.first().map_or(0.0, |r| r.energy / per);
        let x1 = rows.last().map_or(1.0, |r| r.energy / per).max(x0 + 1e-9);
        let positive = |v: &[f64]| -> (f64, f64) {
            let lo = v.iter().cloned().filter(|x| *x > 0.0).fold(f64::INFINITY, f64::min);
            let hi = v.iter().cloned().filter(|x| *x > 0.0).fold(0.0, f64::max);
            if lo.is_finite() && hi > 0.0 {
                (lo / 2.0, hi * 2.0)
            } else {
                (1e-3, 1.0)
            }
        };
        let ks: Vec<(f64, f64)> = rows
            .iter()
            .filter_map(|r| r.rate.filter(|k| *k > 0.0).map(|k| (r.energy / per, k)))
            .collect();
        let (klo, khi) = positive(&ks.iter().map(|p| p.1).collect::<Vec<_>>());
        let rho: Vec<(f64, f64)> = rows
            .iter()
            .filter(|r| r.density > 0.0)
            .map(|r| (r.energy / per, r.density * wn))
            .collect();
        let w: Vec<(f64, f64)> = rows
            .iter()
            .filter(|r| r.sum > 0.0)
            .map(|r| (r.energy / per, r.sum))
            .collect();
        let all: Vec<f64> = rho.iter().chain(&w).map(|p| p.1).collect();
        let (slo, shi) = positive(&all);
        // Decades labelled as powers of ten ("10⁻⁶"): short labels that stay inside the figure.
        let (kb, sb) = (ticks::decades(klo, khi, 8), ticks::decades(slo, shi, 9));
        let draw = || -> Result<(), Box<dyn std::error::Error + '_>> {
            let mut c = ChartBuilder::on(&upper)
                .caption(title, ("sans-serif", 22))
                .margin(16)
                .x_label_area_size(44)
                .y_label_area_size(80)
                .build_cartesian_2d(x0..x1, (klo..khi).log_scale().with_key_points(kb.clone()))?;
            c.configure_mesh()
                .x_desc(format!("E above the reactant zero-point level ({eu})"))
                .y_desc(format!("k(E) ({}, log scale)", display::rate_constant(1)))
                .x_label_formatter(&|v| ticks::label(*v))
                .y_label_formatter(&|v| ticks::power_label(*v))
                .label_style(("sans-serif", 15))
                .draw()?;
            c.draw_series(LineSeries::new(ks.clone(), palette::species(0).stroke_width(2)))?;
            // The legend of the lower panel stands above its plotted area, not over the curves.
            let red = palette::species(1);
            let green = palette::species(2);
            let entries = [
                ("ρ(E), reactant states per cm-1", red),
                ("W(E), reactant sum of states", green),
            ];
            let mut lx = 100;
            for (name, col) in entries {
                lower.draw(&PathElement::new(vec![(lx, 12), (lx + 30, 12)], col.stroke_width(3)))?;
                lower.draw(&Text::new(name, (lx + 38, 4), ("sans-serif", 15)))?;
                lx += 60 + 8 * name.chars().count() as i32;
            }
            let mut d = ChartBuilder::on(&lower)
                .margin(16)
                .margin_top(30)
                .x_label_area_size(44)
                .y_label_area_size(80)
                .build_cartesian_2d(x0..x1, (slo..shi).log_scale().with_key_points(sb.clone()))?;
            d.configure_mesh()
                .x_desc(format!("E ({eu})"))
                .y_desc("ρ (per cm-1) and W (log scale)")
                .x_label_formatter(&|v| ticks::label(*v))
                .y_label_formatter(&|v| ticks::power_label(*v))
                .label_style(("sans-serif", 15))
                .draw()?;
            d.draw_series(LineSeries::new(rho.clone(), red.stroke_width(2)))?;
            d.draw_series(LineSeries::new(w.clone(), green.stroke_width(2)))?;
            Ok(())
        };
        let _ = draw();
        let _ = root.present();
    }
    svg
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn durations_read_well() {
        assert_eq!(duration(150e-15), "150 fs");
        assert_eq!(duration(3600.0), "1 h");
        assert_eq!(duration(f64::INFINITY), "never");
        assert_eq!(duration(5400.0), "1.5 h");
        assert_eq!(duration(0.0), "0 s");
        // A ps event's half-life in ps, never "3.50e-15 h" (issue 18).
        assert_eq!(duration(6.409e-12), "6.41 ps");
    }

    #[test]
    fn a_kcal_network_shows_its_barriers_in_kcal_with_kj_beside() {
        // 23.5 kcal/mol = 98.324 kJ/mol (thermochemical calorie; common practice).
        assert_eq!(
            energy(23.5 * 4184.0, EnergyUnit::KcalPerMol),
            "23.5 kcal/mol (98.32 kJ/mol)"
        );
    }

    /// The x of every text element of an SVG, with its text.
    fn texts(svg: &str) -> Vec<(f64, String)> {
        svg.match_indices("<text")
            .map(|(i, _)| {
                let tag = &svg[i..];
                let x = tag.find(" x=\"").map(|k| k + 4).unwrap_or(0);
                let x: f64 = tag[x..].split('"').next().and_then(|v| v.parse().ok()).unwrap_or(-1.0);
                let body = tag.find('>').map(|k| k + 1).unwrap_or(0);
                let end = tag.find("</text>").unwrap_or(body);
                (x, tag[body..end].trim().to_string())
            })
            .collect()
    }

    #[test]
    fn k_of_e_ticks_are_powers_of_ten_inside_the_figure() {
        // k(E) over 13 decades and sums of states over 38: labels written out in full used to
        // run off the left edge ("9.9999999998e-5").
        let rows: Vec<KRow> = (0..200)
            .map(|i| {
                let e = 2000.0 * i as f64;
                KRow {
                    energy: e,
                    rate: (e > 120e3).then(|| 1e-6 * 10f64.powf((e - 120e3) / 280e3 * 13.0)),
                    density: 10f64.powf(e / 400e3 * 36.0) / 11.96,
                    sum: 10f64.powf(e / 400e3 * 38.0),
                    ts_sum: 1.0,
                }
            })
            .collect();
        let svg = k_svg(&rows, "k", EnergyUnit::KjPerMol);
        let t = texts(&svg);
        assert!(
            t.iter().all(|(x, _)| *x >= 0.0),
            "a label starts left of the figure: {t:?}"
        );
        let powers: Vec<&String> = t
            .iter()
            .map(|p| &p.1)
            .filter(|s| s.starts_with("10") && s.chars().count() > 2)
            .collect();
        assert!(powers.len() >= 6, "{t:?}");
        assert!(
            !t.iter().any(|(_, s)| s.contains("e-") || s.contains("e3")),
            "float labels: {t:?}"
        );
    }
}
