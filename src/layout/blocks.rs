//! Zones of text by whitespace (columns right to left, bands top to bottom), and the kind of each line:
//! header, page number, title, body, footnote, margin note.
//!
//! Zones come from a recursive cut on the boxes of the text components (Nagy & Seth 1984, "Hierarchical
//! representation of optically scanned documents", ICPR): a gap running through the whole zone from
//! top to bottom splits it into columns (right one first) when the rows beside it confirm it as a
//! gutter; otherwise the zone is cut into bands at its empty rows, and neighbouring bands are joined
//! again while they keep a column gutter they share (or neither has one) and the gap between them
//! is not wide — so two columns whose lines happen to align are not read across, a full-width
//! title or footnote is not read as part of a column, and the wide word spaces of justified lines
//! are never taken for gutters.

use super::components::Component;
use super::lines::BodyGrid;
use crate::text::RegionKind;

/// Sizes that steer the cut, in pixels.
#[derive(Debug, Clone, Copy)]
pub struct CutSizes {
    /// Narrowest column gutter.
    pub gutter_px: f32,
    /// Gap between bands that always separates them.
    pub wide_gap_px: f32,
    /// A gap this wide splits even a single line (a header's title and its page number).
    pub lone_gap_px: f32,
    /// The page's em.
    pub em_px: f32,
}

/// Split text components into zones in reading order (each zone a list of component indices).
/// Small pieces (`is_small`: dots, hamza, harakat, also of larger type) follow the letters nearest to
/// them and never open a band of their own. `rules` are the page's horizontal rules as
/// `(y, x0, x1)`: bands on the two sides of a rule that spans under both never join.
pub fn zones(
    list: &[Component],
    is_small: &[bool],
    items: Vec<usize>,
    sizes: CutSizes,
    rules: &[(u32, u32, u32)],
) -> Vec<Vec<usize>> {
    let mut out = Vec::new();
    let ctx = Ctx {
        list,
        is_small,
        sizes,
        rules,
    };
    split(&ctx, items, 0, &mut out);
    out
}

struct Ctx<'a> {
    list: &'a [Component],
    is_small: &'a [bool],
    sizes: CutSizes,
    rules: &'a [(u32, u32, u32)],
}

fn split(ctx: &Ctx, items: Vec<usize>, depth: u32, out: &mut Vec<Vec<usize>>) {
    if items.len() < 2 || depth > 40 {
        if !items.is_empty() {
            out.push(items);
        }
        return;
    }
    if let Some((head, rest)) = title_over_gutter(ctx, &items) {
        split(ctx, head, depth + 1, out);
        split(ctx, rest, depth + 1, out);
        return;
    }
    let cols = split_columns(ctx, &items, &column_gutters(ctx, &items));
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
    occ.windows(2)
        .filter(|w| (w[1].0 - w[0].1) as f32 >= min)
        .map(|w| (w[0].1, w[1].0))
        .collect()
}

/// Rows of ink under 0.4 em high, or under 0.4 of the height of the next row above or below,
/// lying within [`THIN_ROW_NEAR_EM`] of that row join it: a row of harakat stacked on hamzas over
/// a line, or of a large title's dots, too big to count as small pieces, is part of that line and
/// opens no band of its own.
fn stick_thin_rows(occ: Vec<(u32, u32)>, em: f32) -> Vec<(u32, u32)> {
    let height = |r: (u32, u32)| (r.1 - r.0) as f32;
    let thin = |a: (u32, u32), b: (u32, u32)| {
        let (lo, hi) = (height(a).min(height(b)), height(a).max(height(b)));
        lo < 0.4 * em || lo < 0.4 * hi
    };
    let near =
        |a: (u32, u32), b: (u32, u32)| (b.0.saturating_sub(a.1) as f32) <= THIN_ROW_NEAR_EM * em;
    let mut out: Vec<(u32, u32)> = Vec::new();
    for r in occ {
        match out.last_mut() {
            Some(l) if near(*l, r) && thin(*l, r) => l.1 = r.1,
            _ => out.push(r),
        }
    }
    out
}

/// Most white, in ems, between a thin row and the row it belongs to. Measured on 200 + 200
/// generated pages (seed 505): at 0.15 em a Thabit line's one mark too large to count as small,
/// 4 px over the line (em 25 px), made a band of its own, which kept the line's 6-em gap
/// between two justified words from being bridged by the lines around: the line was cut in
/// two zones on both the clean and the damaged page. At 0.2 em line F1 0.9990 → 0.9994 clean,
/// 0.9907 → 0.9908 damaged; pages in order unchanged (the page's title is out for another
/// reason).
const THIN_ROW_NEAR_EM: f32 = 0.2;

/// Columns split at full-height gutters, right column first.
///
/// A gap through the zone is a gutter only when the rows on its two sides confirm it
/// ([`rows_confirm`]), or when it is very wide (`sizes.lone_gap_px`): the wide word spaces of one
/// justified line, or of a full line over a short paragraph end, must not cut that line into word
/// groups.
fn split_columns(ctx: &Ctx, items: &[usize], g: &[(u32, u32)]) -> Vec<Vec<usize>> {
    let list = ctx.list;
    if g.is_empty() {
        return vec![items.to_vec()];
    }
    let mut cols: Vec<Vec<usize>> = vec![Vec::new(); g.len() + 1];
    for &c in items {
        let cx = (list[c].x0 + list[c].x1) / 2;
        let k = g.iter().filter(|gap| cx >= (gap.0 + gap.1) / 2).count();
        cols[k].push(c);
    }
    cols.reverse();
    cols
}

/// The gutters of [`split_columns`]: gaps through the zone at least a gutter wide, confirmed by
/// the rows beside them or very wide.
fn column_gutters(ctx: &Ctx, items: &[usize]) -> Vec<(u32, u32)> {
    // Letters only: a speck or a stray dot in a gutter does not close it.
    let occ = x_occupied(ctx, items.iter().copied());
    let narrow = NARROW_GUTTER_EM * ctx.sizes.em_px;
    gaps(&occ, narrow.min(ctx.sizes.gutter_px))
        .into_iter()
        .filter(|&g| {
            let w = (g.1 - g.0) as f32;
            w >= ctx.sizes.lone_gap_px
                || (w >= ctx.sizes.gutter_px && rows_confirm(ctx, items, g))
                || many_rows_confirm(ctx, items, g)
        })
        .collect()
}

/// Occupied y intervals (rows) of the letters (not small pieces) among `items`.
fn y_occupied(ctx: &Ctx, items: impl Iterator<Item = usize>) -> Rows {
    letters_occupied(ctx, items, |c| (c.y0, c.y1))
}

/// Occupied x intervals of the letters (not small pieces) among `items`.
fn x_occupied(ctx: &Ctx, items: impl Iterator<Item = usize>) -> Vec<(u32, u32)> {
    letters_occupied(ctx, items, |c| (c.x0, c.x1))
}

/// Occupied intervals of the letters among `items` on one axis, `span` giving a piece's extent.
fn letters_occupied(
    ctx: &Ctx,
    items: impl Iterator<Item = usize>,
    span: fn(&Component) -> (u32, u32),
) -> Vec<(u32, u32)> {
    occupied(
        items
            .filter(|&c| !ctx.is_small[c])
            .map(|c| span(&ctx.list[c]))
            .collect(),
    )
}

/// Rows of letters on each side of a gutter under a title, for it to part columns. Measured on
/// 200 + 200 generated pages (seed 505): with rows confirming a gutter as [`rows_confirm`] does
/// (two on one side, three on the other) a footnote's full first line over two lines whose word
/// spaces lined up beside three short lines went apart, and the two lines were cut at the spaces
/// (damaged page 18).
const TITLE_COLUMN_ROWS: usize = 3;

/// How far, in ems, a zone's first row must reach into a gutter that the rows under it keep
/// clear, to be a title over the columns: more than a line's end sticks out past a justified
/// column edge (common practice, no source).
const OVER_GUTTER_EM: f32 = 0.3;

/// The zone's first row of letters, with its small pieces, and the rest, when the rows under it
/// have a gutter that their rows confirm and that row stands over it, with letters on both
/// sides of its middle or one across it, reaching [`OVER_GUTTER_EM`] into it: a title centred
/// over two columns. It goes first, whole; cut at the gutter it would become the columns' first
/// lines, and a title across a gutter keeps the columns under it from splitting. Measured on
/// 200 + 200 generated pages (seed 505): a Thabit title of two words, 25 px apart over a 43 px
/// gutter, made the two columns' first lines (clean and damaged page 158); with the rule clean
/// pages in order 98.5 → 99.0 %, damaged 95.5 → 96.0 %, no page lost.
fn title_over_gutter(ctx: &Ctx, items: &[usize]) -> Option<(Vec<usize>, Vec<usize>)> {
    let list = ctx.list;
    let rows = y_occupied(ctx, items.iter().copied());
    if rows.len() < 3 {
        return None;
    }
    let (top, next) = (rows[0], rows[1]);
    // Small pieces go with the row nearer to them.
    let cut = (top.1 + next.0) as f32 / 2.0;
    let (head, rest): (Vec<usize>, Vec<usize>) = items.iter().partition(|&&c| list[c].cy() < cut);
    let title: Vec<&Component> = head
        .iter()
        .filter(|&&c| !ctx.is_small[c])
        .map(|&c| &list[c])
        .collect();
    let reach = OVER_GUTTER_EM * ctx.sizes.em_px;
    // Gutters of columns, with rows of letters on both sides: a gap only very wide (a header's
    // title and its page number) is none, nor are aligned word spaces of two lines beside short
    // ones (under a footnote's full first line).
    let mut columns = column_gutters(ctx, &rest).into_iter().filter(|&h| {
        let (a, b) = side_rows(ctx, &rest, h);
        a.len().min(b.len()) >= TITLE_COLUMN_ROWS
    });
    let over = columns.any(|h| {
        let mid = (h.0 + h.1) as f32 / 2.0;
        let (left, right): (Vec<&&Component>, Vec<&&Component>) =
            title.iter().partition(|c| c.cx() < mid);
        // How far the row's letters on each side reach past the gutter's edge on that side.
        let from_left = left
            .iter()
            .map(|c| c.x1 as f32 - h.0 as f32)
            .fold(0.0, f32::max);
        let from_right = right
            .iter()
            .map(|c| h.1 as f32 - c.x0 as f32)
            .fold(0.0, f32::max);
        let across = title.iter().any(|c| c.x0 < h.0 && c.x1 > h.1);
        ((!left.is_empty() && !right.is_empty()) || across) && from_left.max(from_right) >= reach
    });
    over.then_some((head, rest))
}

/// Whether the rows of letters on the two sides of gap `g` (rows counted as runs of occupied y) make
/// it a gutter: two rows on one side and three on the other, or one beside four (a one-line margin
/// note). Two full lines whose word spaces happen to line up, or a line over a short paragraph end,
/// are not columns. Type whose lines touch (nastaliq's stacked words, deep tails) makes one row
/// of a whole column, so letters standing at least [`TALL_SIDE_EM`] high on both sides of the gap
/// confirm it too.
fn rows_confirm(ctx: &Ctx, items: &[usize], g: (u32, u32)) -> bool {
    let (a, b) = side_rows(ctx, items, g);
    let tall = |r: &[(u32, u32)]| match (r.first(), r.last()) {
        (Some(f), Some(l)) => (l.1 - f.0) as f32 >= TALL_SIDE_EM * ctx.sizes.em_px,
        _ => false,
    };
    let (lo, hi) = (a.len().min(b.len()), a.len().max(b.len()));
    (lo >= 2 && hi >= 3) || (lo >= 1 && hi >= 4) || (tall(&a) && tall(&b))
}

/// Runs of occupied y.
type Rows = Vec<(u32, u32)>;

/// Rows of letters left and right of gap `g`.
fn side_rows(ctx: &Ctx, items: &[usize], g: (u32, u32)) -> (Rows, Rows) {
    let list = ctx.list;
    let rows = |keep: &dyn Fn(&Component) -> bool| {
        y_occupied(ctx, items.iter().copied().filter(|&c| keep(&list[c])))
    };
    (rows(&|c| c.x1 <= g.0), rows(&|c| c.x0 >= g.1))
}

/// Whether gap `g`, narrower than a gutter, is one all the same: white through at least
/// [`NARROW_GUTTER_ROWS`] rows of letters on each side. The em comes from the type's tall
/// letters, and a script face's long strokes make it half as large again as the type's size,
/// so its gutter of 1.5 em measures under a gutter.
fn many_rows_confirm(ctx: &Ctx, items: &[usize], g: (u32, u32)) -> bool {
    let (a, b) = side_rows(ctx, items, g);
    a.len().min(b.len()) >= NARROW_GUTTER_ROWS
}

/// Narrowest gutter, in ems, between columns of many rows. Measured on 200 + 200 generated pages
/// (seed 505): a damaged Vibes page at 200 dpi (em taken as 45 px for type of 29 px) had its two
/// columns 37 px apart, under a title across the gutter, and was read as one column of 89 lines
/// cut in two; with this rule and [`title_over_gutter`] damaged pages in order 96.0 → 96.5 %,
/// line F1 0.9910 → 0.9987; clean pages unchanged (99.0 %, 0.9996).
const NARROW_GUTTER_EM: f32 = 0.6;

/// Rows on each side of a gap narrower than a gutter that make it one.
const NARROW_GUTTER_ROWS: usize = 5;

/// Height in ems of the letters on each side of a gap that makes it a gutter whatever their rows:
/// white through six ems of text on both sides is not a run of aligned word spaces.
const TALL_SIDE_EM: f32 = 6.0;

/// A band of rows: its letters (bodies) and all its items.
struct Band {
    y0: u32,
    y1: u32,
    bodies: Vec<usize>,
    items: Vec<usize>,
}

/// Horizontal reach, in ems, within which a small piece beside a stray piece in its rows goes
/// apart with it: about a word space (common practice, no source).
const STRAY_NEIGHBOUR_EM: f32 = 0.3;

/// Bands at rows empty of letters, joined back while joining keeps the gutters and the gap is not wide.
fn split_bands(ctx: &Ctx, items: &[usize]) -> Vec<Vec<usize>> {
    let list = ctx.list;
    let bodies: Vec<usize> = items
        .iter()
        .copied()
        .filter(|&c| !ctx.is_small[c])
        .collect();
    let occ = stick_thin_rows(
        occupied(bodies.iter().map(|&c| (list[c].y0, list[c].y1)).collect()),
        ctx.sizes.em_px,
    );
    if occ.len() < 2 {
        return vec![items.to_vec()];
    }
    let mut bands: Vec<Band> = occ
        .iter()
        .map(|&(a, b)| Band {
            y0: a,
            y1: b,
            bodies: Vec::new(),
            items: Vec::new(),
        })
        .collect();
    // Small pieces far from every band of letters (a page number of one or two digits in
    // small type) go apart, grouped by the rows they stand in; so do those over or under a band
    // but far from all its letters (a page number centred under a short last line, beside it).
    // Within a band's rows a small piece stays: a lone hamza of spaced-out type. Measured on
    // 200 + 200 generated pages (seed 505): damaged pages in order 88.5 → 89.0 %, line F1
    // 0.9888 → 0.9889; clean pages unchanged (98.0 %, 0.9987; without the band-rows condition
    // a Thabit page's lone hamza became a line of its own).
    let lone = LONE_PIECE_EM * ctx.sizes.em_px;
    let letters = BodyGrid::new(list, &bodies, lone);
    let mut strays: Vec<usize> = Vec::new();
    // Small pieces put with a band from outside its rows, and that band.
    let mut outside: Vec<(usize, usize)> = Vec::new();
    for &c in items {
        let cy = list[c].cy();
        let dist = |b: &Band| (b.y0 as f32 - cy).max(cy - b.y1 as f32).max(0.0);
        let k = (0..bands.len())
            .min_by(|&i, &j| dist(&bands[i]).total_cmp(&dist(&bands[j])))
            .unwrap_or(0);
        let d = dist(&bands[k]);
        if ctx.is_small[c] && (d > lone || (d > 0.0 && !letters.any_within(list, &list[c], lone))) {
            strays.push(c);
            continue;
        }
        if ctx.is_small[c] && d > 0.0 {
            outside.push((c, k));
        }
        bands[k].items.push(c);
        if !ctx.is_small[c] {
            bands[k].bodies.push(c);
        }
    }
    // A small piece outside every band's rows that stands in a stray's rows, within a word
    // space of it, goes apart with it: the digits of a small page number stay one group though
    // one of them reaches letters a little nearer than the others.
    let beside = STRAY_NEIGHBOUR_EM * ctx.sizes.em_px;
    let mut k = 0;
    while k < strays.len() {
        let s = &list[strays[k]];
        let (near_s, rest): (Vec<_>, Vec<_>) = outside.into_iter().partition(|&(c, _)| {
            let m = &list[c];
            let dx = (m.x0 as f32 - s.x1 as f32).max(s.x0 as f32 - m.x1 as f32);
            m.y0 < s.y1 && s.y0 < m.y1 && dx <= beside
        });
        outside = rest;
        for (c, b) in near_s {
            bands[b].items.retain(|&i| i != c);
            strays.push(c);
        }
        k += 1;
    }
    let gutter = ctx.sizes.gutter_px;
    let spans = |b: &Band| -> Vec<(u32, u32)> {
        b.bodies.iter().map(|&c| (list[c].x0, list[c].x1)).collect()
    };
    // A band's gutters are its very wide gaps, its gaps that share a gutter's width of white with
    // gaps of the two other bands of a run of three (a word space, however wide, is closed by the
    // line above or below, and word spaces rarely line up three times; the white beside a short
    // line does not count), and its gaps that the rows within the band confirm ([`rows_confirm`]:
    // columns whose lines do not align run together into one band).
    let n = bands.len();
    let own: Vec<Vec<(u32, u32)>> = bands
        .iter()
        .map(|b| gaps(&occupied(spans(b)), gutter))
        .collect();
    // The white a gap shares with the gaps of the other bands of a run: at least a gutter wide.
    let lasts = |g: (u32, u32), run: std::ops::Range<usize>, k: usize| {
        let mut common = g;
        for b in run.filter(|&b| b != k) {
            let Some(shared) = own[b]
                .iter()
                .map(|h| (h.0.max(common.0), h.1.min(common.1)))
                .filter(|s| s.0 < s.1)
                .max_by_key(|s| s.1 - s.0)
            else {
                return false;
            };
            common = shared;
        }
        (common.1 - common.0) as f32 >= gutter
    };
    let gutters: Vec<Vec<(u32, u32)>> = (0..n)
        .map(|k| {
            own[k]
                .iter()
                .copied()
                .filter(|&g| {
                    (g.1 - g.0) as f32 >= ctx.sizes.lone_gap_px
                        || (k.saturating_sub(2)..=k)
                            .filter(|&j| j + 3 <= n)
                            .any(|j| lasts(g, j..j + 3, k))
                        || rows_confirm(ctx, &bands[k].bodies, g)
                })
                .collect()
        })
        .collect();
    let gutters = drop_rivers(list, gutters, &own, &bands, &ctx.sizes);
    let gutters = keep_justified_lines(gutters, &own, &bands, ctx);
    let beyond = overhangs(&bands, ctx);
    let mut notes: Vec<Vec<usize>> = Vec::new();
    // The last note cut off a band: the middle of its gap, its side, and its bottom row.
    let mut open_note: Option<(u32, bool, u32)> = None;
    let mut groups: Vec<(Band, Vec<(u32, u32)>)> = Vec::new();
    // Small pieces of a band that was all note, for the next band of the text.
    let mut carried: Vec<usize> = Vec::new();
    for ((mut b, mut own), off) in bands.into_iter().zip(gutters).zip(beyond) {
        // A band wholly beyond the gap of the note just above it carries on that note (its
        // lines under the text's last line).
        if let (Some((mid, right, y1)), Some(e)) = (open_note, extent(list, &b)) {
            let beyond_gap = if right { e.0 > mid } else { e.1 < mid };
            if beyond_gap && ((b.y0 - y1) as f32) < ctx.sizes.wide_gap_px {
                notes.last_mut().expect("a note is open").extend(b.items);
                open_note = Some((mid, right, b.y1));
                continue;
            }
        }
        open_note = None;
        b.items.append(&mut carried);
        if let Some((g, right)) = off {
            // The note leaves the band; the band keeps its other gaps.
            let mid = (g.0 + g.1) / 2;
            let in_note = |c: &usize| ((list[*c].x0 + list[*c].x1) / 2 > mid) == right;
            notes.push(b.items.iter().copied().filter(in_note).collect());
            b.items.retain(|c| !in_note(c));
            b.bodies.retain(|c| !in_note(c));
            own.retain(|&h| h != g);
            open_note = Some((mid, right, b.y1));
            if b.bodies.is_empty() {
                // The whole band was the note's; small pieces in its rows left of the note are
                // marks over the text's next line.
                carried = b.items;
                continue;
            }
        }
        let joined = match groups.last() {
            Some((g, g_gutters))
                if ((b.y0 - g.y1) as f32) < ctx.sizes.wide_gap_px && !ruled_apart(ctx, g, &b) =>
            {
                join_gutters(list, g, g_gutters, &b, &own, gutter)
            }
            _ => None,
        };
        match joined {
            Some(kept) => {
                let (g, g_gutters) = groups.last_mut().expect("checked");
                g.y1 = b.y1;
                g.items.extend(b.items);
                g.bodies.extend(b.bodies);
                *g_gutters = kept;
            }
            None => groups.push((b, own)),
        }
    }
    match groups.last_mut() {
        Some((g, _)) => g.items.append(&mut carried),
        None => strays.append(&mut carried),
    }
    let stray_rows = occupied(
        strays
            .iter()
            .map(|&c| (list[c].y0, list[c].y1 + 1))
            .collect(),
    );
    let stray_groups = stray_rows.into_iter().map(|(y0, y1)| {
        strays
            .iter()
            .copied()
            .filter(|&c| list[c].y0 >= y0 && list[c].y1 < y1)
            .collect::<Vec<usize>>()
    });
    groups
        .into_iter()
        .map(|(g, _)| g.items)
        .chain(notes)
        .chain(stray_groups)
        .collect()
}

/// Whether a horizontal rule lies in the white between band `a` and band `b` below it, under
/// letters of both: a footnote rule between the columns' last row and the footnotes. A word
/// space of the first footnote line that happens to line up with the columns' gutter must not
/// join that line to the columns (it would be cut in two at the gutter). Measured on 200 + 200
/// generated pages (seed 505), with a zone of one line no longer counting toward the body type
/// ([`measures`]; a running header set apart by its rule made a damaged page's line of harakat a
/// title): clean pages in order 95.0 → 95.5 %, damaged unchanged (82.5 %).
fn ruled_apart(ctx: &Ctx, a: &Band, b: &Band) -> bool {
    let list = ctx.list;
    let (Some(ea), Some(eb)) = (extent(list, a), extent(list, b)) else {
        return false;
    };
    ctx.rules
        .iter()
        .any(|&(y, x0, x1)| y >= a.y1 && y <= b.y0 && x0 < ea.1.min(eb.1) && x1 > ea.0.max(eb.0))
}

/// Distance in ems from the nearest band of letters beyond which a small piece is no mark of
/// theirs: dots and harakat sit within half an em of their letters.
const LONE_PIECE_EM: f32 = 1.0;

/// Least white between a line and a margin note beyond the main text's edge, in ems: wider than
/// a stretched word space. Measured on generated pages (seed 505): notes 0.9 em and more from
/// their line; at 0.6 em the last words of lines that ran past their neighbours were cut off.
const NOTE_GAP_EM: f32 = 0.8;

/// Narrowest small piece, in ems, that closes the white between a line and a margin note: as
/// wide as a small letter, wider than a dot (common practice, no source).
const NOTE_PIECE_EM: f32 = 0.2;

/// Least white, in ems, between a margin note in smaller type and a line that starts flush at
/// the column's right edge: less than a word space of justified type, more than the white
/// between the pieces of a word (common practice, no source). Measured on 200 + 200 generated
/// pages (seed 505): damaged pages in order 94.5 → 95.5 % (a Marhey note 0.64 em off its line,
/// whose word spaces were 0.6 em; a Handjet note 13 px off), line F1 0.9904 → 0.9907; clean
/// pages unchanged. Without the firm edge (the line and its neighbours starting together):
/// clean 98.5 → 96.0 %; without the smaller type: clean 96.5 %, words of the text cut off.
const START_NOTE_GAP_EM: f32 = 0.4;

/// A margin note is narrower than this share of the main text's measure.
const MARGIN_SHARE: f32 = 0.35;

/// Letters of a band beyond the edge of the lines around it, past a gap wider than a word space
/// and narrower than a lone gap, and narrow next to those lines: a margin note set beside an
/// indented, a short or a zone's last line. The edge comes from up to two lines above and two
/// below, each near the next, of those only the lines at least half as wide as the widest (two
/// at least): a note's own lines under or over the band do not widen it (measured on generated
/// pages, seed 505: clean pages in order 94.5 → 95.0 %). A band whose letters all stand that
/// gap past the column's edges is a note's line by itself (a Handjet page's note ran into the
/// text's next line: clean pages in order 98.0 → 98.5 %, damaged unchanged). Small pieces as
/// wide as small letters count as the line's ([`NOTE_PIECE_EM`]; a Gulzar line's first word
/// of small pieces was taken for a note: damaged pages in order 93.5 → 94.0 %, clean
/// unchanged). Per band: that gap, and whether the note is on the right.
fn overhangs(bands: &[Band], ctx: &Ctx) -> Vec<Option<((u32, u32), bool)>> {
    let near = |a: &Band, b: &Band| (b.y0.saturating_sub(a.y1) as f32) < ctx.sizes.wide_gap_px;
    (0..bands.len())
        .map(|k| {
            let e = extent(ctx.list, &bands[k])?;
            // The text's edges from the lines around: up to two lines on each side, each near the
            // one before it (a paragraph's first line is indented) ...
            let mut around = Vec::new();
            let mut j = k;
            while j > 0 && k - j < 2 && near(&bands[j - 1], &bands[j]) {
                j -= 1;
                around.push(j);
            }
            let mut j = k;
            while j + 1 < bands.len() && j - k < 2 && near(&bands[j], &bands[j + 1]) {
                j += 1;
                around.push(j);
            }
            let widths: Vec<(u32, u32)> = around
                .iter()
                .filter_map(|&j| extent(ctx.list, &bands[j]))
                .collect();
            // ... and of those only the lines of the text, not a note's other lines under or over
            // it: at least half as wide as the widest. Two such lines are needed.
            let widest = widths.iter().map(|w| w.1 - w.0).max()?;
            let text: Vec<(u32, u32)> = widths
                .into_iter()
                .filter(|w| 2 * (w.1 - w.0) >= widest)
                .collect();
            if text.len() < 2 {
                return None;
            }
            let (l, r) = text
                .into_iter()
                .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))?;
            // The column's own edges, from more lines around (the middle of their ends): a note
            // stands past them, not inside a measure that most lines fill.
            let (cl, cr) = column_edges(bands, k, ctx).unwrap_or((l, r));
            // The line may run a little past its neighbours; the note starts clearly past them.
            let slack = (0.5 * ctx.sizes.em_px) as u32;
            let narrow = |w: u32| (w as f32) <= MARGIN_SHARE * (r - l) as f32;
            // A band of letters wholly past the column's edge, a note's gap away, is a note's
            // line by itself: its line of the text is a band of its own (a note set higher than
            // the line beside it, or a note's last line over the text's next line).
            let note_gap = (NOTE_GAP_EM * ctx.sizes.em_px) as u32;
            if narrow(e.1 - e.0) {
                if e.0 >= cr + note_gap {
                    return Some(((cr, e.0), true));
                }
                if e.1 + note_gap <= cl {
                    return Some(((e.1, cl), false));
                }
            }
            // Letters, and small pieces as wide as a small letter: the small letters of
            // nastaliq between a line's last word and its end leave no white for a note; a
            // speck or a dot in the white between a line and its note does not close it.
            let piece = NOTE_PIECE_EM * ctx.sizes.em_px;
            let spans = bands[k]
                .items
                .iter()
                .filter(|&&c| !ctx.is_small[c] || ctx.list[c].width() as f32 >= piece)
                .map(|&c| (ctx.list[c].x0, ctx.list[c].x1));
            // A gap as wide as a lone gap is cut as a gutter anyway (with the note's other
            // lines, which may stand under or over the line).
            let apart = gaps(
                &occupied(spans.collect()),
                START_NOTE_GAP_EM * ctx.sizes.em_px,
            );
            let apart = apart
                .into_iter()
                .filter(|g| ((g.1 - g.0) as f32) < ctx.sizes.lone_gap_px);
            let align = (ALIGN_EM * ctx.sizes.em_px).max(ALIGN_MIN_PX) as u32;
            apart.into_iter().find_map(|g| {
                // Lines start flush at the column's right edge: a gap opening there, narrower
                // than a note's gap, has a note past it when what stands there is set in smaller
                // type than the line (a line set out past indented neighbours starts with a word
                // of the text).
                if ((g.1 - g.0) as f32) < NOTE_GAP_EM * ctx.sizes.em_px {
                    let firm = g.0.abs_diff(cr) <= align && r <= g.0 + align;
                    return (firm && narrow(e.1 - g.1) && set_apart(&bands[k], g, ctx))
                        .then_some((g, true));
                }
                if g.0 <= r + slack && g.1 >= r + slack && g.1 + slack >= cr && narrow(e.1 - g.1) {
                    Some((g, true))
                } else if g.1 + slack >= l
                    && g.0 + slack <= l
                    && g.0 <= cl + slack
                    && narrow(g.0 - e.0)
                {
                    Some((g, false))
                } else {
                    None
                }
            })
        })
        .collect()
}

/// Whether the letters of `band` right of the gap `g` are set in smaller type than those left
/// of it: their tallest under [`NOTE_TYPE`] of the line's tallest. Measured on 200 + 200
/// generated pages (seed 505): ink in two rows or more within the line's height as another sign
/// of a note found no page more.
fn set_apart(band: &Band, g: (u32, u32), ctx: &Ctx) -> bool {
    let tallest = |keep: &dyn Fn(&Component) -> bool| {
        band.bodies
            .iter()
            .map(|&c| &ctx.list[c])
            .filter(|c| keep(c))
            .map(|c| c.height())
            .max()
    };
    match (tallest(&|c| c.x1 <= g.0), tallest(&|c| c.x0 >= g.1)) {
        (Some(line), Some(note)) => (note as f32) < NOTE_TYPE * line as f32,
        _ => false,
    }
}

/// Tallest letter of a margin note set in smaller type, as a share of the tallest letter of the
/// line beside it (common practice, no source).
const NOTE_TYPE: f32 = 0.7;

/// Lines on each side of a band whose ends give the column's edges beside it.
const EDGE_LINES: usize = 4;

/// The left and right edges of the column around band `k`: of up to [`EDGE_LINES`] lines on
/// each side, each near the next, those at least half as wide as the widest (three at least),
/// the middle of their left ends and of their right ends. A paragraph's indented first line or
/// short last line moves one end of one line; most lines of a column reach both edges.
fn column_edges(bands: &[Band], k: usize, ctx: &Ctx) -> Option<(u32, u32)> {
    let near = |a: &Band, b: &Band| (b.y0.saturating_sub(a.y1) as f32) < ctx.sizes.wide_gap_px;
    let mut around = Vec::new();
    let mut j = k;
    while j > 0 && k - j < EDGE_LINES && near(&bands[j - 1], &bands[j]) {
        j -= 1;
        around.extend(extent(ctx.list, &bands[j]));
    }
    let mut j = k;
    while j + 1 < bands.len() && j - k < EDGE_LINES && near(&bands[j], &bands[j + 1]) {
        j += 1;
        around.extend(extent(ctx.list, &bands[j]));
    }
    let widest = around.iter().map(|w| w.1 - w.0).max()?;
    around.retain(|w| 2 * (w.1 - w.0) >= widest);
    if around.len() < 3 {
        return None;
    }
    let mut lefts: Vec<u32> = around.iter().map(|w| w.0).collect();
    let mut rights: Vec<u32> = around.iter().map(|w| w.1).collect();
    lefts.sort_unstable();
    rights.sort_unstable_by(|a, b| b.cmp(a));
    let mid = (around.len() - 1) / 2;
    Some((lefts[mid], rights[mid]))
}

/// Horizontal bounds of a band's letters.
fn extent(list: &[Component], b: &Band) -> Option<(u32, u32)> {
    b.bodies
        .iter()
        .map(|&c| (list[c].x0, list[c].x1))
        .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))
}

/// Gutters of at most five bands in a row, together under [`RIVER_MAX_EM`] high, with a band
/// above and below them that has letters across them, or two such bands on one side, are
/// dropped: word spaces of a few justified lines that line up (a river, also in a paragraph's
/// last lines) are not a column gutter, which runs on through the rows around it; two verse
/// halves side by side read right then left, as one line. A gap as wide as a lone gap is dropped
/// only between lines with letters on both sides of it (the stretched spaces of justified lines
/// of large type in a narrow column), or with two such lines on one side when both edges of
/// the white wander from line to line as word spaces do (three such lines under a short title;
/// on generated pages, seed 505, lines found 8269 → 8268, no page changed): a margin note of
/// three lines beside the main text stays, and so do short justified columns under a one-line
/// title, and columns whose lines touch (one band of many lines).
fn drop_rivers(
    list: &[Component],
    mut gutters: Vec<Vec<(u32, u32)>>,
    own: &[Vec<(u32, u32)>],
    bands: &[Band],
    sizes: &CutSizes,
) -> Vec<Vec<(u32, u32)>> {
    let n = gutters.len();
    let shares = |a: &(u32, u32), b: &(u32, u32)| {
        (a.1.min(b.1) as f32 - a.0.max(b.0) as f32) >= sizes.gutter_px
    };
    let mut drop: Vec<(usize, (u32, u32))> = Vec::new();
    // Letters of band `j` on both sides of the white `g`.
    let across =
        |j: usize, g: &(u32, u32)| extent(list, &bands[j]).is_some_and(|e| e.0 < g.0 && e.1 > g.1);
    for (k, gs) in gutters.iter().enumerate() {
        for g in gs {
            // The run of bands around k whose own gaps share this gutter's white.
            let open_in = |j: usize| own[j].iter().any(|h| shares(h, g));
            let mut a = k;
            while a > 0 && open_in(a - 1) {
                a -= 1;
            }
            let mut b = k;
            while b + 1 < n && open_in(b + 1) {
                b += 1;
            }
            // Bridged on both sides, or by two lines on one side (a paragraph's last lines;
            // one full-width title over short columns is not enough).
            let above = a >= 2 && !open_in(a - 2);
            let below = b + 2 < n && !open_in(b + 2);
            let short = ((bands[b].y1 - bands[a].y0) as f32) < RIVER_MAX_EM * sizes.em_px;
            // A lone gap's white is a river only between lines that run across it: beside a
            // margin note the main lines above and below end short of the note.
            let lone = ((g.1 - g.0) as f32) >= sizes.lone_gap_px;
            let bridged = a > 0 && b + 1 < n && across(a - 1, g) && across(b + 1, g);
            // Or by two lines on one side when the white wanders from line to line on both of
            // its sides, as word spaces do: a column's edges run straight.
            let two_below = b + 2 < n && across(b + 1, g) && across(b + 2, g);
            let two_above = a >= 2 && across(a - 1, g) && across(a - 2, g);
            // The white of each line of the run.
            let run: Vec<(u32, u32)> = (a..=b)
                .filter_map(|j| own[j].iter().copied().find(|h| shares(h, g)))
                .collect();
            let wanders = || {
                let spread = |side: &dyn Fn(&(u32, u32)) -> u32| {
                    let xs = run.iter().map(side);
                    xs.clone().max().unwrap_or(0) - xs.min().unwrap_or(0)
                };
                let least = WANDER_EM * sizes.em_px;
                run.len() >= 2
                    && spread(&|h| h.0) as f32 >= least
                    && spread(&|h| h.1) as f32 >= least
            };
            if lone && !bridged && !((two_below || two_above) && wanders()) {
                continue;
            }
            // Up to [`RIVER_MAX_LINES`] lines, however tall, white bridged above and below (or by
            // two lines on one side) neither of whose edges runs straight is word spaces lining
            // up (justified lines of few words in a fixed-width face), not a gutter: columns,
            // justified or ragged, keep at least the edge where their lines start straight.
            let ragged = || {
                let tol = (ALIGN_EM * sizes.em_px).max(ALIGN_MIN_PX);
                // Line to line the edge moves by no more than `tol` most of the time: a page's
                // curl or a skew's residue bends a column's edge slowly, word spaces jump.
                let straight = |side: &dyn Fn(&(u32, u32)) -> u32| {
                    let xs: Vec<f32> = run.iter().map(|h| side(h) as f32).collect();
                    let steady = xs.windows(2).filter(|w| (w[1] - w[0]).abs() <= tol).count();
                    steady as f32 >= ALIGNED_SHARE * (xs.len() - 1) as f32
                };
                run.len() >= 3 && !straight(&|h| h.0) && !straight(&|h| h.1)
            };
            if (b - a < 5 && short && ((a > 0 && b + 1 < n) || above || below))
                || (b - a < RIVER_MAX_LINES && (bridged || two_below || two_above) && ragged())
            {
                drop.push((k, *g));
            }
        }
    }
    for (k, g) in drop {
        gutters[k].retain(|h| *h != g);
    }
    gutters
}

/// Least spread, in ems, of the left and of the right ends of a run of white from line to line
/// for the white to be word spaces rather than a gutter between two justified columns, whose
/// edges line up within a few pixels (common practice, no source).
const WANDER_EM: f32 = 0.2;

/// How far, in ems, the edge of a column's white may move from one line to the next and still
/// run straight; no less than [`ALIGN_MIN_PX`] (blur and the deskew's residue move a straight
/// edge by a pixel or two). Common practice, no source.
const ALIGN_EM: f32 = 0.15;
/// Least tolerance of [`ALIGN_EM`], pixels.
const ALIGN_MIN_PX: f32 = 3.0;
/// Share of a run's steps from line to line that keep an edge of its white within [`ALIGN_EM`]
/// for that side to run straight: a column's paragraph ends and indents (two steps each) are a
/// minority of its lines.
const ALIGNED_SHARE: f32 = 0.6;

/// Most lines, less one, of a run of white through word spaces that wander on both sides taken
/// for a river. Measured on generated pages (seed 505): justified two-column pages in a
/// fixed-width face at 200 dpi kept rivers of six and seven lines; gutters between columns of
/// ragged lines and of lines with many paragraph ends and indents, which wander at least as
/// much on one side, ran 13 and 35 lines.
const RIVER_MAX_LINES: usize = 8;

/// Height in ems of the tallest run of white through aligned word spaces taken for a river:
/// five lines at a loose spacing of two ems.
const RIVER_MAX_EM: f32 = 10.0;

/// Share of the white two rows keep open that a third row must keep for the three to run as a
/// gutter. Measured on generated pages (seed 505): two-word justified lines in large type kept
/// 187 px, and the word space under them 59 px of it (0.32); in a narrow justified column a
/// river kept 108 px and then 54 (0.5, taken for a gutter at 0.5; a gutter keeps its width).
/// 0.5 → 0.75 on 200 + 200 pages: clean pages in order 96.0 → 96.5 %, damaged 79.0 → 80.0 %,
/// no page lost.
const RIVER_PINCH: f32 = 0.75;

/// White a third row keeps through a wide gap that makes it a gutter however much wider the
/// first two rows keep it, in ems: a word space, even a stretched one, stays under about an em
/// and a half (common practice, no source), while the ragged ends of two columns' first lines
/// under a paragraph opening can leave 3.8 ems that the third row narrows to 2.3 (measured on
/// a generated page, seed 505, clean page 32). Measured on 200 + 200 pages: clean pages in
/// order 95.5 → 96.0 %, damaged unchanged.
const RIVER_KEEP_EM: f32 = 2.0;

/// A very wide gap open in one band only, between a band just above and one just below that
/// have letters across it, in a line that runs from the left edge of those lines to their right
/// edge, is the stretched word space of a justified line of few words: no gutter. One of the two
/// neighbours may be a paragraph's short last line instead, set from the same right edge (the
/// line above the paragraph's first line, or the line under a justified line that ends its
/// paragraph), but not both; the line above may also open a paragraph (indented from the right
/// edge) over a full line. A zone's first line (nothing near and as wide above it) counts as
/// framed by the two lines under it when it fills their measure (indented from the right edge
/// or not) in their type at their spacing; a running header is set smaller or set off. A gap
/// that stays open through the two bands above or the two below is a gutter all the same. (A
/// margin note stands outside the main lines' edges.) So does a zone's last line that opens a
/// paragraph (indented or not) under two lines that fill one measure, or under a paragraph's
/// short last line with such a pair above it, in their type at their spacing. A band's type is
/// the 3/4 quantile of its letters' heights: in a line of few words most pieces may be low
/// letters. Measured with [`column_edges`] on generated pages (seed 505, 200 + 200): clean
/// pages in order 92.5 → 95.0 %, line F1 0.9968 → 0.9979; damaged 72.0 → 72.5 %, F1 0.9830 →
/// 0.9836 (one damaged page newly out of order: two ragged lines read as rows across a gutter).
fn keep_justified_lines(
    mut gutters: Vec<Vec<(u32, u32)>>,
    own: &[Vec<(u32, u32)>],
    bands: &[Band],
    ctx: &Ctx,
) -> Vec<Vec<(u32, u32)>> {
    let list = ctx.list;
    let em = ctx.sizes.em_px;
    let n = bands.len();
    let extent = |b: &Band| extent(list, b);
    let height = |b: &Band| {
        let mut h: Vec<u32> = b.bodies.iter().map(|&c| list[c].y1 - list[c].y0).collect();
        h.sort_unstable();
        h.get(h.len() * 3 / 4).copied().unwrap_or(0) as f32
    };
    let gap = |a: &Band, b: &Band| b.y0.saturating_sub(a.y1) as f32;
    // Two extents with the same ends, within an em.
    let same = |a: (u32, u32), b: (u32, u32)| {
        (a.0 as f32 - b.0 as f32).abs() <= em && (a.1 as f32 - b.1 as f32).abs() <= em
    };
    let near = |a: &Band, b: &Band| gap(a, b) < ctx.sizes.wide_gap_px;
    for k in 0..n {
        let Some(e) = extent(&bands[k]) else {
            continue;
        };
        let spans = |n: (u32, u32)| same(e, n);
        // Right-aligned and inside the line's left edge: a paragraph's last line.
        let ends_para = |n: (u32, u32)| (e.1 as f32 - n.1 as f32).abs() <= em && n.0 + 1 > e.0;
        let eu = (k > 0 && near(&bands[k - 1], &bands[k]))
            .then(|| extent(&bands[k - 1]))
            .flatten();
        let ed = (k + 1 < n && near(&bands[k], &bands[k + 1]))
            .then(|| extent(&bands[k + 1]))
            .flatten();
        // The first line of a paragraph may be indented from the right edge.
        let opens_para =
            |n: (u32, u32)| (e.0 as f32 - n.0 as f32).abs() <= em && e.1 as f32 <= n.1 as f32 + em;
        // A neighbour that opens a paragraph of this line's measure.
        let opener =
            |n: (u32, u32)| (n.0 as f32 - e.0 as f32).abs() <= em && n.1 as f32 <= e.1 as f32 + em;
        let framed = eu.zip(ed).is_some_and(|(eu, ed)| {
            (spans(eu) && (spans(ed) || ends_para(ed)))
                || ((ends_para(eu) || opener(eu)) && spans(ed))
        });
        // In the type and at the spacing of the two lines after it (or before it).
        let like = |j: usize, j2: usize, j3: usize| {
            height(&bands[k]) >= 0.9 * height(&bands[j])
                && gap(&bands[k.min(j)], &bands[k.max(j)])
                    <= 1.5 * gap(&bands[j2.min(j3)], &bands[j2.max(j3)]) + 0.2 * em
        };
        let leads = ed.is_some_and(|ed| {
            !eu.is_some_and(spans)
                && k + 2 < n
                && opens_para(ed)
                && extent(&bands[k + 2]).is_some_and(|e2| same(ed, e2))
                && like(k + 1, k + 1, k + 2)
        });
        // A zone's last line filling the measure of the two lines above it: its paragraph
        // runs on in the next column or on the next page. A row set further off below it (a
        // page number) does not count as a next line.
        let ends_zone = ed.is_none()
            || (k >= 1
                && gap(&bands[k], &bands[k + 1]) > 1.5 * gap(&bands[k - 1], &bands[k]) + 0.2 * em);
        // It may open a paragraph (indented from the right edge), also under a paragraph's
        // short last line, when the two lines over that fill the measure.
        let full_pair = |j: usize| {
            j >= 1
                && extent(&bands[j])
                    .zip(extent(&bands[j - 1]))
                    .is_some_and(|(a, b)| same(a, b))
        };
        let trails = ends_zone
            && ((k >= 2
                && eu.is_some_and(opens_para)
                && full_pair(k - 1)
                && like(k - 1, k - 2, k - 1))
                || (k >= 3
                    && full_pair(k - 2)
                    && extent(&bands[k - 2]).is_some_and(|m| {
                        opens_para(m)
                            && eu.is_some_and(|eu| {
                                (eu.1 as f32 - m.1 as f32).abs() <= em && eu.0 >= m.0
                            })
                    })
                    && height(&bands[k]) >= 0.9 * height(&bands[k - 2])
                    && gap(&bands[k - 1], &bands[k])
                        <= 1.5 * gap(&bands[k - 3], &bands[k - 2]) + 0.2 * em));
        if !framed && !leads && !trails {
            continue;
        }
        // A gutter runs on through two rows at least on one side; one word space above or
        // below that happens to lie in the wide gap does not make it one.
        // The widest white the gap keeps through band `j`, when at least a gutter wide (not a
        // word space of that band that happens to lie in the gap beside the gutter).
        let open = |j: usize, g: (u32, u32)| {
            own[j]
                .iter()
                .map(|h| (h.0.max(g.0), h.1.min(g.1)))
                .filter(|c| (c.1 as f32 - c.0 as f32) >= ctx.sizes.gutter_px)
                .max_by_key(|c| c.1 - c.0)
        };
        // Through the second row the white must not pinch to a fraction of what the first two
        // rows keep: a word space under two stretched ones is a river.
        let holds = |j: usize, c: (u32, u32)| {
            open(j, c).is_some_and(|c2| {
                let kept = (c2.1 - c2.0) as f32;
                kept >= RIVER_PINCH * (c.1 - c.0) as f32 || kept >= RIVER_KEEP_EM * em
            })
        };
        // Two stretched lines at a zone's end (or start), with no third row, are no gutter.
        gutters[k].retain(|&g| {
            ((g.1 - g.0) as f32) < ctx.sizes.lone_gap_px
                || (k >= 2 && open(k - 1, g).is_some_and(|c| holds(k - 2, c)))
                || (ed.is_some() && k + 2 < n && open(k + 1, g).is_some_and(|c| holds(k + 2, c)))
        });
    }
    gutters
}

/// Least width, in least gutter widths, of a gutter that a row under it has narrowed, for the
/// two rows to be one zone: a gutter between columns stays clearly wider than a word space
/// (the white between two words of a fixed-width face, 1.3 gutters, was carried down a column
/// and cut its lines; generated pages, seed 505, clean page 158).
const NARROWED_GUTTER: f32 = 2.0;

/// Whether two bands read as one zone, and if so the gutters of the joined zone.
///
/// Both with gutters: they join when a gutter they share stays open in the joined band (a false
/// gutter of one row, word spaces that happened to line up, is dropped then); the gutter is the
/// widest white the joined band keeps in it. Measured on 200 + 200 generated pages (seed 505),
/// with the same widest white in [`keep_justified_lines`]: two columns whose first lines open
/// indented paragraphs under a title were read row first (the first row's gap, indent and
/// gutter together, held a word space of the next row beside the gutter); clean pages in order
/// 95.5 → 96.0 %, damaged 78.5 → 79.0 %, nothing else changed. One with gutters:
/// when the other bridges none of them (a column's last lines under the two-column rows, but not a
/// full-width title); a row of both columns under the one with gutters may narrow them to
/// [`NARROWED_GUTTER`] least gutters. Measured on 200 + 200 generated pages (seed 505): damaged
/// pages in order 92.5 → 93.0 % (page 71: the columns' first lines, indented, left a gutter
/// 172 px wide that the second row narrowed to 90 px; the row was read apart, across both
/// columns); clean pages unchanged (98.0 %, F1 0.9989). Neither: they join.
fn join_gutters(
    list: &[Component],
    a: &Band,
    a_gutters: &[(u32, u32)],
    b: &Band,
    b_gutters: &[(u32, u32)],
    gutter: f32,
) -> Option<Vec<(u32, u32)>> {
    let all: Vec<(u32, u32)> = a
        .bodies
        .iter()
        .chain(&b.bodies)
        .map(|&c| (list[c].x0, list[c].x1))
        .collect();
    let gj = gaps(&occupied(all), gutter);
    let overlap = |x: &(u32, u32), y: &(u32, u32)| x.0 < y.1 && y.0 < x.1;
    // The joined gap a gutter stays open as: the widest of those within it (a word space of
    // the other band beside the gutter, under a first line indented from the right, is not it).
    let open = |g: &(u32, u32)| {
        gj.iter()
            .filter(|j| overlap(j, g))
            .max_by_key(|j| j.1 - j.0)
            .copied()
    };
    match (a_gutters.is_empty(), b_gutters.is_empty()) {
        (true, true) => Some(Vec::new()),
        (false, false) => {
            let mut kept: Vec<(u32, u32)> = a_gutters
                .iter()
                .filter(|g| b_gutters.iter().any(|h| overlap(g, h)))
                .filter_map(open)
                .collect();
            kept.sort_unstable();
            kept.dedup();
            (!kept.is_empty()).then_some(kept)
        }
        (false, true) | (true, false) => {
            let side = if a_gutters.is_empty() {
                b_gutters
            } else {
                a_gutters
            };
            // Bridging is any letter in the gutter: a centred running header over the gutter
            // narrows it without closing it, and must not join the columns' first row.
            let tol = (gutter / 2.0) as u32;
            // Under a row with gutters, a row of the columns (letters on both sides) may narrow
            // them from either side: the columns' first lines open indented paragraphs. A
            // header over them, or a note's line under its first, may not.
            let both_sides = |g: &(u32, u32)| {
                let mid = (g.0 + g.1) / 2;
                b.bodies.iter().any(|&c| list[c].x1 <= mid)
                    && b.bodies.iter().any(|&c| list[c].x0 >= mid)
            };
            side.iter()
                .map(|g| {
                    let strict = a_gutters.is_empty() || !both_sides(g);
                    open(g).filter(|j| {
                        (j.0 <= g.0 + tol && j.1 + tol >= g.1)
                            || (!strict && (j.1 - j.0) as f32 >= NARROWED_GUTTER * gutter)
                    })
                })
                .collect::<Option<Vec<_>>>()
        }
    }
}

/// What the classifier knows about one line.
#[derive(Debug, Clone, Copy)]
pub struct LineFacts {
    /// Box `(x0, y0, x1, y1)`.
    pub bbox: (f32, f32, f32, f32),
    /// Type size measure of the line (see [`super::lines::FoundLine::size_px`]).
    pub size_px: f32,
    /// Height of the line's core band (baseline to the top of the letters' bodies): unlike the box,
    /// not raised by harakat or tall letters.
    pub core_px: f32,
    /// Components that are not marks.
    pub bodies: usize,
    /// Width of the widest component that is not a mark.
    pub widest_px: f32,
    /// Zone index.
    pub zone: usize,
}

/// Page-wide measures the classifier works from.
#[derive(Debug, Clone, Copy)]
struct Measures {
    em: f32,
    body_size: f32,
    body_core: f32,
    body_line_h: f32,
    /// Typical white gap between a line and the next one below it.
    gap: f32,
    main_x: (f32, f32),
}

fn measures(lines: &[LineFacts], em: f32) -> Measures {
    let max_w = lines
        .iter()
        .map(|l| l.bbox.2 - l.bbox.0)
        .fold(0.0, f32::max);
    let long: Vec<&LineFacts> = lines
        .iter()
        .filter(|l| l.bbox.2 - l.bbox.0 >= 0.5 * max_w)
        .collect();
    // Body type is measured on the long lines of every zone, not of the page: when footnotes run
    // across both columns of a page, the page's longest lines are footnotes in smaller type.
    let zone_max = |z: usize| {
        lines
            .iter()
            .filter(|l| l.zone == z)
            .map(|l| l.bbox.2 - l.bbox.0)
            .fold(0.0, f32::max)
    };
    // A zone of one line (a running header or a title set apart by a rule) says nothing of the
    // body type.
    let shared = |z: usize| lines.iter().filter(|l| l.zone == z).count() >= 2;
    let mut full: Vec<&LineFacts> = lines
        .iter()
        .filter(|l| shared(l.zone) && l.bbox.2 - l.bbox.0 >= 0.5 * zone_max(l.zone))
        .collect();
    if full.is_empty() {
        full = lines.iter().collect();
    }
    let body_size = median(full.iter().map(|l| l.size_px).collect()).max(1.0);
    let body_line_h = median(full.iter().map(|l| l.bbox.3 - l.bbox.1).collect()).max(1.0);
    let body_core = median(full.iter().map(|l| l.core_px).collect()).max(1.0);
    let gaps: Vec<f32> = lines
        .iter()
        .filter_map(|l| gap_below(lines, l).map(|(g, _)| g))
        .collect();
    let main_x = (
        long.iter().map(|l| l.bbox.0).fold(f32::MAX, f32::min),
        long.iter().map(|l| l.bbox.2).fold(f32::MIN, f32::max),
    );
    Measures {
        em,
        body_size,
        body_core,
        body_line_h,
        gap: median(gaps).max(0.05 * em),
        main_x,
    }
}

fn median(mut v: Vec<f32>) -> f32 {
    super::lines::median(std::mem::take(&mut v))
}

fn x_overlap(a: &LineFacts, b: &LineFacts) -> bool {
    a.bbox.0 < b.bbox.2 && b.bbox.0 < a.bbox.2
}

/// Gap to the nearest line below that shares some x-range, and that line's index.
fn gap_below(lines: &[LineFacts], l: &LineFacts) -> Option<(f32, usize)> {
    lines
        .iter()
        .enumerate()
        .filter(|(_, o)| x_overlap(o, l) && o.bbox.1 >= l.bbox.3 - 0.3 * (l.bbox.3 - l.bbox.1))
        .map(|(i, o)| ((o.bbox.1 - l.bbox.3).max(0.0), i))
        .min_by(|a, b| a.0.total_cmp(&b.0))
}

/// Lines sharing rows with line `k` (its vertical range overlaps theirs by half the smaller height).
fn row_of(lines: &[LineFacts], k: usize) -> Vec<usize> {
    let l = &lines[k];
    (0..lines.len())
        .filter(|&i| {
            let o = &lines[i];
            let ov = l.bbox.3.min(o.bbox.3) - l.bbox.1.max(o.bbox.1);
            ov >= 0.5 * (l.bbox.3 - l.bbox.1).min(o.bbox.3 - o.bbox.1)
        })
        .collect()
}

fn is_short(l: &LineFacts, m: &Measures) -> bool {
    l.bbox.2 - l.bbox.0 < 2.5 * m.em && l.bodies <= 6
}

/// Widest letter piece of a page number in the top row over its type size: digits stand apart
/// and none is wider than tall (Arabic-Indic and Western alike), while the joined letters of a
/// short running header make wider pieces. Measured on generated pages (seed 505, 31 families):
/// page numbers 0.31–0.88, two-word headers taken for numbers 0.94–2.13. (Under the text a short
/// piece set off is a page number without this test: there it cost four numbers and won none.)
/// 1.0 → 0.92 with [`super::lines::page_number_dust`]: a two-word Nastaliq header at 0.98 had
/// been taken for a number and lost its yeh's dots as dust (clean page 98); on 200 + 200 pages
/// kinds right 99.4 % clean (649 → 650 of 654), 98.3 % damaged (639 of 650), no page lost.
const NUMBER_PIECE_MAX: f32 = 0.92;

/// Short, and made of pieces no wider than digits.
fn is_page_number(l: &LineFacts, m: &Measures) -> bool {
    is_short(l, m) && l.widest_px <= NUMBER_PIECE_MAX * l.size_px
}

/// Widest a page number beside a running header may be, in ems (three digits; common practice,
/// no source).
const BESIDE_NUMBER_EM: f32 = 1.2;

/// Widest its widest piece may be over its type size: two digits that blur or wear has joined
/// into one piece (measured on damaged generated pages, seed 505: 1.47–1.75).
const JOINED_DIGITS_MAX: f32 = 1.8;

/// A piece of a top row that holds a wider one too, at most [`BESIDE_NUMBER_EM`] wide and under a
/// third of the row's widest line: the page number beside a running header, even when its
/// digits have run together (which [`is_page_number`] cannot tell from joined letters).
/// Measured on 200 + 200 generated pages (seed 505): page numbers classified right 94.2 → 97.1 %
/// on damaged pages, 98.4 % on clean pages (one more right); no header taken for a number.
fn is_short_beside(lines: &[LineFacts], row: &[usize], i: usize, m: &Measures) -> bool {
    let l = &lines[i];
    let w = l.bbox.2 - l.bbox.0;
    let widest_line = row
        .iter()
        .map(|&j| lines[j].bbox.2 - lines[j].bbox.0)
        .fold(0.0, f32::max);
    row.len() >= 2
        && is_short(l, m)
        && w <= BESIDE_NUMBER_EM * m.em
        && 3.0 * w <= widest_line
        && l.widest_px <= JOINED_DIGITS_MAX * l.size_px
}

/// Centred on the main text and clearly shorter than its lines.
fn is_centred(l: &LineFacts, m: &Measures) -> bool {
    let main_w = m.main_x.1 - m.main_x.0;
    ((l.bbox.0 + l.bbox.2) - (m.main_x.0 + m.main_x.1)).abs() / 2.0 <= 0.05 * main_w
        && l.bbox.2 - l.bbox.0 <= 0.85 * main_w
}

fn is_tall(l: &LineFacts, m: &Measures) -> bool {
    let h = l.bbox.3 - l.bbox.1;
    (l.size_px > 1.3 * m.body_size && h > 1.25 * m.body_line_h)
        || (l.size_px > 1.15 * m.body_size && h > 1.5 * m.body_line_h)
        || (l.size_px > 1.15 * m.body_size && l.core_px > 1.25 * m.body_core && is_centred(l, m))
}

/// Kind of each line, by size and place. `rules` are horizontal rules `(y, x0, x1)`; `zone_extent` is
/// each zone's `(x0, x1)`.
///
/// Top row of the page, set off by a gap clearly wider than the usual line gap, by a rule, or in
/// smaller type: running header (short pieces: page number). Bottom line alone in its row, short,
/// and set off or centred: page number. Lines in a
/// narrow zone beside the main block: margin. Lines under a rule that has main text above it, or
/// smaller type set off below the main text: footnotes. Much larger type: title.
pub fn classify(
    lines: &[LineFacts],
    rules: &[(f32, f32, f32)],
    em: f32,
    zone_extent: &[(f32, f32)],
) -> Vec<RegionKind> {
    let mut kinds = vec![RegionKind::Body; lines.len()];
    if lines.is_empty() {
        return kinds;
    }
    let m = measures(lines, em);
    let set_off = (1.6 * m.gap).max(0.5 * m.em);
    mark_top_row(lines, rules, &m, set_off, &mut kinds);
    mark_bottom_number(lines, &m, set_off, &mut kinds);
    for (i, l) in lines.iter().enumerate() {
        if kinds[i] != RegionKind::Body {
            continue;
        }
        let (zx0, zx1) = zone_extent[l.zone];
        let main_w = m.main_x.1 - m.main_x.0;
        let beside = zx1 <= m.main_x.0 + 0.05 * main_w || zx0 >= m.main_x.1 - 0.05 * main_w;
        if (zx1 - zx0) < MARGIN_SHARE * main_w && beside {
            kinds[i] = RegionKind::Margin;
        } else if is_tall(l, &m) {
            kinds[i] = RegionKind::Title;
        }
    }
    mark_footnotes(lines, rules, &m, set_off, &mut kinds);
    kinds
}

fn mark_top_row(
    lines: &[LineFacts],
    rules: &[(f32, f32, f32)],
    m: &Measures,
    set_off: f32,
    kinds: &mut [RegionKind],
) {
    let top = (0..lines.len())
        .min_by(|&a, &b| lines[a].bbox.1.total_cmp(&lines[b].bbox.1))
        .expect("not empty");
    let row = row_of(lines, top);
    if row.len() == lines.len() || row.iter().any(|&i| is_tall(&lines[i], m)) {
        return;
    }
    let row_bottom = row
        .iter()
        .map(|&i| lines[i].bbox.3)
        .fold(f32::MIN, f32::max);
    let next_top = (0..lines.len())
        .filter(|i| !row.contains(i))
        .map(|i| lines[i].bbox.1)
        .fold(f32::MAX, f32::min);
    // Set off by a wide gap, by a rule, or in smaller type than the text.
    let ruled = rules.iter().any(|r| r.0 > row_bottom && r.0 < next_top);
    let small = row.iter().all(|&i| lines[i].size_px <= 0.9 * m.body_size);
    let gap = next_top - row_bottom;
    if gap >= set_off || (gap > 0.0 && ruled) || (small && gap >= m.gap) {
        for &i in &row {
            kinds[i] = if is_page_number(&lines[i], m) || is_short_beside(lines, &row, i, m) {
                RegionKind::PageNumber
            } else {
                RegionKind::Header
            };
        }
    }
}

fn mark_bottom_number(lines: &[LineFacts], m: &Measures, set_off: f32, kinds: &mut [RegionKind]) {
    let low = (0..lines.len())
        .max_by(|&a, &b| lines[a].bbox.3.total_cmp(&lines[b].bbox.3))
        .expect("not empty");
    let row = row_of(lines, low);
    if row.len() != 1 || !is_short(&lines[low], m) || kinds[low] != RegionKind::Body {
        return;
    }
    let above = (0..lines.len())
        .filter(|&i| i != low)
        .map(|i| lines[i].bbox.3)
        .fold(f32::MIN, f32::max);
    // Set off, or centred under the text (the last line of a paragraph is flush right).
    let l = &lines[low];
    if l.bbox.1 - above >= set_off || (is_centred(l, m) && l.bbox.1 > above) {
        kinds[low] = RegionKind::PageNumber;
    }
}

fn mark_footnotes(
    lines: &[LineFacts],
    rules: &[(f32, f32, f32)],
    m: &Measures,
    set_off: f32,
    kinds: &mut [RegionKind],
) {
    let body_lines: Vec<usize> = (0..lines.len())
        .filter(|&i| kinds[i] == RegionKind::Body)
        .collect();
    // A rule with at least two body lines above it and some below it opens the footnotes.
    for &(ry, rx0, rx1) in rules {
        let above = body_lines
            .iter()
            .filter(|&&i| lines[i].bbox.3 <= ry)
            .count();
        if above < 2 {
            continue;
        }
        for &i in &body_lines {
            let l = &lines[i];
            if l.bbox.1 > ry && l.bbox.0 < rx1 + m.em && l.bbox.2 > rx0 - m.em {
                kinds[i] = RegionKind::Footnote;
            }
        }
    }
    // Without a rule: a set-off run of smaller type at the bottom of the body lines.
    let mut by_y: Vec<usize> = (0..lines.len())
        .filter(|&i| kinds[i] == RegionKind::Body)
        .collect();
    by_y.sort_by(|&a, &b| lines[b].bbox.1.total_cmp(&lines[a].bbox.1));
    let mut run = Vec::new();
    for &i in &by_y {
        if lines[i].size_px >= 0.88 * m.body_size {
            let gap = run
                .last()
                .map_or(0.0, |&j: &usize| lines[j].bbox.1 - lines[i].bbox.3);
            if !run.is_empty() && gap >= set_off {
                for &j in &run {
                    kinds[j] = RegionKind::Footnote;
                }
            }
            return;
        }
        run.push(i);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    /// A 15 px gutter, bands 60 px apart always separate, a 45 px gap splits a lone line.
    const SIZES: CutSizes = CutSizes {
        gutter_px: 15.0,
        wide_gap_px: 60.0,
        lone_gap_px: 45.0,
        em_px: 15.0,
    };

    /// The zones of a page whose pieces are all letters (none small), at the test type sizes.
    fn zones_of(list: &[Component]) -> Vec<Vec<usize>> {
        let none = vec![false; list.len()];
        zones(list, &none, (0..list.len()).collect(), SIZES, &[])
    }

    /// The zones of a page whose small pieces are marked in `small`.
    fn zones_marked(list: &[Component], small: &[bool]) -> Vec<Vec<usize>> {
        zones(list, small, (0..list.len()).collect(), SIZES, &[])
    }

    /// Zones with their pieces in order and in order of their first piece, to compare as sets.
    fn sorted_zones(z: &[Vec<usize>]) -> Vec<Vec<usize>> {
        let mut sorted: Vec<Vec<usize>> = z
            .iter()
            .map(|zone| {
                let mut zone = zone.clone();
                zone.sort_unstable();
                zone
            })
            .collect();
        sorted.sort();
        sorted
    }

    fn comp(x0: u32, y0: u32, x1: u32, y1: u32) -> Component {
        Component {
            x0,
            y0,
            x1,
            y1,
            area: (x1 - x0) * (y1 - y0),
        }
    }

    #[test]
    fn a_thin_row_a_fifth_of_an_em_over_a_line_is_part_of_it() {
        // A 9 px row 4 px over a 18 px line at an em of 25 px (a Thabit page at 200 dpi); a
        // row 6 px over stays apart.
        assert_eq!(
            stick_thin_rows(vec![(1257, 1266), (1270, 1288)], 25.0),
            vec![(1257, 1288)]
        );
        assert_eq!(
            stick_thin_rows(vec![(1257, 1264), (1270, 1288)], 25.0),
            vec![(1257, 1264), (1270, 1288)]
        );
    }

    #[test]
    fn a_title_whose_word_space_is_over_the_gutter_stays_whole_and_first() {
        // Two columns of three lines, 30 px apart (x 85..115); a title of two words 16 px apart
        // centred over them, each word reaching 7 px into the gutter.
        let mut list = vec![comp(50, 0, 92, 20), comp(108, 0, 150, 20)];
        for i in 0..3 {
            let y = 40 + i * 30;
            list.push(comp(115, y, 190, y + 15)); // right column
            list.push(comp(10, y, 85, y + 15)); // left column
        }
        let z = zones_of(&list);
        assert_eq!(sorted_zones(&z[..1]), vec![vec![0, 1]], "{z:?}");
        assert_eq!(sorted_zones(&z[1..2]), vec![vec![2, 4, 6]], "{z:?}");
        assert_eq!(sorted_zones(&z[2..]), vec![vec![3, 5, 7]], "{z:?}");
        // Words that keep out of the gutter as far as the columns do are the columns' lines.
        list[0] = comp(50, 0, 85, 20);
        list[1] = comp(115, 0, 150, 20);
        let z = zones_of(&list);
        assert_eq!(z.len(), 2, "{z:?}");
        assert!(z[0].contains(&1) && z[1].contains(&0), "{z:?}");
    }

    #[test]
    fn a_full_first_line_over_two_lines_with_aligned_spaces_stays_in_its_zone() {
        // A footnote: a full line, two lines whose 20 px word spaces line up (x 60..80), three
        // short lines ending right of them. Not a title over two columns: one zone.
        let mut list = vec![comp(10, 0, 190, 15)];
        for i in 0..2 {
            let y = 30 + i * 30;
            list.push(comp(80, y, 190, y + 15));
            list.push(comp(10, y, 60, y + 15));
        }
        for i in 0..3 {
            let y = 90 + i * 30;
            list.push(comp(100, y, 190, y + 15));
        }
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn a_narrow_gutter_through_many_rows_parts_columns_and_a_title_across_it_goes_first() {
        // Two columns 12 px apart (x 100..112): under the 15 px gutter, over 0.6 em (9 px).
        let columns = |rows: u32, title: bool| {
            let mut list = Vec::new();
            if title {
                list.push(comp(60, 0, 140, 20));
            }
            for i in 0..rows {
                let y = 40 + i * 30;
                list.push(comp(112, y, 190, y + 15)); // right column
                list.push(comp(10, y, 100, y + 15)); // left column
            }
            list
        };
        let list = columns(5, false);
        let z = zones_of(&list);
        assert_eq!(z.len(), 2, "{z:?}");
        assert!(z[0].iter().all(|&c| list[c].x0 == 112), "{z:?}");
        // Four rows a side are not enough: aligned word spaces of a paragraph.
        let z = zones_of(&columns(4, false));
        assert_eq!(z.len(), 1, "{z:?}");
        // A title across the narrow gutter goes first, and the columns under it part.
        let list = columns(5, true);
        let z = zones_of(&list);
        assert_eq!(z.len(), 3, "{z:?}");
        assert_eq!(z[0], vec![0], "{z:?}");
        assert!(z[1].iter().all(|&c| list[c].x0 == 112), "{z:?}");
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
        let z = zones_of(&list);
        let first_x: Vec<u32> = z.iter().map(|zone| list[zone[0]].x0).collect();
        assert_eq!(
            first_x,
            vec![10, 110, 10],
            "title, right column, left column"
        );
        assert_eq!(z[1].len(), 3);
    }

    #[test]
    fn a_centred_header_over_the_gutter_stays_apart_from_the_columns() {
        // A short centred header over the gutter (x 90..110), then two columns of five lines
        // whose first left line ends early (x 60): the header narrows that row's wide gap to
        // x 60..75 without closing it, and must not take the row away from the columns.
        let mut list = vec![comp(75, 0, 125, 15)];
        for i in 0..5 {
            let y = 30 + i * 30;
            list.push(comp(110, y, 190, y + 15)); // right column
            list.push(comp(10, y, if i == 0 { 60 } else { 90 }, y + 15)); // left column
        }
        let z = zones_of(&list);
        let sizes: Vec<usize> = z.iter().map(Vec::len).collect();
        assert_eq!(
            sizes,
            vec![1, 5, 5],
            "header, right column, left column: {z:?}"
        );
        assert_eq!(list[z[1][0]].x0, 110);
    }

    #[test]
    fn a_columns_row_may_narrow_the_gutter_of_the_row_over_it() {
        // The columns' first row opens indented paragraphs: its gutter runs x 60..110. The row
        // under it, too narrow a gap to be a gutter by itself (x 75..105, unconfirmed), narrows
        // that gutter from both sides without closing it: one zone, the gutter where the second
        // row leaves it (two least gutters wide). A row that leaves only a word space of it
        // (x 85..102) does not join, nor one bridging it (x 10..190), nor a margin note's second
        // line that narrows it from one side (x 100..180).
        let list = vec![
            comp(10, 0, 60, 15),
            comp(110, 0, 170, 15),
            comp(10, 30, 75, 45),
            comp(105, 30, 190, 45),
            comp(10, 30, 85, 45),
            comp(102, 30, 190, 45),
            comp(10, 30, 190, 45),
            comp(100, 30, 180, 45),
        ];
        let band = |y0: u32, bodies: Vec<usize>| Band {
            y0,
            y1: y0 + 15,
            items: bodies.clone(),
            bodies,
        };
        let first = band(0, vec![0, 1]);
        let gutters = [(60, 110)];
        let join = |bodies: Vec<usize>| {
            join_gutters(&list, &first, &gutters, &band(30, bodies), &[], 15.0)
        };
        assert_eq!(join(vec![2, 3]), Some(vec![(75, 105)]));
        assert_eq!(join(vec![4, 5]), None, "a word space");
        assert_eq!(join(vec![6]), None, "bridging");
        assert_eq!(join(vec![7]), None, "a note's line");
    }

    #[test]
    fn a_justified_line_of_two_words_is_not_cut_but_a_smaller_header_row_is() {
        // Lines at y 0, 30, 60 across x 10..190; the middle one is two words pushed to the
        // edges with a 100 px space (over the 45 px lone gap). One zone. As the first of three
        // such lines, in their type and at their spacing, the row is a paragraph's first line
        // and stays too; in smaller type (11 px for 15) it is a running header (title and page
        // number) and is cut.
        let list = vec![
            comp(10, 0, 190, 15),
            comp(150, 30, 190, 45),
            comp(10, 30, 50, 45),
            comp(10, 60, 190, 75),
        ];
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
        let first_row = |h: u32| {
            vec![
                comp(150, 0, 190, h),
                comp(10, 0, 50, h),
                comp(10, 30, 190, 45),
                comp(10, 60, 190, 75),
            ]
        };
        let body = first_row(15);
        let z = zones_of(&body);
        assert_eq!(z.len(), 1, "{z:?}");
        let header = first_row(11);
        let z = zones_of(&header);
        assert!(z.len() > 1, "{z:?}");
    }

    #[test]
    fn a_line_s_first_word_inside_the_column_s_measure_is_no_margin_note() {
        // Lines 30 px apart across x 10..190: an indented first line (to x 150), a line whose
        // first word (x 170..190) stands 20 px off the rest (over the 12 px note gap), a short
        // paragraph end, an indented line and two full lines. The two lines next to the second
        // that fill half the widest end at x 150, but most lines of the column reach x 190: the
        // word is the line's, not a note. A word 25 px past the column's edge is a note.
        let page = |first_word: (u32, u32)| {
            vec![
                comp(10, 0, 150, 15),
                comp(first_word.0, 30, first_word.1, 45),
                comp(10, 30, 150, 45),
                comp(130, 60, 190, 75),
                comp(10, 90, 145, 105),
                comp(10, 120, 190, 135),
                comp(10, 150, 190, 165),
            ]
        };
        let z = zones_of(&page((170, 190)));
        assert_eq!(z.len(), 1, "{z:?}");
        let z = zones_of(&page((215, 235)));
        assert_eq!(z.len(), 2, "{z:?}");
        assert!(
            z.contains(&vec![1]),
            "the note is the word beyond the edge: {z:?}"
        );
    }

    #[test]
    fn justified_lines_of_two_words_by_paragraph_openers_are_not_cut() {
        // Two words 90 px apart (over the 45 px lone gap) in a zone's next-to-last line, under a
        // paragraph's first line indented 30 px from the right: the line fills the measure of
        // the full line under it and is framed. One zone.
        let framed = vec![
            comp(10, 0, 190, 15),
            comp(10, 30, 160, 45),
            comp(150, 60, 190, 75),
            comp(10, 60, 60, 75),
            comp(10, 90, 190, 105),
        ];
        let z = zones_of(&framed);
        assert_eq!(z.len(), 1, "{z:?}");
        // A zone's last line that opens a paragraph (indented 20 px) under a paragraph's short
        // last line, with two full lines above that: its paragraph runs on. One zone.
        let trailing = vec![
            comp(10, 0, 190, 15),
            comp(10, 30, 190, 45),
            comp(100, 60, 190, 75),
            comp(140, 90, 170, 105),
            comp(10, 90, 60, 105),
        ];
        let z = zones_of(&trailing);
        assert_eq!(z.len(), 1, "{z:?}");
        // A zone's first line of two words with mostly low letters (8 px of 15; the tall ones
        // as tall as the lines under it) fills their measure: a paragraph's first line.
        let leading = vec![
            comp(170, 0, 190, 15),
            comp(150, 7, 160, 15),
            comp(135, 7, 145, 15),
            comp(10, 0, 30, 15),
            comp(40, 7, 50, 15),
            comp(10, 30, 190, 45),
            comp(10, 60, 190, 75),
            comp(10, 90, 190, 105),
        ];
        let z = zones_of(&leading);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn a_justified_line_over_a_paragraph_end_is_not_cut() {
        // A full line, a justified line of three words with 50 px spaces (over the 45 px lone
        // gap), then the paragraph's short last line set from the right edge: one zone. With a
        // short line above as well nothing frames the row, and it is cut (a header row).
        let justified = |above: (u32, u32)| {
            vec![
                comp(above.0, 0, above.1, 15),
                comp(150, 30, 190, 45),
                comp(70, 30, 100, 45),
                comp(10, 30, 20, 45),
                comp(120, 60, 190, 75),
            ]
        };
        let z = zones_of(&justified((10, 190)));
        assert_eq!(z.len(), 1, "{z:?}");
        let z = zones_of(&justified((120, 190)));
        assert!(z.len() > 1, "{z:?}");
    }

    #[test]
    fn word_spaces_that_drift_over_two_rows_do_not_keep_a_wide_gap_open() {
        // Five lines; the fourth has a 50 px space (over the 45 px lone gap). The word spaces of
        // the two lines above each overlap it by a gutter's width, but the white they keep in
        // common is 6 px: a river of a fixed-width face, not a column gutter. One zone.
        let list = vec![
            comp(10, 0, 190, 15),
            comp(10, 30, 88, 45),
            comp(106, 30, 190, 45),
            comp(10, 60, 100, 75),
            comp(120, 60, 190, 75),
            comp(10, 90, 80, 105),
            comp(130, 90, 190, 105),
            comp(10, 120, 190, 135),
        ];
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn a_river_through_a_zone_s_last_lines_is_not_a_gutter() {
        // Two full lines, then four whose word spaces line up at x 90..110 to the zone's end.
        let mut list = Vec::new();
        for i in 0..6u32 {
            let y = i * 30;
            if i >= 2 {
                list.push(comp(110, y, 190, y + 15));
                list.push(comp(10, y, 90, y + 15));
            } else {
                list.push(comp(10, y, 190, y + 15));
            }
        }
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn word_spaces_lined_up_over_three_lines_are_not_a_gutter() {
        // Five justified lines of one column; the word spaces of lines 2-4 line up at x 90..110
        // (a river), lines 1 and 5 run across: one zone, read line by line.
        let mut list = Vec::new();
        for i in 0..5u32 {
            let y = i * 30;
            if (1..4).contains(&i) {
                list.push(comp(110, y, 190, y + 15));
                list.push(comp(10, y, 90, y + 15));
            } else {
                list.push(comp(10, y, 190, y + 15));
            }
        }
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn wide_word_spaces_do_not_make_columns() {
        // One column of five justified lines, 200 px wide, each with one word space of 20 px
        // (wider than the 15 px gutter) at a different place, and a short last line.
        let mut list = Vec::new();
        for (i, gap_at) in [40u32, 150, 90, 120, 60].iter().enumerate() {
            let y = i as u32 * 30;
            list.push(comp(0, y, *gap_at, y + 15));
            list.push(comp(gap_at + 20, y, 200, y + 15));
        }
        list.push(comp(150, 150, 200, 165)); // paragraph end, flush right
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");

        // The same lines set as a lone line: still one zone, unless the gap is very wide.
        let lone = vec![comp(0, 0, 100, 15), comp(130, 0, 200, 15)];
        let z = zones_of(&lone);
        assert_eq!(z.len(), 1, "30 px word space: {z:?}");
        let header = vec![comp(0, 0, 40, 15), comp(100, 0, 200, 15)];
        let z = zones_of(&header);
        assert_eq!(z, vec![vec![1], vec![0]], "60 px: title, then page number");
    }

    #[test]
    fn columns_with_wide_word_spaces_are_read_column_by_column() {
        // Two aligned columns (x 0..90 and 110..200) under a full-width title; every line has a
        // word space of 16 px somewhere, wider than the 15 px gutter.
        let mut list = vec![comp(0, 0, 200, 20)];
        for i in 0..4u32 {
            let y = 40 + i * 30;
            let (r, l) = (120 + (i * 17) % 50, 10 + (i * 23) % 50);
            list.push(comp(110, y, r, y + 15));
            list.push(comp(r + 16, y, 200, y + 15));
            list.push(comp(0, y, l, y + 15));
            list.push(comp(l + 16, y, 90, y + 15));
        }
        let z = zones_of(&list);
        let spans: Vec<(u32, u32)> = z
            .iter()
            .map(|zone| {
                (
                    zone.iter().map(|&c| list[c].x0).min().unwrap(),
                    zone.iter().map(|&c| list[c].x1).max().unwrap(),
                )
            })
            .collect();
        assert_eq!(spans, vec![(0, 200), (110, 200), (0, 90)], "{z:?}");
        assert_eq!(z[1].len(), 8);
    }

    #[test]
    fn a_short_top_row_is_a_page_number_only_when_its_pieces_are_as_narrow_as_digits() {
        // Body type 20 px (em 30), ten full lines 40 px apart under a short top row set off by a
        // wide gap. Three pieces 12 px wide and 20 px tall are digits: page number. Two words
        // whose joined letters make a 30 px piece (1.5 × their height) are a running header.
        let line = |y: f32, x0: f32, widest: f32| LineFacts {
            bbox: (x0, y, 600.0, y + 20.0),
            size_px: 20.0,
            core_px: 10.0,
            bodies: if x0 > 500.0 { 3 } else { 40 },
            widest_px: widest,
            zone: usize::from(y > 0.0),
        };
        for (widest, kind) in [(12.0, RegionKind::PageNumber), (30.0, RegionKind::Header)] {
            let mut lines = vec![line(0.0, 550.0, widest)];
            lines.extend((0..10).map(|k| line(80.0 + 40.0 * k as f32, 100.0, 60.0)));
            let kinds = classify(&lines, &[], 30.0, &[(550.0, 600.0), (100.0, 600.0)]);
            assert_eq!(kinds[0], kind, "widest piece {widest} px");
            assert!(
                kinds[1..].iter().all(|&k| k == RegionKind::Body),
                "{kinds:?}"
            );
        }
    }

    #[test]
    fn a_number_beside_a_running_header_is_a_page_number_even_with_its_digits_joined() {
        // Body type 20 px (em 30) under a top row set off by a wide gap: a running header 300 px
        // wide and, at the row's other end, a piece 25 px wide whose one piece is 1.5 × its type
        // (two digits run together). Alone in its row such a piece is a header's word; beside a
        // header three times its width it is the page number. 40 px wide (1.33 em) it is a word.
        let line = |y: f32, x0: f32, x1: f32, widest: f32, bodies: usize| LineFacts {
            bbox: (x0, y, x1, y + 20.0),
            size_px: 20.0,
            core_px: 10.0,
            bodies,
            widest_px: widest,
            zone: usize::from(y > 0.0),
        };
        let page = |top: Vec<LineFacts>| {
            let mut lines = top;
            lines.extend((0..10).map(|k| line(80.0 + 40.0 * k as f32, 100.0, 600.0, 60.0, 40)));
            classify(&lines, &[], 30.0, &[(100.0, 600.0), (100.0, 600.0)])
        };
        let number = line(0.0, 100.0, 125.0, 30.0, 1);
        let header = line(0.0, 300.0, 600.0, 60.0, 20);
        let kinds = page(vec![number, header]);
        assert_eq!(kinds[..2], [RegionKind::PageNumber, RegionKind::Header]);
        assert!(
            kinds[2..].iter().all(|&k| k == RegionKind::Body),
            "{kinds:?}"
        );
        let alone = page(vec![line(0.0, 575.0, 600.0, 30.0, 1)]);
        assert_eq!(alone[0], RegionKind::Header);
        let word = line(0.0, 100.0, 140.0, 30.0, 1);
        assert_eq!(page(vec![word, header])[0], RegionKind::Header);
    }

    #[test]
    fn a_word_space_under_two_stretched_lines_does_not_make_their_gap_a_gutter() {
        // Six lines; the second and third are two words each pushed to the edges (80 px white,
        // over the 45 px lone gap), the fourth has a 20 px word space inside that white. Three
        // rows keep 20 px open, over a gutter's 15 px, but that is a quarter of the 80 px the two
        // stretched lines keep: a river, not a column gutter. One zone.
        let mut list = Vec::new();
        for i in 0..6u32 {
            let y = i * 30;
            match i {
                1 | 2 => list.extend([comp(10, y, 60, y + 15), comp(140, y, 190, y + 15)]),
                3 => list.extend([comp(10, y, 80, y + 15), comp(100, y, 190, y + 15)]),
                _ => list.push(comp(10, y, 190, y + 15)),
            }
        }
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn a_zone_s_last_line_filling_the_measure_is_not_cut_at_its_stretched_space() {
        // Three full lines, then a last line of two words pushed to the edges (60 px white, over
        // the 45 px lone gap) at the same spacing: a justified line whose paragraph runs on in
        // the next column. One zone. Set off by a wide gap, the same row is cut.
        let rows = |last_y: u32| {
            let mut list: Vec<Component> = (0..3u32)
                .map(|i| comp(10, i * 30, 190, i * 30 + 15))
                .collect();
            list.extend([
                comp(10, last_y, 70, last_y + 15),
                comp(130, last_y, 190, last_y + 15),
            ]);
            list
        };
        let z = zones_of(&rows(90));
        assert_eq!(z.len(), 1, "{z:?}");
        let z = zones_of(&rows(160));
        assert!(z.len() > 1, "{z:?}");
    }

    #[test]
    fn a_margin_note_beside_an_indented_line_is_its_own_zone() {
        // Five lines across x 10..190; the middle one is indented (ends at 160) and a one-word
        // note stands beyond the text's right edge at 205..230: 45 px from its line, at the 45 px
        // lone gap, but outside the edge of the lines around it. The note is a zone of its own;
        // the lines stay together. The same when the middle line is full (20 px white: over a
        // word space, 0.8 em = 12 px).
        for line_end in [160, 185] {
            let mut list: Vec<Component> = (0..5u32)
                .map(|i| comp(10, i * 30, if i == 2 { line_end } else { 190 }, i * 30 + 15))
                .collect();
            list.push(comp(205, 60, 230, 75));
            let z = zones_of(&list);
            assert!(z.iter().any(|zone| zone == &vec![5]), "{z:?}");
            let lines: usize = z
                .iter()
                .filter(|zone| !zone.contains(&5))
                .map(Vec::len)
                .sum();
            assert_eq!(lines, 5, "{z:?}");
        }
        // A full line between two indented ones (ending at 160), its last word at 170..190 past
        // a 30 px space: the lines two above and two below reach 190, so it is no note.
        let mut list: Vec<Component> = (0..5u32)
            .map(|i| comp(10, i * 30, if i % 2 == 1 { 160 } else { 190 }, i * 30 + 15))
            .collect();
        list[2] = comp(10, 60, 140, 75);
        list.push(comp(170, 60, 190, 75));
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
    }

    #[test]
    fn a_note_line_between_the_text_s_lines_is_its_own_zone_and_leaves_their_marks() {
        // Five lines across x 10..190; between the second and the third, in rows of its own, a
        // note's line at 204..234 (14 px past the text's edge: over the 12 px note gap, under the
        // 15 px gutter), and in its rows a dot over the third line (x 100..103). The note is a
        // zone of its own; the dot stays with the text.
        let mut list: Vec<Component> = (0..5u32)
            .map(|i| comp(10, i * 30, 190, i * 30 + 15))
            .collect();
        list.push(comp(204, 47, 234, 58));
        list.push(comp(100, 55, 103, 58));
        let mut small = vec![false; list.len()];
        small[6] = true;
        let z = zones_marked(&list, &small);
        assert_eq!(
            sorted_zones(&z),
            vec![vec![0, 1, 2, 3, 4, 6], vec![5]],
            "{z:?}"
        );
    }

    #[test]
    fn a_note_in_smaller_type_close_past_the_lines_start_is_apart_but_a_word_is_not() {
        // Five lines across x 10..190 (em 15 px); the middle one in two words with 8 px between.
        // Past its start, 9 px off (over 0.4 em, under the 12 px note gap), stand either a note
        // in smaller type (8 px high) or a word of the text's type (15 px). The note stays with
        // the line when the line starts indented at 170 or set out at 200 (the note 9 px past
        // that, the edge not firm), or when the line under it runs on to 225 (the note stands in
        // the text's measure).
        for (start, high, under, apart) in [
            (190, 8, 190, true),
            (190, 15, 190, false),
            (170, 8, 190, false),
            (200, 8, 190, false),
            (190, 8, 225, false),
        ] {
            let mut list: Vec<Component> = [0u32, 1, 3, 4]
                .iter()
                .map(|&i| comp(10, i * 30, if i == 3 { under } else { 190 }, i * 30 + 15))
                .collect();
            list.push(comp(10, 60, 100, 75));
            list.push(comp(108, 60, start, 75));
            list.push(comp(start + 9, 75 - high, start + 35, 75));
            let z = zones_of(&list);
            let alone = z.iter().any(|zone| zone.contains(&6) && !zone.contains(&5));
            assert_eq!(
                alone, apart,
                "start {start}, {high} px, under {under}: {z:?}"
            );
        }
    }

    #[test]
    fn the_digits_of_a_small_number_under_the_text_go_apart_together() {
        // Two lines across x 10..190; under them a number of two small digits 2 px apart: the
        // first has its middle 11 px under the letters (within an em, 15 px), the second 16 px.
        // Both go apart from the lines, as one zone.
        let list = vec![
            comp(10, 0, 190, 15),
            comp(10, 30, 190, 45),
            comp(100, 52, 104, 60),
            comp(106, 56, 110, 66),
        ];
        let small = [false, false, true, true];
        let z = zones_marked(&list, &small);
        assert_eq!(sorted_zones(&z), vec![vec![0, 1], vec![2, 3]], "{z:?}");
    }

    #[test]
    fn small_letters_at_a_line_s_end_leave_no_white_for_a_note_but_a_dot_does() {
        // Five lines across x 10..190; the middle one's letters end at 170, then two small
        // pieces as wide as small letters (9 px, over a fifth of the 15 px em) run to 190, and a
        // piece stands at 200..210: 10 px of white, under the 12 px note gap, so it is the
        // line's. With a 2-px dot at 192..194 in the white instead, the piece is a note.
        for letters in [true, false] {
            let mut list: Vec<Component> = (0..5u32)
                .map(|i| comp(10, i * 30, if i == 2 { 170 } else { 190 }, i * 30 + 15))
                .collect();
            list.push(comp(200, 62, 210, 75));
            if letters {
                list.push(comp(171, 66, 180, 72));
                list.push(comp(181, 66, 190, 72));
            } else {
                list.push(comp(192, 70, 194, 72));
            }
            let mut small = vec![false; list.len()];
            for s in small.iter_mut().skip(6) {
                *s = true;
            }
            let z = zones_marked(&list, &small);
            let apart = z.iter().any(|zone| zone.contains(&5) && !zone.contains(&2));
            assert_eq!(apart, !letters, "{z:?}");
        }
    }

    #[test]
    fn a_margin_note_beside_a_zone_s_last_line_and_under_it_is_one_zone() {
        // Five lines across x 10..190; beside the last one, 13 px past the text's edge (over a
        // word space of 12 px, under the 15 px gutter), a note's first line at 203..235 and its
        // second line under the text at 200..235. The note's second line does not widen the
        // text's edge: the note is one zone, the five lines another.
        let mut list: Vec<Component> = (0..5u32)
            .map(|i| comp(10, i * 30, 190, i * 30 + 15))
            .collect();
        list.push(comp(203, 120, 235, 135));
        list.push(comp(200, 150, 235, 165));
        let z = zones_of(&list);
        assert_eq!(
            sorted_zones(&z),
            vec![vec![0, 1, 2, 3, 4], vec![5, 6]],
            "{z:?}"
        );
    }

    #[test]
    fn a_river_under_a_short_title_is_not_a_gutter_when_its_sides_wander() {
        // Under a short title, three justified lines of two words whose stretched spaces (48 to
        // 51 px, over the 45 px lone gap) line up but wander by 6 to 9 px on each side, and two
        // full lines under them: no gutter, each line stays whole. Straight sides (a column
        // gutter's) keep it.
        for wander in [true, false] {
            let mut list = vec![comp(120, 0, 170, 15)];
            for (i, (l, r)) in [(100, 150), (95, 146), (104, 152)].into_iter().enumerate() {
                let y = 30 + 30 * i as u32;
                let (l, r) = if wander { (l, r) } else { (100, 150) };
                list.push(comp(10, y, l, y + 15));
                list.push(comp(r, y, 190, y + 15));
            }
            list.push(comp(10, 120, 190, 135));
            list.push(comp(10, 150, 190, 165));
            let z = zones_of(&list);
            let whole = (0..3).all(|i| {
                z.iter()
                    .any(|zone| zone.contains(&(1 + 2 * i)) && zone.contains(&(2 + 2 * i)))
            });
            assert_eq!(whole, wander, "{z:?}");
        }
    }

    #[test]
    fn a_long_river_whose_both_sides_wander_is_not_a_gutter() {
        // Seven justified lines of two words between two full lines (14 ems of white in all,
        // past the short river's 10): the word spaces (38 to 42 px) line up, their sides jumping
        // by 6 to 12 px from line to line (a fixed-width face's rivers). No gutter: one zone.
        // With the left side straight (the line starts of a ragged column) it stays a gutter.
        let sides = [
            (90, 130),
            (98, 136),
            (86, 128),
            (94, 134),
            (88, 126),
            (97, 137),
            (90, 131),
        ];
        for wander in [true, false] {
            let mut list = vec![comp(10, 0, 190, 15)];
            for (i, (l, r)) in sides.into_iter().enumerate() {
                let y = 30 + 30 * i as u32;
                let l = if wander { l } else { 86 };
                list.push(comp(10, y, l, y + 15));
                list.push(comp(r, y, 190, y + 15));
            }
            list.push(comp(10, 240, 190, 255));
            let z = zones_of(&list);
            assert_eq!(z.len() == 1, wander, "{z:?}");
        }
    }

    #[test]
    fn two_stretched_lines_ending_a_zone_are_not_cut() {
        // Three full lines, then two lines of two words each pushed to the edges (70 px of white
        // each, over the 45 px lone gap, overlapping by 50 px) at the same spacing: the last two
        // lines of a justified column whose paragraph runs on. No third row keeps the white
        // open, so it is no gutter: one zone.
        let mut list: Vec<Component> = (0..3u32)
            .map(|i| comp(10, i * 30, 190, i * 30 + 15))
            .collect();
        list.extend([comp(10, 90, 60, 105), comp(130, 90, 190, 105)]);
        list.extend([comp(10, 120, 40, 135), comp(110, 120, 190, 135)]);
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
        // The same with a page number under them, set off by more than the line spacing: the
        // lines stay whole.
        list.push(comp(92, 170, 108, 182));
        let z = zones_of(&list);
        let zone_of = |c: usize| z.iter().position(|zone| zone.contains(&c));
        assert_eq!(zone_of(3), zone_of(4), "{z:?}");
        assert_eq!(zone_of(5), zone_of(6), "{z:?}");
    }

    #[test]
    fn columns_whose_lines_touch_are_split_under_a_full_width_title() {
        // A full-width title, then two columns (x 10..90 and 110..190, a 20 px gutter) of
        // letters 40 px tall every 30 px, so that each column's lines touch and its rows run
        // together into one band 190 px (over 12 ems) tall, then a full-width line. The title and
        // the last line have letters across the gutter, as around a river, but a river does not
        // run that far: title, right column, left column, last line.
        let mut list = vec![comp(10, 0, 190, 15)];
        for i in 0..6u32 {
            let y = 40 + i * 30;
            list.push(comp(110, y, 190, y + 40));
            list.push(comp(10, y + 10, 90, y + 50));
        }
        list.push(comp(10, 260, 190, 275));
        let z = zones_of(&list);
        let first_x: Vec<u32> = z.iter().map(|zone| list[zone[0]].x0).collect();
        assert_eq!(first_x, vec![10, 110, 10, 10], "{z:?}");
        assert_eq!((z[1].len(), z[2].len()), (6, 6), "{z:?}");
    }

    #[test]
    fn a_footnote_rule_keeps_the_first_footnote_line_whole() {
        // Two columns (x 10..90 and 110..190, a 20 px gutter) of four lines, a short rule on
        // the right under them, then two full-width footnote lines; the first has a word space
        // (93..110) that lines up with the gutter and is as wide as one (17 px). Under the rule
        // that line is not a row of the columns: its two halves stay in one zone.
        let mut list = Vec::new();
        for i in 0..4u32 {
            let y = i * 30;
            list.push(comp(110, y, 190, y + 15));
            list.push(comp(10, y, 90, y + 15));
        }
        list.push(comp(110, 135, 190, 147));
        list.push(comp(10, 135, 93, 147));
        list.push(comp(10, 155, 190, 167));
        let none = vec![false; list.len()];
        let zone_of = |z: &[Vec<usize>], c: usize| z.iter().position(|zone| zone.contains(&c));
        let rules = [(125, 130, 190)];
        let z = zones(&list, &none, (0..list.len()).collect(), SIZES, &rules);
        assert_eq!(zone_of(&z, 8), zone_of(&z, 9), "{z:?}");
        assert_ne!(zone_of(&z, 0), zone_of(&z, 1), "{z:?}");
        // Without the rule the line joins the columns and is cut at the gutter.
        let z = zones(&list, &none, (0..list.len()).collect(), SIZES, &[]);
        assert_ne!(zone_of(&z, 8), zone_of(&z, 9), "{z:?}");
    }

    #[test]
    fn a_small_piece_far_under_the_text_is_a_zone_of_its_own() {
        // Three lines and, 45 px (three ems) under the last, a piece small enough to be a mark:
        // a one-digit page number in small type, no dot of the line above. Its own zone; a
        // piece 5 px under the last line stays with it.
        let mut list: Vec<Component> = (0..3u32)
            .map(|i| comp(10, i * 30, 190, i * 30 + 15))
            .collect();
        list.push(comp(96, 120, 102, 127));
        list.push(comp(50, 80, 54, 84));
        let small = vec![false, false, false, true, true];
        let z = zones_marked(&list, &small);
        assert_eq!(z.len(), 2, "{z:?}");
        assert_eq!(z[1], vec![3], "{z:?}");
        assert!(z[0].contains(&4), "{z:?}");
    }

    #[test]
    fn a_small_piece_beside_a_short_last_line_far_from_its_letters_is_a_zone_of_its_own() {
        // Three lines (an em is 15 px), the last short at the right (x 140..190), and a piece
        // small enough to be a mark just under that line's row but 60 px left of its letters
        // and 33 px under the line above (over an em from every letter): a page number beside
        // a short last line. Its own zone. A dot 4 px under the short line's letters stays, and
        // so does a small piece within that line's row 34 px from its letters (a lone hamza).
        let mut list = vec![
            comp(10, 0, 190, 15),
            comp(10, 30, 190, 45),
            comp(140, 60, 190, 75),
        ];
        list.push(comp(74, 78, 80, 85));
        list.push(comp(160, 79, 164, 83));
        list.push(comp(100, 66, 106, 74));
        let small = vec![false, false, false, true, true, true];
        let z = zones_marked(&list, &small);
        assert_eq!(z.len(), 2, "{z:?}");
        assert_eq!(z[1], vec![3], "{z:?}");
        assert!(z[0].contains(&4) && z[0].contains(&5), "{z:?}");
    }

    /// Rows 2-4 of seven, each with one word space too wide to be anything but a gap
    /// (`lone_gap_px`); `parts` gives each of those rows' left word end and right word start;
    /// the other rows run across.
    fn stretched_rows(parts: [(u32, u32); 3]) -> Vec<Component> {
        let mut list = Vec::new();
        for i in 0..7u32 {
            let y = i * 30;
            match i {
                2..=4 => {
                    let (end, start) = parts[i as usize - 2];
                    list.push(comp(0, y, end, y + 15));
                    list.push(comp(start, y, 200, y + 15));
                }
                _ => list.push(comp(0, y, 200, y + 15)),
            }
        }
        list
    }

    #[test]
    fn stretched_spaces_between_full_lines_are_no_gutter_but_a_margin_note_stays_apart() {
        // Three justified lines of large type, two words each, whose stretched spaces (each
        // wider than a lone gap) overlap at x 95..110, between full lines: one zone.
        let rows = [(60, 110), (80, 128), (95, 140)];
        let list = stretched_rows(rows);
        let z = zones_of(&list);
        assert_eq!(z.len(), 1, "{z:?}");
        // A note of two rows in the left margin beside a paragraph's last two lines, under
        // lines that start at x 60: none runs across the white, so the note stays apart.
        let mut list = Vec::new();
        for i in 0..6u32 {
            let y = i * 30;
            if i >= 4 {
                list.push(comp(0, y, 10, y + 15));
                list.push(comp(150, y, 200, y + 15));
            } else {
                list.push(comp(60, y, 200, y + 15));
            }
        }
        let z = zones_of(&list);
        assert!(z.contains(&vec![4, 6]), "{z:?}");
    }

    #[test]
    fn a_large_title_s_dots_over_it_stay_with_the_title() {
        // Two dots 10 x 8 px (y 40..48; not thin for the page's 15-px em) 2 px over a title
        // 30 px high (y 50..80), 50 px apart (a lone gap), then body lines: the dots' row is
        // thin beside the title's and joins it; the title is one zone with its dots.
        let mut list = vec![
            comp(60, 40, 70, 48),
            comp(120, 40, 130, 48),
            comp(30, 50, 170, 80),
        ];
        for i in 0..3 {
            let y = 110 + i * 30;
            list.push(comp(10, y, 190, y + 15));
        }
        let z = zones_of(&list);
        assert!(
            z.iter()
                .any(|zone| zone.contains(&0) && zone.contains(&1) && zone.contains(&2)),
            "{z:?}"
        );
    }

    #[test]
    fn columns_whose_first_lines_open_paragraphs_under_a_title_are_read_whole() {
        // A full-width title, then two columns (x 110..190 and 10..90, gutter 90..110) whose
        // first lines open paragraphs indented from the right (to 175 and 60): that row's gap,
        // 60..110, is a lone gap. The left column's second line has a word space (62..80)
        // inside it, beside the gutter. The first row is the columns' and not the title's.
        let mut list = vec![
            comp(10, 0, 190, 20),
            comp(110, 40, 175, 55),
            comp(10, 40, 60, 55),
            comp(110, 70, 190, 85),
            comp(10, 70, 62, 85),
            comp(80, 70, 90, 85),
        ];
        for y in [100, 130] {
            list.push(comp(110, y, 190, y + 15));
            list.push(comp(10, y, 90, y + 15));
        }
        let z = zones_of(&list);
        let sizes: Vec<usize> = z.iter().map(Vec::len).collect();
        assert_eq!(
            sizes,
            vec![1, 4, 5],
            "title, right column, left column: {z:?}"
        );
        assert_eq!(list[z[1][0]].x0, 110, "{z:?}");
    }

    #[test]
    fn a_river_narrowing_to_half_its_width_is_not_a_gutter() {
        // Six justified lines of a narrow column (x 864..1470, em 55.5 px) in large type, their
        // word spaces as on a generated page: the third line is two words 202 px apart (a
        // lone gap); the spaces of the two lines under it keep 108 px of that white, then 54 px
        // (half). A gutter keeps its width down the column; this is a river, and the column
        // is one zone.
        let sizes = CutSizes {
            gutter_px: 0.9 * 55.5,
            wide_gap_px: 1.6 * 55.5,
            lone_gap_px: 3.0 * 55.5,
            em_px: 55.5,
        };
        // Each row: top, bottom, word spaces.
        type Row<'a> = (u32, u32, &'a [(u32, u32)]);
        let rows: [Row; 6] = [
            (316, 364, &[(1026, 1091)]),
            (394, 442, &[(1145, 1242)]),
            (473, 521, &[(1152, 1354)]),
            (551, 610, &[(942, 1052), (1194, 1302)]),
            (629, 677, &[(951, 1005), (1129, 1185), (1248, 1304)]),
            (708, 756, &[(944, 1024), (1166, 1230), (1298, 1361)]),
        ];
        let mut list = Vec::new();
        for (y0, y1, spaces) in rows {
            let mut x = 864;
            for &(a, b) in spaces {
                list.push(comp(x, y0, a, y1));
                x = b;
            }
            list.push(comp(x, y0, 1470, y1));
        }
        let none = vec![false; list.len()];
        let z = zones(&list, &none, (0..list.len()).collect(), sizes, &[]);
        assert_eq!(z.len(), 1, "{z:?}");
    }
}
