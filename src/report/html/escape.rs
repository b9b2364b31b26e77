//! Text and SVG made safe to place inside an HTML page.

/// Escape `text` for HTML element content and attribute values (`&`, `<`, `>`, `"`, `'`).
pub fn esc(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\'' => out.push_str("&#39;"),
            c => out.push(c),
        }
    }
    out
}

/// A standalone SVG document made fit to sit inline in HTML: any XML declaration or doctype
/// dropped, the `xmlns` attribute of the root dropped (HTML puts `<svg>` in the SVG namespace
/// itself, and the page then holds no URL at all), every `id` prefixed with `prefix-` and every
/// reference to one (`url(#…)`, `href="#…"`) rewritten, so that several SVGs share one page
/// without their ids colliding.
pub fn inline_svg(svg: &str, prefix: &str) -> String {
    let mut s = svg.trim_start();
    while s.starts_with("<?") || s.starts_with("<!DOCTYPE") || s.starts_with("<!doctype") {
        match s.find('>') {
            Some(end) => s = s[end + 1..].trim_start(),
            None => break,
        }
    }
    let mut out = s
        .replacen(" xmlns=\"http://www.w3.org/2000/svg\"", "", 1)
        .replace(" xmlns:xlink=\"http://www.w3.org/1999/xlink\"", "")
        .replace(" id=\"", &format!(" id=\"{prefix}-"))
        .replace("url(#", &format!("url(#{prefix}-"))
        .replace("href=\"#", &format!("href=\"#{prefix}-"));
    // Scale with the page: the viewBox keeps the drawing's proportions.
    if let Some(rest) = out.strip_prefix("<svg") {
        out = format!("<svg class=\"figure-svg\" role=\"img\"{rest}");
    }
    out.trim_end().to_string()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn escapes_markup_characters() {
        assert_eq!(
            esc("a < b & \"c\" > 'd'"),
            "a &lt; b &amp; &quot;c&quot; &gt; &#39;d&#39;"
        );
        assert_eq!(esc("Φ 0.12 · ΔG‡"), "Φ 0.12 · ΔG‡");
    }

    #[test]
    fn inline_svg_drops_the_declaration_and_namespace_and_prefixes_ids() {
        let doc = "<?xml version=\"1.0\"?>\n<svg xmlns=\"http://www.w3.org/2000/svg\" viewBox=\"0 0 10 10\">\
                   <defs><marker id=\"arrow-a\"/></defs><path marker-end=\"url(#arrow-a)\"/>\
                   <use href=\"#arrow-a\"/></svg>\n";
        let s = inline_svg(doc, "net");
        assert!(s.starts_with("<svg class=\"figure-svg\""), "{s}");
        assert!(!s.contains("<?xml") && !s.contains("http"), "{s}");
        assert!(s.contains("id=\"net-arrow-a\""), "{s}");
        assert!(s.contains("url(#net-arrow-a)"), "{s}");
        assert!(s.contains("href=\"#net-arrow-a\""), "{s}");
        roxmltree::Document::parse(&s).expect("still XML");
    }
}
