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

/// Page-level choices that tests may pin.
#[derive(Debug, Clone, Copy, PartialEq, Default)]
pub struct PageOptions {
    /// Force this resolution instead of drawing one.
    pub dpi: Option<f32>,
    /// Share of body and footnote text with harakat (default: the corpus default).
    pub harakat_share: Option<f32>,
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
    /// Force this page size, inches (width, height), instead of drawing one.
    pub size_in: Option<(f32, f32)>,
}

impl PageOptions {
    /// Default choices, with the resolution pinned when `dpi` is given.
    pub fn at_dpi(dpi: Option<f32>) -> PageOptions {
        PageOptions {
            dpi,
            ..PageOptions::default()
        }
    }
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

impl Type {
    /// `lead`: line pitch as a multiple of the type size.
    fn new(font: usize, size_pt: f32, lead: f32, dpi: f32) -> Type {
        let em_px = size_pt * dpi / 72.0;
        Type {
            font,
            size_pt,
            em_px,
            leading_px: em_px * lead,
        }
    }
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

/// The page's frame: size, text block, and the type sizes used on it.
struct Frame {
    w: f32,
    h: f32,
    dpi: f32,
    x0: f32,
    x1: f32,
    top: f32,
    bottom: f32,
    gutter_left: bool,
    body: Type,
    small: Type,
    bold: usize,
    corpus: CorpusConfig,
    prose_only: bool,
    arabic_digits: Option<bool>,
}

impl Frame {
    fn new<R: Rng>(rng: &mut R, shelf: &Shelf, font: usize, opts: PageOptions) -> Frame {
        let (w_in, h_in) = opts
            .size_in
            .unwrap_or_else(|| *PAGE_SIZES_IN.choose(rng).unwrap_or(&(6.0, 9.0)));
        let dpi = opts.dpi.unwrap_or_else(|| {
            PAGE_DPI
                .choose_weighted(rng, |d| d.1)
                .map_or(200.0, |d| d.0)
        });
        let (w, h) = ((w_in * dpi).round(), (h_in * dpi).round());
        let gutter_left = rng.random_bool(0.5);
        let mut inch = |a: f32, b: f32| rng.random_range(a..b) * dpi;
        let (top, bottom, inner, outer) = (
            inch(0.45, 0.8),
            inch(0.55, 0.9),
            inch(0.55, 0.9),
            inch(0.5, 1.2),
        );
        let (x0, x1) = if gutter_left {
            (inner, w - outer)
        } else {
            (outer, w - inner)
        };
        let body_pt = rng.random_range(9.5..14.0f32);
        let lead = rng.random_range(1.3..1.9);
        let (body, small) = (
            Type::new(font, body_pt, lead, dpi),
            Type::new(font, body_pt * 0.8, 1.4, dpi),
        );
        let bold = bold_of(shelf, font);
        let mut corpus = CorpusConfig::default();
        corpus.harakat_share = opts.harakat_share.unwrap_or(corpus.harakat_share);
        if opts.prose_only {
            corpus = CorpusConfig {
                prose_share: 1.0,
                harakat_share: 0.0,
                latin_share: 0.0,
                number_share: 0.0,
            };
        }
        Frame {
            w,
            h,
            dpi,
            x0,
            x1,
            top,
            bottom: h - bottom,
            gutter_left,
            body,
            small,
            bold,
            corpus,
            prose_only: opts.prose_only,
            arabic_digits: opts.arabic_indic_digits,
        }
    }

    fn ty(&self, font: usize, size_pt: f32, lead: f32) -> Type {
        Type::new(font, size_pt, lead, self.dpi)
    }

    fn text_area(&self, y0: f32) -> Area {
        Area {
            x0: self.x0,
            x1: self.x1,
            y0,
            y1: self.h,
        }
    }

    fn rule(&self, x0: f32, y: f32, x1: f32) -> Rect {
        Rect::new(x0, y, x1, y + (self.dpi / 150.0).max(1.0))
    }
}

/// Running header (and the page number at the outer corner when `number` is given); returns the
/// header lines in reading order and the top of the space below.
fn header<R: Rng>(
    s: &mut Setter<'_, R>,
    f: &Frame,
    number: Option<usize>,
    rules: &mut Vec<Rect>,
) -> (Vec<PlacedLine>, f32) {
    let words = prose_words(s.rng, 2..6);
    let align = if s.rng.random_bool(0.5) {
        Align::Centre
    } else {
        Align::Right
    };
    let Some(head) = short_line(
        s,
        f.small,
        &words,
        f.text_area(f.top),
        align,
        RegionKind::Header,
    ) else {
        return (Vec::new(), f.top);
    };
    let mut row = vec![head];
    if let Some(n) = number {
        let digits = page_number_text(s.rng, n, f.arabic_digits);
        let corner = f.small.em_px * 4.0;
        let (x0, x1, align) = if f.gutter_left {
            (f.x1 - corner, f.x1, Align::Right)
        } else {
            (f.x0, f.x0 + corner, Align::Centre)
        };
        let area = Area {
            x0,
            x1,
            ..f.text_area(f.top)
        };
        if let Some(mut pn) = short_line(s, f.small, &digits, area, align, RegionKind::PageNumber) {
            pn.baseline_px = row[0].baseline_px;
            let others = row[0].word_boxes();
            if pn
                .word_boxes()
                .iter()
                .all(|b| others.iter().all(|o| b.intersection(o).is_none()))
            {
                row.push(pn);
            }
        }
    }
    // Reading order across the header row: right to left.
    row.sort_by(|a, b| (b.left_px + b.set.ink().x1).total_cmp(&(a.left_px + a.set.ink().x1)));
    let mut y = row
        .iter()
        .map(|l| l.baseline_px + l.set.ink().y1)
        .fold(f.top, f32::max)
        + f.small.em_px * 0.4;
    if s.rng.random_bool(0.5) {
        rules.push(f.rule(f.x0, y, f.x1));
        y += f.small.em_px * 0.4;
    }
    (row, y + f.body.em_px * 0.6)
}

/// A centred title in the bold face, larger; returns it and the top of the space below.
fn title<R: Rng>(s: &mut Setter<'_, R>, f: &Frame, y: f32) -> (Option<PlacedLine>, f32) {
    let ty = f.ty(f.bold, f.body.size_pt * s.rng.random_range(1.4..2.0), 1.3);
    let words = prose_words(s.rng, 2..6);
    match short_line(
        s,
        ty,
        &words,
        f.text_area(y),
        Align::Centre,
        RegionKind::Title,
    ) {
        Some(t) => {
            let below = t.baseline_px + t.set.ink().y1 + f.body.em_px;
            (Some(t), below)
        }
        None => (None, y),
    }
}

/// Footnotes set full width and pushed down to end at `bottom`, a short rule at the right above
/// them; returns the lines and the new bottom of the body.
fn footnotes<R: Rng>(
    s: &mut Setter<'_, R>,
    f: &Frame,
    bottom: f32,
    rules: &mut Vec<Rect>,
) -> (Vec<PlacedLine>, f32) {
    let ty = f.ty(
        f.body.font,
        f.body.size_pt * s.rng.random_range(0.72..0.85),
        1.35,
    );
    let mut stream = Stream::new(CorpusConfig {
        prose_share: if f.prose_only { 1.0 } else { 0.6 },
        ..f.corpus
    });
    stream.push_front(vec![if s.rng.random_bool(0.5) {
        "(١)".into()
    } else {
        "(1)".into()
    }]);
    let count = s.rng.random_range(1..3);
    let mut lines = s.fill(
        &mut stream,
        ty,
        Area {
            y0: 0.0,
            ..f.text_area(0.0)
        },
        count,
        RegionKind::Footnote,
    );
    lines.truncate(4);
    let Some(last) = lines.last() else {
        return (lines, bottom);
    };
    let height = last.baseline_px + last.set.ink().y1;
    lines
        .iter_mut()
        .for_each(|l| l.baseline_px += bottom - height);
    let rule_y = bottom - height - ty.em_px * 0.5;
    rules.push(f.rule(f.x1 - (f.x1 - f.x0) * 0.3, rule_y, f.x1));
    (lines, rule_y - ty.em_px * 0.6)
}

/// Notes in the outer margin beside body line `anchor`, centred, one to three short lines.
fn margin_notes<R: Rng>(
    s: &mut Setter<'_, R>,
    f: &Frame,
    anchor_y: f32,
    bottom: f32,
) -> Vec<PlacedLine> {
    let ty = f.ty(f.body.font, f.body.size_pt * 0.7, 1.3);
    let pad = 0.12 * f.dpi;
    let (x0, x1) = if f.gutter_left {
        (f.x1 + pad, f.w - pad)
    } else {
        (pad, f.x0 - pad)
    };
    let mut y = anchor_y;
    let mut out = Vec::new();
    for _ in 0..s.rng.random_range(1..4) {
        let words = prose_words(s.rng, 1..3);
        let Some(l) = short_line(
            s,
            ty,
            &words,
            Area {
                x0,
                x1,
                y0: y,
                y1: f.h,
            },
            Align::Centre,
            RegionKind::Margin,
        ) else {
            continue;
        };
        if l.baseline_px + l.set.ink().y1 > bottom {
            break;
        }
        y = l.baseline_px + l.set.ink().y1 + ty.em_px * 0.3;
        out.push(l);
    }
    out
}

/// Lay out page `number` (1-based page number printed on it) with one of the given fonts.
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
    let f = Frame::new(rng, shelf, font, opts);
    let justify = rng.random_bool(0.8);
    let tatweel_share = if rng.random_bool(0.5) { 0.3 } else { 0.0 };
    let columns: u8 = match opts.columns {
        Some(c) => c.clamp(1, 2),
        None if rng.random_bool(0.3) => 2,
        None => 1,
    };
    let mut s = Setter {
        shelf,
        rng,
        justify,
        tatweel_share,
    };
    let mut rules = Vec::new();

    let number_in_header = s.rng.random_bool(0.4);
    let (mut lines, mut y) = header(&mut s, &f, number_in_header.then_some(number), &mut rules);
    if s.rng.random_bool(0.25) {
        let (t, below) = title(&mut s, &f, y);
        lines.extend(t);
        y = below;
    }
    let mut bottom = f.bottom;
    let mut tail = Vec::new();
    if !number_in_header {
        let digits = page_number_text(s.rng, number, f.arabic_digits);
        let area = Area {
            y0: f.bottom + f.small.em_px * 0.5,
            ..f.text_area(0.0)
        };
        tail.extend(short_line(
            &mut s,
            f.small,
            &digits,
            area,
            Align::Centre,
            RegionKind::PageNumber,
        ));
    }
    let mut notes = Vec::new();
    if opts.footnote.unwrap_or_else(|| s.rng.random_bool(0.4)) {
        (notes, bottom) = footnotes(&mut s, &f, bottom, &mut rules);
    }

    // Body in one or two columns, right column first.
    let mut stream = Stream::new(CorpusConfig {
        prose_share: if f.prose_only { 1.0 } else { 0.7 },
        ..f.corpus
    });
    let gap = f.body.em_px * 1.5;
    let col_w = (f.x1 - f.x0 - gap * (columns as f32 - 1.0)) / columns as f32;
    let mut body = Vec::new();
    for c in 0..columns {
        let right = f.x1 - c as f32 * (col_w + gap);
        let area = Area {
            x0: right - col_w,
            x1: right,
            y0: y,
            y1: bottom,
        };
        body.extend(s.fill(&mut stream, f.body, area, usize::MAX, RegionKind::Body));
    }
    let outer_w = if f.gutter_left { f.w - f.x1 } else { f.x0 };
    let mut margin = Vec::new();
    if columns == 1 && outer_w > 0.55 * f.dpi && !body.is_empty() && s.rng.random_bool(0.35) {
        let anchor = &body[s.rng.random_range(0..body.len())];
        let anchor_y = anchor.baseline_px - f.body.em_px;
        margin = margin_notes(&mut s, &f, anchor_y, bottom);
    }

    lines.extend(body);
    lines.extend(margin);
    lines.extend(notes);
    lines.extend(tail);
    Layout {
        width_px: f.w as u32,
        height_px: f.h as u32,
        dpi: f.dpi,
        lines,
        rules,
        gutter_left: f.gutter_left,
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
