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

/// For each word of `got`, whether a least-edit alignment of the two word sequences pairs it with
/// an equal word of `truth` (Wagner & Fischer 1974, full table and trace back; among alignments of
/// equal cost, matches are taken first).
pub fn matched_words(truth: &[&str], got: &[&str]) -> Vec<bool> {
    let (n, m) = (truth.len(), got.len());
    let mut d = vec![vec![0usize; m + 1]; n + 1];
    for (i, row) in d.iter_mut().enumerate() {
        row[0] = i;
    }
    for (j, cell) in d[0].iter_mut().enumerate() {
        *cell = j;
    }
    for i in 1..=n {
        for j in 1..=m {
            let sub = d[i - 1][j - 1] + usize::from(truth[i - 1] != got[j - 1]);
            d[i][j] = sub.min(d[i - 1][j] + 1).min(d[i][j - 1] + 1);
        }
    }
    let mut out = vec![false; m];
    let (mut i, mut j) = (n, m);
    while i > 0 && j > 0 {
        if truth[i - 1] == got[j - 1] && d[i][j] == d[i - 1][j - 1] {
            out[j - 1] = true;
            (i, j) = (i - 1, j - 1);
        } else if d[i][j] == d[i - 1][j - 1] + 1 {
            (i, j) = (i - 1, j - 1);
        } else if d[i][j] == d[i - 1][j] + 1 {
            i -= 1;
        } else {
            j -= 1;
        }
    }
    out
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
    fn words_read_right_are_told_from_the_others() {
        let m = |t: &str, g: &str| {
            let (t, g): (Vec<&str>, Vec<&str>) = (
                t.split_whitespace().collect(),
                g.split_whitespace().collect(),
            );
            matched_words(&t, &g)
        };
        assert_eq!(m("في البيت كتاب", "في البيت كتاب"), [true, true, true]);
        assert_eq!(m("في البيت كتاب", "في الييت كتاب"), [true, false, true]);
        // A word split in two: neither half is right; the words around it are.
        assert_eq!(
            m("في البيت كتاب", "في ال بيت كتاب"),
            [true, false, false, true]
        );
        // Two words read as one, and a word left out.
        assert_eq!(m("في البيت كتاب", "فيالبيت كتاب"), [false, true]);
        assert_eq!(m("في البيت كتاب", "في كتاب"), [true, true]);
        assert_eq!(m("", "في"), [false]);
        // As many right words as the least-edit count allows (common practice, no source).
        for (t, g) in [("a b c d", "a x c y"), ("a b a b", "b a b a")] {
            let right = m(t, g).iter().filter(|&&r| r).count();
            let (tw, gw): (Vec<&str>, Vec<&str>) = (
                t.split_whitespace().collect(),
                g.split_whitespace().collect(),
            );
            assert!(right + levenshtein(&tw, &gw) >= gw.len(), "{t} / {g}");
        }
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
