//! The SVG drawing: sizes boxes from their text, lays them out, and writes shapes, curved
//! arrows, a title and a legend. Text widths are estimated from the characters.

use super::layout::{self, Placed};
use super::{Picture, Shape, Style};
use crate::network::{Network, TransientKind};
use crate::units::sig;
use std::fmt::Write;

const FONT: &str = "Helvetica, Arial, 'DejaVu Sans', sans-serif";
const INK: &str = "#263238";
const MUTED: &str = "#607d8b";
const THERMAL: &str = "#455a64";
const PHOTO: &str = "#7b1fa2";
const DECAY: &str = "#5d6d7e";
const RETURN: &str = "#00897b";
const QUENCH: &str = "#90a4ae";
/// Height of the title block above the drawing.
const HEADER: f64 = 58.0;
/// Line height inside step boxes and labels.
const LINE: f64 = 13.0;

/// Width of `s` at font size `size`, from per-character widths of a wide sans-serif face
/// (DejaVu Sans, the usual fallback; Helvetica and Arial are narrower, so boxes only get roomier).
pub(super) fn text_width(s: &str, size: f64) -> f64 {
    let em: f64 = s
        .chars()
        .map(|c| match c {
            'i' | 'j' | 'l' | '\'' | '|' | '!' | 'I' => 0.29,
            '.' | ',' | ':' | ';' | ' ' | '·' | '/' | '-' | 'f' => 0.34,
            '(' | ')' | '[' | ']' | 't' | 'r' => 0.41,
            '*' | '‡' | '–' | 'J' => 0.5,
            's' | 'c' | 'z' => 0.54,
            'm' => 0.98,
            'w' | 'M' => 0.86,
            'W' | '@' | '%' => 0.98,
            '=' | '+' | '<' | '>' | '×' | '~' | '^' => 0.84,
            '0'..='9' | 'a'..='z' | 'ν' | '_' => 0.64,
            'A'..='Z' | 'Φ' | 'Δ' | '&' => 0.74,
            _ => 0.7,
        })
        .sum();
    em * size
}

/// Escape text for XML content and attribute values.
pub(super) fn esc(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&apos;"),
            c if (c as u32) < 0x20 && c != '\n' && c != '\t' => out.push(' '),
            c => out.push(c),
        }
    }
    out
}

/// Font size of line `k` of an item.
fn font_size(shape: Shape, k: usize) -> f64 {
    match (shape, k) {
        (Shape::Species | Shape::Product | Shape::Transient(_), 0) => 13.0,
        (Shape::Transient(_), _) => 10.0,
        (Shape::Thermal | Shape::Photo, 0) => 11.0,
        _ => 10.5,
    }
}

/// Width and height of an item's box.
fn item_size(shape: Shape, lines: &[String]) -> (f64, f64) {
    let text = lines
        .iter()
        .enumerate()
        .map(|(k, l)| text_width(l, font_size(shape, k)) * if k == 0 && shape != Shape::Label { 1.1 } else { 1.0 })
        .fold(0.0, f64::max);
    let n = lines.len() as f64;
    match shape {
        Shape::Species | Shape::Product => (text + 24.0, 30.0),
        Shape::Transient(TransientKind::Excited) => (text + 34.0, 40.0),
        Shape::Transient(TransientKind::Intersection) => (text + 44.0, 40.0),
        Shape::Transient(TransientKind::Hot) => (text + 34.0, 40.0),
        Shape::Transient(TransientKind::Other) => (text * 1.2 + 28.0, 42.0),
        Shape::Thermal | Shape::Photo => (text + 18.0, 10.0 + LINE * n),
        Shape::Label => (text + 10.0, 5.0 + LINE * n),
    }
}

/// The straight part of a box's top and bottom, where arrows may end.
fn port(shape: Shape, w: f64, h: f64) -> f64 {
    match shape {
        Shape::Transient(TransientKind::Excited | TransientKind::Intersection) => w - h,
        Shape::Transient(TransientKind::Other) => w * 0.5,
        Shape::Transient(TransientKind::Hot) => w - 24.0,
        _ => w - 16.0,
    }
}

/// The outline of an item centred at (x, y): an SVG element without closing attributes.
fn outline(shape: Shape, x: f64, y: f64, w: f64, h: f64) -> String {
    let (l, t) = (x - w / 2.0, y - h / 2.0);
    let rect = |rx: f64, fill: &str, stroke: &str, sw: f64, extra: &str| {
        format!(
            "<rect x=\"{l:.1}\" y=\"{t:.1}\" width=\"{w:.1}\" height=\"{h:.1}\" rx=\"{rx:.1}\" fill=\"{fill}\" \
             stroke=\"{stroke}\" stroke-width=\"{sw}\"{extra}/>"
        )
    };
    let poly = |pts: &[(f64, f64)], fill: &str, stroke: &str| {
        let p: Vec<String> = pts.iter().map(|(a, b)| format!("{a:.1},{b:.1}")).collect();
        format!(
            "<polygon points=\"{}\" fill=\"{fill}\" stroke=\"{stroke}\" stroke-width=\"1.5\"/>",
            p.join(" ")
        )
    };
    let (r, b) = (l + w, t + h);
    match shape {
        Shape::Species => rect(6.0, "#ffffff", INK, 1.4, ""),
        Shape::Product => rect(6.0, "#e8f5e9", "#2e7d32", 2.0, ""),
        Shape::Transient(TransientKind::Excited) => rect(h / 2.0, "#fff3d6", "#c77c00", 1.5, ""),
        Shape::Transient(TransientKind::Intersection) => {
            let s = h / 2.0;
            poly(
                &[(l, y), (l + s, t), (r - s, t), (r, y), (r - s, b), (l + s, b)],
                "#fce4ec",
                "#c2185b",
            )
        }
        Shape::Transient(TransientKind::Hot) => {
            let c = 9.0;
            poly(
                &[
                    (l + c, t),
                    (r - c, t),
                    (r, t + c),
                    (r, b - c),
                    (r - c, b),
                    (l + c, b),
                    (l, b - c),
                    (l, t + c),
                ],
                "#ffe8dc",
                "#d84315",
            )
        }
        Shape::Transient(TransientKind::Other) => format!(
            "<ellipse cx=\"{x:.1}\" cy=\"{y:.1}\" rx=\"{:.1}\" ry=\"{:.1}\" fill=\"#eceff1\" stroke=\"{MUTED}\" \
             stroke-width=\"1.5\"/>",
            w / 2.0,
            h / 2.0
        ),
        Shape::Thermal => rect(9.0, "#eef1f3", "#90a4ae", 1.0, ""),
        Shape::Photo => rect(9.0, "#f5ebfb", PHOTO, 1.2, ""),
        Shape::Label => rect(3.0, "#ffffff", "#e3e7ea", 0.6, " fill-opacity=\"0.96\""),
    }
}

/// Colour, width, dashes and arrow marker of a line style.
fn stroke(style: Style) -> (&'static str, f64, &'static str, &'static str) {
    match style {
        Style::Thermal => (THERMAL, 1.5, "", "thermal"),
        Style::Photo => (PHOTO, 2.2, "", "photo"),
        Style::Decay => (DECAY, 1.4, "", "decay"),
        Style::Return => (RETURN, 1.5, "6 4", "return"),
        Style::Quench => (QUENCH, 1.4, "2 3", "quench"),
    }
}

/// The SVG path through `pts`: cubic pieces leaving and entering each point vertically; a
/// single-piece edge that closes a cycle bows sideways so it stays apart from its partner.
fn path(pts: &[(f64, f64)], back: bool) -> String {
    let mut d = String::new();
    let Some(&(x0, y0)) = pts.first() else {
        return d;
    };
    let _ = write!(d, "M{x0:.1},{y0:.1}");
    let bow = if back && pts.len() == 2 { 34.0 } else { 0.0 };
    for w in pts.windows(2) {
        let ((ax, ay), (bx, by)) = (w[0], w[1]);
        let dy = (by - ay) / 2.0;
        if ax == bx && bow == 0.0 {
            let _ = write!(d, " L{bx:.1},{by:.1}");
        } else {
            let _ = write!(
                d,
                " C{:.1},{:.1} {:.1},{:.1} {bx:.1},{by:.1}",
                ax + bow,
                ay + dy,
                bx + bow,
                by - dy
            );
        }
    }
    d
}

/// The SVG text of the network drawn from `pic`.
pub(super) fn write(net: &Network, pic: &Picture) -> String {
    let edges: Vec<(usize, usize)> = pic.links.iter().map(|l| (l.from, l.to)).collect();
    let mut degree = vec![0usize; pic.items.len()];
    for &(u, v) in &edges {
        degree[u] += 1;
        degree[v] += 1;
    }
    // Boxes that many arrows meet are widened so the arrowheads stay apart.
    let sizes: Vec<(f64, f64)> = pic
        .items
        .iter()
        .zip(&degree)
        .map(|(i, &d)| {
            let (w, h) = item_size(i.shape, &i.lines);
            let room = if i.shape.is_matter() {
                16.0 * d.saturating_sub(1) as f64 + 24.0
            } else {
                0.0
            };
            (w.max(room), h)
        })
        .collect();
    let ports: Vec<f64> = pic
        .items
        .iter()
        .zip(&sizes)
        .map(|(i, &(w, h))| port(i.shape, w, h))
        .collect();
    // Break cycles from the absorbers present at the start, then the other species present, so
    // paths read downwards from where the light first acts.
    let absorbing = net.species_absorbing();
    let present = |i: &usize| net.species[*i].initial > 0.0;
    let mut roots: Vec<usize> = absorbing.iter().copied().filter(present).collect();
    roots.extend((0..net.species.len()).filter(present));
    roots.extend(absorbing.iter().copied());
    let placed = layout::place(&sizes, &ports, &edges, &roots);
    let legend = Legend::of(pic);
    let title = if net.about.name.trim().is_empty() {
        "reaction network"
    } else {
        net.about.name.as_str()
    };
    let sub = subtitle(net);
    let width = (placed.width + legend.width + 16.0)
        .max(text_width(title, 18.0) * 1.1 + 32.0)
        .max(text_width(&sub, 11.5) + 32.0)
        .ceil();
    let height = (HEADER + placed.height.max(legend.height + 32.0)).ceil();

    let mut s = String::new();
    let _ = writeln!(
        s,
        "<svg xmlns=\"http://www.w3.org/2000/svg\" width=\"{width}\" height=\"{height}\" \
         viewBox=\"0 0 {width} {height}\" font-family=\"{FONT}\">"
    );
    let _ = writeln!(s, "<title>{}</title>", esc(title));
    let _ = writeln!(s, "<desc>{}</desc>", esc(&sub));
    s.push_str("<defs>\n");
    for style in [Style::Thermal, Style::Photo, Style::Decay, Style::Return, Style::Quench] {
        let (colour, _, _, id) = stroke(style);
        let _ = writeln!(
            s,
            "<marker id=\"arrow-{id}\" viewBox=\"0 0 10 10\" refX=\"10\" refY=\"5\" markerWidth=\"9\" \
             markerHeight=\"9\" markerUnits=\"userSpaceOnUse\" orient=\"auto\"><path d=\"M0,1 L10,5 L0,9 z\" \
             fill=\"{colour}\"/></marker>"
        );
    }
    s.push_str("</defs>\n");
    let _ = writeln!(s, "<rect width=\"{width}\" height=\"{height}\" fill=\"#ffffff\"/>");
    let _ = writeln!(
        s,
        "<text x=\"16\" y=\"28\" font-size=\"18\" font-weight=\"bold\" fill=\"{INK}\">{}</text>",
        esc(title)
    );
    let _ = writeln!(
        s,
        "<text x=\"16\" y=\"46\" font-size=\"11.5\" fill=\"{MUTED}\">{}</text>",
        esc(&sub)
    );
    let _ = writeln!(s, "<g transform=\"translate(0,{HEADER})\">");
    edges_svg(&mut s, pic, &placed);
    for (k, item) in pic.items.iter().enumerate() {
        let (x, y) = placed.centres[k];
        node_svg(&mut s, item.shape, &item.lines, x, y, sizes[k]);
    }
    tags_svg(&mut s, pic, &placed);
    s.push_str("</g>\n");
    legend.write(&mut s, placed.width, HEADER + 8.0);
    s.push_str("</svg>\n");
    s
}

/// "T = 298.15 K · 2 species · 2 photochemical steps · 1 thermal step · invented scenario".
fn subtitle(net: &Network) -> String {
    let count = |n: usize, one: &str, many: &str| format!("{n} {}", if n == 1 { one } else { many });
    let mut parts = vec![format!("T = {} K", sig(net.conditions.temperature, 5))];
    parts.push(count(net.species.len(), "species", "species"));
    if !net.transients.is_empty() {
        parts.push(count(net.transients.len(), "transient", "transients"));
    }
    parts.push(count(net.photo.len(), "photochemical step", "photochemical steps"));
    parts.push(count(net.thermal.len(), "thermal step", "thermal steps"));
    if net.about.invented {
        parts.push("invented scenario".into());
    }
    parts.join(" · ")
}

/// The arrows, below the boxes so that labels sit on top of the lines through them.
fn edges_svg(s: &mut String, pic: &Picture, placed: &Placed) {
    for (k, l) in pic.links.iter().enumerate() {
        let route = &placed.routes[k];
        if route.len() < 2 {
            continue;
        }
        let (colour, width, dash, id) = stroke(l.style);
        let into_matter = pic.items[l.to].shape.is_matter();
        let marker = if into_matter {
            format!(" marker-end=\"url(#arrow-{id})\"")
        } else {
            String::new()
        };
        let dash = if dash.is_empty() {
            String::new()
        } else {
            format!(" stroke-dasharray=\"{dash}\"")
        };
        let _ = writeln!(
            s,
            "<path class=\"edge {id}\" d=\"{}\" fill=\"none\" stroke=\"{colour}\" stroke-width=\"{width}\"{dash}{marker}/>",
            path(route, placed.back[k])
        );
    }
}

/// A box with its text lines centred in it.
fn node_svg(s: &mut String, shape: Shape, lines: &[String], x: f64, y: f64, (w, h): (f64, f64)) {
    let class = match shape {
        Shape::Species | Shape::Product => "node species",
        Shape::Transient(_) => "node transient",
        Shape::Thermal | Shape::Photo => "node step",
        Shape::Label => "node label",
    };
    let _ = writeln!(s, "<g class=\"{class}\">{}", outline(shape, x, y, w, h));
    let heights: Vec<f64> = match shape {
        Shape::Transient(_) => vec![16.0, 13.0],
        Shape::Species | Shape::Product => vec![16.0],
        _ => vec![LINE; lines.len()],
    };
    let total: f64 = heights.iter().take(lines.len()).sum();
    let mut top = y - total / 2.0;
    for (k, line) in lines.iter().enumerate() {
        let lh = heights.get(k).copied().unwrap_or(LINE);
        let size = font_size(shape, k);
        let base = top + lh / 2.0 + size * 0.35;
        top += lh;
        let (weight, style, fill) = match (shape, k) {
            (Shape::Transient(_), 1) => ("normal", "italic", MUTED),
            (Shape::Label, _) => ("normal", "normal", "#37474f"),
            (_, 0) => ("bold", "normal", INK),
            _ => ("normal", "normal", "#37474f"),
        };
        let _ = write!(
            s,
            "<text x=\"{x:.1}\" y=\"{base:.1}\" font-size=\"{size}\" font-weight=\"{weight}\" font-style=\"{style}\" \
             fill=\"{fill}\" text-anchor=\"middle\">"
        );
        match (shape, k, line.strip_prefix("hν ")) {
            (Shape::Photo, 0, Some(rest)) => {
                let _ = write!(s, "<tspan fill=\"{PHOTO}\">hν</tspan> {}", esc(rest));
            }
            _ => s.push_str(&esc(line)),
        }
        s.push_str("</text>\n");
    }
    s.push_str("</g>\n");
}

/// Stoichiometric coefficients other than one, beside the step end of their arrow.
fn tags_svg(s: &mut String, pic: &Picture, placed: &Placed) {
    for (k, l) in pic.links.iter().enumerate() {
        let (Some(tag), route) = (&l.tag, &placed.routes[k]) else {
            continue;
        };
        if route.len() < 2 {
            continue;
        }
        // The tag goes by the step, away from the species' arrowhead.
        let at_start = pic.items[l.to].shape.is_matter();
        let (p, q) = if at_start {
            (route[0], route[1])
        } else {
            (route[route.len() - 1], route[route.len() - 2])
        };
        let dir = if q.1 >= p.1 { 1.0 } else { -1.0 };
        let (x, y) = (p.0 + 5.0, p.1 + dir * 12.0);
        let w = text_width(tag, 10.5) + 4.0;
        let _ = writeln!(
            s,
            "<g class=\"tag\"><rect x=\"{:.1}\" y=\"{:.1}\" width=\"{w:.1}\" height=\"13\" fill=\"#ffffff\" \
             fill-opacity=\"0.9\"/><text x=\"{:.1}\" y=\"{:.1}\" font-size=\"10.5\" font-weight=\"bold\" \
             fill=\"{INK}\">{}</text></g>",
            x,
            y - 6.5,
            x + 2.0,
            y + 3.7,
            esc(tag)
        );
    }
}

/// The key to shapes and line styles, for what the picture contains.
struct Legend {
    shapes: Vec<(Shape, &'static str)>,
    lines: Vec<(Style, &'static str)>,
    width: f64,
    height: f64,
}

/// Height of one legend row.
const ROW: f64 = 24.0;

impl Legend {
    fn of(pic: &Picture) -> Legend {
        let has = |s: Shape| pic.items.iter().any(|i| i.shape == s);
        let uses = |s: Style| pic.links.iter().any(|l| l.style == s);
        let shapes: Vec<(Shape, &'static str)> = [
            (Shape::Species, "species"),
            (Shape::Product, "product"),
            (Shape::Transient(TransientKind::Excited), "excited state"),
            (Shape::Transient(TransientKind::Intersection), "intersection"),
            (Shape::Transient(TransientKind::Hot), "hot ground state"),
            (Shape::Transient(TransientKind::Other), "other transient"),
            (Shape::Thermal, "thermal step"),
            (Shape::Photo, "photochemical step"),
        ]
        .into_iter()
        .filter(|&(s, _)| s == Shape::Species || has(s))
        .collect();
        let lines: Vec<(Style, &'static str)> = [
            (Style::Thermal, "thermal"),
            (Style::Photo, "photochemical (hν)"),
            (Style::Decay, "transient channel"),
            (Style::Return, "return to the absorber"),
            (Style::Quench, "quencher (not consumed)"),
        ]
        .into_iter()
        .filter(|&(s, _)| uses(s))
        .collect();
        let text = shapes
            .iter()
            .map(|x| x.1)
            .chain(lines.iter().map(|x| x.1))
            .map(|t| text_width(t, 11.0))
            .fold(text_width("Legend", 12.0), f64::max);
        let rows = (shapes.len() + lines.len()) as f64;
        Legend {
            width: 62.0 + text + 16.0,
            height: 30.0 + ROW * rows + 8.0,
            shapes,
            lines,
        }
    }

    fn write(&self, s: &mut String, x: f64, y: f64) {
        let _ = writeln!(
            s,
            "<g class=\"legend\"><rect x=\"{x:.1}\" y=\"{y:.1}\" width=\"{:.1}\" height=\"{:.1}\" rx=\"6\" \
             fill=\"#fafbfc\" stroke=\"#cfd8dc\"/>",
            self.width, self.height
        );
        let _ = writeln!(
            s,
            "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"12\" font-weight=\"bold\" fill=\"{INK}\">Legend</text>",
            x + 10.0,
            y + 19.0
        );
        let mut row = y + 30.0 + ROW / 2.0;
        let label = |s: &mut String, row: f64, t: &str| {
            let _ = writeln!(
                s,
                "<text x=\"{:.1}\" y=\"{:.1}\" font-size=\"11\" fill=\"{INK}\">{}</text>",
                x + 62.0,
                row + 3.9,
                esc(t)
            );
        };
        for &(shape, t) in &self.shapes {
            let (w, h) = match shape {
                Shape::Thermal | Shape::Photo => (36.0, 14.0),
                _ => (40.0, 18.0),
            };
            let _ = writeln!(s, "{}", outline(shape, x + 32.0, row, w, h));
            label(s, row, t);
            row += ROW;
        }
        for &(style, t) in &self.lines {
            let (colour, width, dash, id) = stroke(style);
            let dash = if dash.is_empty() {
                String::new()
            } else {
                format!(" stroke-dasharray=\"{dash}\"")
            };
            let _ = writeln!(
                s,
                "<path d=\"M{:.1},{row:.1} L{:.1},{row:.1}\" stroke=\"{colour}\" stroke-width=\"{width}\"{dash} \
                 marker-end=\"url(#arrow-{id})\"/>",
                x + 12.0,
                x + 52.0
            );
            label(s, row, t);
            row += ROW;
        }
        s.push_str("</g>\n");
    }
}
