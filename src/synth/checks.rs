//! Checks of the synthetic data against references from outside the project: HarfBuzz shaping
//! results and Unicode's joining types. Test-only.

use std::collections::{HashMap, HashSet};

use rand::SeedableRng;
use rand_chacha::ChaCha8Rng;

use super::corpus::{sample_line, CorpusConfig, DUAL_JOINING, RIGHT_JOINING};
use super::render::shape_run;
use super::shelf::Shelf;

/// Expected glyphs from HarfBuzz via uharfbuzz 0.57.0 (PyPI); made by
/// tests/data/synth/make_shaping_fixture.py.
const HARFBUZZ: &str = include_str!("../../tests/data/synth/shaping_harfbuzz.tsv");

/// Lines U+0620–U+064A of Unicode 15.0.0 ArabicShaping.txt (Debian package unicode-data 15.0.0-1).
const ARABIC_SHAPING: &str = include_str!("../../tests/data/synth/arabic_shaping_0620_064A.txt");

fn joining_types() -> HashMap<char, char> {
    ARABIC_SHAPING
        .lines()
        .filter(|l| !l.starts_with('#') && !l.trim().is_empty())
        .map(|l| {
            let f: Vec<&str> = l.split(';').map(str::trim).collect();
            let c = char::from_u32(u32::from_str_radix(f[0], 16).unwrap()).unwrap();
            (c, f[2].chars().next().unwrap())
        })
        .collect()
}

fn font_index(file: &str) -> usize {
    Shelf::get().fonts.iter().position(|f| f.entry.file == file).unwrap_or_else(|| panic!("{file} not on shelf"))
}

/// Same serialization as the fixture: `gid=cluster@x_offset,y_offset+x_advance`, cluster in chars.
fn serialize(file: &str, text: &str) -> String {
    let face = &Shelf::get().fonts[font_index(file)].face;
    let shaped = shape_run(face, text, 0, true);
    let char_of_byte: HashMap<usize, usize> = text.char_indices().enumerate().map(|(n, (b, _))| (b, n)).collect();
    let parts: Vec<String> = shaped
        .glyph_infos()
        .iter()
        .zip(shaped.glyph_positions())
        .map(|(i, p)| {
            let cluster = char_of_byte[&(i.cluster as usize)];
            format!("{}={}@{},{}+{}", i.glyph_id, cluster, p.x_offset, p.y_offset, p.x_advance)
        })
        .collect();
    parts.join("|")
}

#[test]
fn rustybuzz_matches_harfbuzz_glyphs_clusters_and_advances() {
    // Outside reference: HarfBuzz (uharfbuzz 0.57.0), 54 strings × 4 fonts.
    let mut checked = 0;
    let mut wrong = Vec::new();
    for line in HARFBUZZ.lines().filter(|l| !l.starts_with('#')) {
        let f: Vec<&str> = line.split('\t').collect();
        let got = serialize(f[0], f[1]);
        if got != f[2] {
            wrong.push(format!("{} {:?}\n  harfbuzz:  {}\n  rustybuzz: {}", f[0], f[1], f[2], got));
        }
        checked += 1;
    }
    assert!(checked >= 200, "fixture has {checked} cases");
    assert!(wrong.is_empty(), "{} of {checked} differ:\n{}", wrong.len(), wrong.join("\n"));
}

#[test]
fn our_joining_classes_follow_arabic_shaping_txt() {
    // Outside reference: Unicode ArabicShaping.txt 15.0.0, joining type column.
    let jt = joining_types();
    for c in DUAL_JOINING.chars() {
        assert_eq!(jt[&c], 'D', "{c} U+{:04X}", c as u32);
    }
    for c in RIGHT_JOINING.chars() {
        assert_eq!(jt[&c], 'R', "{c} U+{:04X}", c as u32);
    }
    assert_eq!(jt[&'ء'], 'U');
}

/// The glyph drawn for the character at char index `at` of `text` (Amiri, right to left).
fn glyph_at(font: usize, text: &str, at: usize) -> u32 {
    let face = &Shelf::get().fonts[font].face;
    let byte = text.char_indices().nth(at).unwrap().0 as u32;
    let shaped = shape_run(face, text, 0, true);
    let hits: Vec<u32> = shaped.glyph_infos().iter().filter(|g| g.cluster == byte).map(|g| g.glyph_id).collect();
    assert_eq!(hits.len(), 1, "{text:?}: {} glyphs for char {at}", hits.len());
    hits[0]
}

#[test]
fn contextual_forms_agree_with_joining_types() {
    // Outside reference: Unicode ArabicShaping.txt 15.0.0. Tatweel (joining type C) forces joining
    // on its side without forming ligatures, so "ـXـ" shows X's medial form.
    let jt = joining_types();
    const T: char = '\u{0640}';
    for file in ["amiri/Amiri-Regular.ttf", "noto-naskh-arabic/NotoNaskhArabic-Regular.ttf"] {
        let font = font_index(file);
        for (&c, &kind) in &jt {
            if !Shelf::get().fonts[font].covers(c) || !matches!(kind, 'D' | 'R' | 'U') {
                continue;
            }
            let iso = glyph_at(font, &c.to_string(), 0);
            let ini = glyph_at(font, &format!("{c}{T}"), 0);
            let med = glyph_at(font, &format!("{T}{c}{T}"), 1);
            let fin = glyph_at(font, &format!("{T}{c}"), 1);
            let forms: HashSet<u32> = [iso, ini, med, fin].into();
            let name = format!("{file} {c} U+{:04X} ({kind})", c as u32);
            match kind {
                'D' => assert_eq!(forms.len(), 4, "{name}: {iso} {ini} {med} {fin}"),
                'R' => {
                    assert_eq!(ini, iso, "{name} must not join to the left");
                    assert_eq!(med, fin, "{name} must not join to the left");
                    assert_ne!(fin, iso, "{name} joins to the right");
                }
                _ => {
                    // Never joins: no initial or final form. (Amiri still draws a lower hamza
                    // between two joined strokes, `uni0621.medi`; HarfBuzz picks it too.)
                    assert_eq!(ini, iso, "{name} never joins");
                    assert_eq!(fin, iso, "{name} never joins");
                }
            }
        }
    }
}

/// Joining position of each Arabic letter in a word, from joining types (marks are transparent).
fn positions(word: &str, jt: &HashMap<char, char>) -> Vec<(char, &'static str)> {
    let letters: Vec<char> = word.chars().filter(|c| !('\u{064B}'..='\u{0652}').contains(c)).collect();
    let joins_left = |c: char| matches!(jt.get(&c), Some('D') | Some('C'));
    let joins_right = |c: char| matches!(jt.get(&c), Some('D') | Some('R') | Some('C'));
    let mut out = Vec::new();
    for (i, &c) in letters.iter().enumerate() {
        if !jt.contains_key(&c) || c == '\u{0640}' {
            continue;
        }
        let prev = i > 0 && joins_left(letters[i - 1]) && joins_right(c);
        let next = i + 1 < letters.len() && joins_left(c) && joins_right(letters[i + 1]);
        out.push((
            c,
            match (prev, next) {
                (false, false) => "isolated",
                (false, true) => "initial",
                (true, true) => "medial",
                (true, false) => "final",
            },
        ));
    }
    out
}

#[test]
fn generated_text_has_every_letter_in_every_position() {
    // Joining types from Unicode ArabicShaping.txt 15.0.0 decide the position of each letter.
    let jt = joining_types();
    let mut rng = ChaCha8Rng::seed_from_u64(11);
    let cfg = CorpusConfig::default();
    let mut seen: HashSet<(char, &str)> = HashSet::new();
    for _ in 0..4000 {
        for w in sample_line(&mut rng, &cfg, 8).split(' ') {
            seen.extend(positions(w, &jt));
        }
    }
    for c in DUAL_JOINING.chars().filter(|&c| c != 'ى') {
        for p in ["isolated", "initial", "medial", "final"] {
            assert!(seen.contains(&(c, p)), "{c} never {p}");
        }
    }
    for c in RIGHT_JOINING.chars() {
        for p in ["isolated", "final"] {
            assert!(seen.contains(&(c, p)), "{c} never {p}");
        }
    }
}
