//! Removal of what is not writing: dark scan borders, punch holes and speckle.
//!
//! Dots, hamza and harakat are small too, so a small component is removed only when it is tiny
//! (a few pixels at 300 dpi) or stands alone, far from any letter.

use image::GrayImage;

use crate::layout::components::{erase, find_components, Component};

/// What the clean-up removed, by kind.
#[derive(Debug, Clone, Copy, Default, PartialEq, Eq)]
pub struct Removed {
    /// Components touching the page edge and large (scan borders, gutter shadow left as ink).
    pub borders: u32,
    /// Round solid blobs near an edge of hole size.
    pub punch_holes: u32,
    /// Tiny or isolated specks.
    pub speckle: u32,
}

/// Remove borders, punch holes and speckle from a binary page in place.
pub fn denoise(binary: &mut GrayImage, dpi: f32) -> Removed {
    let bands = dark_edge_bands(binary, dpi);
    denoise_with_edges(binary, dpi, bands)
}

/// [`denoise`] with the dark edge bands measured elsewhere (a local threshold leaves only the rim of
/// a dark border as ink, so the bands are measured on a global-threshold image; see [`dark_edge_bands`]).
pub fn denoise_with_edges(binary: &mut GrayImage, dpi: f32, bands: [u32; 4]) -> Removed {
    let comps = find_components(binary);
    let (w, h) = binary.dimensions();
    let s = dpi / 300.0;
    // At 300 dpi an Arabic dot of 8-pt type covers about 9 px and a fatha about 12 px: remove up to 2 px
    // always, up to 12 px when no larger ink lies within 1/10 inch (common practice, no source).
    let tiny = (2.0 * s * s).max(1.0) as u32;
    let small = (12.0 * s * s).max(2.0) as u32;
    let mut removed = Removed::default();
    let mut runs = vec![0u32; comps.list.len()];
    for r in &comps.runs {
        runs[r.comp as usize] += 1;
    }
    let mut drop: Vec<bool> = comps
        .list
        .iter()
        .zip(&runs)
        .map(|(c, &runs)| {
            if is_border(c, w, h) || in_edge_band(c, &bands, w, h) {
                removed.borders += 1;
                true
            } else if is_punch_hole(c, runs, w, h, dpi) {
                removed.punch_holes += 1;
                true
            } else {
                false
            }
        })
        .collect();
    let kept: Vec<Component> = comps
        .list
        .iter()
        .zip(&drop)
        .filter(|(_, &d)| !d)
        .map(|(c, _)| *c)
        .collect();
    let near = grid_of_large(&kept, small, (dpi / 10.0).max(4.0) as u32, w, h);
    for (c, d) in comps.list.iter().zip(drop.iter_mut()) {
        if !*d && (c.area <= tiny || (c.area <= small && !near.touches(c))) {
            removed.speckle += 1;
            *d = true;
        }
    }
    erase(binary, &comps, &drop);
    removed
}

/// Depth in pixels of the dark band along each edge (left, top, right, bottom) plus 1/20 inch of the
/// ragged fringe beside it, or 0 where the edge is paper. A row or column more than 40 % ink counts as
/// border (common practice, no source).
pub fn dark_edge_bands(binary: &GrayImage, dpi: f32) -> [u32; 4] {
    let (w, h) = binary.dimensions();
    let raw = binary.as_raw();
    let mut cols = vec![0u32; w as usize];
    let mut rows = vec![0u32; h as usize];
    for y in 0..h as usize {
        for x in 0..w as usize {
            if raw[y * w as usize + x] == 0 {
                cols[x] += 1;
                rows[y] += 1;
            }
        }
    }
    let depth = |counts: &mut dyn Iterator<Item = u32>, full: u32| {
        let d = counts.take_while(|&c| c as f32 > 0.4 * full as f32).count() as u32;
        if d == 0 {
            0
        } else {
            d + (dpi / 20.0) as u32
        }
    };
    [
        depth(&mut cols.iter().copied(), h),
        depth(&mut rows.iter().copied(), w),
        depth(&mut cols.iter().rev().copied(), h),
        depth(&mut rows.iter().rev().copied(), w),
    ]
}

/// True when the component lies wholly inside one of the edge bands.
fn in_edge_band(c: &Component, b: &[u32; 4], w: u32, h: u32) -> bool {
    c.x1 <= b[0] || c.y1 <= b[1] || c.x0 + b[2] >= w || c.y0 + b[3] >= h
}

fn is_border(c: &Component, w: u32, h: u32) -> bool {
    c.touches_edge(w, h) && (c.width() > w / 10 || c.height() > h / 10)
}

/// Solid, round, 4–9 mm across, within 1/5 of the page from an edge (ISO 838 holes are 6 mm).
/// Solid: a hole shows as a disc, one run of ink a row, where a bold letter or digit of a large
/// title as round and as full has rows of two or more runs around its counter or between its
/// strokes (a title's "0", "8" and "3" at the head of a generated damaged page, seed 505 page 13,
/// were taken for holes). A tenth more runs than rows allows for a ragged, speckled hole.
fn is_punch_hole(c: &Component, runs: u32, w: u32, h: u32, dpi: f32) -> bool {
    let mm = dpi / 25.4;
    let (cw, ch) = (c.width() as f32, c.height() as f32);
    let round = (cw - ch).abs() <= 0.2 * cw.max(ch);
    let fill = c.area as f32 / (cw * ch);
    let size_ok = cw >= 4.0 * mm && cw <= 9.0 * mm;
    let near_edge = c.x1 < w / 5 || c.x0 > w - w / 5 || c.y1 < h / 5 || c.y0 > h - h / 5;
    let solid = runs as f32 <= 1.1 * ch;
    round && size_ok && (0.65..=0.9).contains(&fill) && near_edge && solid
}

/// Coarse grid marking cells covered by components larger than `small`.
struct Grid {
    cell: u32,
    cols: u32,
    rows: u32,
    on: Vec<bool>,
}

fn grid_of_large(list: &[Component], small: u32, cell: u32, w: u32, h: u32) -> Grid {
    let (cols, rows) = (w.div_ceil(cell), h.div_ceil(cell));
    let mut on = vec![false; (cols * rows) as usize];
    for c in list.iter().filter(|c| c.area > small) {
        for gy in c.y0 / cell..=(c.y1 - 1) / cell {
            for gx in c.x0 / cell..=(c.x1 - 1) / cell {
                on[(gy * cols + gx) as usize] = true;
            }
        }
    }
    Grid {
        cell,
        cols,
        rows,
        on,
    }
}

impl Grid {
    /// True when a cell within one cell of the component's box is covered.
    fn touches(&self, c: &Component) -> bool {
        let (gx0, gy0) = (
            (c.x0 / self.cell).saturating_sub(1),
            (c.y0 / self.cell).saturating_sub(1),
        );
        let gx1 = ((c.x1 - 1) / self.cell + 1).min(self.cols - 1);
        let gy1 = ((c.y1 - 1) / self.cell + 1).min(self.rows - 1);
        (gy0..=gy1).any(|gy| (gx0..=gx1).any(|gx| self.on[(gy * self.cols + gx) as usize]))
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn keeps_dots_beside_letters_and_drops_lone_specks() {
        let mut img = GrayImage::from_pixel(300, 300, image::Luma([255]));
        let mut fill = |x0: u32, y0: u32, w: u32, h: u32| {
            for y in y0..y0 + h {
                for x in x0..x0 + w {
                    img.put_pixel(x, y, image::Luma([0]));
                }
            }
        };
        fill(100, 100, 40, 6); // a letter body
        fill(115, 112, 3, 3); // its dot, 9 px, just below
        fill(250, 30, 3, 3); // a lone speck, 9 px
        fill(200, 200, 1, 1); // a tiny speck
        fill(0, 0, 300, 12); // dark scan border along the top
        let r = denoise(&mut img, 300.0);
        assert_eq!(
            r,
            Removed {
                borders: 1,
                punch_holes: 0,
                speckle: 2
            }
        );
        assert_eq!(img.get_pixel(116, 113).0[0], 0, "the dot must stay");
        assert_eq!(img.get_pixel(251, 31).0[0], 255);
        assert_eq!(img.get_pixel(5, 5).0[0], 255);
    }

    /// A disc 6 mm across (ISO 838's hole) near the binding edge is a punch hole; a bold round
    /// letter as large and as full, with a counter, at the head of the page is writing.
    #[test]
    fn a_solid_disc_by_the_edge_is_a_hole_but_a_bold_ring_is_a_letter() {
        let mut img = GrayImage::from_pixel(1200, 1700, image::Luma([255]));
        // 6 mm at 300 dpi is 71 px; the ring's counter 25 px across leaves it 0.69 full, within a
        // hole's fill.
        let mut disc = |cx: f32, cy: f32, outer: f32, inner: f32| {
            for y in 0..1700u32 {
                for x in 0..1200u32 {
                    let d = ((x as f32 + 0.5 - cx).powi(2) + (y as f32 + 0.5 - cy).powi(2)).sqrt();
                    if d <= outer && d > inner {
                        img.put_pixel(x, y, image::Luma([0]));
                    }
                }
            }
        };
        disc(80.0, 850.0, 35.5, 0.0);
        disc(600.0, 150.0, 35.5, 12.5);
        let r = denoise(&mut img, 300.0);
        assert_eq!(r.punch_holes, 1);
        assert_eq!(img.get_pixel(80, 850).0[0], 255, "the hole must go");
        assert_eq!(img.get_pixel(600, 125).0[0], 0, "the ring must stay");
    }
}
