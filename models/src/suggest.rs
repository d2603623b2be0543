//! Names a user may have misspelt: the one "did you mean" rule every error message uses.

/// The candidate closest to `given`, if it is close enough to be a likely typo.
pub fn closest<'a, I>(given: &str, candidates: I) -> Option<&'a str>
where
    I: IntoIterator<Item = &'a str>,
{
    // Jaro–Winkler rewards a shared prefix, which is how names are usually
    // misspelt or shortened ("paint" for "painting"); 0.8 keeps unrelated
    // short names from being suggested.
    let g = given.to_lowercase();
    candidates
        .into_iter()
        .map(|c| (strsim::jaro_winkler(&g, &c.to_lowercase()), c))
        .filter(|(s, _)| *s >= 0.8)
        .max_by(|a, b| a.0.total_cmp(&b.0))
        .map(|(_, c)| c)
}

/// ` (did you mean "x"?)` or nothing.
pub fn did_you_mean<'a, I>(given: &str, candidates: I) -> String
where
    I: IntoIterator<Item = &'a str>,
{
    closest(given, candidates).map_or(String::new(), |c| format!(" (did you mean \"{c}\"?)"))
}

/// A short list of names for a hint: the first dozen, then a count.
pub fn name_list<'a, I>(names: I) -> String
where
    I: IntoIterator<Item = &'a str>,
{
    let all: Vec<&str> = names.into_iter().collect();
    let mut s = all.iter().take(12).copied().collect::<Vec<_>>().join(", ");
    if all.len() > 12 {
        s.push_str(&format!(" and {} more", all.len() - 12));
    }
    s
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn a_typo_gets_a_suggestion() {
        let names = ["receiving", "painting", "shipping"];
        assert_eq!(closest("paintng", names), Some("painting"));
        assert_eq!(closest("PAINT", names), Some("painting"), "case and a shortened name still match");
        assert_eq!(did_you_mean("shiping", names), " (did you mean \"shipping\"?)");
    }

    #[test]
    fn an_unrelated_word_gets_none() {
        let names = ["receiving", "painting", "shipping"];
        assert_eq!(closest("forklift", names), None);
        assert_eq!(did_you_mean("forklift", names), "");
        assert_eq!(closest("x", std::iter::empty()), None);
    }

    #[test]
    fn ties_are_deterministic() {
        // Equal scores: the candidate listed last wins (the rule of
        // `Iterator::max_by`), whatever the run, so messages never flicker.
        assert_eq!(closest("weld", ["welda", "weldb"]), Some("weldb"));
        assert_eq!(closest("weld", ["weldb", "welda"]), Some("welda"));
        assert_eq!(closest("weld", ["Weld", "weld"]), Some("weld"));
    }

    #[test]
    fn long_lists_are_cut_short() {
        let names: Vec<String> = (0..14).map(|i| format!("d{i}")).collect();
        let s = name_list(names.iter().map(String::as_str));
        assert!(s.starts_with("d0, d1,") && s.ends_with("d11 and 2 more"), "{s}");
    }
}
