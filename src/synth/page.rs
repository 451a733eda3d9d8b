//! Laying out a whole synthetic page: running header, page number, centred title, one or two
//! columns of body text (right column first), indented paragraphs, justified lines, footnotes under
//! a short rule, margin notes — and drawing it into an ink-coverage mask.
//!
//! Lines come out in reading order with their region kind; word boxes and baselines are exact in
//! the clean page's pixels. Scan damage and the ground-truth files are [`super::truth`]'s job.

use std::collections::VecDeque;

use image::GrayImage;
use rand::seq::IndexedRandom;
use rand::Rng;
use tiny_skia::{FillRule, Mask, PathBuilder, Transform};

use super::corpus::{sample_line, to_arabic_indic, CorpusConfig};
use super::render::draw_line;
use super::shelf::Shelf;
use super::typeset::{
    fits, set_line, shift, stretch_with_tatweel, Align, SetLine, SetWord, TATWEEL,
};
use crate::layout::geometry::Rect;
use crate::text::RegionKind;

/// Page sizes in inches: trade paperback, octavo, large octavo, A4 (ISO 216: 210 × 297 mm).
const PAGE_SIZES_IN: &[(f32, f32)] = &[(5.5, 8.5), (6.0, 9.0), (6.7, 9.5), (8.27, 11.69)];
/// Page scan resolutions with weights.
const PAGE_DPI: &[(f32, u32)] = &[(150.0, 2), (200.0, 3), (300.0, 4)];

/// One line placed on the page.
#[derive(Debug, Clone)]
pub struct PlacedLine {
    /// The set words and their pen starts relative to `left_px`.
    pub set: SetLine,
    /// Left edge of the line's measure, pixels.
    pub left_px: f32,
    /// Baseline, pixels from the top.
    pub baseline_px: f32,
    /// Region kind.
    pub region: RegionKind,
    /// Shelf index of the font.
    pub font: usize,
    /// Type size in points.
    pub size_pt: f32,
}

impl PlacedLine {
    /// Word ink boxes on the page, one pixel added on each side for anti-aliased edges.
    pub fn word_boxes(&self) -> Vec<Rect> {
        let pad = |r: Rect| Rect::new(r.x0 - 1.0, r.y0 - 1.0, r.x1 + 1.0, r.y1 + 1.0);
        self.set
            .words
            .iter()
            .zip(&self.set.x_px)
            .map(|(w, x)| pad(shift(&w.ink, self.left_px + x, self.baseline_px)))
            .collect()
    }
}

/// A laid-out page before drawing.
#[derive(Debug, Clone)]
pub struct Layout {
    /// Page width in pixels.
    pub width_px: u32,
    /// Page height in pixels.
    pub height_px: u32,
    /// Resolution.
    pub dpi: f32,
    /// Lines in reading order.
    pub lines: Vec<PlacedLine>,
    /// Rules (header and footnote lines), filled rectangles.
    pub rules: Vec<Rect>,
    /// Whether the binding edge is on the left.
    pub gutter_left: bool,
    /// 1 or 2 text columns.
    pub columns: u8,
    /// Body font.
    pub font: usize,
}

/// Page-level choices that tests and the demo may pin; `None` draws them at random.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PageOptions {
    /// Force this resolution instead of drawing one.
    pub dpi: Option<f32>,
    /// Force one or two body columns.
    pub columns: Option<u8>,
    /// Force a footnote (or none).
    pub footnote: Option<bool>,
    /// Force the page number's digits: Arabic-Indic (`true`) or Western.
    pub arabic_indic_digits: Option<bool>,
    /// Force this shelf font for the page.
    pub font: Option<usize>,
    /// Running text only from our prose (no generated pseudo-words, no harakat).
    pub prose_only: bool,
}

/// Words of running text, with paragraph ends, drawn from the corpus.
struct Stream {
    cfg: CorpusConfig,
    queue: VecDeque<Option<String>>,
}

impl Stream {
    fn new(cfg: CorpusConfig) -> Stream {
        Stream {
            cfg,
            queue: VecDeque::new(),
        }
    }

    /// Next word, or `None` at a paragraph end.
    fn next<R: Rng>(&mut self, rng: &mut R) -> Option<String> {
        if self.queue.is_empty() {
            let n = rng.random_range(12..70);
            let mut words = Vec::new();
            while words.len() < n {
                words.extend(
                    sample_line(rng, &self.cfg, 10)
                        .split(' ')
                        .map(|w| Some(w.to_string())),
                );
            }
            self.queue.extend(words);
            self.queue.push_back(None);
        }
        self.queue.pop_front().flatten()
    }

    fn push_front(&mut self, words: Vec<String>) {
        for w in words.into_iter().rev() {
            self.queue.push_front(Some(w));
        }
    }
}

/// Fonts and sizes for one text block.
#[derive(Debug, Clone, Copy)]
struct Type {
    font: usize,
    size_pt: f32,
    em_px: f32,
    leading_px: f32,
}

/// A rectangle of the page that a block fills with lines.
#[derive(Debug, Clone, Copy)]
struct Area {
    x0: f32,
    x1: f32,
    y0: f32,
    y1: f32,
}

struct Setter<'a, R: Rng> {
    shelf: &'a Shelf,
    rng: &'a mut R,
    justify: bool,
    tatweel_share: f64,
}

impl<R: Rng> Setter<'_, R> {
    fn word(&self, ty: Type, text: &str) -> SetWord {
        SetWord::new(self.shelf, ty.font, text, ty.em_px)
    }

    /// Take words for one line of `measure` px; `(words, paragraph ended)`.
    fn take_line(&mut self, stream: &mut Stream, ty: Type, measure: f32) -> (Vec<SetWord>, bool) {
        let space = ty.em_px * 0.28;
        let mut words: Vec<SetWord> = Vec::new();
        loop {
            let Some(text) = stream.next(self.rng) else {
                return (words, true);
            };
            let w = self.word(ty, &text);
            words.push(w);
            if !fits(&words, measure, space) {
                let back = words.pop().map(|w| w.shaped.text).into_iter().collect();
                if words.is_empty() {
                    continue; // a word wider than the measure: drop it
                }
                stream.push_front(back);
                return (words, false);
            }
        }
    }

    /// Justify with tatweel where the slack is large, then place.
    fn finish_line(
        &mut self,
        ty: Type,
        words: Vec<SetWord>,
        measure: f32,
        align: Align,
    ) -> SetLine {
        let space = ty.em_px * 0.28;
        if align == Align::Justify && self.rng.random_bool(self.tatweel_share) {
            let natural: f32 =
                words.iter().map(|w| w.width()).sum::<f32>() + space * (words.len() as f32 - 1.0);
            let tatweel = self.word(ty, &TATWEEL.to_string()).width();
            let texts: Vec<String> = words.iter().map(|w| w.shaped.text.clone()).collect();
            let stretched = stretch_with_tatweel(self.rng, &texts, measure - natural, tatweel);
            if stretched != texts {
                let new: Vec<SetWord> = stretched.iter().map(|t| self.word(ty, t)).collect();
                if fits(&new, measure, space) {
                    return set_line(new, measure, space, align);
                }
            }
        }
        set_line(words, measure, space, align)
    }

    /// Fill an area with running text; stops at the bottom or after `max_paragraphs`.
    fn fill(
        &mut self,
        stream: &mut Stream,
        ty: Type,
        area: Area,
        max_paragraphs: usize,
        region: RegionKind,
    ) -> Vec<PlacedLine> {
        let mut out: Vec<PlacedLine> = Vec::new();
        let (mut paragraphs, mut new_para) = (0, true);
        let width = area.x1 - area.x0;
        while paragraphs < max_paragraphs {
            let indent = if new_para && region == RegionKind::Body {
                ty.em_px * self.rng.random_range(1.0..3.0)
            } else {
                0.0
            };
            let (words, ended) = self.take_line(stream, ty, width - indent);
            if words.is_empty() {
                paragraphs += 1;
                new_para = true;
                continue;
            }
            let align = if ended || !self.justify {
                Align::Right
            } else {
                Align::Justify
            };
            let set = self.finish_line(ty, words, width - indent, align);
            let line = PlacedLine {
                set,
                left_px: area.x0,
                baseline_px: 0.0,
                region,
                font: ty.font,
                size_pt: ty.size_pt,
            };
            let Some(placed) = place_below(out.last(), line, ty, area.y0) else {
                break;
            };
            if placed.baseline_px + placed.set.ink().y1 > area.y1 {
                let texts = placed
                    .set
                    .words
                    .iter()
                    .map(|w| w.shaped.text.replace(TATWEEL, ""))
                    .collect();
                stream.push_front(texts);
                break;
            }
            out.push(placed);
            new_para = ended;
            paragraphs += usize::from(ended);
        }
        out
    }
}

/// Put a line under the previous one: at least one leading down, and its ink clear of the line above.
fn place_below(
    prev: Option<&PlacedLine>,
    mut line: PlacedLine,
    ty: Type,
    top: f32,
) -> Option<PlacedLine> {
    let ink = line.set.ink();
    if ink.height() <= 0.0 {
        return None;
    }
    let gap = (ty.em_px * 0.08).max(3.0);
    line.baseline_px = match prev {
        None => top - ink.y0,
        Some(p) => {
            (p.baseline_px + ty.leading_px).max(p.baseline_px + p.set.ink().y1 + gap - ink.y0)
        }
    };
    Some(line)
}

/// A single short line (header, title, page number, margin note) set on its own.
fn short_line<R: Rng>(
    s: &mut Setter<'_, R>,
    ty: Type,
    texts: &[String],
    area: Area,
    align: Align,
    region: RegionKind,
) -> Option<PlacedLine> {
    let mut words: Vec<SetWord> = texts.iter().map(|t| s.word(ty, t)).collect();
    let space = ty.em_px * 0.28;
    while !words.is_empty() && !fits(&words, area.x1 - area.x0, space) {
        words.pop();
    }
    if words.is_empty() {
        return None;
    }
    let set = set_line(words, area.x1 - area.x0, space, align);
    let line = PlacedLine {
        set,
        left_px: area.x0,
        baseline_px: 0.0,
        region,
        font: ty.font,
        size_pt: ty.size_pt,
    };
    place_below(None, line, ty, area.y0)
}

fn prose_words<R: Rng>(rng: &mut R, n: std::ops::Range<usize>) -> Vec<String> {
    let n = rng.random_range(n);
    let cfg = CorpusConfig {
        prose_share: 1.0,
        harakat_share: 0.0,
        ..CorpusConfig::default()
    };
    sample_line(rng, &cfg, n)
        .split(' ')
        .map(str::to_string)
        .collect()
}

fn page_number_text<R: Rng>(rng: &mut R, n: usize, arabic_indic: Option<bool>) -> Vec<String> {
    let digits = if arabic_indic.unwrap_or_else(|| rng.random_bool(0.5)) {
        to_arabic_indic(&n.to_string())
    } else {
        n.to_string()
    };
    if rng.random_bool(0.25) {
        vec!["-".into(), digits, "-".into()]
    } else {
        vec![digits]
    }
}

/// Lay out page `number` (1-based page number printed on it) with the given fonts.
pub fn lay_out<R: Rng>(
    rng: &mut R,
    shelf: &Shelf,
    fonts: &[usize],
    number: usize,
    opts: PageOptions,
) -> Layout {
    let font = match opts.font {
        Some(f) => f,
        None => *fonts.choose(rng).expect("font set is not empty"),
    };
    let bold = bold_of(shelf, font);
    let (w_in, h_in) = *PAGE_SIZES_IN.choose(rng).unwrap_or(&(6.0, 9.0));
    let dpi = opts.dpi.unwrap_or_else(|| {
        PAGE_DPI
            .choose_weighted(rng, |d| d.1)
            .map_or(200.0, |d| d.0)
    });
    let (w, h) = ((w_in * dpi).round(), (h_in * dpi).round());
    let gutter_left = rng.random_bool(0.5);
    let inch = |a: f32, b: f32, rng: &mut R| rng.random_range(a..b) * dpi;
    let (top, bottom, inner, outer) = (
        inch(0.45, 0.8, rng),
        inch(0.55, 0.9, rng),
        inch(0.55, 0.9, rng),
        inch(0.5, 1.2, rng),
    );
    let (x0, x1) = if gutter_left {
        (inner, w - outer)
    } else {
        (outer, w - inner)
    };
    let body_pt = rng.random_range(9.5..14.0f32);
    let mk = |f: usize, pt: f32, lead: f32| Type {
        font: f,
        size_pt: pt,
        em_px: pt * dpi / 72.0,
        leading_px: pt * dpi / 72.0 * lead,
    };
    let body = mk(font, body_pt, rng.random_range(1.3..1.9));
    let small = mk(font, body_pt * 0.8, 1.4);
    let corpus = if opts.prose_only {
        CorpusConfig {
            prose_share: 1.0,
            harakat_share: 0.0,
            latin_share: 0.0,
            number_share: 0.0,
        }
    } else {
        CorpusConfig {
            prose_share: 0.7,
            ..CorpusConfig::default()
        }
    };
    let mut s = Setter {
        shelf,
        rng,
        justify: false,
        tatweel_share: 0.0,
    };
    s.justify = s.rng.random_bool(0.8);
    s.tatweel_share = if s.rng.random_bool(0.5) { 0.3 } else { 0.0 };
    let columns = match opts.columns {
        Some(c) => c.clamp(1, 2),
        None if s.rng.random_bool(0.3) => 2,
        None => 1,
    };
    let mut lines = Vec::new();
    let mut rules = Vec::new();
    let mut y = top;

    // Running header, with the page number at the outer corner on some pages.
    let number_in_header = s.rng.random_bool(0.4);
    let header_words = prose_words(s.rng, 2..6);
    let header_area = Area {
        x0,
        x1,
        y0: y,
        y1: h,
    };
    let header_align = if s.rng.random_bool(0.5) {
        Align::Centre
    } else {
        Align::Right
    };
    if let Some(hl) = short_line(
        &mut s,
        small,
        &header_words,
        header_area,
        header_align,
        RegionKind::Header,
    ) {
        let mut row = vec![hl];
        if number_in_header {
            let digits = page_number_text(s.rng, number, opts.arabic_indic_digits);
            let align = if gutter_left {
                Align::Right
            } else {
                Align::Centre
            };
            let ends = Area {
                x0: if gutter_left {
                    x1 - small.em_px * 4.0
                } else {
                    x0
                },
                x1: if gutter_left {
                    x1
                } else {
                    x0 + small.em_px * 4.0
                },
                ..header_area
            };
            if let Some(mut pn) =
                short_line(&mut s, small, &digits, ends, align, RegionKind::PageNumber)
            {
                pn.baseline_px = row[0].baseline_px;
                let clear = pn.word_boxes().iter().all(|b| {
                    row[0]
                        .word_boxes()
                        .iter()
                        .all(|o| b.intersection(o).is_none())
                });
                if clear {
                    row.push(pn);
                }
            }
        }
        // Reading order across the header row: right to left.
        row.sort_by(|a, b| (b.left_px + b.set.ink().x1).total_cmp(&(a.left_px + a.set.ink().x1)));
        y = row
            .iter()
            .map(|l| l.baseline_px + l.set.ink().y1)
            .fold(y, f32::max)
            + small.em_px * 0.4;
        if s.rng.random_bool(0.5) {
            rules.push(Rect::new(x0, y, x1, y + (dpi / 150.0).max(1.0)));
            y += small.em_px * 0.4;
        }
        lines.extend(row);
        y += body.em_px * 0.6;
    }

    // Centred title on some pages.
    if s.rng.random_bool(0.25) {
        let title = mk(bold, body_pt * s.rng.random_range(1.4..2.0), 1.3);
        let words = prose_words(s.rng, 2..6);
        if let Some(t) = short_line(
            &mut s,
            title,
            &words,
            Area {
                x0,
                x1,
                y0: y,
                y1: h,
            },
            Align::Centre,
            RegionKind::Title,
        ) {
            y = t.baseline_px + t.set.ink().y1 + body.em_px;
            lines.push(t);
        }
    }

    // Bottom: page number (unless in the header) and footnotes above it.
    let mut bottom_y = h - bottom;
    let mut tail = Vec::new();
    if !number_in_header {
        let digits = page_number_text(s.rng, number, opts.arabic_indic_digits);
        let area = Area {
            x0,
            x1,
            y0: h - bottom + small.em_px * 0.5,
            y1: h,
        };
        if let Some(pn) = short_line(
            &mut s,
            small,
            &digits,
            area,
            Align::Centre,
            RegionKind::PageNumber,
        ) {
            bottom_y = bottom_y.min(h - bottom);
            tail.push(pn);
        }
    }
    let mut notes = Vec::new();
    if opts.footnote.unwrap_or_else(|| s.rng.random_bool(0.4)) {
        let fnote = mk(font, body_pt * s.rng.random_range(0.72..0.85), 1.35);
        let mut stream = Stream::new(CorpusConfig {
            prose_share: if opts.prose_only { 1.0 } else { 0.6 },
            ..corpus
        });
        let marker = if s.rng.random_bool(0.5) {
            "(١)".to_string()
        } else {
            "(1)".to_string()
        };
        stream.push_front(vec![marker]);
        let count = s.rng.random_range(1..3);
        let mut fl = s.fill(
            &mut stream,
            fnote,
            Area {
                x0,
                x1,
                y0: 0.0,
                y1: h,
            },
            count,
            RegionKind::Footnote,
        );
        fl.truncate(4);
        if let Some(last) = fl.last() {
            let height = last.baseline_px + last.set.ink().y1;
            let dy = bottom_y - height;
            fl.iter_mut().for_each(|l| l.baseline_px += dy);
            let rule_y = bottom_y - height - fnote.em_px * 0.5;
            let rule_w = (x1 - x0) * 0.3;
            rules.push(Rect::new(
                x1 - rule_w,
                rule_y,
                x1,
                rule_y + (dpi / 150.0).max(1.0),
            ));
            bottom_y = rule_y - fnote.em_px * 0.6;
            notes = fl;
        }
    }

    // Body in one or two columns, right column first.
    let mut stream = Stream::new(corpus);
    let gap = body.em_px * 1.5;
    let col_w = (x1 - x0 - gap * (columns as f32 - 1.0)) / columns as f32;
    let mut body_lines = Vec::new();
    for c in 0..columns {
        let right = x1 - c as f32 * (col_w + gap);
        let area = Area {
            x0: right - col_w,
            x1: right,
            y0: y,
            y1: bottom_y,
        };
        body_lines.extend(s.fill(&mut stream, body, area, usize::MAX, RegionKind::Body));
    }

    // Margin notes in the outer margin beside single-column text.
    let mut margin = Vec::new();
    let outer_w = if gutter_left { w - x1 } else { x0 };
    if columns == 1 && outer_w > 0.55 * dpi && s.rng.random_bool(0.35) && !body_lines.is_empty() {
        let mty = mk(font, body_pt * 0.7, 1.3);
        let pad = 0.12 * dpi;
        let (mx0, mx1) = if gutter_left {
            (x1 + pad, w - pad)
        } else {
            (pad, x0 - pad)
        };
        let anchor = s.rng.random_range(0..body_lines.len());
        let mut y_note = body_lines[anchor].baseline_px - body.em_px;
        for _ in 0..s.rng.random_range(1..4) {
            let words = prose_words(s.rng, 1..3);
            if let Some(mut l) = short_line(
                &mut s,
                mty,
                &words,
                Area {
                    x0: mx0,
                    x1: mx1,
                    y0: y_note,
                    y1: h,
                },
                Align::Centre,
                RegionKind::Margin,
            ) {
                if l.baseline_px + l.set.ink().y1 > bottom_y {
                    break;
                }
                y_note = l.baseline_px + l.set.ink().y1 + mty.em_px * 0.3;
                l.region = RegionKind::Margin;
                margin.push(l);
            }
        }
    }

    lines.extend(body_lines);
    lines.extend(margin);
    lines.extend(notes);
    lines.extend(tail);
    Layout {
        width_px: w as u32,
        height_px: h as u32,
        dpi,
        lines,
        rules,
        gutter_left,
        columns,
        font,
    }
}

/// The bold face of a font's family, or the font itself.
fn bold_of(shelf: &Shelf, font: usize) -> usize {
    let fam = &shelf.fonts[font].entry.family;
    shelf
        .fonts
        .iter()
        .position(|f| &f.entry.family == fam && f.entry.weight == "bold")
        .unwrap_or(font)
}

/// Draw the page's ink coverage (0 paper … 255 ink).
pub fn draw(shelf: &Shelf, layout: &Layout) -> GrayImage {
    let mut mask = Mask::new(layout.width_px, layout.height_px).expect("page size is positive");
    for line in &layout.lines {
        for (w, x) in line.set.words.iter().zip(&line.set.x_px) {
            draw_line(
                shelf,
                &w.shaped,
                (line.left_px + x, line.baseline_px),
                None,
                &mut mask,
            );
        }
    }
    for r in &layout.rules {
        if let Some(rect) = tiny_skia::Rect::from_ltrb(r.x0, r.y0, r.x1, r.y1) {
            mask.fill_path(
                &PathBuilder::from_rect(rect),
                FillRule::Winding,
                true,
                Transform::identity(),
            );
        }
    }
    GrayImage::from_raw(layout.width_px, layout.height_px, mask.take())
        .expect("mask is w × h bytes")
}
