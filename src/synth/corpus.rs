//! Text to draw: our own prose for the demo scenario, plus generated lines that cover the script.
//!
//! The prose (`prose_ar.txt`) is written for this project: the register of an invented town
//! library and the case files of an invented law office. The generated part draws pseudo-words
//! from Arabic letter frequencies and makes sure every letter appears in each of its joining
//! positions, with lam-alef, hamza on every seat, ta marbuta, alef maqsura, harakat, numbers in
//! both digit sets, dates, case numbers, punctuation and a few Latin words. Owns no randomness of
//! its own: every function takes the caller's seeded RNG.

use rand::seq::IndexedRandom;
use rand::Rng;

/// The prose, one sentence per line.
pub const PROSE: &str = include_str!("prose_ar.txt");

/// How the generated text is mixed.
#[derive(Debug, Clone, Copy, PartialEq)]
pub struct CorpusConfig {
    /// Share of lines that carry harakat (vowel marks, shadda, sukun, tanwin).
    pub harakat_share: f32,
    /// Share of lines cut from the prose instead of generated.
    pub prose_share: f32,
    /// Chance that a generated token is a Latin word.
    pub latin_share: f32,
    /// Chance that a generated token is a number, date or case number.
    pub number_share: f32,
}

impl Default for CorpusConfig {
    fn default() -> Self {
        CorpusConfig {
            harakat_share: 0.15,
            prose_share: 0.4,
            latin_share: 0.04,
            number_share: 0.1,
        }
    }
}

/// Letters with rough relative frequencies in running Arabic text (per mille).
/// Approximate values from memory of published letter counts; only the ordering matters here.
const LETTER_FREQ: &[(char, u32)] = &[
    ('ا', 124),
    ('ل', 110),
    ('ي', 65),
    ('م', 60),
    ('و', 57),
    ('ن', 55),
    ('ه', 40),
    ('ر', 45),
    ('ب', 40),
    ('ت', 37),
    ('ع', 35),
    ('د', 27),
    ('ف', 26),
    ('ق', 24),
    ('س', 23),
    ('ك', 23),
    ('ة', 25),
    ('أ', 25),
    ('ح', 18),
    ('ج', 13),
    ('إ', 8),
    ('ى', 9),
    ('ص', 9),
    ('ش', 9),
    ('ط', 7),
    ('خ', 7),
    ('ذ', 7),
    ('ث', 5),
    ('ض', 5),
    ('ز', 4),
    ('ء', 4),
    ('غ', 3),
    ('ئ', 3),
    ('ظ', 2),
    ('ؤ', 1),
    ('آ', 1),
];

/// Letters that join on both sides (joining type D in Unicode's ArabicShaping.txt; checked against
/// it in `synth::checks`). Alef maqsura is D too, though Arabic writes it only at a word's end.
pub const DUAL_JOINING: &str = "بتثجحخسشصضطظعغفقكلمنهيئى";
/// Letters that join only to the preceding letter (joining type R).
pub const RIGHT_JOINING: &str = "آأؤإاةدذرزو";

/// Fatha, damma, kasra, sukun (U+064E, U+064F, U+0650, U+0652).
const SHORT_MARKS: &[char] = &['\u{064E}', '\u{064F}', '\u{0650}', '\u{0652}'];
/// Tanwin: fathatan, dammatan, kasratan (U+064B–U+064D).
const TANWIN: &[char] = &['\u{064B}', '\u{064C}', '\u{064D}'];
const SHADDA: char = '\u{0651}';

/// Words with hamza on each seat: alone, on alef above and below, madda, on waw, on ya.
const HAMZA_WORDS: &[&str] = &[
    "سماء",
    "جزء",
    "شيء",
    "ضوء",
    "أمر",
    "سأل",
    "رأس",
    "إذن",
    "إلى",
    "إصلاح",
    "آخر",
    "مرآة",
    "مسؤول",
    "سؤال",
    "مؤتمر",
    "بئر",
    "سائل",
    "هيئة",
    "قراءة",
    "مسائل",
];

/// Latin words as they turn up in Arabic filings (catalogue marks, abbreviations).
const LATIN_WORDS: &[&str] = &[
    "Vol.", "No.", "folio", "ISBN", "PDF", "Archive", "ref", "p.", "Ms", "Index",
];

const PUNCT_AFTER: &[&str] = &["،", "؛", "؟", ":", ".", "!"];
const PUNCT_AROUND: &[(&str, &str)] = &[("«", "»"), ("(", ")"), ("[", "]")];

/// One line of text, logical order, single spaces, no leading or trailing space.
pub fn sample_line<R: Rng>(rng: &mut R, cfg: &CorpusConfig, words: usize) -> String {
    let words = words.max(1);
    let mut tokens = if rng.random::<f32>() < cfg.prose_share {
        prose_window(rng, words)
    } else {
        (0..words).map(|_| generated_token(rng, cfg)).collect()
    };
    if rng.random::<f32>() < cfg.harakat_share {
        for t in &mut tokens {
            *t = add_harakat(rng, t);
        }
    }
    tokens.join(" ")
}

/// `n` consecutive words from a random prose sentence (fewer if the sentence is shorter).
fn prose_window<R: Rng>(rng: &mut R, n: usize) -> Vec<String> {
    let sentences: Vec<&str> = PROSE.lines().filter(|l| !l.trim().is_empty()).collect();
    let words: Vec<&str> = sentences
        .choose(rng)
        .copied()
        .unwrap_or("")
        .split_whitespace()
        .collect();
    let n = n.min(words.len());
    let start = rng.random_range(0..=words.len() - n);
    words[start..start + n]
        .iter()
        .map(|w| w.to_string())
        .collect()
}

fn generated_token<R: Rng>(rng: &mut R, cfg: &CorpusConfig) -> String {
    let x: f32 = rng.random();
    let core = if x < cfg.latin_share {
        LATIN_WORDS
            .choose(rng)
            .copied()
            .unwrap_or("No.")
            .to_string()
    } else if x < cfg.latin_share + cfg.number_share {
        number_token(rng)
    } else {
        match rng.random_range(0..10) {
            0..=4 => pseudo_word(rng),
            5 | 6 => positional_word(rng),
            7 => lam_alef_word(rng),
            8 => HAMZA_WORDS
                .choose(rng)
                .copied()
                .unwrap_or("سماء")
                .to_string(),
            _ => format!("ال{}", pseudo_word(rng)),
        }
    };
    punctuate(rng, core)
}

fn punctuate<R: Rng>(rng: &mut R, core: String) -> String {
    match rng.random_range(0..20) {
        0..=2 => format!("{core}{}", PUNCT_AFTER.choose(rng).copied().unwrap_or("،")),
        3 => {
            let (open, close) = PUNCT_AROUND.choose(rng).copied().unwrap_or(("«", "»"));
            format!("{open}{core}{close}")
        }
        _ => core,
    }
}

fn weighted_letter<R: Rng>(rng: &mut R) -> char {
    let total: u32 = LETTER_FREQ.iter().map(|&(_, f)| f).sum();
    let mut k = rng.random_range(0..total);
    for &(c, f) in LETTER_FREQ {
        if k < f {
            return c;
        }
        k -= f;
    }
    'ا'
}

/// A pseudo-word of 2–7 letters drawn by frequency; ta marbuta and alef maqsura only at the end,
/// hamza forms that sit inside words only inside.
pub fn pseudo_word<R: Rng>(rng: &mut R) -> String {
    let len = rng.random_range(2..=7);
    let mut w = String::new();
    for i in 0..len {
        let last = i + 1 == len;
        let c = loop {
            let c = weighted_letter(rng);
            let ok = match c {
                'ة' | 'ى' => last,
                'ؤ' | 'ئ' => i > 0 && !last,
                'آ' | 'إ' => i == 0,
                'ء' => last,
                _ => true,
            };
            if ok {
                break c;
            }
        };
        w.push(c);
    }
    w
}

/// A word that puts one random letter into a chosen joining position.
pub fn positional_word<R: Rng>(rng: &mut R) -> String {
    // Alef maqsura is left out: Arabic writes it only at the end of a word.
    let dual: Vec<char> = DUAL_JOINING.chars().filter(|&c| c != 'ى').collect();
    let right: Vec<char> = RIGHT_JOINING.chars().collect();
    let all: Vec<char> = dual.iter().chain(right.iter()).copied().collect();
    let letter = *all.choose(rng).unwrap_or(&'ب');
    let joiner = *dual.choose(rng).unwrap_or(&'ب');
    let tail: String = (0..rng.random_range(1..3))
        .map(|_| *dual.choose(rng).unwrap_or(&'ن'))
        .collect();
    match rng.random_range(0..4) {
        0 => format!("د{letter}"), // isolated: after a right-joining letter, at the end
        1 => format!("{letter}{tail}"), // initial (or isolated for right-joining letters)
        2 => format!("{joiner}{letter}{tail}"), // medial (final for right-joining letters)
        _ => format!("{joiner}{letter}"), // final
    }
}

fn lam_alef_word<R: Rng>(rng: &mut R) -> String {
    let alef = *['ا', 'أ', 'إ', 'آ'].choose(rng).unwrap_or(&'ا');
    let before = if rng.random_bool(0.5) {
        String::new()
    } else {
        pseudo_word(rng)
    };
    let after = if rng.random_bool(0.5) {
        String::new()
    } else {
        pseudo_word(rng)
    };
    format!("{before}ل{alef}{after}")
}

/// A number, date or case number, in Western or Arabic-Indic digits.
pub fn number_token<R: Rng>(rng: &mut R) -> String {
    let s = match rng.random_range(0..4) {
        0 => rng.random_range(1..1000).to_string(),
        1 => format!(
            "{}/{}",
            rng.random_range(1990..2031),
            rng.random_range(1..400)
        ),
        2 => format!(
            "{:02}/{:02}/{}",
            rng.random_range(1..29),
            rng.random_range(1..13),
            rng.random_range(1900..2031)
        ),
        _ => rng.random_range(1..100_000).to_string(),
    };
    if rng.random_bool(0.5) {
        to_arabic_indic(&s)
    } else {
        s
    }
}

/// Western digits 0–9 → Arabic-Indic U+0660–U+0669; other characters unchanged.
pub fn to_arabic_indic(s: &str) -> String {
    s.chars()
        .map(|c| match c.to_digit(10) {
            Some(d) => char::from_u32(0x0660 + d).unwrap_or(c),
            None => c,
        })
        .collect()
}

/// Marks after some Arabic letters: short vowels, sukun, shadda + vowel, tanwin at the end.
pub fn add_harakat<R: Rng>(rng: &mut R, word: &str) -> String {
    let letters: Vec<char> = word.chars().collect();
    let mut out = String::new();
    for (i, &c) in letters.iter().enumerate() {
        out.push(c);
        let arabic_letter = ('\u{0628}'..='\u{064A}').contains(&c) && c != 'ة' && c != 'ى';
        if !arabic_letter || !rng.random_bool(0.5) {
            continue;
        }
        let last = i + 1 == letters.len();
        if last && rng.random_bool(0.3) {
            out.push(*TANWIN.choose(rng).unwrap_or(&TANWIN[0]));
        } else if rng.random_bool(0.15) {
            out.push(SHADDA);
            out.push(*SHORT_MARKS[..3].choose(rng).unwrap_or(&SHORT_MARKS[0]));
        } else {
            out.push(*SHORT_MARKS.choose(rng).unwrap_or(&SHORT_MARKS[0]));
        }
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use rand::SeedableRng;
    use rand_chacha::ChaCha8Rng;

    #[test]
    fn lines_are_trimmed_single_spaced_and_reproducible() {
        let cfg = CorpusConfig::default();
        let mut a = ChaCha8Rng::seed_from_u64(7);
        let mut b = ChaCha8Rng::seed_from_u64(7);
        for _ in 0..500 {
            let line = sample_line(&mut a, &cfg, 6);
            assert_eq!(line, sample_line(&mut b, &cfg, 6));
            assert_eq!(line.trim(), line);
            assert!(!line.contains("  ") && !line.is_empty(), "{line:?}");
        }
    }

    #[test]
    fn generated_text_covers_required_features() {
        let cfg = CorpusConfig {
            harakat_share: 0.3,
            ..CorpusConfig::default()
        };
        let mut rng = ChaCha8Rng::seed_from_u64(1);
        let text: String = (0..3000)
            .map(|_| sample_line(&mut rng, &cfg, 8) + "\n")
            .collect();
        for needle in [
            "لا", "لأ", "لإ", "لآ", "ء", "أ", "إ", "آ", "ؤ", "ئ", "ة", "ى", "\u{0651}", "\u{064B}",
        ] {
            assert!(text.contains(needle), "missing {needle}");
        }
        for p in ["،", "؛", "؟", "«", "»", "(", ")", "[", "]", ":", ".", "!"] {
            assert!(text.contains(p), "missing {p}");
        }
        assert!(text.chars().any(|c| ('\u{0660}'..='\u{0669}').contains(&c)));
        assert!(text.chars().any(|c| c.is_ascii_digit()));
        assert!(text.chars().any(|c| c.is_ascii_alphabetic()));
        let harakat_lines = text
            .lines()
            .filter(|l| l.contains(|c| SHORT_MARKS.contains(&c)))
            .count();
        assert!(
            (450..1350).contains(&harakat_lines),
            "{harakat_lines} lines with harakat of 3000"
        );
    }
}
