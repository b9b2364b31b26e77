//! The page header: what the network is, where its numbers come from, and how the report was
//! made (tool version, date, the exact command).

use super::Meta;
use super::escape::esc;
use crate::network::Network;

/// The masthead with the contents list of `sections` (id, title).
pub fn header(net: &Network, meta: &Meta, sections: &[(&str, &str)]) -> String {
    let a = &net.about;
    let name = if a.name.trim().is_empty() {
        "unnamed network"
    } else {
        a.name.as_str()
    };
    let mut s =
        String::from("<header class=\"masthead\" id=\"about\">\n<p class=\"kicker\">photoledger study report</p>\n");
    s.push_str(&format!("<h1>{}</h1>\n", esc(name)));
    if a.description.trim().is_empty() {
        s.push_str("<p class=\"lede missing\">The file gives no description.</p>\n");
    } else {
        s.push_str(&format!("<p class=\"lede\">{}</p>\n", esc(a.description.trim())));
    }
    s.push_str("<dl class=\"facts\">\n");
    let provenance = if a.provenance.trim().is_empty() {
        "<span class=\"missing\">The file does not say.</span>".to_string()
    } else {
        esc(a.provenance.trim())
    };
    let mark = if a.invented {
        "<span class=\"tag\">marked invented</span>"
    } else {
        "<span class=\"tag warn\">not marked invented: check its sources before relying on it</span>"
    };
    s.push_str(&format!(
        "<dt>Where its numbers come from</dt><dd>{provenance} {mark}</dd>\n"
    ));
    if let Some(p) = &net.source {
        s.push_str(&format!(
            "<dt>Network file</dt><dd><code>{}</code></dd>\n",
            esc(&p.display().to_string())
        ));
    }
    s.push_str(&format!(
        "<dt>Made with</dt><dd>photoledger {}</dd>\n",
        esc(env!("CARGO_PKG_VERSION"))
    ));
    s.push_str(&format!("<dt>Date</dt><dd>{}</dd>\n", esc(&meta.date)));
    s.push_str(&format!(
        "<dt>Command</dt><dd><code class=\"command\">{}</code></dd>\n",
        esc(&meta.command_line)
    ));
    s.push_str("</dl>\n<nav class=\"contents\" aria-label=\"contents\"><ol>");
    for (id, title) in sections {
        s.push_str(&format!("<li><a href=\"#{}\">{}</a></li>", esc(id), esc(title)));
    }
    s.push_str("</ol></nav>\n</header>\n");
    s
}
