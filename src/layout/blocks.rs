//! Zones of text by whitespace (columns right to left, bands top to bottom), and the kind of each line:
//! header, page number, title, body, footnote, margin note.
//!
//! Zones come from a recursive cut on the boxes of the text components (Nagy & Seth 1984, "Hierarchical
//! representation of optically scanned documents", ICPR): a gap running through the whole zone from
//! top to bottom splits it into columns (right one first); otherwise the zone is cut into bands at its
//! empty rows, and neighbouring bands are joined again while joining keeps every column gutter of
//! both and the gap between them is not wide — so two columns whose lines happen to align are not
//! read across, and a full-width title or footnote is not read as part of a column.

use super::components::Component;
use crate::text::RegionKind;

/// Sizes that steer the cut, in pixels.
#[derive(Debug, Clone, Copy)]
pub struct CutSizes {
    /// Narrowest column gutter.
    pub gutter_px: f32,
    /// Gap between bands that always separates them.
    pub wide_gap_px: f32,
}

/// Split text components into zones in reading order (each zone a list of component indices).
/// Marks (`is_mark`) follow the letters nearest to them and never open a band of their own.
pub fn zones(list: &[Component], is_mark: &[bool], items: Vec<usize>, sizes: CutSizes) -> Vec<Vec<usize>> {
    let mut out = Vec::new();
    let ctx = Ctx { list, is_mark, sizes };
    split(&ctx, items, 0, &mut out);
    out
}

struct Ctx<'a> {
    list: &'a [Component],
    is_mark: &'a [bool],
    sizes: CutSizes,
}

fn split(ctx: &Ctx, items: Vec<usize>, depth: u32, out: &mut Vec<Vec<usize>>) {
    let (list, sizes) = (ctx.list, ctx.sizes);
    if items.len() < 2 || depth > 40 {
        if !items.is_empty() {
            out.push(items);
        }
        return;
    }
    let cols = split_columns(list, &items, sizes.gutter_px);
    if cols.len() > 1 {
        for c in cols {
            split(ctx, c, depth + 1, out);
        }
        return;
    }
    let groups = split_bands(ctx, &items);
    if groups.len() > 1 {
        for g in groups {
            split(ctx, g, depth + 1, out);
        }
        return;
    }
    out.push(items);
}

/// Occupied intervals of `[lo, hi)` spans, merged when they touch; sorted.
fn occupied(mut spans: Vec<(u32, u32)>) -> Vec<(u32, u32)> {
    spans.sort_unstable();
    let mut out: Vec<(u32, u32)> = Vec::new();
    for (a, b) in spans {
        match out.last_mut() {
            Some(l) if a <= l.1 => l.1 = l.1.max(b),
            _ => out.push((a, b)),
        }
    }
    out
}

/// Gaps at least `min` wide between occupied intervals.
fn gaps(occ: &[(u32, u32)], min: f32) -> Vec<(u32, u32)> {
    occ.windows(2).filter(|w| (w[1].0 - w[0].1) as f32 >= min).map(|w| (w[0].1, w[1].0)).collect()
}

/// Columns split at full-height gutters, right column first.
fn split_columns(list: &[Component], items: &[usize], gutter: f32) -> Vec<Vec<usize>> {
    let occ = occupied(items.iter().map(|&c| (list[c].x0, list[c].x1)).collect());
    let g = gaps(&occ, gutter);
    if g.is_empty() {
        return vec![items.to_vec()];
    }
    let mut cols: Vec<Vec<usize>> = vec![Vec::new(); g.len() + 1];
    for &c in items {
        let k = g.iter().filter(|gap| list[c].x0 >= gap.1).count();
        cols[k].push(c);
    }
    cols.reverse();
    cols
}

/// A band of rows: its letters (bodies) and all its items.
struct Band {
    y0: u32,
    y1: u32,
    bodies: Vec<usize>,
    items: Vec<usize>,
}

/// Bands at rows empty of letters, joined back while joining keeps the gutters and the gap is not wide.
fn split_bands(ctx: &Ctx, items: &[usize]) -> Vec<Vec<usize>> {
    let list = ctx.list;
    let bodies: Vec<usize> = items.iter().copied().filter(|&c| !ctx.is_mark[c]).collect();
    let occ = occupied(bodies.iter().map(|&c| (list[c].y0, list[c].y1)).collect());
    if occ.len() < 2 {
        return vec![items.to_vec()];
    }
    let mut bands: Vec<Band> =
        occ.iter().map(|&(a, b)| Band { y0: a, y1: b, bodies: Vec::new(), items: Vec::new() }).collect();
    for &c in items {
        let cy = list[c].cy();
        let dist = |b: &Band| (b.y0 as f32 - cy).max(cy - b.y1 as f32).max(0.0);
        let k = (0..bands.len()).min_by(|&i, &j| dist(&bands[i]).total_cmp(&dist(&bands[j]))).unwrap_or(0);
        bands[k].items.push(c);
        if !ctx.is_mark[c] {
            bands[k].bodies.push(c);
        }
    }
    let mut groups: Vec<Band> = Vec::new();
    for b in bands {
        let join = match groups.last() {
            Some(g) => ((b.y0 - g.y1) as f32) < ctx.sizes.wide_gap_px && keeps_gutters(list, g, &b, ctx.sizes.gutter_px),
            None => false,
        };
        if join {
            let g = groups.last_mut().expect("checked");
            g.y1 = b.y1;
            g.items.extend(b.items);
            g.bodies.extend(b.bodies);
        } else {
            groups.push(b);
        }
    }
    groups.into_iter().map(|g| g.items).collect()
}

/// True when the joined band has at least as many gutters as each part (letters only).
fn keeps_gutters(list: &[Component], a: &Band, b: &Band, gutter: f32) -> bool {
    let count = |items: &mut dyn Iterator<Item = &usize>| {
        let occ = occupied(items.map(|&c| (list[c].x0, list[c].x1)).collect());
        gaps(&occ, gutter).len()
    };
    let na = count(&mut a.bodies.iter());
    let nb = count(&mut b.bodies.iter());
    let nj = count(&mut a.bodies.iter().chain(b.bodies.iter()));
    nj >= na.max(nb)
}

/// What the classifier knows about one line.
#[derive(Debug, Clone, Copy)]
pub struct LineFacts {
    /// Box `(x0, y0, x1, y1)`.
    pub bbox: (f32, f32, f32, f32),
    /// Type size measure of the line (see [`super::lines::FoundLine::size_px`]).
    pub size_px: f32,
    /// Components that are not marks.
    pub bodies: usize,
    /// Zone index.
    pub zone: usize,
}

/// Page-level facts for classification.
#[derive(Debug, Clone, Copy)]
pub struct PageFacts {
    /// Typical type size measure of the main text.
    pub body_size_px: f32,
    /// Typical ink height of a main-text line.
    pub body_line_h: f32,
    /// Main text block `(x0, x1)`.
    pub main_x: (f32, f32),
    /// Top of the first and bottom of the last main-text line.
    pub main_y: (f32, f32),
    /// Rows of horizontal rules (centre y, x0, x1).
    pub rule_ys: [Option<(f32, f32, f32)>; 4],
    /// Em estimate, pixels.
    pub em_px: f32,
}

/// Kind of each line, by size and place.
pub fn classify(lines: &[LineFacts], page: &PageFacts, zone_extent: &[(f32, f32)]) -> Vec<RegionKind> {
    let mut kinds: Vec<RegionKind> = lines.iter().map(|l| first_guess(l, page, zone_extent)).collect();
    // Footnotes: below a rule lying under main text, or small type after the main text.
    for (l, k) in lines.iter().zip(kinds.iter_mut()) {
        if *k != RegionKind::Body {
            continue;
        }
        let below_rule = page.rule_ys.iter().flatten().any(|&(ry, rx0, rx1)| {
            ry > page.main_y.0 && l.bbox.1 > ry && l.bbox.0 < rx1 && l.bbox.2 > rx0
        });
        if below_rule || (l.bbox.1 > page.main_y.1 && l.size_px < 0.85 * page.body_size_px) {
            *k = RegionKind::Footnote;
        }
    }
    kinds
}

fn first_guess(l: &LineFacts, page: &PageFacts, zone_extent: &[(f32, f32)]) -> RegionKind {
    let (x0, y0, x1, y1) = l.bbox;
    let above = y1 <= page.main_y.0 + 0.2 * page.em_px;
    let below = y0 >= page.main_y.1 - 0.2 * page.em_px;
    if (above || below) && x1 - x0 < 2.5 * page.em_px && l.bodies <= 6 {
        return RegionKind::PageNumber;
    }
    let tall = l.size_px > 1.3 * page.body_size_px && y1 - y0 > 1.25 * page.body_line_h;
    if above && !tall {
        return RegionKind::Header;
    }
    // A narrow zone beside the main text block: margin notes or marginal line numbers.
    let (zx0, zx1) = zone_extent[l.zone];
    let main_w = page.main_x.1 - page.main_x.0;
    let beside = zx1 <= page.main_x.0 + 0.05 * main_w || zx0 >= page.main_x.1 - 0.05 * main_w;
    if !above && !below && (zx1 - zx0) < 0.35 * main_w && beside {
        return RegionKind::Margin;
    }
    if tall {
        return RegionKind::Title;
    }
    RegionKind::Body
}

#[cfg(test)]
mod tests {
    use super::*;

    fn comp(x0: u32, y0: u32, x1: u32, y1: u32) -> Component {
        Component { x0, y0, x1, y1, area: (x1 - x0) * (y1 - y0) }
    }

    #[test]
    fn aligned_columns_are_read_right_column_first() {
        // Two columns of three aligned "lines" each, a full-width title above.
        let mut list = vec![comp(10, 0, 190, 20)];
        for i in 0..3 {
            let y = 40 + i * 30;
            list.push(comp(110, y, 190, y + 15)); // right column
            list.push(comp(10, y, 90, y + 15)); // left column
        }
        let sizes = CutSizes { gutter_px: 15.0, wide_gap_px: 60.0 };
        let z = zones(&list, &vec![false; list.len()], (0..list.len()).collect(), sizes);
        let first_x: Vec<u32> = z.iter().map(|zone| list[zone[0]].x0).collect();
        assert_eq!(first_x, vec![10, 110, 10], "title, right column, left column");
        assert_eq!(z[1].len(), 3);
    }
}
