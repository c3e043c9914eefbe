//! "Did you mean": the edit distance between two words and the candidates
//! close enough to a misspelt word to suggest. Used for cover names,
//! keywords and names in the scenario alike.

/// Levenshtein edit distance between two strings, counted in characters
/// (insertions, deletions and substitutions each cost 1).
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut curr: Vec<usize> = vec![0; b.len() + 1];
    for (i, ca) in a.chars().enumerate() {
        curr[0] = i + 1;
        for (j, cb) in b.iter().enumerate() {
            let substitution = prev[j] + usize::from(ca != *cb);
            let deletion = prev[j + 1] + 1;
            let insertion = curr[j] + 1;
            curr[j + 1] = substitution.min(deletion).min(insertion);
        }
        std::mem::swap(&mut prev, &mut curr);
    }
    prev[b.len()]
}

/// Candidates close enough to `word` to suggest, closest first (ties keep the
/// candidates' order). Case is ignored. A candidate is close enough when its edit
/// distance is at most `1 + len/4` (len = characters in `word`), or when `word`
/// (three characters or more) begins it or one of its hyphen-separated parts.
fn ranked<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Vec<&'a str> {
    let word = word.trim().to_lowercase();
    let len = word.chars().count();
    if len == 0 {
        return Vec::new();
    }
    let limit = 1 + len / 4;
    let mut scored: Vec<(usize, &'a str)> = candidates
        .into_iter()
        .filter_map(|cand| {
            let lower = cand.to_lowercase();
            let d = edit_distance(&word, &lower);
            let begins = len >= 3
                && (lower.starts_with(&word)
                    || lower.split('-').any(|part| part.starts_with(&word)));
            (d <= limit || begins).then_some((d, cand))
        })
        .collect();
    scored.sort_by_key(|&(d, _)| d);
    scored.into_iter().map(|(_, c)| c).collect()
}

/// The candidate closest to `word` for a "did you mean" hint, if any is close enough.
///
/// Case is ignored. A candidate qualifies when its Levenshtein distance to `word`
/// is at most `1 + len/4` (len = characters in `word`), or when `word` (three
/// characters or more) is the start of it or of one of its hyphen-separated parts
/// (`bermuda` finds `grass-bermuda`); the smallest distance wins, and ties go to
/// the earlier candidate.
pub fn nearest<'a>(word: &str, candidates: impl IntoIterator<Item = &'a str>) -> Option<&'a str> {
    ranked(word, candidates).into_iter().next()
}

/// Up to `max` candidates close to `word` (as in [`nearest`]), closest first, as owned strings.
pub fn suggestions<'a>(
    word: &str,
    candidates: impl IntoIterator<Item = &'a str>,
    max: usize,
) -> Vec<String> {
    ranked(word, candidates)
        .into_iter()
        .take(max)
        .map(str::to_string)
        .collect()
}

/// The hint for a close candidate: `did you mean "weir"?`.
pub fn did_you_mean(candidate: &str) -> String {
    format!("did you mean \"{candidate}\"?")
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn edit_distance_counts_single_character_edits() {
        // Levenshtein distance; common practice, no published source.
        assert_eq!(edit_distance("", ""), 0);
        assert_eq!(edit_distance("abc", ""), 3);
        assert_eq!(edit_distance("", "ab"), 2);
        assert_eq!(edit_distance("kitten", "sitting"), 3);
        assert_eq!(edit_distance("flaw", "lawn"), 2);
        assert_eq!(edit_distance("münchen", "munchen"), 1);
    }

    #[test]
    fn nearest_prefers_the_smallest_distance_and_ignores_case() {
        let names = ["Pond A", "Pond B", "outfall"];
        assert_eq!(nearest("pond a", names), Some("Pond A"));
        assert_eq!(nearest("outfal", names), Some("outfall"));
        assert_eq!(nearest("zzzzzz", names), None);
        assert_eq!(nearest("", names), None);
    }

    #[test]
    fn the_nearest_candidate_wins_and_far_words_get_none() {
        let kinds = ["orifice", "weir", "riser"];
        assert_eq!(nearest("wier", kinds), Some("weir"));
        assert_eq!(nearest("Orifce", kinds), Some("orifice"));
        assert_eq!(nearest("culvert", kinds), None);
        assert_eq!(nearest("", kinds), None);
        assert_eq!(
            suggestions("grass", ["grass-bermuda", "grass-short", "woods"], 3),
            vec!["grass-short".to_string(), "grass-bermuda".to_string()]
        );
    }
}
