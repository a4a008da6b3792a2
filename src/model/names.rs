//! Names the engineer typed that are nearly another's: the suggestions a "does not
//! exist" message offers.

/// The edit distance between `a` and `b` (Levenshtein: insertions, deletions and
/// substitutions, each 1; textbook dynamic programme), by characters.
pub fn edit_distance(a: &str, b: &str) -> usize {
    let b: Vec<char> = b.chars().collect();
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    for (i, ca) in a.chars().enumerate() {
        let mut cur = vec![i + 1; b.len() + 1];
        for (j, &cb) in b.iter().enumerate() {
            cur[j + 1] = (prev[j] + usize::from(ca != cb))
                .min(prev[j + 1] + 1)
                .min(cur[j] + 1);
        }
        prev = cur;
    }
    prev[b.len()]
}

/// The names of `known` nearest `typed`: those equal to it but for letter case, else those
/// within an edit distance of 2 (1 for names of 4 characters or fewer) ignoring case, at
/// most 3, nearest first then in `known` order; none when nothing is near.
pub fn nearest<'a>(typed: &str, known: &[&'a str]) -> Vec<&'a str> {
    let t = typed.to_lowercase();
    let same_case: Vec<&str> = known
        .iter()
        .copied()
        .filter(|k| k.to_lowercase() == t)
        .collect();
    if !same_case.is_empty() {
        return same_case;
    }
    let limit = if t.chars().count() <= 4 { 1 } else { 2 };
    let mut near: Vec<(usize, usize, &str)> = known
        .iter()
        .enumerate()
        .map(|(i, k)| (edit_distance(&t, &k.to_lowercase()), i, *k))
        .filter(|(d, _, _)| *d <= limit)
        .collect();
    near.sort();
    near.into_iter().take(3).map(|(_, _, k)| k).collect()
}
