//! Scoring a page analysis against known lines: which found lines match true ones, whether they
//! come in the right reading order, and whether their kinds are right.
//!
//! A found line matches a true line when their boxes on the straightened page overlap with
//! IoU ≥ 0.7 and the found box holds ≥ 98 % of the true line's ink pixels, dots and harakat
//! included (the criterion of issue 5). Used by the evaluation example and the regression tests;
//! the truth comes from the page generator, so this module knows nothing of how it was made.

use super::geometry::Rect;
use super::PageLayout;
use crate::cleanup::CleanPage;
use crate::text::RegionKind;

/// Smallest box overlap (intersection over union) of a match.
pub const MIN_IOU: f32 = 0.7;
/// Smallest share of the true line's ink inside the found box.
pub const MIN_INK: f32 = 0.98;

/// A true line on the straightened page.
#[derive(Debug, Clone)]
pub struct TrueLine {
    /// Its region kind.
    pub kind: RegionKind,
    /// Bounds of its ink.
    pub bbox: Rect,
    /// Centres of its ink pixels.
    pub ink: Vec<(f32, f32)>,
}

impl TrueLine {
    /// A true line from its kind and its ink pixel centres on the original page image.
    pub fn from_original(kind: RegionKind, ink: &[(f32, f32)], page: &CleanPage) -> TrueLine {
        let ink: Vec<(f32, f32)> = ink
            .iter()
            .map(|&(x, y)| page.transform.from_original(x, y))
            .collect();
        // Built field by field: `Rect::new` orders its corners, which would undo the empty start.
        let mut b = Rect {
            x0: f32::MAX,
            y0: f32::MAX,
            x1: f32::MIN,
            y1: f32::MIN,
        };
        for &(x, y) in &ink {
            b = Rect {
                x0: b.x0.min(x - 0.5),
                y0: b.y0.min(y - 0.5),
                x1: b.x1.max(x + 0.5),
                y1: b.y1.max(y + 0.5),
            };
        }
        TrueLine { kind, bbox: b, ink }
    }

    /// Share of this line's ink inside `b`.
    pub fn ink_inside(&self, b: &Rect) -> f32 {
        let n = self
            .ink
            .iter()
            .filter(|&&(x, y)| x >= b.x0 && x <= b.x1 && y >= b.y0 && y <= b.y1)
            .count();
        n as f32 / self.ink.len().max(1) as f32
    }
}

/// Issue 5's reading order as a group number: header row (and a page number at the top), titles
/// and main text, footnotes, a page number at the foot, margin notes. `top_half`: whether the line
/// lies in the upper half of the page.
pub fn reading_group(kind: RegionKind, top_half: bool) -> u8 {
    match kind {
        RegionKind::Header => 0,
        RegionKind::PageNumber if top_half => 0,
        RegionKind::Body | RegionKind::Title => 1,
        RegionKind::Footnote => 2,
        RegionKind::PageNumber => 3,
        RegionKind::Margin => 4,
    }
}

/// The score of one page.
#[derive(Debug, Clone, Default, PartialEq)]
pub struct PageScore {
    /// True lines.
    pub truth: usize,
    /// Found lines.
    pub found: usize,
    /// Found lines that match a true line.
    pub matched: usize,
    /// Every true line matched and the matches in the true order.
    pub order_right: bool,
    /// Per matched line: (true kind, found kind).
    pub kinds: Vec<(RegionKind, RegionKind)>,
    /// What went wrong, one note per problem.
    pub notes: Vec<String>,
}

fn short(r: &Rect) -> [i32; 4] {
    [r.x0, r.y0, r.x1, r.y1].map(|v| v.round() as i32)
}

/// Match the found lines of `layout` to `truth` (true lines in reading order), in reading order:
/// each found line takes the unmatched true line it overlaps most among those it matches.
pub fn score_page(truth: &[TrueLine], layout: &PageLayout) -> PageScore {
    let found: Vec<_> = layout.lines().collect();
    let mut s = PageScore {
        truth: truth.len(),
        found: found.len(),
        ..PageScore::default()
    };
    let mut taken = vec![false; truth.len()];
    let mut order = Vec::new();
    for f in &found {
        let b = f.clean_box;
        let best = (0..truth.len())
            .filter(|&i| !taken[i])
            .map(|i| (i, b.iou(&truth[i].bbox), truth[i].ink_inside(&b)))
            .filter(|&(_, iou, ink)| iou >= MIN_IOU && ink >= MIN_INK)
            .max_by(|a, b| a.1.total_cmp(&b.1));
        match best {
            Some((i, _, _)) => {
                taken[i] = true;
                order.push(i);
                s.kinds.push((truth[i].kind, f.kind));
                if truth[i].kind != f.kind {
                    s.notes.push(format!(
                        "line {i}: {:?} taken as {:?}",
                        truth[i].kind, f.kind
                    ));
                }
            }
            None => s
                .notes
                .push(format!("extra {:?} line {:?}", f.kind, short(&b))),
        }
    }
    for (i, l) in truth.iter().enumerate().filter(|(i, _)| !taken[*i]) {
        let near = found
            .iter()
            .map(|f| (f.clean_box.iou(&l.bbox), l.ink_inside(&f.clean_box)))
            .max_by(|a, b| a.0.total_cmp(&b.0))
            .unwrap_or((0.0, 0.0));
        s.notes.push(format!(
            "missed line {i} {:?} {:?} (best IoU {:.2}, ink {:.3})",
            l.kind,
            short(&l.bbox),
            near.0,
            near.1
        ));
    }
    s.matched = order.len();
    let ordered = order.windows(2).all(|w| w[0] < w[1]);
    if !ordered {
        s.notes.push(format!("order {order:?}"));
    }
    s.order_right = s.matched == s.truth && ordered;
    s
}

/// Line detection F1 over many pages: `2 · matched / (found + true)`.
pub fn f1(scores: &[PageScore]) -> f64 {
    let m: usize = scores.iter().map(|s| s.matched).sum();
    let n: usize = scores.iter().map(|s| s.found + s.truth).sum();
    2.0 * m as f64 / n.max(1) as f64
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::layout::{Line, Region, RegionClass};

    fn line(r: Rect, kind: RegionKind) -> Line {
        Line {
            kind,
            bbox: r,
            quad: [(0.0, 0.0); 4],
            baseline: [(0.0, 0.0); 2],
            x_height_px: 1.0,
            clean_box: r,
            clean_baseline_y: r.y1,
        }
    }

    fn truth(r: Rect, kind: RegionKind) -> TrueLine {
        let ink = (r.x0 as i32..r.x1 as i32)
            .flat_map(|x| (r.y0 as i32..r.y1 as i32).map(move |y| (x as f32 + 0.5, y as f32 + 0.5)))
            .collect();
        TrueLine { kind, bbox: r, ink }
    }

    fn layout(lines: Vec<Line>) -> PageLayout {
        PageLayout {
            regions: vec![Region {
                class: RegionClass::Text(RegionKind::Body),
                bbox: Rect::default(),
                clean_box: Rect::default(),
                lines,
            }],
            em_px: 10.0,
        }
    }

    #[test]
    fn a_box_missing_a_dot_row_does_not_match() {
        // Hand-made: a 100 × 20 line; a box one row short holds 95 % of the ink (< 98 %).
        let t = [truth(Rect::new(0.0, 0.0, 100.0, 20.0), RegionKind::Body)];
        let whole = score_page(&t, &layout(vec![line(t[0].bbox, RegionKind::Body)]));
        assert_eq!((whole.matched, whole.order_right), (1, true));
        let short = Rect::new(0.0, 1.0, 100.0, 20.0);
        let cut = score_page(&t, &layout(vec![line(short, RegionKind::Body)]));
        assert_eq!((cut.matched, cut.order_right), (0, false));
        assert_eq!(f1(&[whole, cut]), 2.0 * 1.0 / 4.0);
    }

    #[test]
    fn swapped_lines_match_but_break_the_order() {
        let a = Rect::new(0.0, 0.0, 100.0, 20.0);
        let b = Rect::new(0.0, 40.0, 100.0, 60.0);
        let t = [truth(a, RegionKind::Header), truth(b, RegionKind::Body)];
        let s = score_page(
            &t,
            &layout(vec![line(b, RegionKind::Body), line(a, RegionKind::Body)]),
        );
        assert_eq!(s.matched, 2);
        assert!(!s.order_right);
        assert_eq!(
            s.kinds,
            vec![
                (RegionKind::Body, RegionKind::Body),
                (RegionKind::Header, RegionKind::Body)
            ]
        );
    }
}
