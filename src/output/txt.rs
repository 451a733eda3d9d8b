//! UTF-8 plain text: lines in reading order (logical order) separated by `\n`, pages by form feed.

use super::text_layer::{clean_word, LayerOptions};
use crate::text::PageText;

/// The plain text of a document: pages joined by U+000C, each page's lines by `\n`. Words are
/// written as the text layer writes them (same folding of presentation forms, harakat and tatweel
/// kept only if asked), so the text file and the PDF's text agree.
pub fn plain_text(pages: &[PageText], opts: LayerOptions) -> String {
    let mut out = String::new();
    for (i, page) in pages.iter().enumerate() {
        if i > 0 {
            out.push('\u{000C}');
        }
        for line in &page.lines {
            let words: Vec<String> = line
                .words
                .iter()
                .map(|w| clean_word(&w.text, opts))
                .filter(|w| !w.is_empty())
                .collect();
            if !words.is_empty() {
                out.push_str(&words.join(" "));
                out.push('\n');
            }
        }
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
        assert_eq!(
            plain_text(&[p1.clone(), p2], LayerOptions::default()),
            "سجل القضايا\nص\n\u{000C}١٢\n"
        );
        let marked = PageText {
            lines: vec![line(vec![w("زائرًا"), w("السـجل")])],
        };
        assert_eq!(
            plain_text(std::slice::from_ref(&marked), LayerOptions::default()),
            "زائرا السجل\n"
        );
        assert_eq!(
            plain_text(&[marked], LayerOptions { keep_marks: true }),
            "زائرًا السـجل\n"
        );
    }
}
