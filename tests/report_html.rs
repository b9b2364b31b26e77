//! `photoledger report` through the binary, on every bundled network: the page is one
//! self-contained HTML document (no script, no URL, no external font or style), every section
//! is there by id, every inline SVG is well-formed XML with ids unique across the page, every
//! numeric table column names its unit, and the numbers agree with the `simulate` command.

use std::path::{Path, PathBuf};
use std::process::{Command, Output};

/// A fresh scratch folder under the system temp dir, removed when dropped.
struct Scratch(PathBuf);

impl Scratch {
    fn new(tag: &str) -> Self {
        let dir = std::env::temp_dir().join(format!("photoledger-report-html-{}-{tag}", std::process::id()));
        let _ = std::fs::remove_dir_all(&dir);
        std::fs::create_dir_all(&dir).expect("scratch folder");
        Scratch(dir)
    }
}

impl Drop for Scratch {
    fn drop(&mut self) {
        let _ = std::fs::remove_dir_all(&self.0);
    }
}

fn run(args: &[&str]) -> Output {
    Command::new(env!("CARGO_BIN_EXE_photoledger"))
        .args(args)
        .current_dir(env!("CARGO_MANIFEST_DIR"))
        .output()
        .expect("run photoledger")
}

/// The bundled networks, as paths relative to the crate.
fn bundled() -> Vec<String> {
    let dir = Path::new(env!("CARGO_MANIFEST_DIR")).join("networks");
    let mut v: Vec<String> = std::fs::read_dir(dir)
        .expect("networks/")
        .filter_map(|e| e.ok())
        .map(|e| e.file_name().to_string_lossy().to_string())
        .filter(|n| n.ends_with(".toml"))
        .map(|n| format!("networks/{n}"))
        .collect();
    v.sort();
    assert!(v.len() >= 3, "the bundled networks are there");
    v
}

/// Render the report of `network` with `extra` options; returns the page.
fn render(network: &str, extra: &[&str], scratch: &Scratch) -> String {
    let out = scratch.0.join("report.html");
    let mut args = vec!["report", network, "-o", out.to_str().unwrap()];
    args.extend_from_slice(extra);
    let o = run(&args);
    assert!(
        o.status.success(),
        "{network}: report failed: {}",
        String::from_utf8_lossy(&o.stderr)
    );
    std::fs::read_to_string(&out).expect("the page was written")
}

/// Every `<svg …>…</svg>` of the page (inline SVGs are not nested).
fn svgs(page: &str) -> Vec<&str> {
    let mut out = Vec::new();
    let mut rest = page;
    while let Some(a) = rest.find("<svg") {
        let b = rest[a..].find("</svg>").expect("every <svg> is closed") + a + "</svg>".len();
        out.push(&rest[a..b]);
        rest = &rest[b..];
    }
    out
}

/// Values of every `id="…"` attribute in the page.
fn ids(page: &str) -> Vec<&str> {
    page.match_indices(" id=\"")
        .map(|(i, m)| {
            let s = &page[i + m.len()..];
            &s[..s.find('"').unwrap()]
        })
        .collect()
}

/// The text of every `<th class="num" …>` header cell, per table.
/// Numeric columns that need no unit in their header: plain numbers (a product of a rate and a
/// time, an elasticity) and durations written with their own unit in every cell.
const PLAIN_OR_OWN_UNIT: [&str; 4] = ["k(E)·τ", "d ln photons / d ln p", "half-life", "τ"];

fn numeric_headers(page: &str) -> Vec<Vec<String>> {
    page.split("<table>")
        .skip(1)
        .map(|t| {
            let t = &t[..t.find("</table>").expect("closed table")];
            t.split("<th class=\"num\"")
                .skip(1)
                .map(|h| {
                    let h = &h[h.find('>').unwrap() + 1..];
                    h[..h.find("</th>").unwrap()].to_string()
                })
                .collect()
        })
        .collect()
}

#[test]
fn every_bundled_network_renders_a_self_contained_page() {
    for net in bundled() {
        let scratch = Scratch::new(&net.replace(['/', '.'], "-"));
        let page = render(&net, &["--barrier-window", "1 h", "--until", "30 min"], &scratch);
        assert!(page.starts_with("<!DOCTYPE html>"), "{net}");
        assert!(page.trim_end().ends_with("</html>"), "{net}");
        let lower = page.to_lowercase();
        for banned in [
            "http://",
            "https://",
            "<script",
            "<?xml",
            "<link",
            "@import",
            "@font-face",
            " src=",
            "url(\"",
        ] {
            assert!(!lower.contains(banned), "{net}: the page holds {banned:?}");
        }
        // url( only for references inside an SVG (prefixed ids), never to a file.
        for (i, _) in lower.match_indices("url(") {
            assert!(lower[i..].starts_with("url(#"), "{net}: {}", &page[i..i + 30]);
        }
        // Sections present by id, each linked from the contents.
        for id in [
            "about",
            "cautions",
            "network",
            "concentrations",
            "photons",
            "chain",
            "barriers",
            "run",
        ] {
            assert!(page.contains(&format!(" id=\"{id}\"")), "{net}: no section {id}");
            if id != "about" {
                assert!(
                    page.contains(&format!("href=\"#{id}\"")),
                    "{net}: {id} not in the contents"
                );
            }
        }
        // The levels of theory compared exactly where the network carries sets of values.
        let text = std::fs::read_to_string(Path::new(env!("CARGO_MANIFEST_DIR")).join(&net)).expect("network");
        let has_levels = text.lines().any(|l| l.trim() == "[[level]]");
        assert_eq!(page.contains(" id=\"levels\""), has_levels, "{net}: levels section");
        if has_levels {
            let s = section_of(&page, "levels");
            assert!(
                s.contains("agree on lifetime of S1, disagree on ratio ring : shifted"),
                "{net}"
            );
            assert!(page.contains("href=\"#levels\""), "{net}: levels not in the contents");
        }
        // Every inline SVG parses as XML, without a namespace URL, and ids are unique.
        let all = svgs(&page);
        assert!(
            all.len() >= 4,
            "{net}: diagram, concentrations and ledger bars at least"
        );
        for svg in &all {
            let doc = roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("{net}: SVG does not parse: {e}"));
            assert_eq!(doc.root_element().tag_name().name(), "svg");
            assert!(
                doc.root_element().attribute("viewBox").is_some(),
                "{net}: SVG scales by its viewBox"
            );
        }
        let mut seen = std::collections::HashSet::new();
        for id in ids(&page) {
            assert!(seen.insert(id), "{net}: id {id:?} used twice");
        }
        for r in page.match_indices("url(#").map(|(i, _)| &page[i + 5..]) {
            let target = &r[..r.find(')').unwrap()];
            assert!(seen.contains(target), "{net}: url(#{target}) points nowhere");
        }
        // Tables: real tables, and every numeric column names its unit in parentheses, unless
        // the table names each row's unit in a "unit" column, or the column holds plain numbers
        // (no unit for dimensionless values: issue 18) or values that carry their own unit.
        let tables = numeric_headers(&page);
        assert!(tables.len() >= 5, "{net}: {} tables", tables.len());
        let with_unit_column: Vec<bool> = page
            .split("<table>")
            .skip(1)
            .map(|t| t[..t.find("</table>").unwrap()].contains("<th scope=\"col\">unit</th>"))
            .collect();
        for (headers, unit_column) in tables.iter().zip(with_unit_column) {
            assert!(!headers.is_empty(), "{net}: a table with no numeric column");
            for h in headers {
                if unit_column || PLAIN_OR_OWN_UNIT.contains(&h.as_str()) {
                    continue;
                }
                let unit = h.rfind('(').map(|a| &h[a + 1..]).and_then(|u| u.strip_suffix(')'));
                assert!(unit.is_some_and(|u| !u.is_empty()), "{net}: column {h:?} has no unit");
            }
        }
        // Header facts and cautions.
        assert!(page.contains("Where its numbers come from"), "{net}");
        assert!(
            page.contains(&format!("photoledger {}", env!("CARGO_PKG_VERSION"))),
            "{net}"
        );
        assert!(
            page.contains(&format!("photoledger report {net} -o ")),
            "{net}: the command line"
        );
        assert!(
            page.contains("--barrier-window &#39;1 h&#39;"),
            "{net}: quoted arguments"
        );
        assert!(page.contains("Local regulations and your institution"), "{net}");
        assert!(
            page.contains("marked invented"),
            "{net}: the bundled networks are invented"
        );
        let date = page.split("<dt>Date</dt><dd>").nth(1).expect("a date");
        let date = &date[..date.find('<').unwrap()];
        let b = date.as_bytes();
        assert!(
            date.len() == 20 && date.ends_with(" UTC") && b[4] == b'-' && b[7] == b'-',
            "{net}: {date}"
        );
        assert!(page.contains("Assumes"), "{net}: assumptions are stated");
    }
}

#[test]
fn sections_follow_what_was_asked_and_what_applies() {
    let scratch = Scratch::new("options");
    // No --barrier-window: no verdicts section, and nothing pretending to be one.
    let page = render("networks/photoswitch.toml", &["--until", "20 min"], &scratch);
    assert!(!page.contains(" id=\"barriers\""));
    assert!(!page.contains("href=\"#barriers\""));
    // No --target: no plan section.
    assert!(!page.contains(" id=\"plan\""));
    // The photoswitch has no end a molecule can reach: the chain section gives the state one
    // molecule settles in instead.
    assert!(page.contains("Photostationary composition"), "photoswitch chain");
    assert!(!page.contains("does not apply to this network"), "photoswitch chain");
    // It reaches its photostationary state in the first minute: the time axis turns logarithmic.
    assert!(page.contains("Time on a log scale"), "photoswitch time axis");
    // LEDs only: no word about sunlight around the clock.
    assert!(!page.contains("no nights"), "photoswitch has no sun");
    // The pool has one: its table, histogram and sensitivities are there, with the chain's
    // check against the kinetics; the run length comes from the kinetics (the stated
    // conversion of the limiting reagent).
    let page = render("networks/prebiotic-pool.toml", &[], &scratch);
    for want in [
        "How a followed molecule ends",
        "Photon-count distribution",
        "Largest sensitivities",
        "% conversion of aldehyde is reached",
        "id=\"chain-check\"",
    ] {
        assert!(page.contains(want), "pool: {want}");
    }
    assert!(
        !page.contains("Time on a log scale"),
        "the pool changes over the whole run"
    );
    // The pool's sunlight shines around the clock in the run: the page says so (days here are
    // of continuous light).
    assert!(page.contains("no nights"), "pool: continuous sunlight stated");
    // The pool's chain disagrees with its kinetics (second-order condensation, inner filter):
    // the table of ends says so in its caption, where its yields are read.
    assert!(
        page.contains("the kinetics of the mixture DISAGREE"),
        "pool: ends table caveat"
    );
    let wide = |p: &str| p.contains("ultraviolet");
    assert!(wide(&page), "sunlight below 400 nm is named as ultraviolet");
}

#[test]
fn the_page_agrees_with_simulate() {
    let scratch = Scratch::new("agree");
    let page = render("networks/photoswitch.toml", &["--until", "2 h"], &scratch);
    let o = run(&[
        "simulate",
        "networks/photoswitch.toml",
        "--until",
        "2 h",
        "--json",
        "--out",
        scratch.0.join("sim").to_str().unwrap(),
    ]);
    assert!(o.status.success());
    let json: serde_json::Value = serde_json::from_slice(&o.stdout).expect("summary JSON");
    let incident = json["photons"]["incident"].as_f64().expect("incident photons");
    let text = page.split("In all ").nth(1).expect("incident photons on the page");
    let mut words = text.split_whitespace();
    let value: f64 = words.next().unwrap().parse().expect("a number");
    let scale = match words.next().unwrap() {
        "einstein" => 1.0,
        "meinstein" => 1e-3,
        "µeinstein" => 1e-6,
        "neinstein" => 1e-9,
        u => panic!("unit {u}"),
    };
    // Four significant figures on the page.
    assert!(
        ((value * scale) / incident - 1.0).abs() < 5e-4,
        "{value} × {scale} vs {incident}"
    );
}

#[test]
fn the_plan_section_agrees_with_plan() {
    let scratch = Scratch::new("plan");
    let target = "product > 80 %";
    let page = render("networks/flow-cyclization.toml", &["--target", target], &scratch);
    assert!(page.contains(" id=\"plan\"") && page.contains("href=\"#plan\""));
    for want in [
        "The dose to the target",
        "Products at that time",
        "Other lamp powers",
        "light on throughout",
    ] {
        assert!(page.contains(want), "{want}");
    }
    let o = run(&[
        "plan",
        "networks/flow-cyclization.toml",
        "--target",
        target,
        "--json",
        "--out",
        scratch.0.join("plan").to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let json: serde_json::Value = serde_json::from_slice(&o.stdout).expect("plan JSON");
    let t = json["time"].as_f64().expect("a time to the target");
    let shown = page
        .split("Reached after <strong>")
        .nth(1)
        .expect("the time on the page");
    let shown = &shown[..shown.find("</strong>").unwrap()];
    let (v, unit) = shown.split_once(' ').expect("value and unit");
    let scale = match unit {
        "s" => 1.0,
        "min" => 60.0,
        "h" => 3600.0,
        "d" => 86400.0,
        u => panic!("unit {u}"),
    };
    let v: f64 = v.parse().expect("a number");
    // Three significant figures on the page.
    assert!((v * scale / t - 1.0).abs() < 5e-3, "{shown} vs {t} s");
    // The photoswitch's photostationary state never reaches 60 % Z: said so, with the reason,
    // the page written and the answer's code 5 ("not reachable", README's exit codes).
    let out = scratch.0.join("unreachable.html");
    let o = run(&[
        "report",
        "networks/photoswitch.toml",
        "--target",
        "Z-azo > 60 %",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(5), "{}", String::from_utf8_lossy(&o.stderr));
    let page = std::fs::read_to_string(&out).expect("the page is written");
    assert!(
        page.contains("Not reached: a photostationary state"),
        "unreachable target"
    );
    let o = run(&[
        "report",
        "networks/photoswitch.toml",
        "--target",
        "nope > 1 %",
        "-o",
        "unused.html",
    ]);
    assert_eq!(
        o.status.code(),
        Some(2),
        "an unknown species in the target is a usage error"
    );
}

#[test]
fn bad_input_is_named_not_rendered() {
    let scratch = Scratch::new("bad");
    let out = scratch.0.join("r.html");
    let o = run(&[
        "report",
        "networks/photoswitch.toml",
        "--until",
        "2 parsecs",
        "-o",
        out.to_str().unwrap(),
    ]);
    assert_eq!(o.status.code(), Some(2), "a usage error");
    assert!(String::from_utf8_lossy(&o.stderr).contains("--until"));
    assert!(!out.exists(), "nothing written");
    let o = run(&["report", "networks/no-such.toml", "-o", out.to_str().unwrap()]);
    assert_eq!(o.status.code(), Some(3), "an unreadable file");
}

/// The page holds no URL or script, every inline SVG parses with a viewBox, ids are unique.
fn check_self_contained(tag: &str, page: &str) {
    let lower = page.to_lowercase();
    for banned in ["http://", "https://", "<script", "<?xml", "<link", "@import", " src="] {
        assert!(!lower.contains(banned), "{tag}: the page holds {banned:?}");
    }
    for svg in svgs(page) {
        let doc = roxmltree::Document::parse(svg).unwrap_or_else(|e| panic!("{tag}: SVG does not parse: {e}"));
        assert!(doc.root_element().attribute("viewBox").is_some(), "{tag}");
    }
    let mut seen = std::collections::HashSet::new();
    for id in ids(page) {
        assert!(seen.insert(id), "{tag}: id {id:?} used twice");
    }
}

/// Text of an HTML fragment without its tags, entities for quotes and apostrophes undone.
fn text_of(html: &str) -> String {
    let mut out = String::new();
    let mut inside = false;
    for c in html.chars() {
        match c {
            '<' => inside = true,
            '>' => inside = false,
            c if !inside => out.push(c),
            _ => {}
        }
    }
    out.replace("&#39;", "'").replace("&quot;", "\"").replace("&amp;", "&")
}

/// The table captioned `caption`: its header cells and its body rows of cell texts.
fn table(page: &str, caption: &str) -> (Vec<String>, Vec<Vec<String>>) {
    let at = page
        .find(&format!("<caption>{caption}</caption>"))
        .unwrap_or_else(|| panic!("no table {caption:?}"));
    let t = &page[at..at + page[at..].find("</table>").unwrap()];
    let cells = |row: &str, tag: &str| -> Vec<String> {
        row.split(&format!("<{tag}{}", if tag == "th" { " " } else { "" }))
            .skip(1)
            .map(|c| text_of(&format!("<{tag}{}", &c[..c.find(&format!("</{tag}>")).unwrap()])))
            .collect()
    };
    let head = cells(&t[..t.find("</thead>").unwrap()], "th");
    let body = &t[t.find("<tbody>").unwrap()..];
    let rows = body.split("<tr>").skip(1).map(|r| cells(r, "td")).collect();
    (head, rows)
}

/// The HTML of the section with id `id`.
fn section_of<'a>(page: &'a str, id: &str) -> &'a str {
    let at = page
        .find(&format!(" id=\"{id}\""))
        .unwrap_or_else(|| panic!("no section {id}"));
    &page[at..at + page[at..].find("</section>").unwrap()]
}

/// True when `shown` (a number printed with some significant figures) is `value` rounded to them.
fn shown_equals(shown: &str, value: f64) -> bool {
    let x: f64 = shown.parse().unwrap_or_else(|_| panic!("{shown:?} is a number"));
    let digits = shown
        .trim_start_matches(['-', '+', '0', '.'])
        .chars()
        .filter(|c| c.is_ascii_digit())
        .count()
        .max(1) as i32;
    let half_ulp = 0.5 * 10f64.powi(value.abs().log10().floor() as i32 - digits + 1);
    (x - value).abs() <= half_ulp * 1.000_001
}

#[test]
fn the_fit_section_agrees_with_fit_json() {
    let scratch = Scratch::new("fit");
    let page = render(
        "networks/photoswitch.toml",
        &["--data", "demo-data/fit/experiments.toml"],
        &scratch,
    );
    check_self_contained("fit", &page);
    assert!(
        page.contains(" id=\"fit\"") && page.contains("href=\"#fit\""),
        "the fit section"
    );
    assert!(!page.contains(" id=\"comparison\""), "no rivals, no comparison");
    assert!(
        page.contains("the other sections of this page use the file")
            || page.contains("The other sections of this page use the file's values")
    );
    let fit_svgs = svgs(section_of(&page, "fit")).len();
    let out = scratch.0.join("fit-out");
    let o = run(&[
        "fit",
        "networks/photoswitch.toml",
        "--data",
        "demo-data/fit/experiments.toml",
        "--json",
        "--out",
        out.to_str().unwrap(),
    ]);
    assert!(o.status.success(), "{}", String::from_utf8_lossy(&o.stderr));
    let json: serde_json::Value = serde_json::from_slice(&o.stdout).expect("fit --json");
    let (head, rows) = table(&page, "Fitted parameters");
    let params = json["parameters"].as_array().unwrap();
    assert_eq!(head.len(), params.len() + 1, "{head:?}");
    let row = |label: &str| {
        rows.iter()
            .find(|r| r[0] == label)
            .unwrap_or_else(|| panic!("row {label}"))
    };
    for (k, p) in params.iter().enumerate() {
        let h = &head[k + 1];
        assert!(h.starts_with(p["key"].as_str().unwrap()), "{h}");
        // The header names the unit the column is shown in; the JSON holds SI.
        let unit = &h[h.rfind('(').unwrap() + 1..h.len() - 1];
        let scale = match (p["unit"].as_str().unwrap(), unit) {
            ("", "dimensionless") => 1.0,
            ("J/mol", "kJ/mol") => 1e-3,
            // The thermochemical calorie, 4.184 J (common practice): a kcal/mol file's family.
            ("J/mol", "kcal/mol") => 1.0 / 4184.0,
            (a, b) if a == b => 1.0,
            (a, b) => panic!("unit {a} shown as {b}: extend the test"),
        };
        let v = p["value"].as_f64().unwrap() * scale;
        let se = p["standard_error"].as_f64().unwrap() * scale;
        let (lo, hi) = (
            p["interval_95"][0].as_f64().unwrap() * scale,
            p["interval_95"][1].as_f64().unwrap() * scale,
        );
        for (label, want) in [
            ("fitted value", v),
            ("± standard error", se),
            ("95 % interval, low", lo),
            ("95 % interval, high", hi),
        ] {
            let shown = &row(label)[k + 1];
            assert!(
                shown_equals(shown, want),
                "{h} {label}: page {shown}, fit --json {want}"
            );
        }
    }
    // Goodness of fit and the information criteria as fit --json gives them.
    let text = text_of(&page);
    for (name, key) in [
        ("χ² = ", "chi2"),
        ("AICc = ", "aicc"),
        ("BIC = ", "bic"),
        ("reduced χ² = ", "reduced_chi2"),
    ] {
        let at = text.find(name).unwrap_or_else(|| panic!("{name}")) + name.len();
        let shown: String = text[at..]
            .chars()
            .take_while(|c| c.is_ascii_digit() || *c == '.' || *c == '-')
            .collect::<String>()
            .trim_end_matches('.')
            .to_string();
        let want = json[key].as_f64().unwrap();
        assert!(shown_equals(&shown, want), "{name}: page {shown}, fit --json {want}");
    }
    // The correlation matrix: a table with ones on the diagonal, equal to the JSON's.
    let (_, corr) = table(
        &page,
        "Correlation of the fitted parameters (linearised, at the optimum)",
    );
    for (i, r) in corr.iter().enumerate() {
        for (j, c) in r[1..].iter().enumerate() {
            let want = json["correlation"][i][j].as_f64().unwrap();
            assert!(
                (c.parse::<f64>().unwrap() - want).abs() <= 5e-4 + 1e-12,
                "r[{i}][{j}] {c} vs {want}"
            );
        }
    }
    assert!(page.contains("Identifiability"), "identifiability is reported");
    // One interval method, stated alike by the page and the JSON (from the engine's one value):
    // every observation of the demo data has an sd, so the normal 97.5 % point, and the page
    // must not name Student t anywhere.
    let method = &json["interval_method"];
    assert_eq!(method["distribution"], "normal", "{method}");
    // The normal 97.5 % point 1.959964 (common practice: any statistics table).
    assert!(
        (method["quantile_975"].as_f64().unwrap() - 1.959964).abs() < 1e-6,
        "{method}"
    );
    let said = method["text"].as_str().unwrap();
    assert!(text.contains(said), "the page states \"{said}\"");
    assert!(!text.contains("Student t"), "the page names a second interval method");
    // The goodness-of-fit verdict beside identifiability, as the JSON gives it.
    let verdict = json["goodness_of_fit"]["verdict"].as_str().unwrap();
    assert!(text.contains(verdict), "the page gives the verdict \"{verdict}\"");
    assert_eq!(json["goodness_of_fit"]["model_describes_data"], true);
    assert_eq!(fit_svgs, 1, "one data-vs-fit drawing");
}

#[test]
fn the_comparison_section_ranks_the_rivals() {
    let scratch = Scratch::new("rival");
    let page = render(
        "networks/photoswitch.toml",
        &[
            "--data",
            "demo-data/fit/experiments.toml",
            "--rival",
            "networks/photoswitch-side-product.toml",
        ],
        &scratch,
    );
    check_self_contained("rival", &page);
    for id in ["fit", "comparison"] {
        assert!(page.contains(&format!(" id=\"{id}\"")), "section {id}");
        assert!(page.contains(&format!("href=\"#{id}\"")), "{id} in the contents");
    }
    assert_eq!(
        svgs(section_of(&page, "comparison")).len(),
        1,
        "one drawing of every fit"
    );
    let (head, rows) = table(&page, "Rival networks ranked by AICc");
    assert_eq!(rows.len(), 2);
    let col = |name: &str| {
        head.iter()
            .position(|h| h.starts_with(name))
            .unwrap_or_else(|| panic!("{name}"))
    };
    let (aicc, delta, weight) = (col("AICc"), col("ΔAICc"), col("Akaike weight"));
    let a: Vec<f64> = rows.iter().map(|r| r[aicc].parse().unwrap()).collect();
    assert!(a[0] <= a[1], "ranked by AICc: {a:?}");
    assert_eq!(rows[0][delta], "0");
    // Akaike weights w_i = exp(-Δ_i/2) / Σ exp(-Δ_j/2) (Burnham and Anderson, Model Selection and
    // Multimodel Inference, 2nd ed. 2002, section 2.9; from memory).
    let e: Vec<f64> = a.iter().map(|x| (-(x - a[0]) / 2.0).exp()).collect();
    for (r, ei) in rows.iter().zip(&e) {
        let w: f64 = r[weight].parse().unwrap();
        assert!((w - ei / e.iter().sum::<f64>()).abs() <= 6e-4, "{r:?}");
    }
    // The ranked photoswitch row repeats the fit section's AICc.
    let own = rows
        .iter()
        .find(|r| r[1] == "networks/photoswitch.toml")
        .expect("the network itself is ranked");
    let text = text_of(&page);
    let at = text.find("AICc = ").unwrap() + "AICc = ".len();
    assert!(
        text[at..].starts_with(&own[aicc]),
        "{} vs {}",
        own[aicc],
        &text[at..at + 12]
    );
    assert!(
        text.contains(
            "largest disagreement between networks/photoswitch.toml and networks/photoswitch-side-product.toml"
        ),
        "where the best two disagree"
    );
}

#[test]
fn rivals_and_free_keys_need_data() {
    let scratch = Scratch::new("needs-data");
    let out = scratch.0.join("x.html");
    for extra in [
        ["--rival", "networks/photoswitch-side-product.toml"],
        ["--free", "photo.E to Z.quantum_yield"],
    ] {
        let mut args = vec!["report", "networks/photoswitch.toml", "-o", out.to_str().unwrap()];
        args.extend_from_slice(&extra);
        let o = run(&args);
        assert!(!o.status.success(), "{extra:?} without --data is refused");
        assert!(
            String::from_utf8_lossy(&o.stderr).contains("--data"),
            "{extra:?}: the error names --data"
        );
        assert!(!out.exists(), "no page written");
    }
}

/// The caution names the sources that emit ultraviolet (below 400 nm, `common practice` for
/// the UV/visible boundary) by where they emit, as `check` gives it (a band's centre ± 2 FWHM):
/// on the bundled photoswitch the 365 nm LED, not the 450 nm one, whose quadrature grid merely
/// reaches below 400 nm with next to no light there.
#[test]
fn the_uv_caution_names_the_sources_that_emit_uv() {
    let scratch = Scratch::new("uv-caution");
    let page = render("networks/photoswitch.toml", &[], &scratch);
    assert!(
        page.contains("includes ultraviolet (UV LED)"),
        "the caution names the UV LED only"
    );
    assert!(page.contains("410–490"), "blue LED range as check gives it");
}
