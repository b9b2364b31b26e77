//! The network drawing (the same SVG as `photoledger diagram`), inline.

use super::escape::inline_svg;
use super::page::figure;
use crate::network::Network;

/// The diagram with a caption saying how to read it.
pub fn section(net: &Network) -> String {
    let svg = inline_svg(&crate::report::diagram::svg(net), "net");
    figure(
        &svg,
        "Species, transients and steps, each step carrying its numbers (rate constant, ΔG‡, Φ); the legend names \
         the arrow styles. Laid out by photoledger itself.",
    )
}
