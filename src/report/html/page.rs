//! The page around the sections: document skeleton, the one style sheet (screen and print),
//! and the frame every section shares. No scripts, no external URLs, no web fonts.

use super::escape::esc;

/// The style sheet: a calm reading page, a serif text face with sans-serif numbers and labels,
/// all from fonts already on the reader's machine; a print layout that drops the tint and keeps
/// figures and tables whole.
const CSS: &str = r#"
:root {
  --paper: #f7f6f2; --sheet: #ffffff; --ink: #22292f; --muted: #5f6b73; --rule: #dcd8cc;
  --accent: #2f6f6a; --accent-soft: #e3efec; --warn: #8a4b12; --warn-soft: #fbf1e4;
  --text: "Iowan Old Style", "Charter", "Bitstream Charter", "Palatino Linotype", Georgia, serif;
  --sans: system-ui, "Segoe UI", "Helvetica Neue", "DejaVu Sans", Arial, sans-serif;
  --mono: ui-monospace, "SFMono-Regular", "DejaVu Sans Mono", Menlo, Consolas, monospace;
}
* { box-sizing: border-box; }
html { background: var(--paper); }
body { margin: 0; color: var(--ink); font-family: var(--text); font-size: 17px; line-height: 1.55; }
main { max-width: 1080px; margin: 0 auto; padding: 28px 36px 64px; }
h1, h2, h3 { font-family: var(--sans); font-weight: 600; line-height: 1.25; color: var(--ink); }
h1 { font-size: 30px; margin: 6px 0 10px; }
h2 { font-size: 21px; margin: 0 0 12px; padding-bottom: 6px; border-bottom: 2px solid var(--accent-soft); }
h2 .no { color: var(--accent); margin-right: 10px; font-variant-numeric: tabular-nums; }
h3 { font-size: 16px; margin: 22px 0 8px; color: var(--muted); text-transform: none; }
p { margin: 8px 0; }
code { font-family: var(--mono); font-size: 14px; }
.masthead { background: var(--sheet); border: 1px solid var(--rule); border-top: 6px solid var(--accent);
  border-radius: 6px; padding: 22px 28px 18px; margin-bottom: 22px; }
.kicker { font-family: var(--sans); font-size: 13px; letter-spacing: 0.08em; text-transform: uppercase;
  color: var(--accent); margin: 0; }
.lede { font-size: 18px; color: var(--ink); max-width: 64em; }
.facts { display: grid; grid-template-columns: 15em 1fr; gap: 4px 18px; margin: 16px 0 8px;
  font-size: 15px; }
.facts dt { font-family: var(--sans); color: var(--muted); }
.facts dd { margin: 0; overflow-wrap: anywhere; }
.command { display: block; background: #f1efe8; border: 1px solid var(--rule); border-radius: 4px;
  padding: 6px 10px; white-space: pre-wrap; overflow-wrap: anywhere; }
.tag { display: inline-block; font-family: var(--sans); font-size: 12px; padding: 1px 8px; border-radius: 10px;
  background: var(--accent-soft); color: var(--accent); margin-left: 6px; vertical-align: 1px; }
.tag.warn { background: var(--warn-soft); color: var(--warn); }
nav.contents { font-family: var(--sans); font-size: 14px; border-top: 1px solid var(--rule); margin-top: 14px;
  padding-top: 10px; }
nav.contents ol { margin: 0; padding: 0; list-style: none; display: flex; flex-wrap: wrap; gap: 4px 18px;
  counter-reset: c; }
nav.contents li { counter-increment: c; }
nav.contents li::before { content: counter(c) "  "; color: var(--accent); font-variant-numeric: tabular-nums; }
nav.contents a { color: var(--ink); text-decoration: none; border-bottom: 1px dotted var(--muted); }
section.part { background: var(--sheet); border: 1px solid var(--rule); border-radius: 6px;
  padding: 20px 28px 18px; margin: 0 0 22px; }
.note { font-size: 15px; color: var(--muted); }
.assume { font-size: 15px; border-left: 3px solid var(--accent); background: var(--accent-soft);
  padding: 6px 12px; margin: 12px 0; border-radius: 0 4px 4px 0; }
.assume strong, .caution strong { font-family: var(--sans); font-size: 13px; letter-spacing: 0.04em;
  text-transform: uppercase; margin-right: 6px; }
.caution { border-left: 3px solid var(--warn); background: var(--warn-soft); padding: 8px 14px; margin: 12px 0;
  border-radius: 0 4px 4px 0; font-size: 16px; }
.caution ul { margin: 4px 0 4px 1.1em; padding: 0; }
.missing { font-style: italic; color: var(--muted); }
figure { margin: 14px 0; }
figure .figure-svg { display: block; max-width: 100%; height: auto; margin: 0 auto; border: 1px solid #ecebe6;
  border-radius: 4px; background: #fff; }
figcaption { font-size: 14px; color: var(--muted); margin-top: 6px; font-family: var(--sans); }
.scroll { overflow-x: auto; }
table { border-collapse: collapse; margin: 10px 0 6px; font-family: var(--sans); font-size: 14px;
  font-variant-numeric: tabular-nums; }
caption { caption-side: top; text-align: left; font-size: 14px; color: var(--muted); padding-bottom: 6px; }
th, td { padding: 5px 12px; border-bottom: 1px solid #ebe8df; vertical-align: top; }
thead th { border-bottom: 2px solid var(--rule); text-align: left; font-weight: 600; background: #faf9f5; }
th.num { text-align: right; } td.num { text-align: right; white-space: nowrap; }
thead th { max-width: 13em; }
td:first-child { min-width: 9em; }
tbody tr:nth-child(even) td { background: #fcfbf8; }
td.yes { color: var(--accent); } td.no { color: var(--warn); }
footer { font-family: var(--sans); font-size: 13px; color: var(--muted); text-align: center; margin-top: 28px; }
@media print {
  @page { size: A4; margin: 16mm 14mm; }
  html, body { background: #fff; font-size: 11pt; }
  main { max-width: none; padding: 0; }
  .masthead, section.part { border: none; border-radius: 0; padding: 0; margin: 0 0 8mm; }
  .masthead { border-top: 3pt solid #000; padding-top: 3mm; }
  nav.contents { display: none; }
  h2 { border-bottom: 1pt solid #999; break-after: avoid; }
  h3 { break-after: avoid; }
  figure, table, .caution, .assume { break-inside: avoid; }
  figure .figure-svg { border: none; max-width: 100%; }
  .assume, .caution { background: none; }
  thead th, tbody tr:nth-child(even) td { background: none; }
  a { color: inherit; text-decoration: none; border: none; }
}
"#;

/// A whole HTML document: `title` in the tab, `body` the header and the sections in order.
pub fn document(title: &str, body: &str) -> String {
    format!(
        "<!DOCTYPE html>\n<html lang=\"en\">\n<head>\n<meta charset=\"utf-8\">\n\
         <meta name=\"viewport\" content=\"width=device-width, initial-scale=1\">\n\
         <meta name=\"generator\" content=\"photoledger {}\">\n<title>{}</title>\n<style>{CSS}</style>\n</head>\n\
         <body>\n<main>\n{body}\n</main>\n</body>\n</html>\n",
        env!("CARGO_PKG_VERSION"),
        esc(title)
    )
}

/// One numbered section of the report.
pub fn section(id: &str, number: usize, title: &str, body: &str) -> String {
    format!(
        "<section class=\"part\" id=\"{}\">\n<h2><span class=\"no\">{number}</span>{}</h2>\n{body}\n</section>\n",
        esc(id),
        esc(title)
    )
}

/// A stated assumption, placed beside what it applies to.
pub fn assumption(text: &str) -> String {
    format!("<p class=\"assume\"><strong>Assumes</strong>{}</p>\n", esc(text))
}

/// A figure holding an inline SVG (already made inline) with its caption.
pub fn figure(svg_inline: &str, caption: &str) -> String {
    format!(
        "<figure>\n{svg_inline}\n<figcaption>{}</figcaption>\n</figure>\n",
        esc(caption)
    )
}

/// A table cell holding a number (right-aligned).
pub fn num_cell(text: &str) -> String {
    format!("<td class=\"num\">{}</td>", esc(text))
}

/// A table with a caption, a header row (`(text, numeric)`) and body rows of ready-made cells.
pub fn table(caption: &str, header: &[(&str, bool)], rows: &[String]) -> String {
    let mut s = format!(
        "<div class=\"scroll\"><table>\n<caption>{}</caption>\n<thead><tr>",
        esc(caption)
    );
    for (h, numeric) in header {
        if *numeric {
            s.push_str(&format!("<th class=\"num\" scope=\"col\">{}</th>", esc(h)));
        } else {
            s.push_str(&format!("<th scope=\"col\">{}</th>", esc(h)));
        }
    }
    s.push_str("</tr></thead>\n<tbody>\n");
    for r in rows {
        s.push_str("<tr>");
        s.push_str(r);
        s.push_str("</tr>\n");
    }
    s.push_str("</tbody>\n</table></div>\n");
    s
}

/// A plain (text) table cell.
pub fn text_cell(text: &str) -> String {
    format!("<td>{}</td>", esc(text))
}
