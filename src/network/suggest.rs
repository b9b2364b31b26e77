//! "Did you mean ...?" for unknown names.

/// The candidate closest to `name`, if reasonably close.
pub fn closest<'a>(name: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let lower = name.to_lowercase();
    candidates
        .into_iter()
        .map(|c| {
            let cl = c.to_lowercase();
            // Short names: one or two edits away counts as close even when the
            // Jaro–Winkler score is low ("S_1" for "S1").
            let edits = strsim::levenshtein(&lower, &cl);
            let near = edits <= 1.max(cl.chars().count() / 4);
            (
                c,
                if near {
                    1.0 + 1.0 / (1.0 + edits as f64)
                } else {
                    strsim::jaro_winkler(&lower, &cl)
                },
            )
        })
        .filter(|(_, s)| *s >= 0.7)
        .max_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(c, _)| c)
}

#[cfg(test)]
mod tests {
    #[test]
    fn suggests_near_names() {
        let names = ["azobenzene_E", "azobenzene_Z", "O2"];
        assert_eq!(super::closest("azobenzene_z", names), Some("azobenzene_Z"));
        assert_eq!(super::closest("xyz", names), None);
        assert_eq!(super::closest("S_1", ["S1", "T1", "A"]), Some("S1"));
    }
}
