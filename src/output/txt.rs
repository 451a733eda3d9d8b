//! UTF-8 plain text: lines in reading order (logical order) separated by `\n`, pages by form feed.

use crate::text::PageText;

/// The plain text of a document: pages joined by U+000C, each page's lines by `\n`.
pub fn plain_text(pages: &[PageText]) -> String {
    let mut out = String::new();
    for (i, page) in pages.iter().enumerate() {
        if i > 0 {
            out.push('\u{000C}');
        }
        out.push_str(&page.plain_text());
        out.push('\n');
    }
    out
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::geometry::Rect;
    use crate::text::{RegionKind, TextLine, Word};

    #[test]
    fn pages_are_separated_by_form_feed() {
        let w = |t: &str| Word {
            text: t.into(),
            bbox: Rect::default(),
            confidence: 1.0,
        };
        let line = |ws: Vec<Word>| TextLine {
            words: ws,
            bbox: Rect::default(),
            region: RegionKind::Body,
        };
        let p1 = PageText {
            lines: vec![line(vec![w("سجل"), w("القضايا")]), line(vec![w("ص")])],
        };
        let p2 = PageText {
            lines: vec![line(vec![w("١٢")])],
        };
        assert_eq!(plain_text(&[p1, p2]), "سجل القضايا\nص\n\u{000C}١٢\n");
    }
}
