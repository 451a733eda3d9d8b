//! Logical-order text lines of a PDF page, read from its content stream through each font's
//! encoding and ToUnicode map (lopdf), for search.
//!
//! Glyph runs are placed with the text and graphics state (ISO 32000-1 §9.4.2–9.4.4), grouped into
//! lines by baseline, sorted left to right, and the visual line is turned into logical order with
//! the Unicode bidi algorithm (UAX #9), as PDF readers do.

use std::collections::BTreeMap;

use lopdf::content::Content;
use lopdf::{Dictionary, Document, Encoding, Object, ObjectId};
use unicode_bidi::{BidiInfo, Level};

use crate::layout::geometry::Affine;
use crate::text::fold::base_letters;

/// One shown string: decoded text, where it starts and ends on the page, and its size.
#[derive(Debug, Clone)]
struct Run {
    text: String,
    x0: f32,
    x1: f32,
    y: f32,
    size: f32,
}

struct FontInfo<'a> {
    encoding: Option<Encoding<'a>>,
    two_byte: bool,
    widths: BTreeMap<u32, f32>,
    default_width: f32,
}

/// The text lines of one page in reading order, each in logical order. Empty when the page has
/// no text; an error when its content cannot be parsed.
pub fn page_lines(doc: &Document, page: ObjectId) -> lopdf::Result<Vec<String>> {
    let fonts: BTreeMap<Vec<u8>, FontInfo> = doc
        .get_page_fonts(page)?
        .into_iter()
        .map(|(name, dict)| (name, font_info(doc, dict)))
        .collect();
    let content = doc.get_and_decode_page_content(page)?;
    let runs = collect_runs(&content, &fonts);
    Ok(lines_from_runs(runs))
}

fn font_info<'a>(doc: &'a Document, dict: &'a Dictionary) -> FontInfo<'a> {
    let two_byte = dict
        .get(b"Subtype")
        .and_then(Object::as_name)
        .is_ok_and(|s| s == b"Type0");
    let mut widths = BTreeMap::new();
    let mut default_width = if two_byte { 1000.0 } else { 500.0 };
    if two_byte {
        let desc = dict
            .get_deref(b"DescendantFonts", doc)
            .and_then(Object::as_array)
            .ok()
            .and_then(|a| a.first())
            .and_then(|o| doc.dereference(o).ok())
            .and_then(|(_, o)| o.as_dict().ok());
        if let Some(d) = desc {
            if let Ok(dw) = d.get(b"DW").and_then(number) {
                default_width = dw;
            }
            if let Ok(w) = d.get_deref(b"W", doc).and_then(Object::as_array) {
                parse_cid_widths(w, &mut widths);
            }
        }
    } else if let (Ok(first), Ok(ws)) = (
        dict.get(b"FirstChar").and_then(Object::as_i64),
        dict.get_deref(b"Widths", doc).and_then(Object::as_array),
    ) {
        for (i, w) in ws.iter().enumerate() {
            if let Ok(w) = number(w) {
                widths.insert(first as u32 + i as u32, w);
            }
        }
    }
    FontInfo {
        encoding: dict.get_font_encoding(doc).ok(),
        two_byte,
        widths,
        default_width,
    }
}

/// `/W` array of a CID font: `c [w1 w2 …]` or `c_first c_last w` (§9.7.4.3).
fn parse_cid_widths(w: &[Object], out: &mut BTreeMap<u32, f32>) {
    let mut i = 0;
    while i < w.len() {
        let Ok(first) = w[i].as_i64() else { break };
        match w.get(i + 1) {
            Some(Object::Array(list)) => {
                for (k, v) in list.iter().enumerate() {
                    if let Ok(v) = number(v) {
                        out.insert(first as u32 + k as u32, v);
                    }
                }
                i += 2;
            }
            Some(last) => {
                let (Ok(last), Some(Ok(v))) = (last.as_i64(), w.get(i + 2).map(number)) else {
                    break;
                };
                for c in first..=last.min(first + 65535) {
                    out.insert(c as u32, v);
                }
                i += 3;
            }
            None => break,
        }
    }
}

fn number(o: &Object) -> lopdf::Result<f32> {
    o.as_float().or_else(|_| o.as_i64().map(|i| i as f32))
}

#[derive(Clone, Copy)]
struct TextState {
    tm: Affine,
    tlm: Affine,
    size: f32,
    tz: f32,
    tc: f32,
    tw: f32,
    leading: f32,
}

fn collect_runs(content: &Content, fonts: &BTreeMap<Vec<u8>, FontInfo>) -> Vec<Run> {
    let mut ctm = Affine::IDENTITY;
    let mut stack = Vec::new();
    let mut ts = TextState {
        tm: Affine::IDENTITY,
        tlm: Affine::IDENTITY,
        size: 0.0,
        tz: 1.0,
        tc: 0.0,
        tw: 0.0,
        leading: 0.0,
    };
    let mut font: Option<&FontInfo> = None;
    let mut runs = Vec::new();
    let nums = |ops: &[Object]| -> Vec<f32> { ops.iter().filter_map(|o| number(o).ok()).collect() };
    for op in &content.operations {
        let a = nums(&op.operands);
        match op.operator.as_str() {
            "q" => stack.push(ctm),
            "Q" => ctm = stack.pop().unwrap_or(Affine::IDENTITY),
            "cm" if a.len() == 6 => ctm = Affine([a[0], a[1], a[2], a[3], a[4], a[5]]).then(&ctm),
            "BT" => {
                ts.tm = Affine::IDENTITY;
                ts.tlm = Affine::IDENTITY;
            }
            "Tf" => {
                font = op
                    .operands
                    .first()
                    .and_then(|o| o.as_name().ok())
                    .and_then(|n| fonts.get(n));
                ts.size = a.last().copied().unwrap_or(0.0);
            }
            "Tz" if !a.is_empty() => ts.tz = a[0] / 100.0,
            "Tc" if !a.is_empty() => ts.tc = a[0],
            "Tw" if !a.is_empty() => ts.tw = a[0],
            "TL" if !a.is_empty() => ts.leading = a[0],
            "Tm" if a.len() == 6 => {
                ts.tm = Affine([a[0], a[1], a[2], a[3], a[4], a[5]]);
                ts.tlm = ts.tm;
            }
            "Td" | "TD" if a.len() == 2 => {
                if op.operator == "TD" {
                    ts.leading = -a[1];
                }
                ts.tlm = Affine([1.0, 0.0, 0.0, 1.0, a[0], a[1]]).then(&ts.tlm);
                ts.tm = ts.tlm;
            }
            "T*" => next_line(&mut ts),
            "Tj" | "'" | "\"" => {
                if op.operator != "Tj" {
                    next_line(&mut ts);
                }
                if let (Some(f), Some(Object::String(bytes, _))) = (font, op.operands.last()) {
                    show(bytes, f, &mut ts, &ctm, &mut runs);
                }
            }
            "TJ" => {
                let Some(Object::Array(items)) = op.operands.first() else {
                    continue;
                };
                for item in items {
                    match (item, font) {
                        (Object::String(bytes, _), Some(f)) => {
                            show(bytes, f, &mut ts, &ctm, &mut runs)
                        }
                        (o, _) => {
                            if let Ok(adj) = number(o) {
                                let tx = -adj / 1000.0 * ts.size * ts.tz;
                                ts.tm = Affine([1.0, 0.0, 0.0, 1.0, tx, 0.0]).then(&ts.tm);
                            }
                        }
                    }
                }
            }
            _ => {}
        }
    }
    runs
}

fn next_line(ts: &mut TextState) {
    ts.tlm = Affine([1.0, 0.0, 0.0, 1.0, 0.0, -ts.leading]).then(&ts.tlm);
    ts.tm = ts.tlm;
}

/// Decode and place one string, advancing the text matrix (§9.4.4).
fn show(bytes: &[u8], font: &FontInfo, ts: &mut TextState, ctm: &Affine, runs: &mut Vec<Run>) {
    let text = match &font.encoding {
        Some(enc) => Document::decode_text(enc, bytes).unwrap_or_default(),
        None => String::from_utf8_lossy(bytes).into_owned(),
    };
    let codes: Vec<u32> = if font.two_byte {
        bytes
            .chunks(2)
            .map(|c| c.iter().fold(0u32, |acc, b| acc * 256 + *b as u32))
            .collect()
    } else {
        bytes.iter().map(|b| *b as u32).collect()
    };
    let mut advance = 0.0;
    for code in &codes {
        let w = font.widths.get(code).copied().unwrap_or(font.default_width) / 1000.0;
        let word_space = if !font.two_byte && *code == 32 {
            ts.tw
        } else {
            0.0
        };
        advance += (w * ts.size + ts.tc + word_space) * ts.tz;
    }
    let trm = ts.tm.then(ctm);
    let (x0, y) = trm.apply(0.0, 0.0);
    let (x1, _) = trm.apply(advance, 0.0);
    let (_, top) = trm.apply(0.0, ts.size);
    ts.tm = Affine([1.0, 0.0, 0.0, 1.0, advance, 0.0]).then(&ts.tm);
    if !text.is_empty() {
        runs.push(Run {
            text,
            x0: x0.min(x1),
            x1: x0.max(x1),
            y,
            size: (top - y).abs().max(0.1),
        });
    }
}

/// Group runs into lines by baseline (top of the page first), order each line left to right,
/// join runs with a space where there is a gap, and turn the visual line into logical order.
fn lines_from_runs(mut runs: Vec<Run>) -> Vec<String> {
    runs.sort_by(|a, b| b.y.total_cmp(&a.y));
    let mut lines: Vec<Vec<Run>> = Vec::new();
    for run in runs {
        match lines.last_mut() {
            Some(line) if (line[0].y - run.y).abs() < 0.5 * line[0].size.min(run.size) => {
                line.push(run)
            }
            _ => lines.push(vec![run]),
        }
    }
    lines
        .into_iter()
        .map(|mut line| {
            line.sort_by(|a, b| a.x0.total_cmp(&b.x0));
            let mut visual = String::new();
            let mut prev_end: Option<f32> = None;
            for r in &line {
                if let Some(end) = prev_end {
                    let gap = r.x0 - end;
                    if gap > 0.1 * r.size && !visual.ends_with(' ') && !r.text.starts_with(' ') {
                        visual.push(' ');
                    }
                }
                visual.push_str(&r.text);
                prev_end = Some(r.x1);
            }
            // Presentation forms (some writers' ToUnicode maps give them) read as base letters,
            // as readers do (NFKC on those blocks, UAX #15).
            logical_from_visual(&base_letters(visual.trim()))
        })
        .filter(|l| !l.is_empty())
        .collect()
}

/// A visual-order line in logical order: right-to-left runs reversed (UAX #9, rule L2 applied to
/// visual text, as readers do). Lines without right-to-left letters are returned as they are.
pub fn logical_from_visual(visual: &str) -> String {
    let has_rtl = visual
        .chars()
        .any(|c| matches!(c as u32, 0x0590..=0x08FF | 0xFB1D..=0xFEFF));
    if !has_rtl {
        return visual.to_string();
    }
    let info = BidiInfo::new(visual, Some(Level::rtl()));
    let para = &info.paragraphs[0];
    info.reorder_line(para, para.range.clone()).into_owned()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn visual_arabic_line_becomes_logical() {
        // Visual (left to right): "ةعماجلا ةبتكم" → logical "مكتبة الجامعة" (UAX #9 L2).
        assert_eq!(logical_from_visual("ةعماجلا ةبتكم"), "مكتبة الجامعة");
        // Digits stay left to right inside the reversed line.
        assert_eq!(logical_from_visual("١٢ ص"), "ص ١٢");
        assert_eq!(logical_from_visual("plain text"), "plain text");
    }

    #[test]
    fn cid_widths_both_forms() {
        // §9.7.4.3 example: 120 [400 325 500] 7080 8032 1000.
        let w = vec![
            Object::Integer(120),
            Object::Array(vec![
                Object::Integer(400),
                Object::Integer(325),
                Object::Integer(500),
            ]),
            Object::Integer(7080),
            Object::Integer(8032),
            Object::Integer(1000),
        ];
        let mut out = BTreeMap::new();
        parse_cid_widths(&w, &mut out);
        assert_eq!(out.get(&121), Some(&325.0));
        assert_eq!(out.get(&8000), Some(&1000.0));
        assert_eq!(out.len(), 3 + 953);
    }
}
