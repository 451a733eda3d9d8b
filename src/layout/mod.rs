//! Page analysis: regions and text lines in right-to-left reading order.
//!
//! [`analyze`] takes a [`CleanPage`] and returns a [`PageLayout`]: regions in Arabic reading order —
//! running header and a page number at the top, the main text (titles and columns, right column
//! first), footnotes, a page number at the bottom, margin notes — then rules and pictures (not text).
//! Every box handed out is in pixels of the original page image (as scanned, before turning and
//! deskew); the straightened-page boxes are kept beside them for [`line_image`].

pub mod blocks;
pub mod components;
pub mod debug;
pub mod drawn;
mod edges;
pub mod geometry;
pub mod lines;
#[cfg(test)]
mod regression;
pub mod score;

use image::GrayImage;

use crate::cleanup::CleanPage;
use crate::text::RegionKind;
use blocks::{CutSizes, LineFacts};
use components::{find_components, Component};
use geometry::Rect;
use lines::{find_lines, median, FoundLine, PageInk};

/// Settings of the layout stage (sizes in ems of the page's main type, estimated per page).
#[derive(Debug, Clone, PartialEq)]
pub struct LayoutConfig {
    /// Narrowest whitespace between columns, in ems.
    pub gutter_em: f32,
    /// A gap between bands at least this high always separates zones, in ems.
    pub wide_gap_em: f32,
    /// A gap this wide splits even a single line (a running header's title from its page number),
    /// in ems; narrower gaps split only text with two rows or more on each side.
    pub lone_gap_em: f32,
}

impl Default for LayoutConfig {
    fn default() -> Self {
        // Column gutters in books are rarely under one em; word spaces are about a quarter em
        // (common practice in typesetting, no source).
        LayoutConfig {
            gutter_em: 0.9,
            wide_gap_em: 1.6,
            lone_gap_em: 3.0,
        }
    }
}

/// What a region is.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum RegionClass {
    /// Text of the given kind.
    Text(RegionKind),
    /// A rule (separator line).
    Separator,
    /// A picture or ornament.
    Picture,
}

/// One text line.
#[derive(Debug, Clone, PartialEq)]
pub struct Line {
    /// Kind of the region it belongs to.
    pub kind: RegionKind,
    /// Axis-aligned box on the original page image.
    pub bbox: Rect,
    /// The line's straightened box on the original page image: top-right, top-left, bottom-left,
    /// bottom-right corners.
    pub quad: [(f32, f32); 4],
    /// Baseline on the original page image, from the right end to the left end.
    pub baseline: [(f32, f32); 2],
    /// Height of the core band above the baseline, pixels.
    pub x_height_px: f32,
    /// Box on the straightened page ([`CleanPage::gray`]).
    pub clean_box: Rect,
    /// Baseline row on the straightened page.
    pub clean_baseline_y: f32,
}

/// A region: a run of lines of one kind in one zone, or a rule, or a picture.
#[derive(Debug, Clone, PartialEq)]
pub struct Region {
    /// What it is.
    pub class: RegionClass,
    /// Axis-aligned box on the original page image.
    pub bbox: Rect,
    /// Box on the straightened page.
    pub clean_box: Rect,
    /// Lines in reading order (empty for rules and pictures).
    pub lines: Vec<Line>,
}

/// The analysis of one page.
#[derive(Debug, Clone, PartialEq, Default)]
pub struct PageLayout {
    /// Regions in reading order; text first, then rules and pictures.
    pub regions: Vec<Region>,
    /// Estimated em of the main type, pixels.
    pub em_px: f32,
}

impl PageLayout {
    /// All text lines in reading order.
    pub fn lines(&self) -> impl Iterator<Item = &Line> {
        self.regions.iter().flat_map(|r| r.lines.iter())
    }
}

/// The straightened grey image of a line for the recognizer, with a small margin for dots and harakat.
pub fn line_image(page: &CleanPage, line: &Line) -> GrayImage {
    lines::crop_line(&page.gray, &line.clean_box)
}

/// What each component is, before zones.
struct Sorted {
    text: Vec<usize>,
    rules: Vec<usize>,
    pictures: Vec<usize>,
    is_mark: Vec<bool>,
    is_small: Vec<bool>,
    em_px: f32,
}

fn sort_components(list: &[Component], dpi: f32) -> Sorted {
    let min_area = (4.0 * (dpi / 300.0).powi(2)).max(2.0) as u32;
    let mut hs: Vec<f32> = list
        .iter()
        .filter(|c| c.area >= min_area)
        .map(|c| c.height() as f32)
        .collect();
    hs.sort_by(|a, b| a.total_cmp(b));
    // The 80th percentile of component heights is a tall letter group, about 2/3 em in Arabic type
    // (measured on our drawn pages).
    let p80 = hs.get(hs.len() * 4 / 5).copied().unwrap_or(10.0);
    let em = (1.5 * p80).max(dpi / 24.0);
    let mut s = Sorted {
        text: Vec::new(),
        rules: Vec::new(),
        pictures: Vec::new(),
        is_mark: Vec::new(),
        is_small: Vec::new(),
        em_px: em,
    };
    for (i, c) in list.iter().enumerate() {
        let (w, h) = (c.width() as f32, c.height() as f32);
        let rule = (w >= 8.0 * h && w >= 3.0 * em && h <= 0.3 * em)
            || (h >= 8.0 * w && h >= 3.0 * em && w <= 0.3 * em);
        let picture = !rule && w > 3.0 * em && h > 3.0 * em;
        s.is_mark.push(w.max(h) < 0.25 * em);
        // Small enough to be a mark of larger type (a title's hamza), never a line of its own.
        s.is_small.push(w.max(h) < 0.35 * em);
        if rule {
            s.rules.push(i);
        } else if picture {
            s.pictures.push(i);
        } else {
            s.text.push(i);
        }
    }
    let dashes = flat_dash_rows(list, &s.text, em);
    s.text.retain(|c| dashes.binary_search(c).is_err());
    s.rules.extend(dashes);
    let ends = dashes_carrying_on_rules(list, &s.text, &s.rules, em);
    s.text.retain(|c| ends.binary_search(c).is_err());
    s.rules.extend(ends);
    s
}

/// Flat dashes ([`DASH_EM`], [`DASH_FLAT`]) that carry on a horizontal rule found already: at its
/// height and within an em of its end, or of a dash that does. A rule worn into long pieces with
/// a short one between them left that piece as text: a band of its own between a running header
/// and the first lines, which joined the two across the rule, and the gutter under the header
/// was lost (a column's first line was cut at a wide word space). Measured on 200 + 200
/// generated pages (seed 505): damaged pages in order 88.0 → 88.5 %, line F1 0.9886 → 0.9888;
/// clean pages unchanged (98.0 %, 0.9987). Stubs too short to be flat dashes carry a rule on
/// when they are no thicker than the piece they follow: a header's rule worn into stubs two to
/// four times as long as thick stretched both the header's and the first line's boxes (damaged
/// pages in order 93.0 → 93.5 %, F1 0.9896 → 0.9899; clean unchanged).
fn dashes_carrying_on_rules(
    list: &[Component],
    text: &[usize],
    rules: &[usize],
    em: f32,
) -> Vec<usize> {
    // A flat dash, or a shorter one no thicker than the piece of the row it carries on (a rule
    // drawn dashed, or worn into stubs two or three times as long as they are thick).
    let dash = |c: &Component, a: &Component| {
        c.height() as f32 <= DASH_EM * em
            && (c.width() >= DASH_FLAT * c.height().max(1)
                || (c.height() <= a.height() + 1 && c.width() >= 2 * c.height().max(1)))
    };
    let mut row: Vec<usize> = rules
        .iter()
        .copied()
        .filter(|&r| list[r].width() > list[r].height())
        .collect();
    let mut out: Vec<usize> = Vec::new();
    loop {
        let more: Vec<usize> = text
            .iter()
            .copied()
            .filter(|c| !out.contains(c))
            .filter(|&c| {
                let m = &list[c];
                row.iter().any(|&r| {
                    let a = &list[r];
                    dash(m, a)
                        && (a.cy() - m.cy()).abs() <= 0.05 * em + 1.0
                        && (m.x0 as f32 - a.x1 as f32).max(a.x0 as f32 - m.x1 as f32) <= em
                })
            })
            .collect();
        if more.is_empty() {
            break;
        }
        row.extend(&more);
        out.extend(more);
    }
    out.sort_unstable();
    out
}

/// Tallest a dash of a worn horizontal rule stands, in ems (a rule is a hairline; the flattest
/// letter stands about a third of an em, common practice, no source).
const DASH_EM: f32 = 0.1;

/// Least length over height of the dashes that make a row a rule: a fatha is a slanted stroke
/// about twice to three times as long as its box is high (common practice, no source).
const DASH_FLAT: u32 = 5;

/// Pieces of horizontal rules worn or broken into dashes, as component indices in order: a row of
/// hairline pieces on one height, each within an em of the next, over at least
/// [`BROKEN_RULE_EM`], of which at least two are long flat dashes ([`DASH_FLAT`]) covering a
/// quarter of the row. Taken out before lines are sought, they cannot stretch the box of the
/// line they stand next to (a rule under a running header a third of an em over the first line).
/// Measured on 200 + 200 generated pages (seed 505): damaged pages' line F1 0.9851 → 0.9854
/// (two lines whole again), clean pages unchanged.
fn flat_dash_rows(list: &[Component], text: &[usize], em: f32) -> Vec<usize> {
    let thin = |c: &Component| c.height() as f32 <= DASH_EM * em && c.width() >= 2 * c.height();
    let mut cands: Vec<usize> = text.iter().copied().filter(|&c| thin(&list[c])).collect();
    cands.sort_by_key(|&c| list[c].x0);
    // Rows grow left to right: a piece joins the row whose last piece ends within an em before it
    // at the same height (centres within a twentieth of an em and a pixel).
    let mut rows: Vec<Vec<usize>> = Vec::new();
    for c in cands {
        let m = &list[c];
        let row = rows.iter_mut().find(|r| {
            let last = &list[*r.last().expect("rows are never empty")];
            (last.cy() - m.cy()).abs() <= 0.05 * em + 1.0
                && m.x0 >= last.x0
                && (m.x0 as f32 - last.x1 as f32) <= em
        });
        match row {
            Some(r) => r.push(c),
            None => rows.push(vec![c]),
        }
    }
    let mut out: Vec<usize> = rows
        .into_iter()
        .filter(|r| {
            let x0 = r.iter().map(|&c| list[c].x0).min().unwrap_or(0);
            let x1 = r.iter().map(|&c| list[c].x1).max().unwrap_or(0);
            let long: Vec<u32> = r
                .iter()
                .map(|&c| &list[c])
                .filter(|c| c.width() >= DASH_FLAT * c.height().max(1))
                .map(|c| c.width())
                .collect();
            let span = (x1 - x0) as f32;
            span >= BROKEN_RULE_EM * em
                && long.len() >= 2
                && long.iter().sum::<u32>() as f32 >= 0.25 * span
        })
        .flatten()
        .collect();
    out.sort_unstable();
    out
}

fn rect_of(c: &Component) -> Rect {
    Rect::new(c.x0 as f32, c.y0 as f32, c.x1 as f32, c.y1 as f32)
}

/// Find regions and lines on a cleaned page.
pub fn analyze(page: &CleanPage, cfg: &LayoutConfig) -> PageLayout {
    let comps = find_components(&page.binary);
    let sorted = sort_components(&comps.list, page.dpi);
    let (off, idx) = comps.runs_by_component();
    let ink = PageInk {
        comps: &comps,
        off,
        idx,
        is_mark: sorted.is_mark.clone(),
        is_small: sorted.is_small.clone(),
    };
    let em = sorted.em_px;
    let sizes = CutSizes {
        gutter_px: cfg.gutter_em * em,
        wide_gap_px: cfg.wide_gap_em * em,
        lone_gap_px: cfg.lone_gap_em * em,
        em_px: em,
    };
    // Horizontal rules: they keep bands apart and mark footnotes.
    let flat: Vec<&Component> = sorted
        .rules
        .iter()
        .map(|&r| &comps.list[r])
        .filter(|c| c.width() > c.height())
        .collect();
    let flat_rules: Vec<(u32, u32, u32)> = flat
        .iter()
        .map(|c| ((c.y0 + c.y1) / 2, c.x0, c.x1))
        .collect();
    let zones = blocks::zones(
        &comps.list,
        &sorted.is_small,
        sorted.text.clone(),
        sizes,
        &flat_rules,
    );
    let mut found: Vec<(usize, FoundLine)> = Vec::new();
    let mut extents = Vec::new();
    for (z, zone) in zones.iter().enumerate() {
        let x0 = zone.iter().map(|&c| comps.list[c].x0).min().unwrap_or(0) as f32;
        let x1 = zone.iter().map(|&c| comps.list[c].x1).max().unwrap_or(0) as f32;
        extents.push((x0, x1));
        found.extend(
            find_lines(&ink, zone, sizes.lone_gap_px)
                .into_iter()
                .map(|l| (z, l)),
        );
    }
    // No line of letters is this flat: rows of thin pieces are a rule that wear or the scan
    // broke into dashes (a separator when it is long enough to set text apart) or a stray
    // stroke, and not text.
    let (hairlines, found): (Vec<_>, Vec<_>) = found
        .into_iter()
        .partition(|(_, l)| l.bbox.height() <= HAIRLINE_EM * em);
    let mut hairlines: Vec<FoundLine> = hairlines
        .into_iter()
        .map(|(_, l)| l)
        .filter(|l| l.bbox.width() >= BROKEN_RULE_EM * em)
        .collect();
    let (posts, found) = broken_upright_rules(found, &ink, em);
    hairlines.extend(posts);
    let facts: Vec<LineFacts> = found
        .iter()
        .map(|(z, l)| LineFacts {
            bbox: (l.bbox.x0, l.bbox.y0, l.bbox.x1, l.bbox.y1),
            size_px: l.size_px,
            core_px: l.x_height_px,
            bodies: l.comps.iter().filter(|&&c| !ink.is_mark[c]).count(),
            widest_px: l
                .comps
                .iter()
                .filter(|&&c| !ink.is_mark[c])
                .map(|&c| comps.list[c].width() as f32)
                .fold(0.0, f32::max),
            zone: *z,
        })
        .collect();
    let rules: Vec<(f32, f32, f32)> = flat
        .iter()
        .map(|c| (c.cy(), c.x0 as f32, c.x1 as f32))
        .chain(hairlines.iter().map(|l| {
            let b = l.bbox;
            ((b.y0 + b.y1) / 2.0, b.x0, b.x1)
        }))
        .collect();
    let kinds = blocks::classify(&facts, &rules, em, &extents);
    // Digits carry no marks: specks beside or under a page number are dust (`page_number_dust`).
    let mut found = found;
    for ((_, l), _) in found
        .iter_mut()
        .zip(&kinds)
        .filter(|(_, &k)| k == RegionKind::PageNumber)
    {
        drop_pieces(
            l,
            &lines::page_number_dust(&comps.list, &l.comps, &ink.is_mark),
            &comps.list,
        );
    }
    // A local threshold draws strokes a little thinner than they are on a worn or blurred scan;
    // each line's box goes out to its strokes' grey edge (`edges::EDGE_SHARE`) so that it holds
    // all their ink. Measured when it went to the half-contrast edge, on 200 damaged generated
    // pages (seed 505): line F1 0.9908 → 0.9923, order right 78.0 → 82.0 %; clean pages F1
    // unchanged (0.9970), order 95.0 → 94.5 % (two boxes that already reached a kasra of the
    // line above fell under IoU 0.7; one line is now whole). Then one pixel more to the strokes'
    // fringe (`edges::FRINGE_SHARE`).
    let levels = edges::edge_levels(&page.gray, &page.binary);
    let found: Vec<(usize, FoundLine)> = found
        .into_iter()
        .map(|(z, mut l)| {
            l.bbox = edges::grow_to_edges(&page.gray, &page.binary, l.bbox, levels);
            (z, l)
        })
        .collect();
    let mid_y = median(found.iter().map(|(_, l)| l.baseline_y).collect());
    let mut layout = build_regions(page, &found, &kinds, mid_y, em);
    let non_text = sorted.rules.iter().map(|&i| (i, RegionClass::Separator));
    for (i, class) in non_text.chain(sorted.pictures.iter().map(|&i| (i, RegionClass::Picture))) {
        let r = rect_of(&comps.list[i]);
        layout.regions.push(Region {
            class,
            bbox: page.rect_to_original(&r),
            clean_box: r,
            lines: Vec::new(),
        });
    }
    for l in &hairlines {
        layout.regions.push(Region {
            class: RegionClass::Separator,
            bbox: page.rect_to_original(&l.bbox),
            clean_box: l.bbox,
            lines: Vec::new(),
        });
    }
    layout.em_px = em;
    layout
}

/// Takes `dust` out of `line` and its box down to the pieces left (within the box it had: a
/// piece of a touching line is clipped there).
fn drop_pieces(line: &mut FoundLine, dust: &[usize], list: &[Component]) {
    if dust.is_empty() {
        return;
    }
    line.comps.retain(|c| !dust.contains(c));
    let Some(ink) = line
        .comps
        .iter()
        .map(|&c| rect_of(&list[c]))
        .reduce(|a, b| a.union(&b))
    else {
        return;
    };
    line.bbox = ink.intersection(&line.bbox).unwrap_or(ink);
}

/// Height in ems at or under which a row of pieces is a broken rule, not a line: the flattest
/// Arabic letters stand about a third of an em (common practice, no source; from memory).
const HAIRLINE_EM: f32 = 0.15;

/// Least length in ems of a broken rule that separates text (a footnote rule is a fraction of
/// the measure, several ems; a lone dash is under an em).
const BROKEN_RULE_EM: f32 = 2.0;

/// Widest a piece of an upright rule may be, in ems: a stroke, not a letter (the stem of an alef
/// is about a tenth of an em; common practice, no source).
const STROKE_EM: f32 = 0.35;

/// Most white, in ems, between two pieces of one upright rule.
const CHAIN_GAP_EM: f32 = 2.0;

/// Least share of an upright chain's length covered by its letters for it to be a worn rule or
/// shadow edge: digits or lone letters down a margin, one a line, cover about a third to a half
/// (letters 0.5–0.75 em at a line pitch of 1.5 em and more; common practice, no source).
const RULE_COVER: f32 = 0.6;

/// A piece this many ems tall is no letter: Arabic letters with their ascenders and descenders
/// stand within about an em (common practice, no source).
const TALLER_THAN_LETTERS_EM: f32 = 1.5;

/// "Lines" whose every letter is an upright stroke, stacked one over another at one place across
/// the page over at least [`BROKEN_RULE_EM`], are an upright rule or the edge of a scan's
/// shadow broken into pieces, not text (a margin's lone alef or "١" stands alone); they come
/// back first, the other lines second. Measured on 200 damaged generated pages (seed 505): lines
/// found 8301 → 8284, line F1 0.9896 → 0.9906; clean pages unchanged. Chains covered by their
/// letters ([`RULE_COVER`]) later: damaged F1 0.9881 → 0.9884 (a shadow's edge down a page's
/// outer side, worn into dashes none taller than a letter), clean unchanged.
fn broken_upright_rules(
    found: Vec<(usize, FoundLine)>,
    ink: &PageInk,
    em: f32,
) -> (Vec<FoundLine>, Vec<(usize, FoundLine)>) {
    let list = &ink.comps.list;
    // Every letter of the line narrow, the tallest an upright stroke.
    let upright_line = |l: &FoundLine| {
        let bodies = l
            .comps
            .iter()
            .filter(|&&c| !ink.is_mark[c])
            .map(|&c| &list[c]);
        let narrow = bodies.clone().all(|c| c.width() as f32 <= STROKE_EM * em);
        let tallest = bodies.max_by_key(|c| c.height());
        narrow
            && l.bbox.width() <= 2.0 * STROKE_EM * em
            && tallest.is_some_and(|c| c.height() >= 2 * c.width())
    };
    let upright: Vec<usize> = (0..found.len())
        .filter(|&i| upright_line(&found[i].1))
        .collect();
    // Chains of upright pieces: each joins the one above it when they overlap across and the
    // white between them is under CHAIN_GAP_EM.
    let mut group: Vec<usize> = (0..upright.len()).collect();
    let mut by_top = upright.clone();
    by_top.sort_by(|&a, &b| found[a].1.bbox.y0.total_cmp(&found[b].1.bbox.y0));
    for (n, &i) in by_top.iter().enumerate() {
        let b = found[i].1.bbox;
        let above = by_top[..n].iter().rev().find(|&&j| {
            let a = found[j].1.bbox;
            a.x0 <= b.x1 + 1.0 && b.x0 <= a.x1 + 1.0 && b.y0 - a.y1 < CHAIN_GAP_EM * em
        });
        if let Some(&j) = above {
            let (gi, gj) = (upright.binary_search(&i), upright.binary_search(&j));
            if let (Ok(gi), Ok(gj)) = (gi, gj) {
                group[gi] = group[gj];
            }
        }
    }
    // A chain is a rule when it runs over BROKEN_RULE_EM and one of its "lines" has letters
    // reaching over more than any letter does (one piece, or pieces stacked in the one narrow
    // column: text sets its letters side by side), or when its letters cover most of its length
    // (a shadow's edge worn into dashes; a margin's numbers or lone letters stand a line apart).
    let is_rule = |g: usize| {
        let members = (0..upright.len()).filter(|&k| group[k] == g);
        let (top, bottom, tallest, covered) =
            members.fold((f32::MAX, f32::MIN, 0.0f32, 0.0f32), |(t, b, h, sum), k| {
                let l = &found[upright[k]].1;
                let letters = l
                    .comps
                    .iter()
                    .filter(|&&c| !ink.is_mark[c])
                    .map(|&c| (list[c].y0, list[c].y1))
                    .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))
                    .map_or(0.0, |(y0, y1)| (y1 - y0) as f32);
                (
                    t.min(l.bbox.y0),
                    b.max(l.bbox.y1),
                    h.max(letters),
                    sum + letters,
                )
            });
        let span = bottom - top;
        span >= BROKEN_RULE_EM * em
            && (tallest >= TALLER_THAN_LETTERS_EM * em || covered >= RULE_COVER * span)
    };
    let rule: Vec<bool> = (0..upright.len()).map(|k| is_rule(group[k])).collect();
    let mut posts = Vec::new();
    let mut text = Vec::new();
    for (i, l) in found.into_iter().enumerate() {
        match upright.binary_search(&i) {
            Ok(k) if rule[k] => posts.push(l.1),
            _ => text.push(l),
        }
    }
    (posts, text)
}

/// Reading-order group: top furniture, main text, footnotes, bottom page number, margin notes.
fn order_group(kind: RegionKind, y: f32, mid_y: f32) -> u8 {
    match kind {
        RegionKind::Header => 0,
        RegionKind::PageNumber if y < mid_y => 0,
        RegionKind::Body | RegionKind::Title => 1,
        RegionKind::Footnote => 2,
        RegionKind::PageNumber => 3,
        RegionKind::Margin => 4,
    }
}

fn build_regions(
    page: &CleanPage,
    found: &[(usize, FoundLine)],
    kinds: &[RegionKind],
    mid_y: f32,
    em: f32,
) -> PageLayout {
    let mut order: Vec<usize> = (0..found.len()).collect();
    let key = |i: usize| {
        let (z, l) = &found[i];
        let g = order_group(kinds[i], l.bbox.y0, mid_y);
        // Top furniture right to left; everything else by zone, then top to bottom.
        let minor = if g == 0 || g == 3 {
            -l.bbox.x1
        } else {
            *z as f32
        };
        (g, minor, l.baseline_y)
    };
    order.sort_by(|&a, &b| {
        key(a)
            .partial_cmp(&key(b))
            .unwrap_or(std::cmp::Ordering::Equal)
    });
    let mut regions: Vec<Region> = Vec::new();
    let mut last: Option<(usize, RegionKind)> = None;
    for i in order {
        let (z, fl) = &found[i];
        let line = make_line(page, fl, kinds[i]);
        match regions.last_mut() {
            Some(r) if last == Some((*z, kinds[i])) => {
                r.clean_box = r.clean_box.union(&fl.bbox);
                r.bbox = page.rect_to_original(&r.clean_box);
                r.lines.push(line);
            }
            _ => regions.push(Region {
                class: RegionClass::Text(kinds[i]),
                bbox: line.bbox,
                clean_box: fl.bbox,
                lines: vec![line],
            }),
        }
        last = Some((*z, kinds[i]));
    }
    PageLayout { regions, em_px: em }
}

fn make_line(page: &CleanPage, fl: &FoundLine, kind: RegionKind) -> Line {
    let b = fl.bbox;
    Line {
        kind,
        bbox: page.rect_to_original(&b),
        quad: page.quad_to_original(&b),
        baseline: [
            page.to_original(b.x1, fl.baseline_y),
            page.to_original(b.x0, fl.baseline_y),
        ],
        x_height_px: fl.x_height_px,
        clean_box: b,
        clean_baseline_y: fl.baseline_y,
    }
}

#[cfg(test)]
mod tests {
    use super::drawn::{draw_page, NumberAt, PagePlan};
    use super::*;
    use crate::cleanup::{clean, CleanupConfig};
    use crate::page::PageImage;

    fn font() -> Vec<u8> {
        let path = concat!(
            env!("CARGO_MANIFEST_DIR"),
            "/tests/data/layout/DejaVuSans-Arabic-subset.ttf"
        );
        std::fs::read(path).expect("test font")
    }

    fn plan(columns: u32, leading: f32, seed: u64) -> PagePlan {
        PagePlan {
            width_px: 874, // A5 at 150 dpi (ISO 216: 148 × 210 mm)
            height_px: 1240,
            dpi: 150.0,
            columns,
            column_rule: columns == 2,
            header: true,
            number: NumberAt::Bottom,
            title: columns == 2,
            footnotes: 2,
            margin_notes: 0,
            body_pt: 12.0,
            leading,
            seed,
        }
    }

    fn run(p: &PagePlan) -> (drawn::DrawnPage, PageLayout) {
        let d = draw_page(&font(), p).expect("font loads");
        let layout = analyze_image(&d.image, p.dpi);
        (d, layout)
    }

    /// Clean-up and analysis of a page image with the default settings.
    fn analyze_image(image: &GrayImage, dpi: f32) -> PageLayout {
        let page = clean(
            &PageImage::new(image.clone(), dpi, dpi),
            &CleanupConfig::default(),
        );
        analyze(&page, &LayoutConfig::default())
    }

    /// Paint the rectangle `[x0, x0 + w) × [y0, y0 + h)` black.
    fn fill(image: &mut GrayImage, x0: u32, y0: u32, w: u32, h: u32) {
        for y in y0..y0 + h {
            for x in x0..x0 + w {
                image.put_pixel(x, y, image::Luma([0]));
            }
        }
    }

    #[test]
    fn two_columns_read_right_column_first_with_kinds() {
        // Truth is what we drew: header, title, right column, left column, footnotes, page number.
        let (d, layout) = run(&plan(2, 1.8, 3));
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len());
        for (i, (f, t)) in found.iter().zip(&d.lines).enumerate() {
            assert!(
                f.bbox.iou(&t.ink_box) >= 0.7,
                "line {i}: {:?} vs {:?}",
                f.bbox,
                t.ink_box
            );
            assert_eq!(f.kind, t.kind, "line {i}: {:?} vs {:?}", f.bbox, t.ink_box);
        }
        assert!(
            layout
                .regions
                .iter()
                .any(|r| r.class == RegionClass::Separator),
            "footnote rule and column rule"
        );
    }

    #[test]
    fn a_rule_broken_into_dashes_is_a_separator_not_a_line() {
        // A one-column page with a running header; under the header, a rule across the text
        // worn into dashes 40 px long and 2 px high with 6 px breaks (each too short to be a
        // rule by itself). The dashes make no line, and the header stays a header.
        let p = plan(1, 1.8, 5);
        let mut d = draw_page(&font(), &p).expect("font loads");
        assert_eq!(d.lines[0].kind, RegionKind::Header);
        let y = ((d.lines[0].ink_box.y1 + d.lines[1].ink_box.y0) / 2.0) as u32;
        let (x0, x1) = (d.lines[1].ink_box.x0 as u32, d.lines[1].ink_box.x1 as u32);
        for x in (x0..x1).step_by(46) {
            fill(&mut d.image, x, y, 40.min(x1 - x), 2);
        }
        let layout = analyze_image(&d.image, p.dpi);
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len(), "{found:?}");
        assert_eq!(found[0].kind, RegionKind::Header);
        assert!(layout
            .regions
            .iter()
            .any(|r| r.class == RegionClass::Separator && (r.clean_box.y0 - y as f32).abs() < 4.0));
    }

    #[test]
    fn a_rule_worn_into_dashes_close_over_a_line_does_not_stretch_its_box() {
        // Under the running header, a rule worn into dashes 14 px long and 2 px high with 10 px
        // breaks, and a 2 × 1 px crumb in one break: each dash alone is a hairline too short
        // for a rule, and the row stands a third of the first line's height over its ink, nearer
        // to it than to the header. The first line's box keeps to its own ink.
        let p = plan(1, 1.8, 5);
        let mut d = draw_page(&font(), &p).expect("font loads");
        let first = d.lines[1].ink_box;
        let y = (first.y0 - first.height() / 3.0) as u32;
        assert!(y as f32 > d.lines[0].ink_box.y1 + 2.0);
        let (x0, x1) = (first.x0 as u32 + 30, first.x1 as u32 - 30);
        for x in (x0..x1).step_by(24) {
            fill(&mut d.image, x, y, 14.min(x1 - x), 2);
        }
        fill(&mut d.image, x0 + 17, y, 2, 1);
        let layout = analyze_image(&d.image, p.dpi);
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len(), "{found:?}");
        assert!(
            found[1].bbox.y0 >= first.y0 - 2.0,
            "{:?} vs ink {first:?}",
            found[1].bbox
        );
        assert!(found[1].bbox.iou(&first) >= 0.7);
    }

    #[test]
    fn a_speck_well_over_an_alef_is_dust_but_a_mark_close_over_it_is_kept() {
        // A dot-sized speck (3 × 3 px) over the tallest upright stroke of the third line: 9 px
        // over its top (about half a letter height; within the reach of a mark over its letter,
        // but far above the letters around it) it is dust and the line's box keeps to its ink;
        // 4 px over it, where a hamza or a fatha stands, it is the line's.
        let p = plan(1, 1.8, 5);
        let drawn = draw_page(&font(), &p).expect("font loads");
        let ink = drawn.lines[2].ink_box;
        // The column whose ink starts highest with a stroke at least 12 px long (an alef or lam).
        let (mut x_top, mut top) = (0u32, u32::MAX);
        for x in ink.x0 as u32..ink.x1 as u32 {
            let dark = |y: u32| drawn.image.get_pixel(x, y)[0] < 128;
            let Some(t) = (ink.y0 as u32..ink.y1 as u32).find(|&y| dark(y)) else {
                continue;
            };
            if (t..ink.y1 as u32).take_while(|&y| dark(y)).count() >= 12 && t < top {
                (x_top, top) = (x, t);
            }
        }
        assert!(top < u32::MAX, "the line has an upright stroke");
        let box_top = |gap: u32| {
            let mut d = drawn.clone();
            fill(&mut d.image, x_top - 1, top - gap - 3, 3, 3);
            let layout = analyze_image(&d.image, p.dpi);
            let found: Vec<&Line> = layout.lines().collect();
            assert_eq!(found.len(), d.lines.len());
            found[2].bbox.y0
        };
        assert!(
            box_top(9) >= ink.y0 - 1.0,
            "{} vs ink {}",
            box_top(9),
            ink.y0
        );
        assert!(
            box_top(4) <= (top - 6) as f32,
            "{} vs speck {}",
            box_top(4),
            top - 7
        );
    }

    #[test]
    fn a_shadow_edge_broken_into_upright_pieces_is_a_separator_not_margin_lines() {
        // The edge of a scan's shadow in the outer margin, worn into upright pieces 4 px wide:
        // one 70 px long, then 8 to 20 px long with 12 px breaks (each short one could be an
        // alef). They make no line; the page's lines are all found.
        let p = plan(1, 1.8, 5);
        let mut d = draw_page(&font(), &p).expect("font loads");
        let x0 = (d.lines[1].ink_box.x0 as u32).saturating_sub(60).max(10);
        let top = d.lines[1].ink_box.y0 as u32;
        let mut pieces = vec![(top, 70)];
        let mut y = top + 82;
        for len in [8, 20, 12, 16, 9, 20] {
            pieces.push((y, len));
            y += len + 12;
        }
        for (y0, len) in pieces {
            fill(&mut d.image, x0, y0, 4, len);
        }
        let layout = analyze_image(&d.image, p.dpi);
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len(), "{found:?}");
        let edge = layout.regions.iter().filter(|r| {
            r.class == RegionClass::Separator && (r.clean_box.x0 - x0 as f32).abs() < 4.0
        });
        assert!(edge.count() >= 1, "{:?}", layout.regions);
    }

    /// A white 900 × 300 page at 300 dpi with two rows of letters 20 × 30 px (an em of 45 px),
    /// at y 20 and y 220.
    fn two_letter_rows() -> GrayImage {
        let mut img = GrayImage::from_pixel(900, 300, image::Luma([255]));
        for x in (20..800).step_by(40) {
            fill(&mut img, x, 20, 20, 30);
            fill(&mut img, x, 220, 20, 30);
        }
        img
    }

    /// The piece whose box starts at (`x`, `y`).
    fn piece_at(list: &[Component], x: u32, y: u32) -> usize {
        (0..list.len())
            .find(|&c| list[c].x0 == x && list[c].y0 == y)
            .expect("a piece there")
    }

    #[test]
    fn a_short_dash_between_pieces_of_a_rule_is_rule_but_a_flat_stroke_elsewhere_is_text() {
        // At 300 dpi, letters 20 x 30 px (an em of 45 px). A rule worn into two long pieces
        // (250 px, over three ems) with a 60-px dash between them, 4 px from each; the same
        // dash alone two ems under the rule, and one at the rule's height but well past its end.
        let mut img = two_letter_rows();
        fill(&mut img, 20, 100, 250, 3);
        fill(&mut img, 274, 100, 60, 3);
        fill(&mut img, 338, 100, 250, 3);
        fill(&mut img, 274, 190, 60, 3);
        fill(&mut img, 700, 100, 60, 3);
        let comps = find_components(&img);
        let sorted = sort_components(&comps.list, 300.0);
        let at = |x: u32, y: u32| piece_at(&comps.list, x, y);
        assert!(
            sorted.rules.contains(&at(274, 100)),
            "the dash between is rule"
        );
        assert!(sorted.rules.contains(&at(20, 100)) && sorted.rules.contains(&at(338, 100)));
        assert!(
            sorted.text.contains(&at(274, 190)),
            "a dash under the rule is text"
        );
        assert!(
            sorted.text.contains(&at(700, 100)),
            "a dash far past the rule is text"
        );
    }

    #[test]
    fn stubs_carrying_on_a_rule_at_its_thickness_are_rule_but_a_thicker_stroke_is_text() {
        // At 300 dpi, letters 20 x 30 px (an em of 45 px). A 2-px rule over x 300..800 and, to
        // its left, stubs 2 px thick and 5 px long every 16 px (a rule drawn dashed or worn):
        // too short to be flat dashes by themselves (5 times as long as thick), but no thicker
        // than the rule they carry on. A stroke 4 px thick and 10 long beyond them, at their
        // height (a fatha's box, thin enough to be a rule's piece by the tenth of an em) stays
        // text.
        let mut img = two_letter_rows();
        fill(&mut img, 300, 100, 500, 2);
        for x in (140..300).step_by(16) {
            fill(&mut img, x, 100, 5, 2);
        }
        fill(&mut img, 120, 99, 10, 4);
        let comps = find_components(&img);
        let sorted = sort_components(&comps.list, 300.0);
        let at = |x: u32, y: u32| piece_at(&comps.list, x, y);
        for x in (140..300).step_by(16) {
            assert!(
                sorted.rules.contains(&at(x, 100)),
                "the stub at {x} is rule"
            );
        }
        assert!(
            sorted.text.contains(&at(120, 99)),
            "a thicker stroke is text"
        );
    }

    #[test]
    fn a_shadow_edge_worn_into_short_dashes_is_a_separator_not_margin_lines() {
        // As above, but no piece is longer than half an em (25 px here): dashes 3 px wide,
        // 9 to 16 px long with 4 px breaks, over about seven ems. Stacked in one narrow column
        // they reach over more than a letter does; text sets its letters side by side.
        let p = plan(1, 1.8, 5);
        let mut d = draw_page(&font(), &p).expect("font loads");
        let x0 = (d.lines[1].ink_box.x0 as u32).saturating_sub(60).max(10);
        let mut y = d.lines[1].ink_box.y0 as u32;
        for len in [14, 10, 16, 12, 15, 9, 13, 16, 11, 14] {
            fill(&mut d.image, x0, y, 3, len);
            y += len + 4;
        }
        let layout = analyze_image(&d.image, p.dpi);
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len(), "{found:?}");
    }

    #[test]
    fn dots_and_harakat_stay_with_their_line_when_lines_are_tight() {
        // Leading 1.3: dots under one line nearly touch the hamza and harakat over the next.
        let (d, layout) = run(&plan(1, 1.3, 8));
        let found: Vec<&Line> = layout.lines().collect();
        assert_eq!(found.len(), d.lines.len());
        let w = d.image.width() as usize;
        let mut inside = vec![0u32; d.lines.len()];
        for (i, &l) in d.labels.iter().enumerate() {
            if l > 0 {
                let (x, y) = ((i % w) as f32 + 0.5, (i / w) as f32 + 0.5);
                let b = found[l as usize - 1].bbox;
                inside[l as usize - 1] += (x >= b.x0 && x <= b.x1 && y >= b.y0 && y <= b.y1) as u32;
            }
        }
        for (k, t) in d.lines.iter().enumerate() {
            let frac = inside[k] as f32 / t.ink_px as f32;
            assert!(frac >= 0.98, "line {k} holds only {frac:.3} of its ink");
        }
    }

    #[test]
    fn line_image_keeps_a_margin() {
        let (_, layout) = run(&plan(1, 1.8, 5));
        let d = draw_page(&font(), &plan(1, 1.8, 5)).expect("font");
        let page = clean(
            &PageImage::new(d.image, 150.0, 150.0),
            &CleanupConfig::default(),
        );
        let line = layout.lines().nth(1).expect("a body line");
        let img = line_image(&page, line);
        assert!(img.width() as f32 >= line.clean_box.width() + 2.0);
        assert!(img.height() as f32 >= line.clean_box.height() + 2.0);
        // The margin is paper: the first and last rows of the crop are (almost) white.
        let top_min = (0..img.width())
            .map(|x| img.get_pixel(x, 0).0[0])
            .min()
            .unwrap();
        assert!(top_min > 128, "crop's top row has ink ({top_min})");
    }
}
