//! Did-you-mean suggestions for misspelt names and keys (Levenshtein distance from `strsim`).

/// The candidate nearest to `name`, if it is near enough to be a likely misspelling: at most
/// max(2, ⌈len/3⌉) edits, case ignored; ties go to the alphabetically first candidate.
pub fn suggest<'a>(name: &str, candidates: impl Iterator<Item = &'a str>) -> Option<&'a str> {
    let limit = (name.chars().count().div_ceil(3)).max(2);
    let name = name.to_lowercase();
    candidates
        .map(|c| (strsim::levenshtein(&name, &c.to_lowercase()), c))
        .filter(|(d, _)| *d <= limit)
        .min_by(|x, y| x.0.cmp(&y.0).then(x.1.cmp(y.1)))
        .map(|(_, c)| c)
}

/// `; did you mean "x"?` for the nearest of `candidates`, or nothing.
pub(super) fn did_you_mean<'a>(name: &str, candidates: impl Iterator<Item = &'a String>) -> String {
    suggest(name, candidates.map(|s| s.as_str()))
        .map(|s| format!("; did you mean \"{s}\"?"))
        .unwrap_or_default()
}

/// The defined names, quoted and comma separated, or "none defined".
pub(super) fn known_list<'a>(names: impl Iterator<Item = &'a String>) -> String {
    let v: Vec<String> = names.map(|s| format!("\"{s}\"")).collect();
    if v.is_empty() {
        "none defined".to_string()
    } else {
        v.join(", ")
    }
}
