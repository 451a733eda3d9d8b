//! Text lines inside one zone (a column piece): line cores from the main bodies, then every
//! component — dots, hamza and harakat included — given to a line; baseline, x-height, line image.
//!
//! A naive cut of the projection profile gives a dot that sits closer to the next line to that line.
//! Here the profile is built from main bodies only (letters and letter groups, no marks), its peaks
//! are the baselines (in Arabic type the baseline row is the densest), the band around each peak is the
//! line's core, and each component joins the core it overlaps most, or the nearest core when it
//! overlaps none. A body that reaches into a neighbour's core (touching lines) adds to its line's box
//! only up to half-way between the two cores.

use image::GrayImage;

use super::components::{Component, Components};
use super::geometry::Rect;

/// The ink of a page as layout sees it: components, their runs, and which are marks.
pub struct PageInk<'a> {
    /// All components.
    pub comps: &'a Components,
    /// Run offsets per component (see [`Components::runs_by_component`]).
    pub off: Vec<u32>,
    /// Run indices per component.
    pub idx: Vec<u32>,
    /// True for small components (dots, hamza, harakat, specks).
    pub is_mark: Vec<bool>,
    /// True for components too small to make a line alone (marks of larger type).
    pub is_small: Vec<bool>,
}

/// A line found in a zone, in straightened-page pixels.
#[derive(Debug, Clone, PartialEq)]
pub struct FoundLine {
    /// Components of the line.
    pub comps: Vec<usize>,
    /// Box of the line's ink.
    pub bbox: Rect,
    /// Baseline row.
    pub baseline_y: f32,
    /// Height of the core band above the baseline.
    pub x_height_px: f32,
    /// The core band `(top, bottom)`.
    pub core: (f32, f32),
    /// Type size measure: the 75th percentile of the heights of the line's main bodies.
    pub size_px: f32,
}

/// Median of a list (0 for an empty one).
pub fn median(mut v: Vec<f32>) -> f32 {
    if v.is_empty() {
        return 0.0;
    }
    v.sort_by(|a, b| a.total_cmp(b));
    v[v.len() / 2]
}

/// Find the lines of a zone given as component indices. A line is cut where its letters leave a gap
/// of at least `split_gap_px` (a running header's title and its page number on one row).
pub fn find_lines(ink: &PageInk, zone: &[usize], split_gap_px: f32) -> Vec<FoundLine> {
    let list = &ink.comps.list;
    let bodies: Vec<usize> = zone.iter().copied().filter(|&c| !ink.is_mark[c]).collect();
    if bodies.is_empty() {
        return Vec::new();
    }
    let y0 = zone.iter().map(|&c| list[c].y0).min().unwrap_or(0);
    let y1 = zone.iter().map(|&c| list[c].y1).max().unwrap_or(0);
    let hb = median(bodies.iter().map(|&c| list[c].height() as f32).collect()).max(2.0);
    let prof = body_profile(ink, &bodies, y0, y1);
    let sm = smooth(&prof, ((hb / 6.0) as usize).max(1));
    let peaks = drop_close_peaks(&sm, find_peaks(&sm));
    if peaks.is_empty() {
        return Vec::new();
    }
    let cores: Vec<(usize, usize)> = peaks
        .iter()
        .enumerate()
        .map(|(i, &p)| core_band(&sm, &peaks, i, p))
        .collect();
    let mut members: Vec<Vec<usize>> = vec![Vec::new(); peaks.len()];
    let mut line_of = std::collections::HashMap::new();
    // A small piece that touches no line's core (a damma over a shadda, higher than a mark of the
    // page's main type) is placed like a mark: with the letter it sits on, not the nearest core.
    let mut floating = std::collections::HashSet::new();
    let mut between = Vec::new();
    for &c in &bodies {
        let (k, overlap) = best_core(&list[c], &cores, y0);
        if ink.is_small[c] && overlap <= 0.0 && cores.len() > 1 {
            floating.insert(c);
            continue;
        }
        if overlap <= 0.0 {
            between.push(c);
        }
        members[k].push(c);
        line_of.insert(c, k);
    }
    // A larger piece between two cores (harakat of large type) went to the nearer one; when that
    // line has no letters near it across the page (the white after a paragraph's short last
    // line) and the line on its other side has, it is that line's.
    for &c in &between {
        let m = &list[c];
        let k = line_of[&c];
        let others: Vec<usize> = members[k].iter().copied().filter(|&b| b != c).collect();
        if local_extent(ink, m, &others, hb).is_some() {
            continue;
        }
        if let Some(j) = line_across(m, k, &cores, y0)
            .filter(|&j| local_extent(ink, m, &members[j], hb).is_some())
        {
            members[k].retain(|&b| b != c);
            members[j].push(c);
            line_of.insert(c, j);
        }
    }
    // A piece between two cores that stands on a letter of the other line (a shadda and the
    // damma over it run together by blur) and far from the letters of its own is that line's.
    for &c in &between {
        let m = &list[c];
        let k = line_of[&c];
        let Some(j) = line_across(m, k, &cores, y0) else {
            continue;
        };
        let nearest = |line: &[usize]| {
            line.iter()
                .filter(|&&b| b != c && !between.contains(&b))
                .map(|&b| &list[b])
                .filter(|b| b.x0 < m.x1 && m.x0 < b.x1)
                .map(|b| vertical_gap(m, b))
                .reduce(f32::min)
        };
        if let Some(there) = nearest(&members[j]) {
            // With no letter of its own line over or under it, its own line is a letter height off.
            if there * BETWEEN_NEARER < nearest(&members[k]).unwrap_or(hb) {
                members[k].retain(|&b| b != c);
                members[j].push(c);
                line_of.insert(c, j);
            }
        }
    }
    // A core that holds only one or two crumbs is no line: the dots over or under a title's
    // letters, too big to be marks of the page's type, make profile peaks of their own when the
    // zone has few lines. A crumb stands under CRUMB_SHARE of the zone's tallest letter, is
    // narrower than CRUMB_WIDE of it (a short last line of one low word is wider) and lies
    // within CRUMB_SHARE of it over or under a letter of another core; crumbs are placed like
    // marks. Measured on 200 + 200 generated pages (seed 505): damaged pages in order 82.5 →
    // 83.0 % (a title set apart by a rule lost its blurred dots to a line of their own); clean
    // pages one extra line fewer (F1 unchanged at 0.9981). A core of three or more crumbs is a
    // row of harakat when they are low for the zone's type too and three quarters of them are
    // near another core's letters (`CRUMB_ROW`): on an Amiri page at 150 dpi the harakat over
    // the lines, too large to be marks of the page's type and with a shadda over half the
    // letter height, made rows of their own; with a row over most lines their profile peaks
    // were too many to drop as close ones. Measured on the same pages, with the stack rule of
    // `stacked_marks` below: clean pages in order 96.5 → 97.5 %, damaged 84.0 → 85.0 % (this
    // rule alone: clean page 94 and damaged page 94 whole again).
    let tallest = bodies.iter().map(|&c| list[c].height()).max().unwrap_or(0) as f32;
    let small = |c: usize| {
        let m = &list[c];
        (m.height() as f32) < CRUMB_SHARE * tallest && (m.width() as f32) < CRUMB_WIDE * tallest
    };
    let close_to_other = |c: usize, k: usize, members: &[Vec<usize>]| {
        let m = &list[c];
        members.iter().enumerate().any(|(j, other)| {
            j != k
                && other.iter().any(|&b| {
                    let l = &list[b];
                    let white = m.y0.saturating_sub(l.y1).max(l.y0.saturating_sub(m.y1));
                    m.x0 < l.x1 && l.x0 < m.x1 && (white as f32) < CRUMB_SHARE * tallest
                })
        })
    };
    let crumbs: Vec<usize> = (0..members.len())
        .filter(|&k| {
            let m = &members[k];
            let n = m.len();
            let low = |c: &usize| (list[*c].height() as f32) < CRUMB_ROW_HB * hb;
            // Size first: a line of letters fails it at once, before any neighbour is searched.
            if n == 0 || !m.iter().all(|&c| small(c)) || (n >= CRUMB_ROW && !m.iter().all(low)) {
                return false;
            }
            let close = m
                .iter()
                .filter(|&&c| close_to_other(c, k, &members))
                .count();
            if n < CRUMB_ROW {
                close == n
            } else {
                close * 4 >= n * 3
            }
        })
        .collect();
    let found_crumbs = !crumbs.is_empty();
    for k in crumbs {
        for c in std::mem::take(&mut members[k]) {
            line_of.remove(&c);
            floating.insert(c);
        }
    }
    let letters: Vec<usize> = bodies
        .iter()
        .copied()
        .filter(|c| !floating.contains(c))
        .collect();
    // The letter height of a zone that had crumbs is that of its letters alone.
    let hb = if found_crumbs {
        median(letters.iter().map(|&c| list[c].height() as f32).collect()).max(2.0)
    } else {
        hb
    };
    let grid = BodyGrid::new(list, &letters, hb);
    let mark_like = |c: usize| ink.is_mark[c] || floating.contains(&c);
    // Dust of a scan is often much smaller than the page's dots: such a speck joins a letter
    // only from close by, so that dust between lines does not stretch a line's box.
    let dot_area = median(
        zone.iter()
            .filter(|&&c| ink.is_mark[c])
            .map(|&c| list[c].area as f32)
            .collect(),
    );
    // A speck under a tenth of a letter height on a side is dust wherever it lies: on a dusty
    // page the specks outnumber the dots, and the zone's median mark is one of them.
    let speck = |c: usize| (list[c].area as f32) < (SPECK_HB * hb).powi(2);
    let reach = |c: usize| {
        if speck(c) {
            0.0
        } else if (list[c].area as f32) < DUST_AREA * dot_area {
            DUST_REACH_HB * hb
        } else {
            MARK_REACH_HB * hb
        }
    };
    let mut loose = Vec::new();
    let stacked = stacked_marks(
        list,
        &grid,
        zone.iter().copied().filter(|&c| mark_like(c)),
        hb,
    );
    for &c in zone.iter().filter(|&&c| mark_like(c)) {
        // A mark stacked on others goes with its stack's base mark (below).
        if stacked.contains_key(&c) {
            continue;
        }
        // A mark within the height of exactly one line's letters around it is that line's (a dot
        // under a slanted letter may sit right above a tall letter of the next line); any other mark
        // belongs to the letter it sits on or hangs under, within its `reach`; only a mark with no
        // letter above or below it goes to the nearest core.
        let m = &list[c];
        let cy = (m.y0 + m.y1) as f32 / 2.0;
        let mut within = (0..cores.len()).filter(|&k| {
            let (t, b) = (cores[k].0 as f32 + y0 as f32, cores[k].1 as f32 + y0 as f32);
            cy > t - 2.0 * hb
                && cy < b + 2.0 * hb
                && local_extent(ink, m, &members[k], hb).is_some_and(|(a, z)| cy > a && cy < z)
        });
        let inside = match (within.next(), within.next()) {
            (Some(k), None) => Some(k),
            _ => None,
        };
        let near_letters = |k: usize| {
            local_extent(ink, m, &members[k], hb).is_none_or(|(a, z)| {
                m.y1 as f32 >= a - BEYOND_LETTERS_HB * hb
                    && m.y0 as f32 <= z + BEYOND_LETTERS_HB * hb
            })
        };
        match inside.or_else(|| {
            grid.nearest_below_or_above(ink, m, reach(c))
                .map(|b| line_of[&b])
                .filter(|&k| near_letters(k))
        }) {
            Some(k) => {
                members[k].push(c);
                line_of.insert(c, k);
            }
            None => loose.push(c),
        }
    }
    for (&c, b) in &stacked {
        match line_of.get(b).copied() {
            Some(k) => {
                members[k].push(c);
                line_of.insert(c, k);
            }
            None => loose.push(c),
        }
    }
    // Marks stacked on marks (a damma over a shadda over a letter's dot) reach their letter
    // through the marks under or over them.
    loop {
        let placed: Vec<usize> = zone
            .iter()
            .copied()
            .filter(|&c| mark_like(c) && line_of.contains_key(&c))
            .collect();
        let before = loose.len();
        loose.retain(
            |&c| match nearest_vertical(list, &list[c], &placed, reach(c)) {
                Some(b) => {
                    let k = line_of[&b];
                    members[k].push(c);
                    line_of.insert(c, k);
                    false
                }
                None => true,
            },
        );
        if loose.len() == before {
            break;
        }
    }
    for c in loose {
        // No letter or mark above or below it: kept only beside the letters of its row, within a
        // quarter body height of their top and bottom (a speck only within them); anything else
        // is a speck of dust.
        let m = &list[c];
        let k = pick_core(m, &cores, y0);
        let beside = local_extent(ink, m, &members[k], 1.5 * hb).is_some_and(|(a, z)| {
            if speck(c) {
                m.y0 as f32 >= a && (m.y1 as f32) <= z
            } else {
                m.y1 as f32 > a - 0.25 * hb && (m.y0 as f32) < z + 0.25 * hb
            }
        });
        if beside {
            members[k].push(c);
        }
    }
    dissolve_small_lines(ink, &grid, &mut members, &cores, y0, hb);
    for line in &mut members {
        keep_marks_near_the_ends(list, line, &mark_like, hb);
    }
    // Cores that kept letters: a profile peak no letter chose (the foot stroke of a lone "12")
    // must not clip the box of the line above or below it.
    let alive: Vec<usize> = (0..cores.len())
        .filter(|&k| members[k].iter().any(|&c| !mark_like(c)))
        .collect();
    // Only the zone's first and last lines are cut at wide gaps (a running header's title and
    // its page number); a line between two others is a justified line of few words, and so is a
    // first line in the type of the lines under it that fills their measure at their spacing,
    // and a last line that fills the measure of the lines above it.
    let (first, last) = (alive.first().copied(), alive.last().copied());
    // White between the cores of neighbouring lines; a zone's end line is set off when its
    // white to the next line is over half as wide again as the median of the others.
    let white: Vec<f32> = alive
        .windows(2)
        .map(|w| cores[w[1]].0.saturating_sub(cores[w[0]].1) as f32)
        .collect();
    // Of a zone of two lines, one in type clearly smaller than the other's (its core band, the
    // rows most of its letters fill; a running header over a title) is set apart too.
    let type_of = |k: usize| (cores[k].1 - cores[k].0) as f32;
    let smaller: Option<usize> =
        (alive.len() == 2)
            .then(|| (alive[0], alive[1]))
            .and_then(|(a, b)| {
                let (ta, tb) = (type_of(a), type_of(b));
                if ta < SMALLER_TYPE * tb {
                    Some(a)
                } else if tb < SMALLER_TYPE * ta {
                    Some(b)
                } else {
                    None
                }
            });
    let set_off = |k: usize| {
        if white.is_empty() || smaller == Some(k) {
            return true;
        }
        let (own, rest) = if Some(k) == first {
            (white[0], &white[1..])
        } else {
            (white[white.len() - 1], &white[..white.len() - 1])
        };
        rest.len() >= 2 && own > SET_OFF * median(rest.to_vec())
    };
    let whole_first = justified_end_line(ink, &members, &alive, &cores, hb, false);
    let whole_last = justified_end_line(ink, &members, &alive, &cores, hb, true);
    let pieces = members.into_iter().enumerate().flat_map(|(k, comps)| {
        let ends = (Some(k) == first && !whole_first) || (Some(k) == last && !whole_last);
        let gap = if ends { split_gap_px } else { f32::MAX };
        // A line set apart from the zone's others (a running header, a foot line) may end in
        // its page number.
        let parts = if ends && set_off(k) {
            split_off_number(ink, comps, hb)
        } else {
            vec![comps]
        };
        parts
            .into_iter()
            .flat_map(move |p| split_at_wide_gaps(ink, p, gap))
            .map(move |p| (k, p))
    });
    let mut out = Vec::new();
    for (k, comps) in pieces {
        if comps.iter().all(|&c| mark_like(c)) {
            continue; // marks with no letter: left out (their nearest line took them if it had letters)
        }
        let (ct, cb) = (
            cores[k].0 as f32 + y0 as f32,
            cores[k].1 as f32 + y0 as f32 + 1.0,
        );
        let above = alive.iter().rev().find(|&&j| j < k).map(|&j| cores[j]);
        let below = alive.iter().find(|&&j| j > k).map(|&j| cores[j]);
        // Half way to the neighbouring lines' cores, and those cores' near edges.
        let (near_top, near_bot) = (
            above.map_or(f32::MIN, |c| c.1 as f32 + y0 as f32 + 1.0),
            below.map_or(f32::MAX, |c| c.0 as f32 + y0 as f32),
        );
        let lim_top = above.map_or(f32::MIN, |c| (c.1 as f32 + y0 as f32 + ct) / 2.0);
        let lim_bot = below.map_or(f32::MAX, |c| (cb + c.0 as f32 + y0 as f32) / 2.0);
        // The box is the bounds of the line's binarized ink, with no air added: measured on
        // generated pages, a pixel of air around tiny lines (a lone page number) cost more overlap
        // with the printed ink's bounds than it gained; the recognizer's crop adds its own margin.
        // Pieces placed like marks are still clipped like letters: measured on generated pages,
        // letting them stretch the box cost more lines than it won. A letter is cut at half
        // way to a neighbouring line only when it reaches into that line's core (touching
        // lines) or is low for the zone's type (harakat set as letters, which may be the
        // neighbour's): a Nastaliq word rising steeply past half way kept its top (generated
        // pages, seed 505: clean pages in order 97.5 → 98.0 %, damaged 85.0 → 86.0 %, pages 22,
        // 89 and 99 whole again; line F1 0.9985 → 0.9987 and 0.9872 → 0.9875). Without the low
        // pieces cut, two pages lost their lines to the harakat of the line under them.
        let clipped = |c: usize| {
            let m = &list[c];
            !ink.is_mark[c]
                && (mark_like(c)
                    || (m.height() as f32) < CRUMB_ROW_HB * hb
                    || (m.y0 as f32) < near_top
                    || (m.y1 as f32) > near_bot)
        };
        let bbox = line_box(&comps, list, &clipped, lim_top, lim_bot);
        let base = (peak_row(&prof, cores[k]) + y0 as usize) as f32 + 0.5;
        let mut hs: Vec<f32> = comps
            .iter()
            .filter(|&&c| !ink.is_mark[c])
            .map(|&c| list[c].height() as f32)
            .collect();
        hs.sort_by(|a, b| a.total_cmp(b));
        let size_px = hs[(hs.len() * 3 / 4).min(hs.len() - 1)];
        let x_height_px = (base - ct).max(1.0);
        out.push(FoundLine {
            comps,
            bbox,
            baseline_y: base,
            x_height_px,
            core: (ct, cb),
            size_px,
        });
    }
    out
}

/// A line's components cut at gaps between letters of at least `gap` pixels, right piece first;
/// each mark goes with the piece nearest to it.
fn split_at_wide_gaps(ink: &PageInk, comps: Vec<usize>, gap: f32) -> Vec<Vec<usize>> {
    let list = &ink.comps.list;
    let mut spans: Vec<(u32, u32)> = comps
        .iter()
        .filter(|&&c| !ink.is_mark[c])
        .map(|&c| (list[c].x0, list[c].x1))
        .collect();
    spans.sort_unstable();
    let mut runs: Vec<(u32, u32)> = Vec::new();
    for (a, b) in spans {
        match runs.last_mut() {
            Some(r) if (a as f32) < r.1 as f32 + gap => r.1 = r.1.max(b),
            _ => runs.push((a, b)),
        }
    }
    if runs.len() < 2 {
        return vec![comps];
    }
    let mut out = vec![Vec::new(); runs.len()];
    for c in comps {
        let (x0, x1) = (list[c].x0, list[c].x1);
        let dist = |r: &(u32, u32)| x0.saturating_sub(r.1).max(r.0.saturating_sub(x1));
        let k = (0..runs.len()).min_by_key(|&k| dist(&runs[k])).unwrap_or(0);
        out[k].push(c);
    }
    out.reverse();
    out
}

/// A set-off line's components with a page number at either end cut off, right piece first: a
/// run of letters no wider than [`NUMBER_WIDTH_HB`] body heights, none taller than
/// [`NUMBER_HEIGHT_HB`], set at least [`NUMBER_GAP_HB`] body heights apart from the rest, which
/// is at least twice as wide. A running header's page number often stands that close to its
/// title, nearer than the gap that cuts a line anyway.
fn split_off_number(ink: &PageInk, comps: Vec<usize>, hb: f32) -> Vec<Vec<usize>> {
    let list = &ink.comps.list;
    let mut bodies: Vec<usize> = comps.iter().copied().filter(|&c| !ink.is_mark[c]).collect();
    bodies.sort_unstable_by_key(|&c| list[c].x0);
    let mut runs: Vec<(u32, u32, bool)> = Vec::new(); // x0, x1, all pieces short
    for &c in &bodies {
        let b = &list[c];
        let short = b.height() as f32 <= NUMBER_HEIGHT_HB * hb;
        match runs.last_mut() {
            Some(r) if (b.x0 as f32) < r.1 as f32 + NUMBER_GAP_HB * hb => {
                r.1 = r.1.max(b.x1);
                r.2 &= short;
            }
            _ => runs.push((b.x0, b.x1, short)),
        }
    }
    if runs.len() < 2 {
        return vec![comps];
    }
    let width = |a: u32, b: u32| b.saturating_sub(a) as f32;
    let number = |r: &(u32, u32, bool), rest: f32| {
        r.2 && width(r.0, r.1) <= NUMBER_WIDTH_HB * hb && rest >= 2.0 * width(r.0, r.1)
    };
    let (first, last) = (runs[0], runs[runs.len() - 1]);
    let mut cuts: Vec<u32> = Vec::new(); // x where a piece ends, left to right
    if number(&first, width(runs[1].0, last.1)) {
        cuts.push(first.1);
    }
    if number(&last, width(first.0, runs[runs.len() - 2].1)) {
        cuts.push(runs[runs.len() - 2].1);
    }
    if cuts.is_empty() {
        return vec![comps];
    }
    // Pieces are the spans between cuts; a mark goes with the piece its centre lies over.
    let mut out = vec![Vec::new(); cuts.len() + 1];
    for c in comps {
        let cx = (list[c].x0 + list[c].x1) / 2;
        out[cuts.iter().filter(|&&x| cx > x).count()].push(c);
    }
    out.retain(|p| !p.is_empty());
    out.reverse();
    out
}

/// Least share of the narrower mark's width two marks of one stack overlap across: the marks of
/// one letter are centred on it, and the two lower dots of a shin's three overlap the top one
/// by about two fifths (0.5 left a damma over them to a descender of the line above).
const STACK_OVERLAP: f32 = 0.3;

/// Most white between two marks of one stack (a damma over a shadda), in median letter heights.
const STACK_GAP_HB: f32 = 0.2;

/// White between two boxes one above the other (0 when they overlap in height).
fn vertical_gap(a: &Component, b: &Component) -> f32 {
    (a.y0 as f32 - b.y1 as f32)
        .max(b.y0 as f32 - a.y1 as f32)
        .max(0.0)
}

/// Marks stacked on other marks, each with the mark of its stack that sits nearest a letter (gaps
/// to letters weighed as for placing marks). A stack is a chain of marks that overlap across by
/// [`STACK_OVERLAP`] with under [`STACK_GAP_HB`] of white between each and the next (a damma over
/// a shadda over a letter's dot); it goes with its base mark, not with each mark's own nearest
/// letter: between two lines the top of a stack over a letter of the lower line can be nearer a
/// descender of the upper line. Measured on 200 + 200 generated pages (seed 505): clean pages in
/// order 93.0 → 94.0 % (three pages whole again, one lost), line F1 0.9972 → 0.9974; damaged
/// pages 77.5 → 77.0 % (chains through a dot right under one line and a mark over the next),
/// F1 unchanged (0.9889). Without the overlap rule and with gaps up to 0.3 letter heights, such
/// chains joined marks of neighbouring lines more often (clean 93.0 %, damaged 76.0 %).
/// Two marks also chain only when the white between them is no wider than the white from one
/// of them to its nearest letter, and a pixel: a dot right under a letter of one line and a
/// sukun over a shadda over the next line's noon are each nearer a letter than each other, and
/// the chain through them took the noon's marks to the line above (clean page 97, Kufam); a
/// shin's dots, a pixel apart, touch letter boxes (gap 0) and still chain (clean page 159).
/// With the harakat-row rule of `find_lines`, clean pages in order 96.5 → 97.5 %, damaged
/// 84.0 → 85.0 %; this rule alone makes clean and damaged page 97 whole again.
fn stacked_marks(
    list: &[Component],
    grid: &BodyGrid,
    marks: impl Iterator<Item = usize>,
    hb: f32,
) -> std::collections::BTreeMap<usize, usize> {
    let mut marks: Vec<usize> = marks.collect();
    marks.sort_by_key(|&c| list[c].x0);
    let widest = marks.iter().map(|&c| list[c].width()).max().unwrap_or(0);
    // The weighed gap, then the plain one: a dot 5 px under its letter (weighed 10) and the
    // kasra 10 px over the next line's letter under that dot tie, and the dot is nearer.
    // Measured on 200 + 200 generated pages (seed 505): damaged pages in order 80.0 → 80.5 %
    // (page 42 whole again), clean pages unchanged.
    let letter_gap = |c: usize| {
        let gap = |weight| {
            grid.nearest_weighted(list, &list[c], f32::MAX, &[], weight)
                .map_or(f32::MAX, |(_, gap)| gap)
        };
        (gap(ABOVE_GAP_WEIGHT), gap(1.0))
    };
    // Union-find over the marks by position in `marks`.
    let mut parent: Vec<usize> = (0..marks.len()).collect();
    fn root(parent: &mut [usize], mut i: usize) -> usize {
        while parent[i] != i {
            parent[i] = parent[parent[i]];
            i = parent[i];
        }
        i
    }
    let gaps: Vec<(f32, f32)> = marks.iter().map(|&c| letter_gap(c)).collect();
    for (i, &c) in marks.iter().enumerate() {
        let m = &list[c];
        let from = marks.partition_point(|&d| list[d].x0 + widest < m.x0);
        for j in (from..marks.len()).take_while(|&j| list[marks[j]].x0 < m.x1) {
            let n = &list[marks[j]];
            let overlap = m.x1.min(n.x1) as f32 - m.x0.max(n.x0) as f32;
            let narrower = m.width().min(n.width()) as f32;
            let white = vertical_gap(m, n);
            if j != i
                && overlap >= STACK_OVERLAP * narrower
                && white < STACK_GAP_HB * hb
                && white <= gaps[i].1.max(gaps[j].1) + 1.0
            {
                let (a, b) = (root(&mut parent, i), root(&mut parent, j));
                parent[a] = b;
            }
        }
    }
    // Each stack's base, by the stack's root.
    let mut base: Vec<Option<usize>> = vec![None; marks.len()];
    for i in 0..marks.len() {
        let r = root(&mut parent, i);
        if base[r].is_none_or(|b| gaps[i] < gaps[b]) {
            base[r] = Some(i);
        }
    }
    (0..marks.len())
        .filter_map(|i| {
            let b = base[root(&mut parent, i)]?;
            (b != i).then(|| (marks[i], marks[b]))
        })
        .collect()
}

/// Of a zone's two lines, the one whose core band is under this share of the other's is set
/// apart like a line with wide white around it (a running header over a title). Measured on
/// 200 + 200 generated pages (seed 505): clean pages in order 96.0 → 96.5 %, damaged 83.0 →
/// 83.5 % (the same page both times: its header's page number was read as part of the header).
const SMALLER_TYPE: f32 = 0.7;

/// White to the next line that sets a zone's first or last line apart, over the median white
/// between its other lines.
const SET_OFF: f32 = 1.5;

/// Furthest a mark may sit above or below its letter, in the zone's median letter heights: dust
/// further off stretched boxes of damaged pages; a tighter 0.4 lost harakat of clean pages
/// (measured on generated pages).
const MARK_REACH_HB: f32 = 0.6;

/// Furthest, in median letter heights, a mark placed by the letter under or over it may stand
/// above the tallest or below the deepest letters of its line around it: a hamza over an alef or
/// a fatha over a lam stands close over the ascenders, dots over short letters stand among them;
/// a dot-sized speck of dust half a letter height over an alef is further. Measured on 200 + 200
/// generated pages (seed 505): damaged pages in order 79.0 → 82.5 %, line F1 0.9854 → 0.9865;
/// clean pages unchanged (95.0 %, 0.9979). At 0.25: damaged 82.0 %, clean 94.5 % (a mark lost);
/// at 0.5: damaged 80.5 %.
const BEYOND_LETTERS_HB: f32 = 0.35;

/// A mark smaller than this share of the zone's median mark area (most marks are dots) may be
/// dust and joins a letter only within [`DUST_REACH_HB`]. Measured on generated pages (seed 505):
/// at 0.25, 0.7 and 1.0, damaged pages in order 72.5 → 76.5, 78.0, 78.0 %, line F1 0.9871 →
/// 0.9889, 0.9896, 0.9896; clean pages unchanged at 0.25 and 0.7, one page more in order at 1.0.
const DUST_AREA: f32 = 1.0;

/// How near, in median letter heights, a possible speck of dust must sit to its letter.
const DUST_REACH_HB: f32 = 0.3;

/// Side, in median letter heights, of the square a piece's area must reach not to be a speck of
/// dust (joined to no letter from outside its line's letters). Measured on 200 + 200 generated
/// pages (seed 505): damaged pages in order 77.5 → 78.5 %, line F1 0.9890 → 0.9920, kinds
/// 96.6 → 96.9 %; clean pages unchanged (95.5 %, 0.9980). At 0.12: clean 94.5 %, damaged 78.0 %
/// (thin harakat of small type are lost); an area under the page's median dot lost harakat on
/// clean pages (74.5 %).
const SPECK_HB: f32 = 0.1;

/// Tallest a crumb stands, and furthest from the letter it sits on or hangs under, as a share of
/// the tallest letter of its zone ([`find_lines`]): dots and harakat stand about a third of an
/// alef's height and close to their letter (common practice, no source).
const CRUMB_SHARE: f32 = 0.4;

/// Widest a crumb is, as a share of the tallest letter of its zone: a shin's three dots span
/// about a third of an alef's height, two dots blurred into one piece 0.44 (measured on a
/// damaged generated page, seed 505), a word of two low letters most of it or more (common
/// practice, no source).
const CRUMB_WIDE: f32 = 0.6;
/// Pieces from which a core of crumbs is a row of harakat: three quarters of them close over
/// or under another core's letters suffice (a fatha over a gap between words is far from any),
/// and each must stand under CRUMB_ROW_HB of the zone's median letter height (the harakat of an
/// Amiri page at 150 dpi stood at 0.56 of it, a Nastaliq page's line of digits under its tall
/// letters at 1.0; generated pages, seed 505).
const CRUMB_ROW: usize = 3;
const CRUMB_ROW_HB: f32 = 0.75;

/// How many times nearer a letter of the other line a piece between two cores must stand than
/// any letter of its own line, straight over or under it, to go to that line. Measured on
/// 200 + 200 generated pages (seed 505): damaged pages in order 92.0 → 92.5 % (page 183: a
/// shadda and its damma, run together, 1 px over a lam and 9 px under the line above), line F1
/// 0.9895 → 0.9896; clean pages 98.0 % unchanged, F1 0.9987 → 0.9989.
const BETWEEN_NEARER: f32 = 2.0;

/// Widest page number cut off a first or last line, in letter-body heights (four digits).
const NUMBER_WIDTH_HB: f32 = 3.0;
/// Tallest piece of such a number, in letter-body heights.
const NUMBER_HEIGHT_HB: f32 = 1.5;
/// Least gap between such a number and the rest of its line, in letter-body heights.
const NUMBER_GAP_HB: f32 = 2.0;

/// Furthest, in median letter heights, a round mark may stand beyond the first or last letter
/// of its line (or beyond a mark kept there): a full stop, a comma or the zeros of a number
/// ending in Arabic-Indic zeros stand close; a speck of dust beside a page number stretched its
/// box. Other pieces may stand further: a page number's dashes, a spaced-out alef. Measured on
/// 200 + 200 generated pages (seed 505): damaged pages in order 72.5 → 75.0 %, line F1 0.9836 →
/// 0.9844; clean pages unchanged (95.0 %, 0.9979). At 0.6 damaged 75.5 % but a full stop after a
/// space in spaced-out type was lost on a clean page; at 1.2 damaged 73.5 %.
const END_REACH_HB: f32 = 0.9;

/// Least white, in the line's letter heights, between the line's span and a round mark beyond it
/// for the mark to be dust when it stands wholly over or under the letters near it (a mark of
/// the end letter may hang a little past it; common practice, no source). Measured on 200 + 200
/// generated pages (seed 505): damaged pages in order 87.0 → 88.0 %, line F1 0.9884 → 0.9886
/// (a square speck past a Handjet line under its baseline, a speck below and beside a page
/// number); clean pages unchanged (98.0 %, 0.9987).
const END_BAND_FREE_HB: f32 = 0.4;

/// Drops from `line` the round marks (neither side half as long again as the other) beyond the
/// horizontal span of its other pieces by more than [`END_REACH_HB`] letter heights, the span
/// growing with each mark kept, nearest first. A letter height is the median of the line's own
/// letters, at most `hb` (the zone's).
fn keep_marks_near_the_ends(
    list: &[Component],
    line: &mut Vec<usize>,
    mark_like: &impl Fn(usize) -> bool,
    hb: f32,
) {
    // The line's own letters set the scale: a page number in small type may end a zone of
    // body type. Measured on 200 + 200 generated pages (seed 505): damaged pages in order
    // 83.5 → 84.0 % (a speck 1.3 digit heights beside a page number), clean unchanged.
    let own: Vec<f32> = line
        .iter()
        .filter(|&&c| !mark_like(c))
        .map(|&c| list[c].height() as f32)
        .collect();
    let hb = if own.is_empty() {
        hb
    } else {
        median(own).min(hb)
    };
    let reach = END_REACH_HB * hb;
    let round = |c: usize| is_round(&list[c]);
    let Some((x0, x1)) = line
        .iter()
        .filter(|&&c| !mark_like(c) || !round(c))
        .map(|&c| (list[c].x0 as f32, list[c].x1 as f32))
        .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))
    else {
        return;
    };
    let gap = |c: usize, x0: f32, x1: f32| span_gap(&list[c], x0, x1);
    let mut beyond: Vec<usize> = line
        .iter()
        .copied()
        .filter(|&c| mark_like(c) && round(c) && gap(c, x0, x1) > 0.0)
        .collect();
    // Letters of the line near `c`: a full stop sits on their baseline, a comma or a zero among
    // them; a piece wholly over or under them, away from the last letter, is dust.
    let level_with_letters = |c: usize, x0: f32, x1: f32| {
        let g = gap(c, x0, x1);
        if g <= END_BAND_FREE_HB * hb {
            return true;
        }
        let m = &list[c];
        let near = line
            .iter()
            .filter(|&&b| !mark_like(b))
            .map(|&b| &list[b])
            .filter(|k| (k.x0 as f32 - m.x1 as f32).max(m.x0 as f32 - k.x1 as f32) <= g + hb)
            .map(|k| (k.y0, k.y1))
            .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)));
        near.is_none_or(|(top, bottom)| m.y1 > top && m.y0 < bottom)
    };
    grow_span(list, &mut beyond, (x0, x1), |c, (x0, x1)| {
        gap(c, x0, x1) <= reach && level_with_letters(c, x0, x1)
    });
    line.retain(|c| !beyond.contains(c));
}

/// Furthest, in the number's digit heights, a round piece may stand past the digits of a page
/// number, the span growing with each piece kept: the Arabic-Indic zeros of "١٠٠" stand about a
/// third of a digit height apart (common practice, no source; from memory). On generated pages
/// (seed 505) no zero was lost at 0.6.
const NUMBER_ZERO_GAP_HB: f32 = 0.6;

/// A round piece further past a page number's digits is one of its dashes when a piece stands
/// on the other side at a gap within this ratio of its own, its middle within
/// [`NUMBER_TWIN_HEIGHT_HB`] digit heights of the piece's: wear leaves a short dash as round as
/// a speck (generated pages, seed 505: dashes 4 × 3 px beside 12-px digits, 0.75 digit heights
/// off).
const NUMBER_TWIN_RATIO: f32 = 1.5;
const NUMBER_TWIN_HEIGHT_HB: f32 = 0.25;

/// Share of its digits' height from their top within which a round piece beside a page number
/// is dust: an Arabic-Indic zero stands in the middle of the digits or low (common practice,
/// no source).
const NUMBER_TOP_BAND: f32 = 0.2;

/// The pieces of a page number's line that are dust. Digits, Arabic-Indic and Western alike,
/// carry no dots or harakat, so a round mark (neither side half as long again as the other) is
/// dust when it stands wholly over or under the digits, in the top [`NUMBER_TOP_BAND`] of their
/// height, or more than [`NUMBER_ZERO_GAP_HB`] digit heights past them without a twin on the
/// other side; an Arabic-Indic zero stands among the digits and stays, and so do a number's
/// dashes and brackets. Measured on 200 + 200 generated pages (seed 505): damaged pages in
/// order 90.5 → 92.0 % (specks beside or under the numbers of pages 17, 163, 167), line F1
/// 0.9891 → 0.9895; clean pages unchanged (98.0 %, 0.9987). Without the twin rule, worn
/// dashes of "- ١٩٦ -" were dropped (pages 51, 116, 153).
pub fn page_number_dust(list: &[Component], line: &[usize], is_mark: &[bool]) -> Vec<usize> {
    // The digits set the band, the span and the scale.
    let digits: Vec<&Component> = line
        .iter()
        .filter(|&&c| !is_mark[c])
        .map(|&c| &list[c])
        .collect();
    let (Some(top), Some(bottom)) = (
        digits.iter().map(|k| k.y0 as f32).reduce(f32::min),
        digits.iter().map(|k| k.y1 as f32).reduce(f32::max),
    ) else {
        return Vec::new();
    };
    let (x0, x1) = digits
        .iter()
        .map(|k| (k.x0 as f32, k.x1 as f32))
        .fold((f32::MAX, f32::MIN), |a, b| (a.0.min(b.0), a.1.max(b.1)));
    let hb = median(digits.iter().map(|k| k.height() as f32).collect());
    let band_top = top + NUMBER_TOP_BAND * (bottom - top);
    let mut dust = Vec::new();
    let mut beside = Vec::new();
    for &c in line.iter().filter(|&&c| is_mark[c] && is_round(&list[c])) {
        let m = &list[c];
        let cy = m.cy();
        if m.y1 as f32 <= top || m.y0 as f32 >= bottom || cy < band_top {
            dust.push(c);
        } else {
            beside.push(c);
        }
    }
    let gap = |c: usize, x0: f32, x1: f32| span_gap(&list[c], x0, x1);
    let (x0, x1) = grow_span(list, &mut beside, (x0, x1), |c, (x0, x1)| {
        gap(c, x0, x1) <= NUMBER_ZERO_GAP_HB * hb
    });
    // The dashes of "- ١٨ -" stand a word space off, one on each side at the same height; a
    // speck has no such twin.
    let twin = |c: usize| {
        let (m, g) = (&list[c], gap(c, x0, x1));
        let left = (m.x1 as f32) <= x0;
        line.iter().filter(|&&d| d != c).any(|&d| {
            let k = &list[d];
            let other_side = if left {
                k.x0 as f32 >= x1
            } else {
                k.x1 as f32 <= x0
            };
            let h = gap(d, x0, x1);
            other_side
                && h * NUMBER_TWIN_RATIO >= g
                && h <= g * NUMBER_TWIN_RATIO
                && (k.cy() - m.cy()).abs() <= NUMBER_TWIN_HEIGHT_HB * hb
        })
    };
    dust.extend(beside.into_iter().filter(|&c| !twin(c)));
    dust
}

/// A piece neither side of which is half as long again as the other: a dot, a zero, a speck.
fn is_round(c: &Component) -> bool {
    let (w, h) = (c.width(), c.height());
    2 * w.max(h) < 3 * w.min(h) + 2
}

/// White between `c` and the span `x0..x1` (negative when they overlap).
fn span_gap(c: &Component, x0: f32, x1: f32) -> f32 {
    (x0 - c.x1 as f32).max(c.x0 as f32 - x1)
}

/// Grows `span` by the pieces of `beyond`, nearest first, while the nearest passes `keep`;
/// takes those out of `beyond` and returns the grown span.
fn grow_span(
    list: &[Component],
    beyond: &mut Vec<usize>,
    (mut x0, mut x1): (f32, f32),
    keep: impl Fn(usize, (f32, f32)) -> bool,
) -> (f32, f32) {
    loop {
        beyond.sort_by(|&a, &b| span_gap(&list[a], x0, x1).total_cmp(&span_gap(&list[b], x0, x1)));
        match beyond.first() {
            Some(&c) if keep(c, (x0, x1)) => {
                x0 = x0.min(list[c].x0 as f32);
                x1 = x1.max(list[c].x1 as f32);
                beyond.remove(0);
            }
            _ => return (x0, x1),
        }
    }
}

/// The line on the other side of `m` from line `k`'s core: the next line when `m` stands under
/// the core's middle, else the one before.
fn line_across(m: &Component, k: usize, cores: &[(usize, usize)], y0: u32) -> Option<usize> {
    let core_mid = (cores[k].0 + cores[k].1) as f32 / 2.0 + y0 as f32;
    if m.cy() > core_mid {
        Some(k + 1).filter(|&j| j < cores.len())
    } else {
        k.checked_sub(1)
    }
}

/// Top and bottom of the letters among `line` within `reach` pixels, left or right, of `m`.
fn local_extent(ink: &PageInk, m: &Component, line: &[usize], reach: f32) -> Option<(f32, f32)> {
    let list = &ink.comps.list;
    line.iter()
        .filter(|&&b| !ink.is_mark[b])
        .map(|&b| &list[b])
        .filter(|k| (k.x0 as f32 - m.x1 as f32).max(m.x0 as f32 - k.x1 as f32) <= reach)
        .map(|k| (k.y0 as f32, k.y1 as f32))
        .reduce(|a, b| (a.0.min(b.0), a.1.max(b.1)))
}

/// Among `others`, the component overlapping `m` in x with the smallest vertical gap, if that gap
/// is under `max_gap`.
fn nearest_vertical(
    list: &[Component],
    m: &Component,
    others: &[usize],
    max_gap: f32,
) -> Option<usize> {
    others
        .iter()
        .filter(|&&b| list[b].x0 < m.x1 && m.x0 < list[b].x1)
        .map(|&b| (b, vertical_gap(m, &list[b])))
        .filter(|&(_, g)| g < max_gap)
        .min_by(|a, b| a.1.total_cmp(&b.1))
        .map(|(b, _)| b)
}

/// Most white between a row of small pieces and the line under it, in that line's letter
/// heights, for the row to count as that line's marks. Measured on 200 + 200 generated pages
/// (seed 505), with the rows of a title's dots kept in its zone (`blocks::stick_thin_rows`) and
/// shin's dots in their stack ([`STACK_OVERLAP`]): clean pages in order 94.0 → 95.5 %, line F1
/// 0.9974 → 0.9980; damaged 77.0 → 77.5 %, 0.9889 → 0.9890. Without the closeness rule a
/// running header 29 px over a title in large type became the title's marks.
const CLOSE_OVER_LINE: f32 = 0.25;

/// Lines made only of small pieces (a title's hamza, stray harakat), or of pieces under 0.45 of the
/// letter height of the line above and narrower than it (a title's dots under it), or of the line
/// close under it (the dots over a title), give their pieces to the line of the nearest letter, or
/// to the nearest other core when they lie beside its letters; the rest are specks and go to no
/// line.
fn dissolve_small_lines(
    ink: &PageInk,
    grid: &BodyGrid,
    members: &mut [Vec<usize>],
    cores: &[(usize, usize)],
    y0: u32,
    hb: f32,
) {
    let list = &ink.comps.list;
    let letter_height = |m: &[usize]| {
        median(
            m.iter()
                .filter(|&&c| !ink.is_mark[c])
                .map(|&c| list[c].height() as f32)
                .collect(),
        )
    };
    for k in 0..members.len() {
        // Letter height of the line above (a title's dots under it are small for the title's
        // type, not for the page's), or of the line below when this one sits close over it (a
        // title's dots over it; a running header in smaller type stands further off).
        let above = (0..k)
            .rev()
            .find(|&j| !members[j].is_empty())
            .map(|j| letter_height(&members[j]))
            .unwrap_or(0.0);
        let bottom = members[k].iter().map(|&c| list[c].y1).max().unwrap_or(0);
        let below = (k + 1..members.len())
            .find(|&j| !members[j].is_empty())
            .map(|j| {
                let height = letter_height(&members[j]);
                let top = members[j]
                    .iter()
                    .filter(|&&c| !ink.is_mark[c])
                    .map(|&c| list[c].y0)
                    .min()
                    .unwrap_or(u32::MAX);
                let close = (top.saturating_sub(bottom) as f32) <= CLOSE_OVER_LINE * height;
                if close {
                    height
                } else {
                    0.0
                }
            })
            .unwrap_or(0.0);
        let near = above.max(below).max(hb);
        if members.len() < 2
            || members[k].is_empty()
            || !members[k].iter().all(|&c| {
                let m = &list[c];
                ink.is_small[c] || ((m.height() as f32) < 0.45 * near && (m.width() as f32) < near)
            })
        {
            continue;
        }
        // A row of small pieces far from every letter of the other lines, one of them as tall as
        // a digit, is a line of its own: a page number in small type under the text.
        let own = &members[k];
        let apart = own.iter().all(|&c| {
            grid.nearest_excluding(list, &list[c], APART_HB * near, own)
                .is_none()
        });
        let tallest = own.iter().map(|&c| list[c].height()).max().unwrap_or(0) as f32;
        if apart && tallest >= APART_TALL_HB * hb {
            continue;
        }
        let moving = std::mem::take(&mut members[k]);
        let own: Vec<usize> = moving.clone();
        for c in moving {
            let target = grid
                .nearest_excluding(list, &list[c], 2.0 * hb, &own)
                .and_then(|b| members.iter().position(|m| m.contains(&b)))
                .unwrap_or_else(|| {
                    let others: Vec<(usize, usize)> = cores
                        .iter()
                        .enumerate()
                        .map(|(i, &co)| {
                            if i == k {
                                (usize::MAX / 2, usize::MAX / 2)
                            } else {
                                co
                            }
                        })
                        .collect();
                    pick_core(&list[c], &others, y0)
                });
            if local_extent(ink, &list[c], &members[target], 1.5 * hb).is_some() {
                members[target].push(c);
            }
        }
    }
}

/// White, in letter heights of the lines around, past which a row of small pieces stands apart
/// from every other line's letters: dots and harakat stand within [`MARK_REACH_HB`] of theirs.
const APART_HB: f32 = 1.0;

/// Least height, in the zone's letter heights, of the tallest piece of a row that stands apart
/// for the row to be a line of its own (a digit of a small page number; dust is smaller).
/// Measured with [`APART_HB`] on 200 + 200 generated pages (seed 505): damaged page 59's last
/// line, which had taken the "٦" of the page number 27 px under it, is whole (line F1 0.9896,
/// one line more matched); order unchanged (the number's zero went to a zone of its own);
/// clean pages unchanged (98.0 %, 0.9989).
const APART_TALL_HB: f32 = 0.4;

/// Deepest indent from the right edge, in body heights, of a zone's last line that opens a
/// paragraph and runs on in the next column or page (filled to the left edge).
const PARA_INDENT_HB: f32 = 6.0;

/// Whether the first of the `alive` lines reads as the first line of a justified paragraph:
/// at least three lines under it, its letters as tall as theirs (a running header is set
/// smaller), its left end within a body height of their usual left end and its right end no
/// further out than theirs (it fills their measure, indented or not), and no more than half as
/// much again of their usual spacing above the next line (a header is set off). With `last`,
/// the same for the last line against the lines above it, which must reach their left edge
/// and may be indented from their right edge by up to [`PARA_INDENT_HB`] body heights: a
/// justified line (or a paragraph's first line) whose paragraph runs on in the next column or
/// page. A line's type is the 3/4 quantile of its letters' heights, not the median: a line of
/// few words may be mostly low letters.
fn justified_end_line(
    ink: &PageInk,
    members: &[Vec<usize>],
    alive: &[usize],
    cores: &[(usize, usize)],
    hb: f32,
    last: bool,
) -> bool {
    if alive.len() < 4 {
        return false;
    }
    let order: Vec<usize> = if last {
        alive.iter().rev().copied().collect()
    } else {
        alive.to_vec()
    };
    let list = &ink.comps.list;
    let letters = |k: usize| members[k].iter().filter(|&&c| !ink.is_mark[c]);
    let height = |k: usize| {
        let mut h: Vec<f32> = letters(k).map(|&c| list[c].height() as f32).collect();
        h.sort_by(f32::total_cmp);
        h.get(h.len() * 3 / 4).copied().unwrap_or(0.0)
    };
    let ends = |k: usize| {
        letters(k).fold((f32::MAX, f32::MIN), |(a, b), &c| {
            (a.min(list[c].x0 as f32), b.max(list[c].x1 as f32))
        })
    };
    let rest = &order[1..];
    let (end, (x0, x1)) = (order[0], ends(order[0]));
    let usual_x0 = median(rest.iter().map(|&k| ends(k).0).collect());
    let usual_x1 = median(rest.iter().map(|&k| ends(k).1).collect());
    let usual_h = median(rest.iter().map(|&k| height(k)).collect());
    let step = |w: &[usize]| (cores[w[1]].0 as f32 - cores[w[0]].0 as f32).abs();
    let usual_step = median(rest.windows(2).map(step).collect());
    height(end) >= 0.9 * usual_h
        && (x0 - usual_x0).abs() <= hb
        && x1 <= usual_x1 + hb
        && (!last || x1 >= usual_x1 - PARA_INDENT_HB * hb)
        && step(&order[..2]) <= 1.5 * usual_step
}

/// Ink pixels per row of the given bodies, rows `y0..y1`.
fn body_profile(ink: &PageInk, bodies: &[usize], y0: u32, y1: u32) -> Vec<u32> {
    let mut prof = vec![0u32; (y1 - y0) as usize];
    for &c in bodies {
        for &ri in &ink.idx[ink.off[c] as usize..ink.off[c + 1] as usize] {
            let r = ink.comps.runs[ri as usize];
            prof[(r.y - y0) as usize] += r.x1 - r.x0;
        }
    }
    prof
}

/// Box average over `2r + 1` rows.
fn smooth(prof: &[u32], r: usize) -> Vec<f32> {
    let n = prof.len();
    let mut acc = vec![0u64; n + 1];
    for i in 0..n {
        acc[i + 1] = acc[i] + prof[i] as u64;
    }
    (0..n)
        .map(|i| {
            let (a, b) = (i.saturating_sub(r), (i + r + 1).min(n));
            (acc[b] - acc[a]) as f32 / (b - a) as f32
        })
        .collect()
}

/// Baseline candidates: local maxima, strongest first, kept only when a deep valley (at most half
/// the lower peak) separates them from every peak already kept. Returned top to bottom.
fn find_peaks(sm: &[f32]) -> Vec<usize> {
    let max = sm.iter().copied().fold(0.0, f32::max);
    let mut cand: Vec<usize> = (0..sm.len())
        .filter(|&i| {
            let l = if i > 0 { sm[i - 1] } else { 0.0 };
            let r = if i + 1 < sm.len() { sm[i + 1] } else { 0.0 };
            sm[i] >= l && sm[i] > r && sm[i] >= (0.002 * max).max(1.5)
        })
        .collect();
    cand.sort_by(|&a, &b| sm[b].total_cmp(&sm[a]));
    let mut kept: Vec<usize> = Vec::new();
    for c in cand {
        let separate = kept.iter().all(|&p| {
            let (a, b) = (p.min(c), p.max(c));
            let valley = sm[a..=b].iter().copied().fold(f32::MAX, f32::min);
            valley <= 0.5 * sm[p].min(sm[c])
        });
        if separate {
            kept.push(c);
        }
    }
    kept.sort_unstable();
    kept
}

/// Of two peaks closer than [`CLOSE_PEAK_PITCH`] of the zone's usual line pitch, the weaker is no
/// baseline: it is a row of marks or of letter tops over the line (type broken into small pieces,
/// whose median body height, and so the smoothing, is too small to join the rows). Needs four
/// peaks for a pitch.
fn drop_close_peaks(sm: &[f32], mut peaks: Vec<usize>) -> Vec<usize> {
    if peaks.len() < 4 {
        return peaks;
    }
    let pitch = median(peaks.windows(2).map(|w| (w[1] - w[0]) as f32).collect());
    while let Some(i) = (0..peaks.len() - 1)
        .filter(|&i| ((peaks[i + 1] - peaks[i]) as f32) < CLOSE_PEAK_PITCH * pitch)
        .min_by_key(|&i| peaks[i + 1] - peaks[i])
    {
        let weaker = if sm[peaks[i]] < sm[peaks[i + 1]] {
            i
        } else {
            i + 1
        };
        peaks.remove(weaker);
    }
    peaks
}

/// Share of a zone's median distance between baselines under which two peaks are one line.
/// Footnotes in smaller type within a zone of body lines stand at about 0.7 of the body's pitch
/// (common practice, no source); a fixed-width face at 150 dpi, broken into pieces of 8 px,
/// made second peaks over six of a column's 38 lines, 11 px above the baseline at a pitch of
/// 31 px (0.35; generated pages, seed 2026, page 2 of the layout guard).
const CLOSE_PEAK_PITCH: f32 = 0.45;

/// Rows around peak `i` where the profile stays above a quarter of the peak, not past the valleys.
fn core_band(sm: &[f32], peaks: &[usize], i: usize, p: usize) -> (usize, usize) {
    let floor = 0.25 * sm[p];
    let lo_lim = if i > 0 {
        valley_at(sm, peaks[i - 1], p)
    } else {
        0
    };
    let hi_lim = if i + 1 < peaks.len() {
        valley_at(sm, p, peaks[i + 1])
    } else {
        sm.len() - 1
    };
    let mut top = p;
    while top > lo_lim && sm[top - 1] >= floor {
        top -= 1;
    }
    let mut bot = p;
    while bot < hi_lim && sm[bot + 1] >= floor {
        bot += 1;
    }
    (top, bot)
}

fn valley_at(sm: &[f32], a: usize, b: usize) -> usize {
    (a..=b)
        .min_by(|&x, &y| sm[x].total_cmp(&sm[y]))
        .unwrap_or(a)
}

fn peak_row(prof: &[u32], core: (usize, usize)) -> usize {
    (core.0..=core.1).max_by_key(|&y| prof[y]).unwrap_or(core.0)
}

/// How much more a gap to a letter above a mark counts than a gap to a letter below it.
const ABOVE_GAP_WEIGHT: f32 = 2.0;

/// Bodies bucketed by x, to find the letter under or over a mark.
pub(super) struct BodyGrid {
    cell: f32,
    cells: Vec<Vec<usize>>,
    x0: u32,
}

impl BodyGrid {
    pub(super) fn new(list: &[Component], bodies: &[usize], hb: f32) -> BodyGrid {
        let cell = hb.max(4.0);
        let x0 = bodies.iter().map(|&c| list[c].x0).min().unwrap_or(0);
        let x1 = bodies.iter().map(|&c| list[c].x1).max().unwrap_or(0);
        let n = ((x1 - x0) as f32 / cell) as usize + 1;
        let mut cells = vec![Vec::new(); n];
        for &c in bodies {
            let (a, b) = (
                ((list[c].x0 - x0) as f32 / cell) as usize,
                ((list[c].x1 - 1 - x0) as f32 / cell) as usize,
            );
            for cl in cells.iter_mut().take(b.min(n - 1) + 1).skip(a) {
                cl.push(c);
            }
        }
        BodyGrid { cell, cells, x0 }
    }

    /// Whether a body's box lies within `reach` pixels of `m`'s, across and up or down.
    pub(super) fn any_within(&self, list: &[Component], m: &Component, reach: f32) -> bool {
        let col = |x: f32| ((x - self.x0 as f32) / self.cell).floor();
        let last = self.cells.len() as f32 - 1.0;
        let (a, b) = (col(m.x0 as f32 - reach), col(m.x1 as f32 + reach));
        if b < 0.0 || a > last {
            return false;
        }
        let (a, b) = (a.max(0.0) as usize, b.min(last) as usize);
        self.cells[a..=b].iter().flatten().any(|&k| {
            let l = &list[k];
            let dx = (l.x0 as f32 - m.x1 as f32).max(m.x0 as f32 - l.x1 as f32);
            let dy = (l.y0 as f32 - m.y1 as f32).max(m.y0 as f32 - l.y1 as f32);
            dx.max(dy) <= reach
        })
    }

    /// The body overlapping the mark in x (give or take a quarter of the grid's letter height)
    /// whose ink in those columns stands nearest over or under the mark, if the gap between their
    /// boxes is under `max_gap`. A gap to a letter above the mark counts twice: most harakat sit
    /// over their letter (only kasra, kasratan, hamza below and the dots of a few letters hang
    /// under it), so a mark between two lines is more likely the lower line's (measured on
    /// generated pages: line F1 on damaged dev pages 0.978 → 0.983; 1.5 and 3 did less).
    ///
    /// The nearest is chosen by the ink in the mark's columns, not by the boxes: a yeh's dots 4
    /// px under its tail were 7 px over the box of a letter of the next line, whose ascender
    /// beside them raised its box while its ink under the dots stood at the core. Measured on
    /// 200 + 200 generated pages (seed 505): clean pages in order 99.0 → 99.5 %, line F1 0.9996
    /// → 0.9997; damaged pages unchanged (96.5 %, 0.9987). With the reach measured to the ink as
    /// well, damaged pages fell to 95.0 % (specks far from any letter's ink in their columns
    /// joined letters whose boxes were further).
    fn nearest_below_or_above(&self, ink: &PageInk, m: &Component, max_gap: f32) -> Option<usize> {
        let list = &ink.comps.list;
        let slack = 0.25 * self.cell;
        let (lo, hi) = (m.x0 as f32 - slack, m.x1 as f32 + slack);
        let weigh = |above: bool, gap: f32| if above { gap * ABOVE_GAP_WEIGHT } else { gap };
        let mut best: Option<(usize, f32)> = None;
        // A body spanning several cells comes once from each; its runs are read once.
        let mut seen = Vec::new();
        for b in self.near_in_x(list, m, &[]) {
            if seen.contains(&b) {
                continue;
            }
            seen.push(b);
            let k = &list[b];
            let above = k.y1 as f32 <= (m.y0 + m.y1) as f32 / 2.0;
            if weigh(above, vertical_gap(m, k)) >= max_gap {
                continue;
            }
            let runs = ink.off[b] as usize..ink.off[b + 1] as usize;
            let rows = ink.idx[runs]
                .iter()
                .map(|&r| &ink.comps.runs[r as usize])
                .filter(|r| (r.x0 as f32) < hi && (r.x1 as f32) > lo)
                .map(|r| r.y as f32);
            let gap = if above {
                rows.reduce(f32::max).map(|y| m.y0 as f32 - (y + 1.0))
            } else {
                rows.reduce(f32::min).map(|y| y - m.y1 as f32)
            };
            let Some(gap) = gap.map(|g| weigh(above, g.max(0.0))) else {
                continue;
            };
            if best.is_none_or(|(_, g)| gap < g) {
                best = Some((b, gap));
            }
        }
        best.map(|(b, _)| b)
    }

    /// Bodies of the cells around `m` whose boxes overlap it in x, give or take a quarter of the
    /// grid's letter height, `skip` left out.
    fn near_in_x<'g>(
        &'g self,
        list: &'g [Component],
        m: &'g Component,
        skip: &'g [usize],
    ) -> impl Iterator<Item = usize> + 'g {
        let slack = 0.25 * self.cell;
        let (lo, hi) = (m.x0 as f32 - slack, m.x1 as f32 + slack);
        let first = ((lo - self.x0 as f32) / self.cell).max(0.0) as usize;
        let last =
            (((hi - self.x0 as f32) / self.cell).max(0.0) as usize).min(self.cells.len() - 1);
        self.cells
            .iter()
            .take(last + 1)
            .skip(first)
            .flatten()
            .copied()
            .filter(move |&b| {
                let k = &list[b];
                !skip.contains(&b) && k.x1 as f32 >= lo && k.x0 as f32 <= hi
            })
    }

    /// The nearest body as [`BodyGrid::nearest_below_or_above`], by box and gaps above and below
    /// alike, some bodies left out.
    fn nearest_excluding(
        &self,
        list: &[Component],
        m: &Component,
        max_gap: f32,
        skip: &[usize],
    ) -> Option<usize> {
        self.nearest_weighted(list, m, max_gap, skip, 1.0)
            .map(|(b, _)| b)
    }

    /// The body whose box is nearest `m` over or under it, and its gap, a gap to a body above `m`
    /// multiplied by `above_weight`.
    fn nearest_weighted(
        &self,
        list: &[Component],
        m: &Component,
        max_gap: f32,
        skip: &[usize],
        above_weight: f32,
    ) -> Option<(usize, f32)> {
        let mut best: Option<(usize, f32)> = None;
        for b in self.near_in_x(list, m, skip) {
            let k = &list[b];
            let gap = vertical_gap(m, k);
            let above = k.y1 as f32 <= (m.y0 + m.y1) as f32 / 2.0;
            let gap = if above { gap * above_weight } else { gap };
            if gap < max_gap && best.is_none_or(|(_, g)| gap < g) {
                best = Some((b, gap));
            }
        }
        best
    }
}

/// The core a component belongs to: most overlap, else nearest (ties to the upper one).
fn pick_core(c: &Component, cores: &[(usize, usize)], y0: u32) -> usize {
    best_core(c, cores, y0).0
}

/// [`pick_core`] and the overlap in pixels (negative: minus the distance to that core).
fn best_core(c: &Component, cores: &[(usize, usize)], y0: u32) -> (usize, f32) {
    let (a, b) = (c.y0 as f32 - y0 as f32, c.y1 as f32 - y0 as f32);
    let mut best = (0usize, f32::MIN);
    for (k, &(t, bo)) in cores.iter().enumerate() {
        let (t, bo) = (t as f32, bo as f32 + 1.0);
        let overlap = b.min(bo) - a.max(t);
        // Negative overlap is minus the distance between the component and the band.
        if overlap > best.1 {
            best = (k, overlap);
        }
    }
    best
}

/// Bounds of a line's pieces; those `clipped` names are cut to the rows `lim_top..lim_bot`.
fn line_box(
    comps: &[usize],
    list: &[Component],
    clipped: &impl Fn(usize) -> bool,
    lim_top: f32,
    lim_bot: f32,
) -> Rect {
    let (mut x0, mut y0, mut x1, mut y1) = (f32::MAX, f32::MAX, f32::MIN, f32::MIN);
    for &c in comps {
        let k = &list[c];
        let (mut t, mut b) = (k.y0 as f32, k.y1 as f32);
        if clipped(c) {
            t = t.max(lim_top);
            b = b.min(lim_bot);
        }
        (x0, y0, x1, y1) = (
            x0.min(k.x0 as f32),
            y0.min(t),
            x1.max(k.x1 as f32),
            y1.max(b),
        );
    }
    Rect::new(x0, y0, x1, y1)
}

/// Margin added around a line box when it is cropped: a tenth of its height, at least 2 px.
fn crop_margin(bbox: &Rect) -> f32 {
    (bbox.height() * 0.1).max(2.0)
}

/// Top-left pixel of [`crop_line`]'s crop of `bbox` on the page it is cut from.
pub fn crop_origin(bbox: &Rect) -> (u32, u32) {
    let m = crop_margin(bbox);
    (
        (bbox.x0 - m).floor().max(0.0) as u32,
        (bbox.y0 - m).floor().max(0.0) as u32,
    )
}

/// The straightened grey line for the recognizer: the line's box plus a margin of a tenth of its
/// height (at least 2 px) so dots and harakat at the edge are kept, clamped to the page.
pub fn crop_line(gray: &GrayImage, bbox: &Rect) -> GrayImage {
    let (x0, y0) = crop_origin(bbox);
    let m = crop_margin(bbox);
    let x1 = ((bbox.x1 + m).ceil() as u32).min(gray.width());
    let y1 = ((bbox.y1 + m).ceil() as u32).min(gray.height());
    image::imageops::crop_imm(
        gray,
        x0,
        y0,
        x1.saturating_sub(x0).max(1),
        y1.saturating_sub(y0).max(1),
    )
    .to_image()
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::components::find_components;

    /// The ink of `comps`, marks and small pieces being those whose larger side is under
    /// `mark_below` and `small_below` pixels.
    fn ink_of(comps: &Components, mark_below: u32, small_below: u32) -> PageInk<'_> {
        let (off, idx) = comps.runs_by_component();
        let size = |c: &Component| c.width().max(c.height());
        PageInk {
            is_mark: comps.list.iter().map(|c| size(c) < mark_below).collect(),
            is_small: comps.list.iter().map(|c| size(c) < small_below).collect(),
            comps,
            off,
            idx,
        }
    }

    /// The lines of a page whose components are all one zone, with no cut at wide gaps.
    fn lines_of(comps: &Components, mark_below: u32, small_below: u32) -> Vec<FoundLine> {
        let ink = ink_of(comps, mark_below, small_below);
        let zone: Vec<usize> = (0..comps.list.len()).collect();
        find_lines(&ink, &zone, 1000.0)
    }

    /// Ink rectangles `[x0, y0, x1, y1)` on a white page 320 px wide.
    fn page(height: u32, rects: &[[u32; 4]]) -> GrayImage {
        let mut img = GrayImage::from_pixel(320, height, image::Luma([255]));
        for r in rects {
            for y in r[1]..r[3] {
                for x in r[0]..r[2] {
                    img.put_pixel(x, y, image::Luma([0]));
                }
            }
        }
        img
    }

    /// A smoothed profile with a triangle of `height` around each `(row, height)`, 4 rows wide.
    fn profile(len: usize, peaks: &[(usize, f32)]) -> Vec<f32> {
        let mut sm = vec![0.0f32; len];
        for &(p, h) in peaks {
            for (i, v) in sm.iter_mut().enumerate() {
                let d = (i as f32 - p as f32).abs();
                *v += (h * (1.0 - d / 4.0)).max(0.0);
            }
        }
        sm
    }

    #[test]
    fn a_weak_peak_close_over_a_baseline_is_no_line_of_its_own() {
        // Baselines 30 rows apart; 11 rows over the fourth stands a weaker row of marks, parted
        // from it by white (two peaks for find_peaks). Footnote baselines at 0.7 of the pitch stay.
        let sm = profile(
            220,
            &[
                (10, 50.0),
                (40, 50.0),
                (70, 50.0),
                (89, 20.0),
                (100, 50.0),
                (130, 50.0),
                (160, 50.0),
                (181, 40.0),
                (202, 40.0),
            ],
        );
        let found = find_peaks(&sm);
        assert_eq!(found, vec![10, 40, 70, 89, 100, 130, 160, 181, 202]);
        assert_eq!(
            drop_close_peaks(&sm, found),
            vec![10, 40, 70, 100, 130, 160, 181, 202]
        );
        // Too few peaks for a pitch: left alone.
        let few = profile(100, &[(10, 50.0), (21, 20.0), (50, 50.0)]);
        assert_eq!(drop_close_peaks(&few, find_peaks(&few)), vec![10, 21, 50]);
    }

    #[test]
    fn a_mark_stacked_on_a_mark_goes_with_the_letter_under_the_stack() {
        // Two lines of 20-px letters, cores at y 10..30 and 60..80; line 1 has a word space at
        // x 60..140 and a descender down to y 44. Over a letter of line 2 stands a stack: a dot
        // at y 50..55 and over it a piece at y 38..46 (a damma over a shadda, in type larger than
        // the page's marks) that is nearer line 1's core (8 px) than its own letter (14 px), and
        // touches no core.
        let img = page(
            100,
            &[
                [0, 10, 60, 30],
                [20, 30, 32, 44],
                [140, 10, 300, 30],
                [0, 60, 300, 80],
                [110, 50, 115, 55],
                [108, 38, 117, 46],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 10);
        assert_eq!(lines.len(), 2);
        let piece = comps.list.iter().position(|c| c.y0 == 38).unwrap();
        assert!(lines[1].comps.contains(&piece), "{:?}", lines[0].bbox);
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (10.0, 44.0));
        // Line 2's box runs up to half way between the cores (a piece that is not a page mark is
        // clipped there like a letter).
        assert_eq!(lines[1].bbox.y1, 80.0);
        assert!(lines[1].bbox.y0 < 50.0, "{:?}", lines[1].bbox);
    }

    #[test]
    fn a_stack_of_marks_goes_with_the_letter_under_its_base() {
        // Two lines of 20-px letters (cores 10..30 and 60..80); line 1 has a letter with a
        // descender down to y 44. Under it, over a letter of line 2, stands a stack of three
        // marks 2 px apart: a ring at y 46..50, a fatha at 52..55 and a dot at 57..59. The ring
        // is 2 px under the descender (weighed double: 4) and 10 px over line 2, so by itself it
        // would join line 1; the stack's base, the dot, sits 1 px over line 2, and the whole
        // stack is line 2's.
        let img = page(
            100,
            &[
                [0, 10, 90, 30],
                [100, 10, 112, 44],
                [122, 10, 300, 30],
                [0, 60, 300, 80],
                [102, 46, 108, 50],
                [101, 52, 109, 55],
                [103, 57, 107, 59],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 10, 12);
        assert_eq!(lines.len(), 2);
        for y0 in [46, 52, 57] {
            let mark = comps.list.iter().position(|c| c.y0 == y0).unwrap();
            assert!(lines[1].comps.contains(&mark), "mark at y {y0}: {lines:?}");
        }
        assert_eq!((lines[0].bbox.y1, lines[1].bbox.y0), (44.0, 46.0));
    }

    #[test]
    fn a_round_speck_off_a_line_s_end_is_dropped_but_dots_and_dashes_near_it_stay() {
        // Two lines of 20-px letters across x 60..250. Beside line 1's left end, 25 px off (over
        // 0.9 of the letter height, within the 1.5 that keeps a loose piece beside its row),
        // stands a round 5-px speck: dust, dropped. A full stop 12 px past its right end stays.
        // A dash 23 px off line 2's left end (a page number's dash) stays too.
        let img = page(
            100,
            &[
                [60, 10, 120, 30],
                [130, 10, 250, 30],
                [30, 18, 35, 23],
                [262, 25, 267, 30],
                [60, 60, 250, 80],
                [25, 68, 37, 72],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 13, 14);
        assert_eq!(lines.len(), 2, "{lines:?}");
        assert_eq!((lines[0].bbox.x0, lines[0].bbox.x1), (60.0, 267.0));
        assert_eq!((lines[1].bbox.x0, lines[1].bbox.x1), (25.0, 250.0));
    }

    #[test]
    fn a_round_speck_past_a_line_s_end_under_its_letters_is_dropped_but_a_full_stop_stays() {
        // Two lines of 20-px letters across x 60..250. 14 px past line 1's left end (0.7 of the
        // letter height: near enough for a full stop) a round 5-px speck stands wholly under the
        // letters (y 33..38 under letters ending at 30): dust, dropped. A full stop 14 px past
        // line 2's left end, on its baseline, stays.
        let img = page(
            100,
            &[
                [60, 10, 120, 30],
                [130, 10, 250, 30],
                [41, 33, 46, 38],
                [60, 60, 250, 80],
                [41, 75, 46, 80],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 13, 14);
        assert_eq!(lines.len(), 2, "{lines:?}");
        assert_eq!((lines[0].bbox.x0, lines[0].bbox.y1), (60.0, 30.0));
        assert_eq!((lines[1].bbox.x0, lines[1].bbox.y1), (41.0, 80.0));
    }

    #[test]
    fn a_speck_beside_a_small_page_number_is_measured_in_the_number_s_type() {
        // Two body lines of 36-px letters, then a page number of two 24-px digits and, 28 px
        // left of it, a 4-px speck. In the body's letter heights the speck would be near
        // enough (0.8 of 36); in the number's own (1.2 of 24) it is dust, and the number's box
        // stays on its digits.
        let img = page(
            180,
            &[
                [60, 10, 140, 46],
                [150, 10, 220, 46],
                [230, 10, 300, 46],
                [60, 70, 140, 106],
                [150, 70, 220, 106],
                [230, 70, 300, 106],
                [180, 140, 196, 164],
                [200, 140, 216, 164],
                [148, 150, 152, 154],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 7);
        assert_eq!(lines.len(), 3, "{lines:?}");
        assert_eq!((lines[2].bbox.x0, lines[2].bbox.x1), (180.0, 216.0));
    }

    #[test]
    fn a_piece_between_lines_goes_with_the_letter_it_stands_on() {
        // Five lines of 20-px letters, 50 px apart (cores about 10..30, 60..80, ...); line 3 has
        // an alef up to y 99. Over the alef, 1 px off, stands a 10 × 14 piece (y 84..98: a shadda
        // and a damma run together), too big for a mark or a crumb. It is nearer line 2's core
        // than line 3's, but 4 px under line 2's letters and 1 px over line 3's alef: line 3's.
        let mut rects: Vec<[u32; 4]> = (0..5).map(|i| [0, 10 + 50 * i, 300, 30 + 50 * i]).collect();
        rects.push([100, 99, 104, 110]);
        rects.push([98, 84, 108, 98]);
        let img = page(250, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 11, 11);
        assert_eq!(lines.len(), 5, "{lines:?}");
        let piece = comps.list.iter().position(|c| c.y0 == 84).unwrap();
        assert!(lines[2].comps.contains(&piece), "{lines:?}");
        assert_eq!(lines[1].bbox.y1, 80.0);
    }

    #[test]
    fn a_small_number_far_under_the_text_is_a_line_of_its_own() {
        // Four lines of 20-px letters, 50 px apart; 27 px under the last one stands a digit in
        // small type (5 × 11 px, a small piece). Harakat stand within a letter height of their
        // letters; this is a page number: a line of its own, not marks of the line above.
        let mut rects: Vec<[u32; 4]> = (0..4).map(|i| [0, 10 + 50 * i, 300, 30 + 50 * i]).collect();
        rects.push([150, 207, 155, 218]);
        let img = page(250, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 12);
        assert_eq!(lines.len(), 5, "{lines:?}");
        assert_eq!(lines[3].bbox.y1, 180.0);
        assert_eq!((lines[4].bbox.y0, lines[4].bbox.y1), (207.0, 218.0));
    }

    #[test]
    fn a_page_number_keeps_its_zeros_and_dashes_and_drops_dust() {
        // "- ١٠٠ -": the digit one (y 10..30, so 20 px digits), two round zeros 6 px apart at
        // mid height, a dash 14 px to the left and, 14 px to the right, a dash worn as round as a
        // speck (its twin on the left keeps it). Dust: a speck under the one (wholly under the
        // digits), one 4 px past the last zero but in the top fifth of the digits, and one 36 px
        // past it at mid height with no twin.
        let img = page(
            60,
            &[
                [100, 10, 104, 30],
                [110, 18, 114, 22],
                [120, 18, 124, 22],
                [76, 19, 86, 21],
                [138, 19, 142, 22],
                [101, 34, 105, 38],
                [128, 10, 131, 13],
                [160, 19, 164, 23],
            ],
        );
        let comps = find_components(&img);
        let ink = ink_of(&comps, 11, 11);
        let line: Vec<usize> = (0..comps.list.len()).collect();
        let at = |x: u32, y: u32| {
            comps
                .list
                .iter()
                .position(|c| (c.x0, c.y0) == (x, y))
                .unwrap()
        };
        let mut dust = page_number_dust(&comps.list, &line, &ink.is_mark);
        dust.sort();
        let mut want = vec![at(101, 34), at(128, 10), at(160, 19)];
        want.sort();
        assert_eq!(dust, want);
    }

    #[test]
    fn a_stack_under_a_letter_whose_ends_tie_goes_with_the_nearer_letter() {
        // Two lines of 20-px letters (cores 10..30 and 60..80). Under line 1 hangs a dot (y
        // 35..42, 5 px under its letter, weighed double: 10) and under the dot a kasra (y 45..50,
        // 10 px over line 2): a tie of weighed gaps, which the kasra (first from the left) won,
        // taking the stack to line 2 (a jeem's dot and kasra, damaged page 42). The dot's plain
        // gap is the smaller: the stack is line 1's. Three more dots sit on line 2.
        let mut rects = vec![[0, 10, 300, 30], [0, 60, 300, 80]];
        rects.extend([20, 160, 240].map(|x| [x, 52, x + 7, 59]));
        rects.push([110, 35, 117, 42]);
        rects.push([108, 45, 120, 50]);
        let img = page(100, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 13, 14);
        assert_eq!(lines.len(), 2);
        for y0 in [35, 45] {
            let mark = comps.list.iter().position(|c| c.y0 == y0).unwrap();
            assert!(lines[0].comps.contains(&mark), "mark at y {y0}: {lines:?}");
        }
        assert_eq!(lines[0].bbox.y1, 50.0);
    }

    #[test]
    fn dots_under_a_tail_go_with_it_though_the_next_line_s_box_is_nearer() {
        // Two lines of 20-px letters (cores 10..30 and 60..80). Line 1 has a tail down to y 40
        // at x 100..120; under it hang two dots (y 44..48), 4 px under the tail's ink (weighed
        // double: 8). Line 2 has an ascender at x 125..129 up to y 55, which raises its box to
        // 7 px under the dots, while its ink in the dots' columns starts at y 60, 12 px off.
        let img = page(
            100,
            &[
                [0, 10, 300, 30],
                [100, 30, 120, 40],
                [0, 60, 300, 80],
                [125, 55, 129, 60],
                [104, 44, 108, 48],
                [112, 44, 116, 48],
                [40, 53, 44, 57],
                [200, 53, 204, 57],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 10);
        assert_eq!(lines.len(), 2);
        for x0 in [104, 112] {
            let dot = comps.list.iter().position(|c| c.x0 == x0).unwrap();
            assert!(lines[0].comps.contains(&dot), "dot at x {x0}: {lines:?}");
        }
        assert_eq!(lines[0].bbox.y1, 48.0);
        assert_eq!(lines[1].bbox.y0, 53.0);
    }

    #[test]
    fn a_speck_smaller_than_the_dots_joins_a_letter_only_from_close_by() {
        // Two lines of 20-px letters (cores 10..30 and 60..80). Line 2 has five 5 × 5 dots just
        // over it, and 7 px (0.35 of a letter height) over it a sixth dot and a 3 × 3 speck.
        // The dot is the line's (marks sit up to 0.6 letter heights off their letter, and up
        // to 0.35 over the letters around them); the speck, smaller than the zone's dots, is
        // dust at that distance and goes with no line.
        let mut rects = vec![[0, 10, 300, 30], [0, 60, 300, 80]];
        rects.extend([20, 60, 100, 140, 180].map(|x| [x, 54, x + 5, 59]));
        rects.push([210, 48, 215, 53]);
        rects.push([250, 50, 253, 53]);
        let img = page(100, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 10);
        assert_eq!(lines.len(), 2);
        let at = |x0: u32| {
            comps
                .list
                .iter()
                .position(|c| c.x0 == x0 && c.y0 < 54)
                .unwrap()
        };
        let (dot, speck) = (at(210), at(250));
        assert!(lines[1].comps.contains(&dot), "{:?}", lines[1].comps);
        assert!(lines.iter().all(|l| !l.comps.contains(&speck)), "{lines:?}");
        assert_eq!((lines[1].bbox.y0, lines[0].bbox.y1), (48.0, 30.0));
    }

    #[test]
    fn a_speck_of_dust_joins_no_line_even_where_specks_outnumber_the_dots() {
        // Two lines of 20-px letters (cores 10..30 and 60..80). Between them lie five 1 x 2 px
        // specks far from both, so the zone's median mark is a speck; 3 px over line 2 lies
        // another, and 2 px over it a fatha 6 x 2 px. The fatha is line 2's; the speck (area 2,
        // under a tenth of a letter height squared) is dust and does not stretch the box.
        let mut rects = vec![[0, 10, 300, 30], [0, 60, 300, 80]];
        rects.extend([20, 70, 120, 170, 220].map(|x| [x, 41, x + 1, 43]));
        rects.push([250, 55, 251, 57]);
        rects.push([100, 56, 106, 58]);
        let img = page(100, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 7, 10);
        assert_eq!(lines.len(), 2);
        let at = |x0: u32| comps.list.iter().position(|c| c.x0 == x0).unwrap();
        let (speck, fatha) = (at(250), at(100));
        assert!(lines[1].comps.contains(&fatha), "{:?}", lines[1].comps);
        assert!(lines.iter().all(|l| !l.comps.contains(&speck)), "{lines:?}");
        assert_eq!((lines[1].bbox.y0, lines[0].bbox.y1), (56.0, 30.0));
    }

    #[test]
    fn only_a_zone_s_first_and_last_lines_are_cut_at_wide_gaps() {
        // Three lines; each has two words 100 px apart (a 60 px cut gap): the middle line is a
        // justified line of few words and stays whole, the first and last are cut (a running
        // header's title and page number).
        let mut rects = Vec::new();
        for y in [10, 40, 70] {
            rects.push([0, y, 100, y + 20]);
            rects.push([200, y, 300, y + 20]);
        }
        let img = page(100, &rects);
        let comps = find_components(&img);
        let ink = ink_of(&comps, 0, 0);
        let zone: Vec<usize> = (0..comps.list.len()).collect();
        let lines = find_lines(&ink, &zone, 60.0);
        let widths: Vec<f32> = lines.iter().map(|l| l.bbox.width()).collect();
        assert_eq!(widths, [100.0, 100.0, 300.0, 100.0, 100.0], "{lines:?}");
    }

    /// Top and width of each line found, 60 px cut gap, on a page of the given rectangles as
    /// one zone.
    fn tops_and_widths(height: u32, rects: &[[u32; 4]]) -> Vec<(f32, f32)> {
        let img = page(height, rects);
        let comps = find_components(&img);
        let ink = ink_of(&comps, 0, 0);
        let zone: Vec<usize> = (0..comps.list.len()).collect();
        find_lines(&ink, &zone, 60.0)
            .iter()
            .map(|l| (l.bbox.y0, l.bbox.width()))
            .collect()
    }

    #[test]
    fn a_zone_s_first_line_in_body_type_filling_the_measure_stays_whole() {
        // Four body lines of three words across x 0..310 (20 px spaces), and over them, at their
        // spacing, a first line of two words 120 px apart (a 60 px cut gap), indented 20 px
        // from the right: the first line of a justified paragraph. Set in smaller letters
        // (14 px for 20) the same row is a running header's title and page number, and is cut.
        let lines_with_first = |first_h: u32| {
            let mut rects = vec![[0, 10, 60, 10 + first_h], [180, 10, 290, 10 + first_h]];
            for y in [40, 70, 100, 130] {
                for x in [0, 110, 220] {
                    rects.push([x, y, x + 90, y + 20]);
                }
            }
            tops_and_widths(160, &rects)
        };
        let whole = lines_with_first(20);
        assert_eq!(whole.len(), 5, "{whole:?}");
        assert_eq!(whole[0], (10.0, 290.0));
        // Two words of a few letters: most pieces are low letters (12 px; the median), the
        // tall ones are as tall as the body lines' letters. Still the paragraph's first line.
        let mut rects = vec![
            [0, 10, 60, 30],
            [70, 18, 80, 30],
            [85, 18, 95, 30],
            [160, 18, 170, 30],
            [180, 10, 290, 30],
        ];
        for y in [40, 70, 100, 130] {
            for x in [0, 110, 220] {
                rects.push([x, y, x + 90, y + 20]);
            }
        }
        let few = tops_and_widths(160, &rects);
        assert_eq!(few.len(), 5, "{few:?}");
        assert_eq!(few[0], (10.0, 290.0));
        let header = lines_with_first(14);
        assert_eq!(header.len(), 6, "{header:?}");
        assert!(header[..2].iter().all(|l| l.0 == 10.0), "{header:?}");
    }

    #[test]
    fn a_zone_s_last_line_filling_the_measure_stays_whole() {
        // Four body lines of three words across x 0..310, and under them, at their spacing, a
        // last line of two words pushed to both edges (x 0..90 and 200..310, a 110 px space
        // over the 60 px cut gap): a justified line whose paragraph runs on. Set further off
        // (twice the spacing), the same row is cut, as a footer's title and page number.
        let lines_with_last = |last_y: u32| {
            let mut rects = Vec::new();
            for y in [10, 40, 70, 100] {
                for x in [0, 110, 220] {
                    rects.push([x, y, x + 90, y + 20]);
                }
            }
            rects.extend([
                [0, last_y, 90, last_y + 20],
                [200, last_y, 310, last_y + 20],
            ]);
            tops_and_widths(200, &rects)
        };
        let whole = lines_with_last(130);
        assert_eq!(whole.len(), 5, "{whole:?}");
        assert_eq!(whole[4], (130.0, 310.0));
        let footer = lines_with_last(160);
        assert_eq!(footer.len(), 6, "{footer:?}");
        // The last line opens a paragraph: indented 60 px (three body heights) from the right
        // edge, filled to the left one. Whole too.
        let mut rects = Vec::new();
        for y in [10, 40, 70, 100] {
            for x in [0, 110, 220] {
                rects.push([x, y, x + 90, y + 20]);
            }
        }
        rects.extend([[0, 130, 90, 150], [170, 130, 250, 150]]);
        let opener = tops_and_widths(200, &rects);
        assert_eq!(opener.len(), 5, "{opener:?}");
        assert_eq!(opener[4], (130.0, 250.0));
    }

    #[test]
    fn a_large_mark_under_a_short_line_s_white_goes_to_the_line_below() {
        // A paragraph's short last line (letters at x 200..300, y 10..30) over a full line
        // (bodies at y 66..80, three tall letters from y 36). A 20 x 12 piece at x 20..40,
        // y 40..52 (harakat of large type, neither small nor a mark here) is 10 px under the
        // upper core and 14 px over the lower one, but the upper line has no letters near it:
        // it is the lower line's.
        let img = page(
            100,
            &[
                [200, 10, 240, 30],
                [250, 10, 300, 30],
                [0, 66, 55, 80],
                [75, 66, 115, 80],
                [135, 66, 175, 80],
                [195, 66, 300, 80],
                [60, 36, 70, 80],
                [120, 36, 130, 80],
                [180, 36, 190, 80],
                [20, 40, 40, 52],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 2, "{lines:?}");
        let piece = comps.list.iter().position(|c| c.y0 == 40).unwrap();
        assert!(lines[1].comps.contains(&piece), "{lines:?}");
        assert_eq!(lines[0].bbox.x0, 200.0);
    }

    #[test]
    fn a_title_s_dots_under_it_are_the_title_s() {
        // A title of 40-px letters (y 10..50), a row of its dots 14 x 12 px under it (y 56..68,
        // large for the page's 20-px body type, so no page marks), then two body lines.
        let mut rects = vec![];
        for i in 0..4 {
            rects.push([10 + i * 75, 10, 70 + i * 75, 50]);
        }
        for i in 0..3 {
            rects.push([40 + i * 90, 56, 54 + i * 90, 68]);
        }
        for y in [100, 130] {
            for i in 0..6 {
                rects.push([5 + i * 50, y, 45 + i * 50, y + 20]);
            }
        }
        let img = page(160, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 3, "{lines:?}");
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (10.0, 68.0));
    }

    #[test]
    fn a_lone_title_s_dots_over_and_under_it_make_no_lines() {
        // A title alone in its zone (the sizes of one on a damaged generated page, seed 505):
        // two words of letters 27 and 26 px tall, the left one higher; over them two pieces of
        // dots, under the left word a kasra and under the right one a pair of dots blurred into
        // one flat piece 12 x 6 px, three px under its letter. None is a mark of the page's
        // type, two are small. The dots outnumber the letters, so the zone's median piece is a
        // dot; they still make one line with the title.
        let img = page(
            60,
            &[
                [11, 8, 15, 35],
                [11, 15, 103, 35],
                [118, 16, 163, 42],
                [44, 7, 56, 13],
                [151, 7, 158, 14],
                [23, 37, 28, 44],
                [125, 45, 137, 51],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 8);
        assert_eq!(lines.len(), 1, "{lines:?}");
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (7.0, 51.0));
    }

    #[test]
    fn a_mark_between_lines_goes_to_the_letter_under_it_unless_much_nearer_above() {
        // Lines of 20-px letters at y 10..30 and 46..66; a 4-px mark at y 32..36 hangs 2 px
        // under line 1 and sits 10 px over line 2: line 1's. A mark at y 35..39 is 5 px under
        // line 1 and 7 px over line 2: a haraka over line 2's letter.
        let img = page(
            100,
            &[
                [0, 10, 300, 30],
                [0, 46, 300, 66],
                [100, 32, 104, 36],
                [200, 35, 204, 39],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 6, 6);
        assert_eq!(lines.len(), 2);
        let at = |y: u32| comps.list.iter().position(|c| c.y0 == y).unwrap();
        assert!(lines[0].comps.contains(&at(32)), "{lines:?}");
        assert!(lines[1].comps.contains(&at(35)), "{lines:?}");
    }

    #[test]
    fn a_set_off_first_line_loses_its_page_number_at_a_narrower_gap() {
        // Four body lines (20 px letters, 10 px of white between them) under a first line: a
        // title at x 120..260 and, 56 px to its left (under the 60 px cut gap), two digit-sized
        // pieces. Set off by 32 px of white it is a running header: the number is cut off. At
        // the body's spacing it is a paragraph's first line ending in a short word: kept whole.
        let lines_with_first = |white: u32| {
            let y = 60 - white - 20;
            let mut rects = vec![
                [40, y, 50, y + 18],
                [54, y, 64, y + 18],
                [120, y, 260, y + 20],
            ];
            for y in [60, 90, 120, 150] {
                for x in [0, 110, 220] {
                    rects.push([x, y, x + 90, y + 20]);
                }
            }
            tops_and_widths(180, &rects)
        };
        let header = lines_with_first(32);
        assert_eq!(header.len(), 6, "{header:?}");
        assert_eq!(header[..2], [(8.0, 140.0), (8.0, 24.0)], "{header:?}");
        let paragraph = lines_with_first(10);
        assert_eq!(paragraph.len(), 5, "{paragraph:?}");
        assert_eq!(paragraph[0], (30.0, 220.0), "{paragraph:?}");
    }

    #[test]
    fn a_title_s_dots_over_it_are_the_title_s() {
        // A row of dots 14 x 12 px (y 10..22), large for the page's 20-px body type, over a
        // title of 40-px letters (y 28..68), then two body lines: the dots are small for the
        // title under them and are its marks, not a line.
        let mut rects = vec![];
        for i in 0..3 {
            rects.push([40 + i * 90, 10, 54 + i * 90, 22]);
        }
        for i in 0..4 {
            rects.push([10 + i * 75, 28, 70 + i * 75, 68]);
        }
        for y in [100, 130] {
            for i in 0..6 {
                rects.push([5 + i * 50, y, 45 + i * 50, y + 20]);
            }
        }
        let img = page(160, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 3, "{lines:?}");
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (10.0, 68.0));
    }

    #[test]
    fn a_short_last_line_of_one_low_word_stays_a_line() {
        // Two lines of letters up to 30 px tall, tight under them a last line of one word in
        // low letters (40 x 10 px, 6 px under a letter of the line above): as low as a crumb
        // and as near, but wider than dots; a line of its own.
        let img = page(
            100,
            &[
                [20, 5, 24, 35],
                [30, 20, 300, 35],
                [20, 45, 24, 75],
                [30, 60, 300, 75],
                [200, 81, 240, 91],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 3, "{lines:?}");
        assert_eq!((lines[2].bbox.x0, lines[2].bbox.y0), (200.0, 81.0));
    }

    #[test]
    fn a_header_over_a_title_alone_in_their_zone_loses_its_page_number() {
        // A zone of two lines: a running header of 16-px pieces at x 120..260 with, 56 px to its
        // left (under the 60 px cut gap), a two-digit page number, and 14 px under it a title
        // of 40-px letters. With no third line there is no white to compare; the header's type,
        // under half the title's, sets it apart and its number is cut off. In the title's type
        // the two lines are a paragraph, and the first stays whole.
        let zone_lines = |header_h: u32| {
            let mut rects = vec![[40, 0, 50, header_h], [54, 0, 64, header_h]];
            for i in 0..4 {
                rects.push([120 + i * 36, 0, 150 + i * 36, header_h]);
            }
            let y = header_h + 14;
            for i in 0..4 {
                rects.push([10 + i * 75, y, 70 + i * 75, y + 40]);
            }
            tops_and_widths(y + 50, &rects)
        };
        let header = zone_lines(16);
        assert_eq!(header.len(), 3, "{header:?}");
        assert_eq!(header[..2], [(0.0, 138.0), (0.0, 24.0)], "{header:?}");
        let paragraph = zone_lines(40);
        assert_eq!(paragraph.len(), 2, "{paragraph:?}");
        assert_eq!(paragraph[0], (0.0, 218.0), "{paragraph:?}");
    }

    #[test]
    fn a_header_in_small_type_over_a_title_stays_a_line() {
        // A running header of 16-px pieces 30 px wide (y 0..16), under 0.45 of the 40-px
        // letters of the title 24 px under it (y 40..80), then two body lines: the header
        // stands too far off the title to be its marks.
        let mut rects = vec![];
        for i in 0..4 {
            rects.push([20 + i * 40, 0, 50 + i * 40, 16]);
        }
        for i in 0..4 {
            rects.push([10 + i * 75, 40, 70 + i * 75, 80]);
        }
        for y in [110, 140] {
            for i in 0..6 {
                rects.push([5 + i * 50, y, 45 + i * 50, y + 20]);
            }
        }
        let img = page(170, &rects);
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 4, "{lines:?}");
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (0.0, 16.0));
    }

    #[test]
    fn a_damma_over_a_shin_s_three_dots_goes_with_the_shin() {
        // Two lines of 20-px letters (cores 10..30 and 60..80); line 1 has a descender down to
        // y 44. Under it, over a shin of line 2, a damma (y 46..50, 2 px under the descender:
        // weighed double, 4) stands over the shin's three dots: the top one (y 51..55) 5 px
        // over the shin, the two under it (y 56..59, 1 px over the shin) each overlapping it
        // by two fifths of its width. All four marks are one stack, the shin's.
        let img = page(
            100,
            &[
                [0, 10, 90, 30],
                [100, 10, 112, 44],
                [122, 10, 300, 30],
                [0, 60, 300, 80],
                [101, 46, 110, 50],
                [103, 51, 108, 55],
                [100, 56, 105, 59],
                [106, 56, 111, 59],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 10, 12);
        assert_eq!(lines.len(), 2);
        for (x0, y0) in [(101, 46), (103, 51), (100, 56), (106, 56)] {
            let mark = comps
                .list
                .iter()
                .position(|c| (c.x0, c.y0) == (x0, y0))
                .unwrap();
            assert!(
                lines[1].comps.contains(&mark),
                "mark at {x0}, {y0}: {lines:?}"
            );
        }
        assert_eq!(lines[0].bbox.y1, 44.0);
    }

    #[test]
    fn rows_of_harakat_over_lines_are_those_lines_not_lines() {
        // Five lines 45 px apart of six words each: an 8-px band of letters under a stem 10 px
        // tall (18 px in all, the zone's letter height), and an alef of 23 px. Over lines 2-5
        // a row of five harakat 4 px above the line's top: too large to be marks of the page's
        // type, and parted from the line by white, so each row is a profile peak of its own;
        // with a row over every line the peaks stand about 22 px apart, too many to drop as
        // close ones (the sizes of an Amiri page at 150 dpi, generated, seed 505). One, a
        // shadda of 10 x 9 px, is over half the letter height, so the row is no row of small
        // pieces. Four sit over stems, the fifth over a word space, far from any letter: three
        // quarters near letters make a row of harakat, which joins the line under it.
        let mut rects = Vec::new();
        for i in 0..5u32 {
            let t = 10 + 45 * i;
            for w in 0..6 {
                rects.push([w * 50, t + 10, w * 50 + 40, t + 18]);
                rects.push([w * 50 + 18, t, w * 50 + 21, t + 10]);
            }
            rects.push([305, t - 5, 308, t + 18]);
            if i > 0 {
                for w in [0, 2, 3] {
                    rects.push([w * 50 + 17, t - 10, w * 50 + 22, t - 4]);
                }
                rects.push([63, t - 13, 73, t - 4]);
                rects.push([242, t - 10, 247, t - 4]);
            }
        }
        let comps = find_components(&page(240, &rects));
        let lines = lines_of(&comps, 0, 8);
        assert_eq!(lines.len(), 5, "{lines:?}");
        for (i, line) in lines.iter().enumerate().skip(1) {
            let t = 10 + 45 * i as u32;
            for (x0, y0) in [(17, t - 10), (63, t - 13), (117, t - 10), (167, t - 10)] {
                let haraka = comps
                    .list
                    .iter()
                    .position(|c| (c.x0, c.y0) == (x0, y0))
                    .unwrap();
                assert!(line.comps.contains(&haraka), "line {i}, x {x0}: {line:?}");
            }
        }
    }

    #[test]
    fn marks_each_nearer_a_letter_than_each_other_are_no_stack() {
        // Lines of 30-px letters at y 10..40 and 68..98; line 1 has a descender down to y 54
        // with a dot 1 px under it (y 55..58). Over line 2's letters, 2 px up, stands a sukun
        // (y 63..66) overlapping the dot across, 5 px under it: close enough for one stack (6 px
        // at this type), but each is nearer its own letter than the other. The sukun is line 2's,
        // the dot line 1's.
        let img = page(
            110,
            &[
                [0, 10, 100, 40],
                [108, 10, 114, 54],
                [122, 10, 300, 40],
                [0, 68, 300, 98],
                [108, 55, 112, 58],
                [104, 63, 110, 66],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 8, 8);
        assert_eq!(lines.len(), 2, "{lines:?}");
        let at = |y0| comps.list.iter().position(|c| c.y0 == y0).unwrap();
        assert!(lines[0].comps.contains(&at(55)), "dot: {lines:?}");
        assert!(lines[1].comps.contains(&at(63)), "sukun: {lines:?}");
    }

    #[test]
    fn a_line_of_digits_close_under_tall_letters_stays_a_line() {
        // A line of 19-px pieces with seven letters of 50 px hanging to y 60 (the zone's letter
        // height 19, as on a Nastaliq page); 6 px under the hanging letters a line of nine digits
        // as tall as the zone's letters, seven of them under a hanging letter. As small for the
        // tallest letter and as near as a row of harakat, but not low for the zone's type: a line.
        let mut rects = Vec::new();
        for i in 0..10u32 {
            rects.push([30 * i, 10, 30 * i + 12, 29]);
        }
        for i in 0..7u32 {
            rects.push([30 * i + 15, 10, 30 * i + 22, 60]);
        }
        for i in 0..9u32 {
            rects.push([30 * i + 15, 66, 30 * i + 27, 85]);
        }
        let comps = find_components(&page(100, &rects));
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 2, "{lines:?}");
        assert_eq!(lines[1].comps.len(), 9);
        assert_eq!((lines[1].bbox.y0, lines[1].bbox.y1), (66.0, 85.0));
    }

    #[test]
    fn a_tall_letter_rising_past_half_way_keeps_its_top() {
        // Lines of 20-px letters at y 10..30 and 60..80; on line 2 a word rising steeply to
        // y 38, as Nastaliq words do, past half way between the cores (45) but short of line 1's
        // letters: line 2's box reaches its top. A piece of line 2 reaching into line 1's core
        // (touching letters) would still be cut at half way.
        let img = page(
            100,
            &[
                [0, 10, 300, 30],
                [0, 60, 200, 80],
                [220, 38, 232, 80],
                [240, 60, 300, 80],
            ],
        );
        let comps = find_components(&img);
        let lines = lines_of(&comps, 0, 0);
        assert_eq!(lines.len(), 2, "{lines:?}");
        assert_eq!((lines[1].bbox.y0, lines[1].bbox.y1), (38.0, 80.0));
        assert_eq!((lines[0].bbox.y0, lines[0].bbox.y1), (10.0, 30.0));
    }
}
