//! The network as a picture: Graphviz DOT text ([`dot`]) and a self-contained SVG ([`svg`]).
//!
//! Both show the same things: species, transients by kind, one node per step carrying its
//! numbers (rate constant with units, ΔG‡ for Eyring laws, Φ for photochemical steps), and
//! transient channels labelled with their share (fraction, rest, rate or quencher). The SVG
//! is laid out here, without any external program (a layered layout in `layout.rs`).

mod dot;
mod layout;
mod svg;

use crate::light::Spectrum;
use crate::network::{Branching, Channel, Network, PhotoOutcome, PhotoStep, Target, ThermalStep, TransientKind};
use crate::rates::RateLaw;
use crate::units::display::EnergyUnit;
use crate::units::sig;

/// Graphviz DOT text of the network (render it with `dot -Tsvg`, or use [`svg`] directly).
pub fn dot(net: &Network) -> String {
    dot::write(net)
}

/// A self-contained SVG drawing of the network, laid out without any external program.
pub fn svg(net: &Network) -> String {
    svg::write(net, &picture(net))
}

/// What a drawn box stands for.
#[derive(Debug, Clone, Copy, PartialEq)]
enum Shape {
    /// A species.
    Species,
    /// A species named as a product.
    Product,
    /// A transient of this kind.
    Transient(TransientKind),
    /// A thermal step.
    Thermal,
    /// A photochemical step.
    Photo,
    /// The label of a transient channel, drawn on its arrow.
    Label,
}

impl Shape {
    /// True for things whose amount is followed (arrows point at them).
    fn is_matter(self) -> bool {
        matches!(self, Shape::Species | Shape::Product | Shape::Transient(_))
    }
}

/// A box of the drawing with its text lines (the first is the name).
#[derive(Debug, Clone)]
struct Item {
    shape: Shape,
    lines: Vec<String>,
}

/// How an arrow is drawn.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Style {
    /// Into or out of a thermal step.
    Thermal,
    /// Into or out of a photochemical step.
    Photo,
    /// A transient channel.
    Decay,
    /// A channel back to the species that was excited.
    Return,
    /// A quencher taking part in a channel.
    Quench,
}

/// An arrow between two items.
#[derive(Debug, Clone)]
struct Link {
    from: usize,
    to: usize,
    style: Style,
    /// A stoichiometric coefficient other than one, shown at the step's end.
    tag: Option<String>,
}

/// Everything to draw, independent of placement.
#[derive(Debug, Clone)]
struct Picture {
    items: Vec<Item>,
    links: Vec<Link>,
}

/// The items and arrows of `net`: species, then transients, then steps, then channel labels.
fn picture(net: &Network) -> Picture {
    let mut items: Vec<Item> = net
        .species
        .iter()
        .map(|s| Item {
            shape: if s.product { Shape::Product } else { Shape::Species },
            lines: vec![s.name.clone()],
        })
        .collect();
    let first_transient = items.len();
    items.extend(net.transients.iter().map(|t| Item {
        shape: Shape::Transient(t.kind),
        lines: vec![t.name.clone(), kind_caption(t.kind).to_string()],
    }));
    let tr = |i: usize| first_transient + i;
    let mut links = Vec::new();
    let link = |from, to, style, coefficient: f64| Link {
        from,
        to,
        style,
        tag: (coefficient != 1.0).then(|| format!("×{}", sig(coefficient, 3))),
    };
    for step in &net.thermal {
        let at = items.len();
        items.push(Item {
            shape: Shape::Thermal,
            lines: thermal_lines(net, step),
        });
        for t in &step.reactants {
            links.push(link(t.species, at, Style::Thermal, t.coefficient));
        }
        for t in &step.products {
            links.push(link(at, t.species, Style::Thermal, t.coefficient));
        }
    }
    for step in &net.photo {
        let at = items.len();
        items.push(Item {
            shape: Shape::Photo,
            lines: photo_lines(step),
        });
        links.push(link(step.absorber, at, Style::Photo, 1.0));
        match &step.outcome {
            PhotoOutcome::Products(ts) => {
                for t in ts {
                    links.push(link(at, t.species, Style::Photo, t.coefficient));
                }
            }
            PhotoOutcome::Transient(t) => links.push(link(at, tr(*t), Style::Photo, 1.0)),
        }
    }
    for (i, t) in net.transients.iter().enumerate() {
        for c in &t.channels {
            let at = items.len();
            items.push(Item {
                shape: Shape::Label,
                lines: channel_lines(net, c),
            });
            let style = if c.returns { Style::Return } else { Style::Decay };
            links.push(link(tr(i), at, style, 1.0));
            match &c.target {
                Target::Species(ts) => {
                    for x in ts {
                        links.push(link(at, x.species, style, x.coefficient));
                    }
                }
                Target::Transient(k) => links.push(link(at, tr(*k), style, 1.0)),
            }
            if let Branching::Quenching { partner, .. } = c.branching {
                links.push(link(partner, at, Style::Quench, 1.0));
            }
        }
    }
    Picture { items, links }
}

/// The caption under a transient's name.
fn kind_caption(kind: TransientKind) -> &'static str {
    match kind {
        TransientKind::Excited => "excited state",
        TransientKind::Intersection => "intersection",
        TransientKind::Hot => "hot ground state",
        TransientKind::Other => "transient",
    }
}

/// A number for a label: three significant figures, e-notation outside 0.001–10⁴.
fn num(v: f64) -> String {
    let a = v.abs();
    if v == 0.0 || !v.is_finite() || (1e-3..1e4).contains(&a) {
        return sig(v, 3);
    }
    let s = format!("{v:.2e}");
    match s.split_once('e') {
        Some((m, e)) if m.contains('.') => format!("{}e{e}", m.trim_end_matches('0').trim_end_matches('.')),
        _ => s,
    }
}

/// "k = 3.7e-5 s⁻¹", then "ΔG‡ 23.5 kcal/mol" for an Eyring law or "Ea …" for Arrhenius, in
/// the network's energy family.
fn rate_lines(law: &RateLaw, k: f64, order: u32, temperature: f64, family: EnergyUnit) -> Vec<String> {
    let mut out = vec![format!(
        "k = {} {}",
        num(k),
        crate::units::display::rate_constant(order)
    )];
    let e = |j: f64| format!("{} {}", sig(j / family.factor(), 3), family.spelling());
    match *law {
        RateLaw::EyringFree { .. } | RateLaw::EyringEnthalpy { .. } => {
            out.push(format!("ΔG‡ {}", e(law.barrier(temperature, order))));
        }
        RateLaw::Arrhenius { activation, .. } => out.push(format!("Ea {}", e(activation))),
        RateLaw::Frequencies { barrier, .. } => out.push(format!("E0 {} (TST)", e(barrier))),
        RateLaw::Constant(_) => {}
    }
    out
}

/// Name and numbers of a thermal step.
fn thermal_lines(net: &Network, step: &ThermalStep) -> Vec<String> {
    let mut out = vec![step.name.clone()];
    out.extend(rate_lines(
        &step.rate,
        step.k,
        step.order,
        net.conditions.temperature,
        net.energy_unit,
    ));
    out
}

/// A dimensionless value for a label: two decimals, or two significant figures when small.
fn fraction(v: f64) -> String {
    if v.abs() >= 0.01 { format!("{v:.2}") } else { sig(v, 2) }
}

/// "Φ 0.12", or the range of a table, "Φ 0.40–0.50".
fn yield_text(symbol: &str, q: &Spectrum) -> String {
    match q {
        Spectrum::Constant { value, .. } => format!("{symbol} {}", fraction(*value)),
        Spectrum::Table { points, .. } => {
            let lo = points.iter().map(|p| p.1).fold(f64::INFINITY, f64::min);
            let hi = points.iter().map(|p| p.1).fold(f64::NEG_INFINITY, f64::max);
            if !lo.is_finite() || fraction(lo) == fraction(hi) {
                format!("{symbol} {}", fraction(q.max()))
            } else {
                format!("{symbol} {}–{}", fraction(lo), fraction(hi))
            }
        }
    }
}

/// Name, quantum yield (or efficiency) and wavelength window of a photochemical step.
fn photo_lines(step: &PhotoStep) -> Vec<String> {
    // The hν mark leads the name, unless the name already carries one.
    let name = step.name.replace(" (hν)", "").replace("(hν)", "");
    let mut out = vec![if name.contains("hν") {
        name
    } else {
        format!("hν {}", name.trim())
    }];
    out.push(match step.outcome {
        PhotoOutcome::Products(_) => yield_text("Φ", &step.quantum_yield),
        PhotoOutcome::Transient(_) => yield_text("efficiency", &step.quantum_yield),
    });
    if let Some((lo, hi)) = step.window {
        out.push(format!("{}–{} nm", sig(lo * 1e9, 3), sig(hi * 1e9, 3)));
    }
    out
}

/// The label of a transient channel: its share, and "return" for a return path.
fn channel_lines(net: &Network, c: &Channel) -> Vec<String> {
    let t = net.conditions.temperature;
    let mut out = match &c.branching {
        Branching::Fraction(f) => vec![format!("fraction {}", fraction(*f))],
        Branching::Hot {
            fraction: f, barrier, ..
        } => vec![
            format!("hot yield {}", fraction(*f)),
            format!(
                "E0 {} {}",
                sig(barrier / net.energy_unit.factor(), 3),
                net.energy_unit.spelling()
            ),
        ],
        Branching::Rest => vec!["rest".to_string()],
        Branching::Rate { law, k } => rate_lines(law, *k, 1, t, net.energy_unit),
        Branching::Quenching { partner, law, k2 } => {
            let mut v = vec![format!("quenched by {}", net.species[*partner].name)];
            v.extend(rate_lines(law, *k2, 2, t, net.energy_unit));
            v
        }
    };
    if c.returns {
        out.push("return".into());
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::network::{Overrides, build};
    use std::path::Path;

    /// A network from TOML text.
    pub(super) fn net(text: &str) -> Network {
        let loaded = crate::file::parse_text(Path::new("test.toml"), text.to_string()).expect("parses");
        match build(&loaded, &Overrides::none()) {
            Ok(n) => n,
            Err(e) => panic!("network does not build: {e}"),
        }
    }

    /// The bundled example networks present in this checkout, as (file name, network).
    pub(super) fn bundled() -> Vec<(String, Network)> {
        let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
        let mut out = Vec::new();
        for name in ["photoswitch.toml", "flow-cyclization.toml", "prebiotic-pool.toml"] {
            let path = dir.join(name);
            if path.exists()
                && let Ok(n) = crate::network::load(&path, &Overrides::none())
            {
                out.push((name.to_string(), n));
            }
        }
        out
    }

    /// Transients of every kind, a quencher, a return path, a reversible pair, a table Φ.
    pub(super) const BUSY: &str = r#"
[about]
name = "sensitised <ring> closure & O2"

[conditions]
temperature = "298.15 K"
volume = "3 mL"
path_length = "1 cm"

[[light]]
name = "UV"
kind = "line"
wavelength = "365 nm"
power = "10 mW"

[[species]]
name = "Sens"
initial = "1 mM"
epsilon = { at = "365 nm", value = "5000 L/(mol cm)" }

[[species]]
name = "Diene"
initial = "10 mM"
epsilon = { at = "365 nm", value = "100 L/(mol cm)" }

[[species]]
name = "O2"
initial = "0.2 mM"

[[species]]
name = "Ring"
product = true
epsilon = { at = "365 nm", value = "50 L/(mol cm)" }

[[species]]
name = "1O2*"

[[species]]
name = "Dimer"

[[photo]]
name = "sensitiser up"
absorber = "Sens"
excites = "S1"
efficiency = 0.95

[[transient]]
name = "S1"
kind = "excited"
channels = [
  { to = "T1", rate = { k = "5e8 /s" } },
  { to = "Sens", rate = { k = "1e8 /s" } },
]

[[transient]]
name = "T1"
kind = "excited"
channels = [
  { to = "Sens", rate = { k = "1e4 /s" } },
  { to = "Sens + 1O2*", quencher = "O2", rate = { k = "2e9 /(M s)" } },
  { to = "CI", quencher = "Diene", rate = { k = "5e9 /(M s)" } },
]

[[transient]]
name = "CI"
kind = "intersection"
channels = [
  { to = "hot-ring", fraction = 0.3 },
  { to = "Diene", fraction = "rest" },
]

[[transient]]
name = "hot-ring"
kind = "hot"
channels = [
  { to = "Ring", rate = { barrier = "4 kcal/mol" } },
  { to = "pair", rate = { k = "1e11 /s" } },
]

[[transient]]
name = "pair"
kind = "other"
channels = [{ to = "Diene", fraction = 1 }]

[[thermal]]
name = "singlet oxygen decay"
equation = "1O2* -> O2"
rate = { k = "2.5e5 /s" }

[[thermal]]
equation = "2 Ring <=> Dimer"
rate = { prefactor = "1e9 /(M s)", activation = "60 kJ/mol" }
reverse = { enthalpy = "100 kJ/mol", entropy = "10 J/(mol K)" }

[[photo]]
equation = "Ring -> Diene"
quantum_yield = { wavelength_unit = "nm", points = [[300, 0.40], [400, 0.50]] }
range = ["280 nm", "400 nm"]
"#;

    #[test]
    fn numbers_read_well() {
        assert_eq!(num(3.7e-5), "3.7e-5");
        assert_eq!(num(1e10), "1e10");
        assert_eq!(num(0.5), "0.5");
        assert_eq!(num(250000.0), "2.5e5");
    }

    #[test]
    fn labels_carry_the_numbers() {
        let n = net(BUSY);
        let p = picture(&n);
        let all: Vec<&str> = p
            .items
            .iter()
            .flat_map(|i| i.lines.iter().map(String::as_str))
            .collect();
        for want in [
            "k = 2.5e5 s⁻¹",
            "k = 5e8 s⁻¹",
            "Φ 0.40–0.50",
            "efficiency 0.95",
            "fraction 0.30",
            "rest",
            "quenched by O2",
            "k = 2e9 M⁻¹ s⁻¹",
            "return",
            "280–400 nm",
        ] {
            assert!(all.contains(&want), "missing label {want:?} in {all:?}");
        }
        // Two of the file's three energies are in kJ/mol: the labels follow the file's family.
        assert!(all.iter().any(|l| l.starts_with("ΔG‡ 16.7 kJ/mol")), "{all:?}");
        assert!(all.iter().any(|l| l.starts_with("Ea 60 kJ/mol")), "{all:?}");
        let sw = bundled()
            .into_iter()
            .find(|(f, _)| f == "photoswitch.toml")
            .map(|x| x.1);
        if let Some(sw) = sw {
            let p = picture(&sw);
            let all: Vec<&str> = p
                .items
                .iter()
                .flat_map(|i| i.lines.iter().map(String::as_str))
                .collect();
            assert!(all.contains(&"ΔG‡ 23.5 kcal/mol"), "{all:?}");
            assert!(all.contains(&"Φ 0.40–0.50"), "{all:?}");
            assert!(all.contains(&"Φ 0.12"), "{all:?}");
        }
    }

    #[test]
    fn dot_names_every_node_and_label() {
        let mut nets = vec![("busy".to_string(), net(BUSY))];
        nets.extend(bundled());
        for (file, n) in &nets {
            let d = dot(n);
            assert!(d.starts_with("digraph \""), "{file}");
            assert!(d.trim_end().ends_with('}'), "{file}");
            assert_eq!(d.matches('{').count(), d.matches('}').count(), "{file}");
            for item in picture(n).items {
                for line in &item.lines {
                    assert!(
                        d.contains(&dot::quote(line)[1..line.len() + 1]),
                        "{file}: {line:?} missing from DOT"
                    );
                }
            }
            for t in &n.transients {
                assert!(d.contains(t.kind.word()) || d.contains(kind_caption(t.kind)), "{file}");
            }
            // every line is a statement, a comment or a brace
            for l in d.lines().map(str::trim) {
                assert!(
                    l.ends_with(';') || l.ends_with('{') || l == "}" || l.starts_with("//"),
                    "{file}: {l}"
                );
            }
        }
        assert_eq!(dot::quote("a\"b\\c\nd"), "\"a\\\"b\\\\c\\nd\"");
    }

    /// Boxes (left, top, right, bottom) of the drawn nodes with their text, and the viewBox.
    fn boxes(svg: &str) -> (Vec<(String, [f64; 4])>, [f64; 4]) {
        let doc = roxmltree::Document::parse(svg).expect("the SVG is well-formed XML");
        let root = doc.root_element();
        let num = |n: roxmltree::Node, a: &str| n.attribute(a).and_then(|v| v.parse::<f64>().ok()).unwrap_or(0.0);
        let vb: Vec<f64> = root
            .attribute("viewBox")
            .expect("viewBox")
            .split_whitespace()
            .map(|v| v.parse().unwrap())
            .collect();
        let mut out = Vec::new();
        for g in doc.descendants().filter(|n| n.has_tag_name("g")) {
            if !g.attribute("class").is_some_and(|c| c.starts_with("node")) {
                continue;
            }
            let (mut dx, mut dy) = (0.0, 0.0);
            for a in g.ancestors() {
                if let Some(t) = a.attribute("transform").and_then(|t| t.strip_prefix("translate(")) {
                    let v: Vec<f64> = t
                        .trim_end_matches(')')
                        .split(',')
                        .map(|x| x.trim().parse().unwrap())
                        .collect();
                    dx += v[0];
                    dy += v[1];
                }
            }
            let shape = g.children().find(|c| c.is_element()).expect("a shape");
            let b = match shape.tag_name().name() {
                "rect" => {
                    let (x, y) = (num(shape, "x"), num(shape, "y"));
                    [x, y, x + num(shape, "width"), y + num(shape, "height")]
                }
                "ellipse" => {
                    let (x, y, rx, ry) = (num(shape, "cx"), num(shape, "cy"), num(shape, "rx"), num(shape, "ry"));
                    [x - rx, y - ry, x + rx, y + ry]
                }
                "polygon" => {
                    let pts: Vec<(f64, f64)> = shape
                        .attribute("points")
                        .unwrap()
                        .split_whitespace()
                        .map(|p| {
                            let (a, b) = p.split_once(',').unwrap();
                            (a.parse().unwrap(), b.parse().unwrap())
                        })
                        .collect();
                    let f = |k: fn(&(f64, f64)) -> f64, max: bool| {
                        pts.iter().map(k).fold(if max { f64::MIN } else { f64::MAX }, |a, b| {
                            if max { a.max(b) } else { a.min(b) }
                        })
                    };
                    [f(|p| p.0, false), f(|p| p.1, false), f(|p| p.0, true), f(|p| p.1, true)]
                }
                other => panic!("unexpected node shape {other}"),
            };
            let text: String = g
                .descendants()
                .filter(|n| n.is_text())
                .filter_map(|n| n.text())
                .collect();
            out.push((text.trim().to_string(), [b[0] + dx, b[1] + dy, b[2] + dx, b[3] + dy]));
        }
        (out, [vb[0], vb[1], vb[0] + vb[2], vb[1] + vb[3]])
    }

    #[test]
    fn svg_is_xml_names_everything_and_nothing_overlaps() {
        let mut nets = vec![("busy".to_string(), net(BUSY))];
        nets.extend(bundled());
        for (file, n) in &nets {
            let s = svg(n);
            let (boxes, vb) = boxes(&s);
            let pic = picture(n);
            assert_eq!(boxes.len(), pic.items.len(), "{file}: one drawn box per item");
            for name in n
                .species
                .iter()
                .map(|x| &x.name)
                .chain(n.transients.iter().map(|t| &t.name))
            {
                assert!(
                    boxes.iter().any(|(t, _)| t.starts_with(name.as_str())),
                    "{file}: {name} not drawn"
                );
            }
            for (i, (ta, a)) in boxes.iter().enumerate() {
                assert!(
                    a[0] >= vb[0] && a[1] >= vb[1] && a[2] <= vb[2] && a[3] <= vb[3],
                    "{file}: {ta} outside"
                );
                for (tb, b) in &boxes[i + 1..] {
                    let apart = a[2] <= b[0] || b[2] <= a[0] || a[3] <= b[1] || b[3] <= a[1];
                    assert!(apart, "{file}: {ta:?} {a:?} overlaps {tb:?} {b:?}");
                }
            }
            let without_ns = s.replace("xmlns=\"http://www.w3.org/2000/svg\"", "");
            assert!(
                !without_ns.contains("http") && !without_ns.contains("href"),
                "{file}: no external references"
            );
        }
    }

    #[test]
    fn svg_escapes_the_title() {
        let s = svg(&net(BUSY));
        let doc = roxmltree::Document::parse(&s).unwrap();
        let title = doc
            .descendants()
            .find(|n| n.has_tag_name("title"))
            .and_then(|n| n.text());
        assert_eq!(title, Some("sensitised <ring> closure & O2"));
        assert!(s.contains("&lt;ring&gt; closure &amp; O2"));
    }

    #[test]
    fn a_large_tangled_network_stays_clean() {
        // 24 species on a ring of reversible steps, with chords and photochemical shortcuts.
        let mut t = String::from("[about]\nname = \"ring\"\n[conditions]\ntemperature = \"300 K\"\n");
        t.push_str("volume = \"1 mL\"\npath_length = \"1 cm\"\n");
        t.push_str("[[light]]\nname = \"l\"\nkind = \"line\"\nwavelength = \"400 nm\"\npower = \"1 mW\"\n");
        let n = 24;
        for i in 0..n {
            t.push_str(&format!("[[species]]\nname = \"X{i}\"\ninitial = \"{} mM\"\n", i % 3));
            t.push_str("epsilon = { at = \"400 nm\", value = \"100 L/(mol cm)\" }\n");
        }
        for i in 0..n {
            let j = (i + 1) % n;
            t.push_str(&format!(
                "[[thermal]]\nequation = \"X{i} <=> X{j}\"\nrate = {{ k = \"1 /s\" }}\nreverse = {{ barrier = \"20 kcal/mol\" }}\n"
            ));
            if i % 4 == 0 {
                let k = (i + 7) % n;
                t.push_str(&format!(
                    "[[photo]]\nequation = \"X{i} -> X{k}\"\nquantum_yield = 0.1\n"
                ));
                t.push_str(&format!(
                    "[[thermal]]\nequation = \"X{i} + X{j} -> 2 X{k}\"\nrate = {{ k = \"1 /(M s)\" }}\n"
                ));
            }
        }
        let net = net(&t);
        let (boxes, vb) = boxes(&svg(&net));
        assert_eq!(boxes.len(), picture(&net).items.len());
        for (i, (ta, a)) in boxes.iter().enumerate() {
            assert!(
                a[0] >= vb[0] && a[1] >= vb[1] && a[2] <= vb[2] && a[3] <= vb[3],
                "{ta} outside"
            );
            for (tb, b) in &boxes[i + 1..] {
                let apart = a[2] <= b[0] || b[2] <= a[0] || a[3] <= b[1] || b[3] <= a[1];
                assert!(apart, "{ta:?} overlaps {tb:?}");
            }
        }
    }
}
