//! Edit distance (Levenshtein 1966) over Unicode scalar values and over words.

/// Smallest number of insertions, deletions and substitutions turning `a` into `b`
/// (Wagner & Fischer 1974 dynamic programme, one row kept).
pub fn levenshtein<T: PartialEq>(a: &[T], b: &[T]) -> usize {
    let mut row: Vec<usize> = (0..=b.len()).collect();
    for (i, x) in a.iter().enumerate() {
        let mut diag = row[0];
        row[0] = i + 1;
        for (j, y) in b.iter().enumerate() {
            let next = (row[j + 1] + 1)
                .min(row[j] + 1)
                .min(diag + usize::from(x != y));
            diag = row[j + 1];
            row[j + 1] = next;
        }
    }
    row[b.len()]
}

/// Character edits between two texts, counted over Unicode scalar values.
pub fn char_edits(truth: &str, got: &str) -> usize {
    let a: Vec<char> = truth.chars().collect();
    let b: Vec<char> = got.chars().collect();
    levenshtein(&a, &b)
}

/// Word edits between two texts (words split on white space).
pub fn word_edits(truth: &str, got: &str) -> usize {
    let a: Vec<&str> = truth.split_whitespace().collect();
    let b: Vec<&str> = got.split_whitespace().collect();
    levenshtein(&a, &b)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn textbook_cases() {
        // "kitten" → "sitting" takes 3 edits (the standard example, e.g. Wikipedia "Levenshtein distance").
        assert_eq!(char_edits("kitten", "sitting"), 3);
        assert_eq!(char_edits("", "abc"), 3);
        assert_eq!(char_edits("abc", ""), 3);
        assert_eq!(char_edits("كتاب", "كتب"), 1);
        assert_eq!(word_edits("في البيت كتاب", "في البيت"), 1);
    }

    #[test]
    fn agrees_with_rapidfuzz_on_fifty_pairs() {
        // Expected distances from rapidfuzz.distance.Levenshtein (PyPI), made by
        // tests/data/lines/make_cer_pairs.py.
        let tsv = include_str!("../../tests/data/lines/cer_pairs.tsv");
        let mut n = 0;
        for row in tsv.lines().filter(|r| !r.starts_with('#')) {
            let c: Vec<&str> = row.split('\t').collect();
            assert_eq!(c.len(), 4, "row {row:?}");
            assert_eq!(
                char_edits(c[0], c[1]),
                c[2].parse::<usize>().unwrap(),
                "chars: {row}"
            );
            assert_eq!(
                word_edits(c[0], c[1]),
                c[3].parse::<usize>().unwrap(),
                "words: {row}"
            );
            n += 1;
        }
        assert_eq!(n, 50);
    }
}
