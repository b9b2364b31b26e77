//! Cautions and conditions: the cautions (with what this network's light makes of them), the
//! reactor, and each light source as the engines see it.

use super::escape::esc;
use super::page::{self, num_cell, text_cell};
use crate::model::Model;
use crate::network::Network;
use crate::units::constants::{AVOGADRO, PLANCK, SPEED_OF_LIGHT};
use crate::units::display;
use crate::units::sig;

/// Wavelength range where it emits (a band's centre ± 2 FWHM, as `check` gives it:
/// `LightSource::extent`; otherwise its first and last bin), photon-weighted mean wavelength
/// (m), photon flux (einstein/s) and radiant power (W) of source `s` of `model` (built from
/// `net`).
pub fn source_figures(net: &Network, model: &Model, s: usize) -> (f64, f64, f64, f64, f64) {
    let bins: Vec<_> = model.bins.iter().filter(|b| b.source == s).collect();
    let flux: f64 = bins.iter().map(|b| b.flux).sum();
    let binned = (
        bins.iter().map(|b| b.wavelength).fold(f64::INFINITY, f64::min),
        bins.iter().map(|b| b.wavelength).fold(0.0, f64::max),
    );
    let (lo, hi) = net
        .lights
        .iter()
        .find(|l| Some(&l.name) == model.sources.get(s))
        .and_then(|l| l.extent())
        .unwrap_or(binned);
    let mean = if flux > 0.0 {
        bins.iter().map(|b| b.flux * b.wavelength).sum::<f64>() / flux
    } else {
        f64::NAN
    };
    let power: f64 = bins
        .iter()
        .map(|b| b.flux * AVOGADRO * PLANCK * SPEED_OF_LIGHT / b.wavelength)
        .sum();
    (lo, hi, mean, flux, power)
}

/// The cautions, the reactor and the light.
pub fn section(net: &Network, model: &Model) -> String {
    let mut s = String::from("<div class=\"caution\"><strong>Caution</strong>");
    s.push_str("photoledger computes; it does not make an experiment safe.<ul>");
    let uv: Vec<String> = (0..model.sources.len())
        .filter(|&k| source_figures(net, model, k).0 < 400e-9)
        .map(|k| model.sources[k].clone())
        .collect();
    if uv.is_empty() {
        s.push_str(
            "<li>Intense visible light harms eyes and skin: shield the reactor and never look into a lamp or LED.</li>",
        );
    } else {
        s.push_str(&format!(
            "<li>This network's light includes ultraviolet ({}). UV and intense visible light damage eyes and skin: \
             shield the reactor, wear eye protection rated for these wavelengths, and never look into a lamp or LED.</li>",
            esc(&uv.join(", "))
        ));
    }
    s.push_str(
        "<li>Lamps and high-power LEDs run hot and need cooling.</li>\
         <li>Many photochemical feedstocks, solvents and products are toxic, flammable or both.</li>\
         <li>Local regulations and your institution's safety practice always take precedence over anything in this report.</li>\
         </ul></div>\n",
    );
    let c = &net.conditions;
    // Volume and path length in the display rule's units (a cuvette's mL, a pool's L; cm, mm).
    let (vf, vu) = crate::units::display::pick(c.volume, &crate::units::display::VOLUME);
    let (lf, lu) = crate::units::display::pick(c.path_length, &crate::units::display::LENGTH);
    let volume_head = format!("irradiated volume ({vu})");
    let length_head = format!("path length ({lu})");
    let mut header = vec![
        ("temperature (K)", true),
        (volume_head.as_str(), true),
        (length_head.as_str(), true),
    ];
    let mut row = format!(
        "{}{}{}",
        num_cell(&sig(c.temperature, 5)),
        num_cell(&sig(c.volume / vf, 4)),
        num_cell(&sig(c.path_length / lf, 4))
    );
    if let Some(a) = c.irradiated_area {
        header.push(("irradiated area (cm²)", true));
        row.push_str(&num_cell(&sig(a * 1e4, 4)));
    }
    s.push_str("<h3>The reactor</h3>\n");
    s.push_str(&page::table(
        "Conditions as the file gives them (after any --set)",
        &header,
        &[row],
    ));
    s.push_str("<h3>The light</h3>\n");
    // One unit per column, by the display rule (the column's largest value picks it).
    let figures: Vec<_> = (0..model.sources.len())
        .map(|k| source_figures(net, model, k))
        .collect();
    let (ff, fu) = display::pick(display::largest(figures.iter().map(|f| f.3)), &display::PHOTON_FLUX);
    let (pf, pu) = display::pick(display::largest(figures.iter().map(|f| f.4)), &display::POWER);
    let rows: Vec<String> = (0..model.sources.len())
        .map(|k| {
            let (lo, hi, mean, flux, power) = figures[k];
            let range = if (hi - lo).abs() < 1e-12 {
                sig(lo * 1e9, 4)
            } else {
                format!("{}–{}", sig(lo * 1e9, 4), sig(hi * 1e9, 4))
            };
            format!(
                "{}{}{}{}{}",
                text_cell(&model.sources[k]),
                num_cell(&range),
                // A source switched off has no photon-weighted mean.
                if mean.is_finite() {
                    num_cell(&sig(mean * 1e9, 4))
                } else {
                    num_cell("off")
                },
                num_cell(&sig(flux / ff, 4)),
                num_cell(&sig(power / pf, 4))
            )
        })
        .collect();
    let (flux_head, power_head) = (format!("photon flux ({fu})"), format!("power ({pu})"));
    s.push_str(&page::table(
        "Light sources entering the sample",
        &[
            ("source", false),
            ("wavelengths (nm)", true),
            ("photon-weighted mean (nm)", true),
            (&flux_head, true),
            (&power_head, true),
        ],
        &rows,
    ));
    s.push_str(&page::assumption(
        "a well-stirred cell lit through one face: the light crosses the stated path length, absorbances add \
         (Beer–Lambert) and every molecule sees the average light of the cell.",
    ));
    s
}
