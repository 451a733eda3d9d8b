//! Connected ink components (8-connected) found from row runs, and their sizes.
//!
//! Clean-up uses them to drop speckle and borders; line finding sorts them into main bodies (letters
//! and letter groups) and marks (dots, hamza, harakat) and attaches marks to lines.

use image::GrayImage;

/// One horizontal run of ink: pixels `x0..x1` of row `y`, part of component `comp`.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Run {
    /// Row.
    pub y: u32,
    /// First ink pixel.
    pub x0: u32,
    /// One past the last ink pixel.
    pub x1: u32,
    /// Index into [`Components::list`].
    pub comp: u32,
}

/// One connected component: its box (end-exclusive) and its ink pixel count.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Component {
    /// Left edge (inclusive).
    pub x0: u32,
    /// Top edge (inclusive).
    pub y0: u32,
    /// Right edge (exclusive).
    pub x1: u32,
    /// Bottom edge (exclusive).
    pub y1: u32,
    /// Ink pixels.
    pub area: u32,
}

impl Component {
    /// Width in pixels.
    pub fn width(&self) -> u32 {
        self.x1 - self.x0
    }
    /// Height in pixels.
    pub fn height(&self) -> u32 {
        self.y1 - self.y0
    }
    /// Horizontal centre.
    pub fn cx(&self) -> f32 {
        (self.x0 + self.x1) as f32 / 2.0
    }
    /// Vertical centre.
    pub fn cy(&self) -> f32 {
        (self.y0 + self.y1) as f32 / 2.0
    }
    /// True when the box touches the image edge.
    pub fn touches_edge(&self, w: u32, h: u32) -> bool {
        self.x0 == 0 || self.y0 == 0 || self.x1 >= w || self.y1 >= h
    }
}

/// All components of a binary image and the runs they are made of (runs sorted by row, then x).
#[derive(Debug, Clone, Default)]
pub struct Components {
    /// The components.
    pub list: Vec<Component>,
    /// The runs, row by row.
    pub runs: Vec<Run>,
}

impl Components {
    /// Run indices of each component: `runs[idx[off[c]..off[c + 1]]]` are component `c`'s runs.
    pub fn runs_by_component(&self) -> (Vec<u32>, Vec<u32>) {
        let mut off = vec![0u32; self.list.len() + 1];
        for r in &self.runs {
            off[r.comp as usize + 1] += 1;
        }
        for i in 0..self.list.len() {
            off[i + 1] += off[i];
        }
        let mut fill = off.clone();
        let mut idx = vec![0u32; self.runs.len()];
        for (i, r) in self.runs.iter().enumerate() {
            idx[fill[r.comp as usize] as usize] = i as u32;
            fill[r.comp as usize] += 1;
        }
        (off, idx)
    }
}

/// Label the ink (pixels equal to 0) of a binary image into 8-connected components.
pub fn find_components(binary: &GrayImage) -> Components {
    let (w, h) = binary.dimensions();
    let raw = binary.as_raw();
    let mut runs: Vec<Run> = Vec::new();
    let mut parent: Vec<u32> = Vec::new();
    let mut prev_row = 0..0; // indices into runs for the previous row
    for y in 0..h {
        let row = &raw[(y * w) as usize..((y + 1) * w) as usize];
        let start = runs.len();
        let mut x = 0;
        while x < w {
            if row[x as usize] != 0 {
                x += 1;
                continue;
            }
            let x0 = x;
            while x < w && row[x as usize] == 0 {
                x += 1;
            }
            let label = parent.len() as u32;
            parent.push(label);
            runs.push(Run {
                y,
                x0,
                x1: x,
                comp: label,
            });
        }
        // Join with runs of the previous row that touch (8-connected: ranges overlap when widened by 1).
        let mut j = prev_row.start;
        for i in start..runs.len() {
            let r = runs[i];
            while j < prev_row.end && runs[j].x1 < r.x0 {
                j += 1;
            }
            let mut k = j;
            while k < prev_row.end && runs[k].x0 <= r.x1 {
                union(&mut parent, r.comp, runs[k].comp);
                k += 1;
            }
        }
        prev_row = start..runs.len();
    }
    relabel(runs, &mut parent)
}

fn find(parent: &mut [u32], mut a: u32) -> u32 {
    while parent[a as usize] != a {
        parent[a as usize] = parent[parent[a as usize] as usize];
        a = parent[a as usize];
    }
    a
}

fn union(parent: &mut [u32], a: u32, b: u32) {
    let (ra, rb) = (find(parent, a), find(parent, b));
    if ra != rb {
        let (lo, hi) = (ra.min(rb), ra.max(rb));
        parent[hi as usize] = lo;
    }
}

fn relabel(mut runs: Vec<Run>, parent: &mut [u32]) -> Components {
    let mut id = vec![u32::MAX; parent.len()];
    let mut list: Vec<Component> = Vec::new();
    for r in runs.iter_mut() {
        let root = find(parent, r.comp) as usize;
        if id[root] == u32::MAX {
            id[root] = list.len() as u32;
            list.push(Component {
                x0: r.x0,
                y0: r.y,
                x1: r.x1,
                y1: r.y + 1,
                area: 0,
            });
        }
        let c = &mut list[id[root] as usize];
        c.x0 = c.x0.min(r.x0);
        c.x1 = c.x1.max(r.x1);
        c.y1 = c.y1.max(r.y + 1);
        c.area += r.x1 - r.x0;
        r.comp = id[root];
    }
    Components { list, runs }
}

/// Paint the given components white (paper) in a binary image.
pub fn erase(binary: &mut GrayImage, comps: &Components, drop: &[bool]) {
    let w = binary.width();
    let raw: &mut [u8] = binary.as_mut();
    for r in comps.runs.iter().filter(|r| drop[r.comp as usize]) {
        let at = (r.y * w) as usize;
        raw[at + r.x0 as usize..at + r.x1 as usize].fill(255);
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    fn from_rows(rows: &[&str]) -> GrayImage {
        let w = rows[0].len() as u32;
        GrayImage::from_fn(w, rows.len() as u32, |x, y| {
            image::Luma([if rows[y as usize].as_bytes()[x as usize] == b'#' {
                0
            } else {
                255
            }])
        })
    }

    #[test]
    fn diagonal_touch_joins_and_gaps_split() {
        let img = from_rows(&[
            "#....##", //
            ".#...##", "..#....", ".......", "###.#..",
        ]);
        let c = find_components(&img);
        assert_eq!(c.list.len(), 4);
        let diag = c.list.iter().find(|c| c.x0 == 0 && c.y0 == 0).unwrap();
        assert_eq!((diag.x1, diag.y1, diag.area), (3, 3, 3));
        let block = c.list.iter().find(|c| c.x0 == 5).unwrap();
        assert_eq!((block.width(), block.height(), block.area), (2, 2, 4));
    }

    #[test]
    fn u_shape_merges_late() {
        // Two arms that meet only in the last row must end as one component.
        let img = from_rows(&["#...#", "#...#", "#####"]);
        let c = find_components(&img);
        assert_eq!(c.list.len(), 1);
        assert_eq!(c.list[0].area, 9);
        let mut img2 = img.clone();
        erase(&mut img2, &c, &[true]);
        assert!(img2.as_raw().iter().all(|&p| p == 255));
    }
}
