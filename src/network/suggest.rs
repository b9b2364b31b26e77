//! "Did you mean ...?" for unknown names.

/// The candidate closest to `name`, if reasonably close.
pub fn closest<'a>(name: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    let lower = name.to_lowercase();
    candidates
        .into_iter()
        .map(|c| (c, strsim::jaro_winkler(&lower, &c.to_lowercase())))
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
    }
}
