//! `photoledger diagram FILE [-o FILE.svg] [--dot] [--json]`.

use super::output::{out, outln};
use super::{NetworkArgs, default_file, load, print_json, print_warnings};
use photoledger::network::{Edge, Network, Node};
use std::path::PathBuf;

/// Options of `diagram`.
#[derive(clap::Args, Debug)]
pub struct DiagramArgs {
    #[command(flatten)]
    pub net: NetworkArgs,
    /// Where to write the SVG (default: the network file's name followed by "-diagram.svg").
    #[arg(short = 'o', long = "output", alias = "out", value_name = "SVG")]
    pub output: Option<PathBuf>,
    /// Print Graphviz DOT to stdout instead of writing SVG.
    #[arg(long, conflicts_with = "json")]
    pub dot: bool,
    /// Print what was drawn as JSON (the file written, its nodes and edges) instead of the text.
    #[arg(long)]
    pub json: bool,
}

pub fn run(a: &DiagramArgs) -> photoledger::Result<()> {
    let net = load(&a.net)?;
    print_warnings(&net);
    if a.dot {
        out!("{}", photoledger::report::diagram::dot(&net))?;
        return Ok(());
    }
    let path = a
        .output
        .clone()
        .unwrap_or_else(|| default_file(&a.net.file, "diagram", "svg"));
    let svg = photoledger::report::diagram::svg(&net);
    photoledger::report::write_atomic(&path, svg.as_bytes())?;
    if a.json {
        return print_json(&serde_json::json!({
            "network": net.about.name,
            "file": path.display().to_string(),
            "size_bytes": svg.len(),
            "nodes": nodes(&net),
            "edges": edges(&net),
        }));
    }
    outln!("wrote {}", path.display())?;
    Ok(())
}

/// The nodes drawn: each species, transient and step with its kind.
fn nodes(net: &Network) -> Vec<serde_json::Value> {
    net.graph
        .node_weights()
        .map(|&n| {
            let kind = match n {
                Node::Species(_) => "species",
                Node::Transient(_) => "transient",
                Node::Thermal(_) => "thermal step",
                Node::Photo(_) => "photochemical step",
            };
            serde_json::json!({"name": net.label(n), "kind": kind})
        })
        .collect()
}

/// The arrows drawn: from, to, and what the arrow means (a stoichiometric coefficient, a
/// transient's channel number, a dimensionless count).
fn edges(net: &Network) -> Vec<serde_json::Value> {
    use petgraph::visit::EdgeRef;
    net.graph
        .edge_references()
        .map(|e| {
            let (role, number) = match *e.weight() {
                Edge::Reactant(c) => ("reactant", Some(c)),
                Edge::Product(c) => ("product", Some(c)),
                Edge::Absorbs => ("absorbs", None),
                Edge::Excites => ("excites", None),
                Edge::Channel(n) => ("channel", Some(n as f64)),
                Edge::Quenches(n) => ("quenches through channel", Some(n as f64)),
            };
            serde_json::json!({
                "from": net.label(net.graph[e.source()]),
                "to": net.label(net.graph[e.target()]),
                "role": role,
                "coefficient_or_channel": number,
            })
        })
        .collect()
}
