//! One colour per species, the same in every plot and in the HTML report of one network.
//!
//! A species keeps the colour of its index in the network (the order of the species table),
//! whatever subset a plot shows; beyond the ten colours the colours repeat and the line
//! pattern changes, so no two species of a network share both. Coinciding curves in one panel
//! are told apart by dash patterns ([`DASHES`]).

use plotters::style::RGBColor;

/// The species colours as hex, in index order (Tableau 10, `common practice` for categorical
/// data on white).
pub const SPECIES_HEX: [&str; 10] = [
    "#1f77b4", "#d62728", "#2ca02c", "#9467bd", "#ff7f0e", "#17becf", "#8c564b", "#e377c2", "#7f7f7f", "#bcbd22",
];

/// Lines that are not a species: photons incident, lost to background, transmitted; fits' rivals.
pub const INK_HEX: &str = "#22292f";
/// Grey of background absorption.
pub const GREY_HEX: &str = "#8f979d";
/// Light brown of transmitted light.
pub const TAN_HEX: &str = "#b08d57";

/// A line pattern: (dash, gap) in px, or None for a solid line.
pub type Dash = Option<(u32, u32)>;

/// Dash patterns (dash, gap) in px; the first is a solid line.
pub const DASHES: [Dash; 4] = [None, Some((9, 5)), Some((2, 4)), Some((14, 4))];

/// The hex colour of the species with index `i` in its network.
pub fn species_hex(i: usize) -> &'static str {
    SPECIES_HEX[i % SPECIES_HEX.len()]
}

/// The colour of the species with index `i` in its network.
pub fn species(i: usize) -> RGBColor {
    rgb(species_hex(i))
}

/// The dash pattern a species starts from: solid for the first ten, then the next pattern for
/// every ten more (colours repeat from the eleventh species).
pub fn species_dash(i: usize) -> usize {
    i / SPECIES_HEX.len()
}

/// A "#rrggbb" colour as plotters' RGB (black for anything else).
pub fn rgb(hex: &str) -> RGBColor {
    let h = hex.trim_start_matches('#');
    let c = |k: usize| {
        h.get(k..k + 2)
            .and_then(|s| u8::from_str_radix(s, 16).ok())
            .unwrap_or(0)
    };
    RGBColor(c(0), c(2), c(4))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hex_and_rgb_agree_and_species_past_ten_change_pattern() {
        assert_eq!(species(0), RGBColor(0x1f, 0x77, 0xb4));
        assert_eq!(species(13), species(3));
        assert_ne!(species_dash(13), species_dash(3));
    }
}
