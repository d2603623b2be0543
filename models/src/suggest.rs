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
