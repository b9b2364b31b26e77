//! Graphviz DOT text: species and transients as nodes shaped by kind, one node per step with
//! its numbers, channels as labelled edges.

use super::{channel_lines, kind_caption, photo_lines, thermal_lines};
use crate::network::{Branching, Network, PhotoOutcome, Target, TransientKind};
use std::fmt::Write;

/// A DOT string literal: quotes and backslashes escaped, line breaks as `\n`.
pub(super) fn quote(s: &str) -> String {
    let mut out = String::from("\"");
    for c in s.chars() {
        match c {
            '"' => out.push_str("\\\""),
            '\\' => out.push_str("\\\\"),
            '\n' => out.push_str("\\n"),
            '\r' => {}
            c => out.push(c),
        }
    }
    out.push('"');
    out
}

/// Lines joined into one DOT label.
fn label(lines: &[String]) -> String {
    quote(&lines.join("\n"))
}

/// A coefficient other than one as an edge label attribute.
fn coefficient(c: f64) -> Option<String> {
    (c != 1.0).then(|| format!("label={}", quote(&format!("×{}", crate::units::sig(c, 3)))))
}

/// An edge statement with the attributes given (None skipped).
fn edge(s: &mut String, from: &str, to: &str, attrs: &[Option<&str>]) {
    let a: Vec<&str> = attrs.iter().flatten().copied().collect();
    if a.is_empty() {
        let _ = writeln!(s, "  {from} -> {to};");
    } else {
        let _ = writeln!(s, "  {from} -> {to} [{}];", a.join(", "));
    }
}

const PHOTO: &str = "color=\"#7b1fa2\", penwidth=2";

/// The DOT text of `net`.
pub(super) fn write(net: &Network) -> String {
    let mut s = String::new();
    let name = if net.about.name.trim().is_empty() {
        "reaction network"
    } else {
        net.about.name.as_str()
    };
    let _ = writeln!(s, "digraph {} {{", quote(name));
    let _ = writeln!(
        s,
        "  graph [label={}, labelloc=t, fontname=\"Helvetica\", fontsize=16, rankdir=TB, nodesep=0.3, ranksep=0.4];",
        quote(name)
    );
    s.push_str("  node [fontname=\"Helvetica\", fontsize=11];\n");
    s.push_str("  edge [fontname=\"Helvetica\", fontsize=9, color=\"#455a64\"];\n");

    s.push_str("  // species\n");
    for (i, sp) in net.species.iter().enumerate() {
        let style = if sp.product {
            "shape=box, style=\"rounded,filled,bold\", fillcolor=\"#e8f5e9\", color=\"#2e7d32\""
        } else {
            "shape=box, style=rounded"
        };
        let _ = writeln!(s, "  s{i} [label={}, {style}];", quote(&sp.name));
    }
    if !net.transients.is_empty() {
        s.push_str("  // transients\n");
    }
    for (i, t) in net.transients.iter().enumerate() {
        let style = match t.kind {
            TransientKind::Excited => "shape=box, style=\"rounded,filled\", fillcolor=\"#fff3d6\", color=\"#c77c00\"",
            TransientKind::Intersection => "shape=hexagon, style=filled, fillcolor=\"#fce4ec\", color=\"#c2185b\"",
            TransientKind::Hot => "shape=octagon, style=filled, fillcolor=\"#ffe8dc\", color=\"#d84315\"",
            TransientKind::Other => "shape=ellipse, style=filled, fillcolor=\"#eceff1\", color=\"#607d8b\"",
        };
        let lines = [t.name.clone(), kind_caption(t.kind).to_string()];
        let _ = writeln!(s, "  t{i} [label={}, {style}];", label(&lines));
    }

    if !net.thermal.is_empty() {
        s.push_str("  // thermal steps\n");
    }
    for (i, step) in net.thermal.iter().enumerate() {
        let _ = writeln!(
            s,
            "  k{i} [label={}, shape=box, style=\"rounded,filled\", fillcolor=\"#eef1f3\", color=\"#90a4ae\", \
             fontsize=9];",
            label(&thermal_lines(net, step))
        );
        let step_id = format!("k{i}");
        for t in &step.reactants {
            let c = coefficient(t.coefficient);
            edge(
                &mut s,
                &format!("s{}", t.species),
                &step_id,
                &[Some("arrowhead=none"), c.as_deref()],
            );
        }
        for t in &step.products {
            let c = coefficient(t.coefficient);
            edge(&mut s, &step_id, &format!("s{}", t.species), &[c.as_deref()]);
        }
    }

    if !net.photo.is_empty() {
        s.push_str("  // photochemical steps\n");
    }
    for (i, step) in net.photo.iter().enumerate() {
        let _ = writeln!(
            s,
            "  p{i} [label={}, shape=box, style=\"rounded,filled\", fillcolor=\"#f5ebfb\", color=\"#7b1fa2\", \
             fontsize=9];",
            label(&photo_lines(step))
        );
        let step_id = format!("p{i}");
        edge(
            &mut s,
            &format!("s{}", step.absorber),
            &step_id,
            &[Some(PHOTO), Some("arrowhead=none")],
        );
        match &step.outcome {
            PhotoOutcome::Products(ts) => {
                for t in ts {
                    let c = coefficient(t.coefficient);
                    edge(
                        &mut s,
                        &step_id,
                        &format!("s{}", t.species),
                        &[Some(PHOTO), c.as_deref()],
                    );
                }
            }
            PhotoOutcome::Transient(t) => edge(&mut s, &step_id, &format!("t{t}"), &[Some(PHOTO)]),
        }
    }

    if !net.transients.is_empty() {
        s.push_str("  // transient channels\n");
    }
    for (i, t) in net.transients.iter().enumerate() {
        for (j, c) in t.channels.iter().enumerate() {
            let text = format!("label={}", label(&channel_lines(net, c)));
            let style = c.returns.then_some("style=dashed, color=\"#00897b\"");
            let targets: Vec<(String, f64)> = match &c.target {
                Target::Species(ts) => ts.iter().map(|x| (format!("s{}", x.species), x.coefficient)).collect(),
                Target::Transient(k) => vec![(format!("t{k}"), 1.0)],
            };
            // One target: a labelled edge. Several: a junction point carries the label.
            let single = targets.len() == 1;
            let from = if single {
                format!("t{i}")
            } else {
                let junction = format!("c{i}_{j}");
                let _ = writeln!(s, "  {junction} [shape=point, width=0.06, label=\"\"];");
                edge(
                    &mut s,
                    &format!("t{i}"),
                    &junction,
                    &[Some(&text), Some("arrowhead=none"), style],
                );
                junction
            };
            for (to, coef) in &targets {
                // With the channel label on the edge, a coefficient goes by the arrowhead.
                let coef = match coefficient(*coef) {
                    Some(c) if single => Some(format!("head{c}")),
                    c => c,
                };
                edge(
                    &mut s,
                    &from,
                    to,
                    &[single.then_some(text.as_str()), coef.as_deref(), style],
                );
            }
            if let Branching::Quenching { partner, .. } = c.branching {
                edge(
                    &mut s,
                    &format!("s{partner}"),
                    &from,
                    &[Some(
                        "style=dotted, color=\"#90a4ae\", arrowhead=odot, label=\"quencher\"",
                    )],
                );
            }
        }
    }
    s.push_str("}\n");
    s
}
