//! Unicode clean-up of recognized text before it is written.

use unicode_normalization::UnicodeNormalization;

/// Arabic presentation forms (U+FB50–U+FDFF, U+FE70–U+FEFF) replaced by their base letters (NFKC on
/// those ranges only, UAX #15); everything else is kept as it is. `ﻻ` becomes `لا`.
pub fn base_letters(text: &str) -> String {
    let mut out = String::with_capacity(text.len());
    for c in text.chars() {
        if is_presentation_form(c) {
            out.extend(c.to_string().nfkc());
        } else {
            out.push(c);
        }
    }
    out
}

/// Arabic Presentation Forms-A or -B (Unicode blocks, Blocks.txt).
pub fn is_presentation_form(c: char) -> bool {
    matches!(c as u32, 0xFB50..=0xFDFF | 0xFE70..=0xFEFF)
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn lam_alef_ligature_becomes_two_letters() {
        // U+FEFB ARABIC LIGATURE LAM WITH ALEF ISOLATED FORM → <compat> 0644 0627 (UnicodeData.txt).
        assert_eq!(base_letters("\u{FEFB}"), "\u{0644}\u{0627}");
        // U+FE8E ARABIC LETTER ALEF FINAL FORM → <final> 0627 (UnicodeData.txt).
        assert_eq!(base_letters("\u{FE8E}ب"), "\u{0627}ب");
        assert_eq!(base_letters("١٢ abc"), "١٢ abc");
    }
}

/// Which equivalences Arabic-aware search applies. All on by default except `strip_article`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct FoldOptions {
    /// Drop harakat (U+064B–U+065F), superscript alef (U+0670) and tatweel (U+0640).
    pub marks: bool,
    /// أ إ آ ٱ → ا.
    pub alef: bool,
    /// ى → ي.
    pub ya: bool,
    /// ة → ه.
    pub ta_marbuta: bool,
    /// Arabic-Indic and Extended Arabic-Indic digits → ASCII digits.
    pub digits: bool,
    /// Ignore a leading definite article ال on every word.
    pub strip_article: bool,
}

impl Default for FoldOptions {
    fn default() -> Self {
        FoldOptions {
            marks: true,
            alef: true,
            ya: true,
            ta_marbuta: true,
            digits: true,
            strip_article: false,
        }
    }
}

impl FoldOptions {
    /// No folding at all (exact search); presentation forms are still read as base letters.
    pub const EXACT: FoldOptions = FoldOptions {
        marks: false,
        alef: false,
        ya: false,
        ta_marbuta: false,
        digits: false,
        strip_article: false,
    };
}

/// Fold one character; `None` drops it.
pub fn fold_char(c: char, o: &FoldOptions) -> Option<char> {
    let u = c as u32;
    match c {
        // Harakat U+064B–U+065F and U+0670 are combining marks (general category Mn, UnicodeData.txt);
        // tatweel U+0640 is a stretching letter (Lm) that carries no sound. Dropping both for search:
        // common practice, no source.
        _ if o.marks && (matches!(u, 0x064B..=0x065F | 0x0670 | 0x0640)) => None,
        // أ = 0627 0654, إ = 0627 0655, آ = 0627 0653 (canonical decompositions, UnicodeData.txt):
        // their base is ا. ٱ (U+0671, alef wasla) has no decomposition; treated as ا by common practice.
        '\u{0623}' | '\u{0625}' | '\u{0622}' | '\u{0671}' if o.alef => Some('\u{0627}'),
        // ى and ي, ة and ه: spelled interchangeably at word ends in print (common practice, no source).
        '\u{0649}' if o.ya => Some('\u{064A}'),
        '\u{0629}' if o.ta_marbuta => Some('\u{0647}'),
        // Decimal digit value 0–9 (UnicodeData.txt field 6) of U+0660–0669 and U+06F0–06F9.
        '\u{0660}'..='\u{0669}' if o.digits => char::from_digit(u - 0x0660, 10),
        '\u{06F0}'..='\u{06F9}' if o.digits => char::from_digit(u - 0x06F0, 10),
        _ => Some(c),
    }
}

/// Folded text and, for each folded character, the byte offset of the source character it came from.
#[derive(Debug, Clone, PartialEq, Eq, Default)]
pub struct Folded {
    /// The folded text.
    pub text: String,
    /// `origin[i]` = byte offset in the source of folded char `i`.
    pub origin: Vec<usize>,
}

/// Fold text for search: presentation forms to base letters, then the chosen equivalences; white
/// space runs become one space. With `strip_article`, a word-initial ال is dropped when at least
/// two letters follow it.
pub fn fold_for_search(text: &str, o: &FoldOptions) -> Folded {
    let mut out = Folded::default();
    let mut last_space = true;
    for (i, c) in text.char_indices() {
        let expanded: Vec<char> = if is_presentation_form(c) {
            c.to_string().nfkc().collect()
        } else {
            vec![c]
        };
        for c in expanded {
            if c.is_whitespace() {
                if !last_space {
                    out.text.push(' ');
                    out.origin.push(i);
                    last_space = true;
                }
                continue;
            }
            if let Some(f) = fold_char(c, o) {
                out.text.push(f);
                out.origin.push(i);
                last_space = false;
            }
        }
    }
    if o.strip_article {
        out = strip_articles(out);
    }
    out
}

fn strip_articles(f: Folded) -> Folded {
    let chars: Vec<char> = f.text.chars().collect();
    let mut out = Folded::default();
    let mut i = 0;
    while i < chars.len() {
        let word_start = i == 0 || chars[i - 1] == ' ';
        let letters_after = chars[i..].iter().skip(2).take_while(|c| **c != ' ').count();
        if word_start
            && chars[i] == '\u{0627}'
            && chars.get(i + 1) == Some(&'\u{0644}')
            && letters_after >= 2
        {
            i += 2;
            continue;
        }
        out.text.push(chars[i]);
        out.origin.push(f.origin[i]);
        i += 1;
    }
    out
}

#[cfg(test)]
mod search_tests {
    use super::*;

    fn f(s: &str) -> String {
        fold_for_search(s, &FoldOptions::default()).text
    }

    #[test]
    fn harakat_and_tatweel_are_ignored() {
        assert_eq!(f("مَكْتَبَـةٌ"), f("مكتبة"));
    }

    #[test]
    fn alef_forms_are_equal() {
        for v in ["أحمد", "إحمد", "آحمد", "ٱحمد"] {
            assert_eq!(f(v), "احمد", "{v}");
        }
    }

    #[test]
    fn alef_rule_agrees_with_canonical_decompositions() {
        // The crate unicode-normalization (crates.io) is generated from UnicodeData.txt: every
        // alef with hamza or madda decomposes to ا plus a combining mark, which is what we fold.
        for c in ['\u{0622}', '\u{0623}', '\u{0625}'] {
            let nfd: Vec<char> = c.to_string().nfd().collect();
            assert_eq!(nfd[0], '\u{0627}', "{c}");
            assert_eq!(fold_char(c, &FoldOptions::default()), Some(nfd[0]));
        }
    }

    #[test]
    fn ya_and_alef_maqsura_are_equal() {
        assert_eq!(f("مستشفى"), f("مستشفي"));
    }

    #[test]
    fn ta_marbuta_and_ha_are_equal() {
        assert_eq!(f("مكتبة"), f("مكتبه"));
    }

    #[test]
    fn digits_are_equal() {
        assert_eq!(f("٢٠٢٤/١١٧"), "2024/117");
        assert_eq!(f("۱۹۳۴"), "1934"); // Extended Arabic-Indic (Persian) digits
    }

    #[test]
    fn each_rule_can_be_switched_off() {
        let o = FoldOptions {
            alef: false,
            ..FoldOptions::default()
        };
        assert_eq!(fold_for_search("أحمد", &o).text, "أحمد");
        assert_eq!(fold_for_search("مَكتبة", &FoldOptions::EXACT).text, "مَكتبة");
    }

    #[test]
    fn article_is_dropped_only_when_asked() {
        let o = FoldOptions {
            strip_article: true,
            ..FoldOptions::default()
        };
        assert_eq!(fold_for_search("المكتبة العامة", &o).text, "مكتبه عامه");
        assert_eq!(fold_for_search("الى", &o).text, "الي"); // too short to carry the article
        assert_eq!(f("المكتبة"), "المكتبه");
    }

    #[test]
    fn origins_point_into_the_source() {
        let src = "مَكتبة  ١٢";
        let folded = fold_for_search(src, &FoldOptions::default());
        assert_eq!(folded.text, "مكتبه 12");
        assert_eq!(folded.origin.len(), folded.text.chars().count());
        assert_eq!(&src[folded.origin[1]..folded.origin[1] + 2], "ك");
    }
}
