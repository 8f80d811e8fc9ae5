//! "Did you mean …?": the closest known name to a misspelt one.

/// The edit distance between `a` and `b` (in characters), or `None` if it
/// exceeds `limit`: the optimal string alignment distance, which counts an
/// insertion, a deletion, a substitution and a swap of two neighbouring
/// characters as one edit each (so `tikcet` is one edit from `ticket`).
///
/// Three rows, early exit once no entry of the last two rows can lead to a
/// distance within the limit.
pub fn distance_within(a: &[char], b: &[char], limit: usize) -> Option<usize> {
    if a.len().abs_diff(b.len()) > limit {
        return None;
    }
    let mut before: Vec<usize> = vec![0; b.len() + 1];
    let mut prev: Vec<usize> = (0..=b.len()).collect();
    let mut cur = vec![0; b.len() + 1];
    // The smallest entry of `prev` (row 0 starts at 0).
    let mut prev_min: usize = 0;
    for (i, &ca) in a.iter().enumerate() {
        cur[0] = i + 1;
        let mut row_min = cur[0];
        for (j, &cb) in b.iter().enumerate() {
            let substitute = prev[j] + usize::from(ca != cb);
            let mut d = substitute.min(prev[j + 1] + 1).min(cur[j] + 1);
            if i > 0 && j > 0 && ca == b[j - 1] && a[i - 1] == cb {
                d = d.min(before[j - 1] + 1);
            }
            cur[j + 1] = d;
            row_min = row_min.min(d);
        }
        // A later row only grows from this row (by 0 or more) or, by a
        // swap, from the one before it (by 1 or more).
        if row_min > limit && prev_min.saturating_add(1) > limit {
            return None;
        }
        prev_min = row_min;
        std::mem::swap(&mut before, &mut prev);
        std::mem::swap(&mut prev, &mut cur);
    }
    let d = prev[b.len()];
    (d <= limit).then_some(d)
}

/// The edit distance ([`distance_within`]) between two strings, counted in
/// characters.
pub fn distance(a: &str, b: &str) -> usize {
    let a: Vec<char> = a.chars().collect();
    let b: Vec<char> = b.chars().collect();
    distance_within(&a, &b, usize::MAX).unwrap_or(usize::MAX)
}

/// Finds the known name closest to one that does not exist.
pub struct Suggester<'a> {
    candidates: Vec<Candidate<'a>>,
}

struct Candidate<'a> {
    name: &'a str,
    chars: Vec<char>,
    lower: Vec<char>,
}

fn lower_chars(s: &str) -> Vec<char> {
    s.chars().flat_map(char::to_lowercase).collect()
}

impl<'a> Suggester<'a> {
    /// Candidates in order of preference for equal distances (e.g. source order).
    pub fn new(names: impl IntoIterator<Item = &'a str>) -> Self {
        Suggester {
            candidates: names
                .into_iter()
                .map(|name| Candidate {
                    name,
                    chars: name.chars().collect(),
                    lower: lower_chars(name),
                })
                .collect(),
        }
    }

    /// The closest candidate to `wrong`, if one is within
    /// `max(2, len/3)` edits (len in characters). Ties go to the candidate
    /// that is closer when case is ignored, then to the earlier candidate.
    pub fn closest(&self, wrong: &str) -> Option<&'a str> {
        let chars: Vec<char> = wrong.chars().collect();
        let lower = lower_chars(wrong);
        let limit = (chars.len() / 3).max(2);
        let mut best: Option<(usize, usize, &'a str)> = None;
        for c in &self.candidates {
            if c.name == wrong {
                continue;
            }
            let bound = best.map_or(limit, |(d, _, _)| d);
            let Some(d) = distance_within(&chars, &c.chars, bound) else {
                continue;
            };
            let folded = distance_within(&lower, &c.lower, usize::MAX).unwrap_or(usize::MAX);
            let better = match best {
                None => true,
                Some((bd, bf, _)) => (d, folded) < (bd, bf),
            };
            if better {
                best = Some((d, folded, c.name));
            }
        }
        best.map(|(_, _, name)| name)
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn levenshtein_matches_the_textbook_examples() {
        // kitten → sitting needs 3 edits: the standard example of the
        // Levenshtein distance (Wikipedia, "Levenshtein distance").
        assert_eq!(distance("kitten", "sitting"), 3);
        // Same source: "flaw" → "lawn" is 2.
        assert_eq!(distance("flaw", "lawn"), 2);
        assert_eq!(distance("", "abc"), 3);
        assert_eq!(distance("same", "same"), 0);
    }

    #[test]
    fn a_swap_of_neighbours_is_one_edit() {
        // Optimal string alignment: worked by hand.
        assert_eq!(distance("tikcet", "ticket"), 1);
        assert_eq!(distance("ab", "ba"), 1);
        // A swapped pair is not edited again: OSA gives 3 here where the
        // unrestricted Damerau distance gives 2.
        assert_eq!(distance("ca", "abc"), 3);
        assert_eq!(distance("fähre", "fahre"), 1);
        let a: Vec<char> = "abcdefgh".chars().collect();
        let b: Vec<char> = "badcfehg".chars().collect();
        assert_eq!(distance_within(&a, &b, 4), Some(4));
        assert_eq!(distance_within(&a, &b, 3), None);
    }

    #[test]
    fn bounded_distance_gives_up_beyond_the_limit() {
        let a: Vec<char> = "kitten".chars().collect();
        let b: Vec<char> = "sitting".chars().collect();
        assert_eq!(distance_within(&a, &b, 3), Some(3));
        assert_eq!(distance_within(&a, &b, 2), None);
    }

    #[test]
    fn suggests_the_closest_name_within_the_limit() {
        let s = Suggester::new(["Request", "Ticket", "Kind"]);
        assert_eq!(s.closest("Tiket"), Some("Ticket"));
        assert_eq!(s.closest("Requst"), Some("Request"));
        assert_eq!(s.closest("Payment"), None);
    }

    #[test]
    fn equal_distances_prefer_a_case_only_difference() {
        // `kind` is one edit from both `Kind` (case) and `bind`; the
        // case-insensitive match wins.
        let s = Suggester::new(["bind", "Kind"]);
        assert_eq!(s.closest("kind"), Some("Kind"));
    }
}
