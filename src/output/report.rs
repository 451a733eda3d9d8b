//! Which recognized words need a human look: the low-confidence rule shared by every view of the
//! text (the confidence report and the proofreading view mark the same words).

use crate::text::Word;

/// A word whose recognizer confidence is below this needs a human look.
///
/// Our choice, no outside source and not yet tuned on measurements.
pub const LOW_CONFIDENCE: f32 = 0.6;

/// Whether a word needs a human look: its confidence is below [`LOW_CONFIDENCE`] (a confidence
/// that is not a number counts as low).
pub fn is_flagged(word: &Word) -> bool {
    word.confidence.is_nan() || word.confidence < LOW_CONFIDENCE
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::geometry::Rect;

    fn word(confidence: f32) -> Word {
        Word {
            text: "كتاب".into(),
            bbox: Rect::default(),
            confidence,
        }
    }

    #[test]
    fn below_the_threshold_is_flagged() {
        assert!(is_flagged(&word(LOW_CONFIDENCE - 0.01)));
        assert!(!is_flagged(&word(LOW_CONFIDENCE)));
        assert!(!is_flagged(&word(1.0)));
        assert!(is_flagged(&word(f32::NAN)));
    }
}
