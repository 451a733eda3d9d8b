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
