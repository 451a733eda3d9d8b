//! Drawn pages with known lines, for tests and measurements of the page analysis.
//!
//! A [`PagePlan`] (columns, header, page number, title, footnotes under a rule, margin notes, type
//! sizes) is drawn with a real Arabic font (rustybuzz shaping, tiny-skia filling) into a grey page,
//! together with the truth: every line's ink box, ink pixel count, region kind and reading-order
//! place, and a label image saying which line each ink pixel belongs to. The words come from a small
//! text we wrote about an invented town library. Degradations (skew, shadow, noise, blur, border)
//! are applied by [`degrade`].

use image::GrayImage;
use rustybuzz::{Direction, Face, UnicodeBuffer};
use tiny_skia::{FillRule, Paint, PathBuilder, Pixmap, Transform};

use crate::layout::geometry::Rect;
use crate::text::RegionKind;

/// Words of our own invented text (a town library's notices), with some harakat.
const WORDS: &str = "مكتبة بلدة وادي السنديان تفتح أبوابها كل صباح للقراء من أهل البلدة والقرى \
المجاورة وفي قاعتها الكبرى رفوف الكتب القديمة والمخطوطات التي جمعها الأمناء عبر سنين طويلة \
يُرجى من الزائرين إعادة الكُتب إلى مكانها بعد القراءة وعدم الكتابة على الهوامش أو طيّ الصفحات \
وتُقام في الشتاء مجالس للقراءة والحديث عن تاريخ البلدة وأسواقها ومياهها وبساتينها \
قال أمين المكتبة إنّ الفهرس الجديد سيُنشر في الربيع بعد مراجعة السجلات وتصحيح الأخطاء \
ويستطيع الطلاب استعارة ثلاثة كتب في الأسبوع مع تجديد الاستعارة مرة واحدة فقط \
لجنة الأوقاف قرّرت ترميم الجناح الشرقي وإضافة نوافذ جديدة تُدخل الضوء إلى غرفة المطالعة \
ذُكر في الدفتر أنّ أول كتاب دخل المكتبة كان معجمًا كبيرًا في اللغة والأدب والشعر";

/// Where the page number goes.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub enum NumberAt {
    /// No page number.
    None,
    /// At the left end of the header line.
    Top,
    /// Centred under the text.
    Bottom,
}

/// What to draw on a page.
#[derive(Debug, Clone, PartialEq)]
pub struct PagePlan {
    /// Page width in pixels.
    pub width_px: u32,
    /// Page height in pixels.
    pub height_px: u32,
    /// Resolution.
    pub dpi: f32,
    /// Main text columns (1 or 2).
    pub columns: u32,
    /// A vertical rule between columns.
    pub column_rule: bool,
    /// Running header at the top.
    pub header: bool,
    /// Page number position.
    pub number: NumberAt,
    /// A centred title in larger type above the main text.
    pub title: bool,
    /// Footnote lines under a short rule.
    pub footnotes: u32,
    /// Margin note lines in the left margin.
    pub margin_notes: u32,
    /// Body type size, points.
    pub body_pt: f32,
    /// Line pitch as a multiple of the type size.
    pub leading: f32,
    /// Seed for the words.
    pub seed: u64,
}

impl PagePlan {
    /// A plan for an A5 page at `dpi` with everything picked from `seed`.
    pub fn random(seed: u64, dpi: f32) -> PagePlan {
        let mut r = Lcg(seed.wrapping_mul(2654435761).wrapping_add(7));
        let columns = if r.unit() < 0.35 { 2 } else { 1 };
        PagePlan {
            width_px: (148.0 / 25.4 * dpi) as u32, // A5 = 148 × 210 mm (ISO 216)
            height_px: (210.0 / 25.4 * dpi) as u32,
            dpi,
            columns,
            column_rule: columns == 2 && r.unit() < 0.5,
            header: r.unit() < 0.7,
            number: [NumberAt::None, NumberAt::Top, NumberAt::Bottom][(r.next_bits() % 3) as usize],
            title: r.unit() < 0.3,
            footnotes: if r.unit() < 0.5 {
                1 + (r.next_bits() % 3) as u32
            } else {
                0
            },
            margin_notes: if columns == 1 && r.unit() < 0.25 {
                1 + (r.next_bits() % 3) as u32
            } else {
                0
            },
            body_pt: 11.0 + (r.next_bits() % 4) as f32,
            leading: if r.unit() < 0.15 {
                1.3
            } else {
                1.6 + 0.4 * r.unit()
            },
            seed,
        }
    }
}

/// One drawn line and its truth.
#[derive(Debug, Clone, PartialEq)]
pub struct DrawnLine {
    /// Box of the line's ink (dots and harakat included), pixels.
    pub ink_box: Rect,
    /// Ink pixels (alpha ≥ ½) of the line.
    pub ink_px: u32,
    /// Region kind.
    pub kind: RegionKind,
    /// The text drawn (logical order).
    pub text: String,
}

/// A drawn page: pixels, lines in reading order, and which line owns each ink pixel.
#[derive(Debug, Clone)]
pub struct DrawnPage {
    /// Grey pixels.
    pub image: GrayImage,
    /// Lines in reading order.
    pub lines: Vec<DrawnLine>,
    /// Per pixel: 0 for paper, `i + 1` for ink of `lines[i]`.
    pub labels: Vec<u16>,
    /// Horizontal rules and pictures drawn (not text), pixels.
    pub non_text: Vec<Rect>,
}

/// A small linear congruential generator (Knuth's MMIX constants), enough for picking words.
#[derive(Debug, Clone)]
pub struct Lcg(pub u64);

impl Lcg {
    /// Next 31 random bits.
    pub fn next_bits(&mut self) -> u64 {
        self.0 = self
            .0
            .wrapping_mul(6364136223846793005)
            .wrapping_add(1442695040888963407);
        self.0 >> 33
    }
    /// Uniform in `[0, 1)`.
    pub fn unit(&mut self) -> f32 {
        (self.next_bits() % 1_000_000) as f32 / 1_000_000.0
    }
}

/// Turns glyph outlines into one tiny-skia path, placed and scaled.
struct Outline {
    pb: PathBuilder,
    x: f32,
    y: f32,
    scale: f32,
}

impl rustybuzz::ttf_parser::OutlineBuilder for Outline {
    fn move_to(&mut self, x: f32, y: f32) {
        self.pb
            .move_to(self.x + x * self.scale, self.y - y * self.scale);
    }
    fn line_to(&mut self, x: f32, y: f32) {
        self.pb
            .line_to(self.x + x * self.scale, self.y - y * self.scale);
    }
    fn quad_to(&mut self, x1: f32, y1: f32, x: f32, y: f32) {
        let (s, ox, oy) = (self.scale, self.x, self.y);
        self.pb
            .quad_to(ox + x1 * s, oy - y1 * s, ox + x * s, oy - y * s);
    }
    fn curve_to(&mut self, x1: f32, y1: f32, x2: f32, y2: f32, x: f32, y: f32) {
        let (s, ox, oy) = (self.scale, self.x, self.y);
        self.pb.cubic_to(
            ox + x1 * s,
            oy - y1 * s,
            ox + x2 * s,
            oy - y2 * s,
            ox + x * s,
            oy - y * s,
        );
    }
    fn close(&mut self) {
        self.pb.close();
    }
}

/// Draws shaped Arabic lines onto a page, keeping the truth.
pub struct PageDrawer<'f> {
    face: Face<'f>,
    canvas: Pixmap,
    lines: Vec<DrawnLine>,
    labels: Vec<u16>,
    non_text: Vec<Rect>,
}

impl<'f> PageDrawer<'f> {
    /// A blank page; `font` must be an OpenType font with Arabic.
    pub fn new(font: &'f [u8], width_px: u32, height_px: u32) -> Option<PageDrawer<'f>> {
        let face = Face::from_slice(font, 0)?;
        let mut canvas = Pixmap::new(width_px, height_px)?;
        canvas.fill(tiny_skia::Color::TRANSPARENT);
        let labels = vec![0; (width_px * height_px) as usize];
        Some(PageDrawer {
            face,
            canvas,
            lines: Vec::new(),
            labels,
            non_text: Vec::new(),
        })
    }

    /// Width in pixels of `text` at `size_px` per em.
    pub fn measure(&self, text: &str, size_px: f32) -> f32 {
        let mut buf = UnicodeBuffer::new();
        buf.push_str(text);
        buf.set_direction(Direction::RightToLeft);
        let out = rustybuzz::shape(&self.face, &[], buf);
        let scale = size_px / self.face.units_per_em() as f32;
        out.glyph_positions()
            .iter()
            .map(|p| p.x_advance as f32 * scale)
            .sum()
    }

    /// Draw one line with its right end at `right_px` and baseline at `baseline_px`; records its truth.
    pub fn line(
        &mut self,
        text: &str,
        size_px: f32,
        right_px: f32,
        baseline_px: f32,
        kind: RegionKind,
    ) {
        let mut buf = UnicodeBuffer::new();
        buf.push_str(text);
        buf.set_direction(Direction::RightToLeft);
        let out = rustybuzz::shape(&self.face, &[], buf);
        let scale = size_px / self.face.units_per_em() as f32;
        let width: f32 = out
            .glyph_positions()
            .iter()
            .map(|p| p.x_advance as f32 * scale)
            .sum();
        let mut ol = Outline {
            pb: PathBuilder::new(),
            x: right_px - width,
            y: baseline_px,
            scale,
        };
        let mut pen = right_px - width;
        for (info, pos) in out.glyph_infos().iter().zip(out.glyph_positions()) {
            ol.x = pen + pos.x_offset as f32 * scale;
            ol.y = baseline_px - pos.y_offset as f32 * scale;
            let gid = rustybuzz::ttf_parser::GlyphId(info.glyph_id as u16);
            self.face.outline_glyph(gid, &mut ol);
            pen += pos.x_advance as f32 * scale;
        }
        let Some(path) = ol.pb.finish() else { return };
        let bounds = path.bounds();
        self.fill_and_label(&path, bounds, kind, text);
    }

    fn fill_and_label(
        &mut self,
        path: &tiny_skia::Path,
        b: tiny_skia::Rect,
        kind: RegionKind,
        text: &str,
    ) {
        // Draw into a scratch pixmap the size of the line to know exactly which pixels are its ink.
        let (x0, y0) = (
            b.left().floor().max(0.0) as i32 - 1,
            b.top().floor().max(0.0) as i32 - 1,
        );
        let (w, h) = (
            (b.width().ceil() as i32 + 3) as u32,
            (b.height().ceil() as i32 + 3) as u32,
        );
        let Some(mut scratch) = Pixmap::new(w, h) else {
            return;
        };
        let mut paint = Paint::default();
        paint.set_color_rgba8(0, 0, 0, 255);
        paint.anti_alias = true;
        let tr = Transform::from_translate(-x0 as f32, -y0 as f32);
        scratch.fill_path(path, &paint, FillRule::Winding, tr, None);
        let id = self.lines.len() as u16 + 1;
        let (pw, ph) = (self.canvas.width() as i32, self.canvas.height() as i32);
        let (mut ink, mut bx0, mut by0, mut bx1, mut by1) =
            (0u32, i32::MAX, i32::MAX, i32::MIN, i32::MIN);
        for sy in 0..h as i32 {
            for sx in 0..w as i32 {
                let a = scratch.pixel(sx as u32, sy as u32).map_or(0, |p| p.alpha());
                let (x, y) = (x0 + sx, y0 + sy);
                if a == 0 || x < 0 || y < 0 || x >= pw || y >= ph {
                    continue;
                }
                let at = (y * pw + x) as usize;
                let old = self.canvas.pixels()[at].alpha();
                let new = old.max(a);
                self.canvas.pixels_mut()[at] =
                    tiny_skia::PremultipliedColorU8::from_rgba(0, 0, 0, new).unwrap();
                if a >= 128 {
                    self.labels[at] = id;
                    ink += 1;
                    (bx0, by0, bx1, by1) = (bx0.min(x), by0.min(y), bx1.max(x + 1), by1.max(y + 1));
                }
            }
        }
        if ink > 0 {
            let ink_box = Rect::new(bx0 as f32, by0 as f32, bx1 as f32, by1 as f32);
            self.lines.push(DrawnLine {
                ink_box,
                ink_px: ink,
                kind,
                text: text.to_string(),
            });
        }
    }

    /// A solid bar (rule or picture), not text.
    pub fn bar(&mut self, r: Rect) {
        let (pw, ph) = (self.canvas.width() as i32, self.canvas.height() as i32);
        for y in (r.y0 as i32).max(0)..(r.y1 as i32).min(ph) {
            for x in (r.x0 as i32).max(0)..(r.x1 as i32).min(pw) {
                self.canvas.pixels_mut()[(y * pw + x) as usize] =
                    tiny_skia::PremultipliedColorU8::from_rgba(0, 0, 0, 255).unwrap();
            }
        }
        self.non_text.push(r);
    }

    /// The finished page: ink alpha becomes dark grey on white paper.
    pub fn finish(self) -> DrawnPage {
        let (w, h) = (self.canvas.width(), self.canvas.height());
        let px: Vec<u8> = self
            .canvas
            .pixels()
            .iter()
            .map(|p| 255 - (p.alpha() as u32 * 235 / 255) as u8)
            .collect();
        let image = GrayImage::from_raw(w, h, px).expect("size");
        DrawnPage {
            image,
            lines: self.lines,
            labels: self.labels,
            non_text: self.non_text,
        }
    }
}

/// Words for line `n` of a page, filling about `width_px` at `size_px`.
fn words_for(d: &PageDrawer, r: &mut Lcg, width_px: f32, size_px: f32) -> String {
    let words: Vec<&str> = WORDS.split_whitespace().collect();
    let mut line = String::new();
    loop {
        let w = words[(r.next_bits() % words.len() as u64) as usize];
        let trial = if line.is_empty() {
            w.to_string()
        } else {
            format!("{line} {w}")
        };
        if d.measure(&trial, size_px) > width_px {
            if line.is_empty() {
                return trial;
            }
            return line;
        }
        line = trial;
    }
}

/// Arabic-Indic digits for a number.
fn arabic_number(n: u64) -> String {
    n.to_string()
        .chars()
        .map(|c| char::from_u32(0x0660 + c.to_digit(10).unwrap_or(0)).unwrap_or(c))
        .collect()
}

/// Draw a page from a plan. Reading order of the truth: header, top page number, title, columns right
/// to left (each top to bottom), footnotes, bottom page number, margin notes.
pub fn draw_page(font: &[u8], plan: &PagePlan) -> Option<DrawnPage> {
    let mut d = PageDrawer::new(font, plan.width_px, plan.height_px)?;
    let mut r = Lcg(plan.seed ^ 0x5eed);
    let px_per_pt = plan.dpi / 72.0;
    let body_px = plan.body_pt * px_per_pt;
    let (w, h) = (plan.width_px as f32, plan.height_px as f32);
    let margin = 0.55 * plan.dpi;
    let note_w = if plan.margin_notes > 0 {
        0.9 * plan.dpi
    } else {
        0.0
    };
    let (left, right) = (margin + note_w, w - margin);
    let mut y = margin;
    if plan.header || plan.number == NumberAt::Top {
        let size = body_px * 0.85;
        y += size;
        if plan.header {
            let text = words_for(&d, &mut r, (right - left) * 0.45, size);
            d.line(&text, size, right, y, RegionKind::Header);
        }
        if plan.number == NumberAt::Top {
            let n = arabic_number(1 + plan.seed % 400);
            let nw = d.measure(&n, size);
            d.line(&n, size, left + nw, y, RegionKind::PageNumber);
        }
        y += size * 1.6;
    }
    if plan.title {
        let size = body_px * 1.6;
        y += size * 1.1;
        let text = words_for(&d, &mut r, (right - left) * 0.6, size);
        let tw = d.measure(&text, size);
        d.line(&text, size, (left + right + tw) / 2.0, y, RegionKind::Title);
        y += size * 0.9;
    }
    let foot_px = body_px * 0.8;
    let foot_h = if plan.footnotes > 0 {
        plan.footnotes as f32 * foot_px * 1.7 + body_px * 1.5
    } else {
        0.0
    };
    let num_h = if plan.number == NumberAt::Bottom {
        body_px * 2.5
    } else {
        0.0
    };
    let body_bottom = h - margin - foot_h - num_h;
    let pitch = body_px * plan.leading;
    let gutter = 0.3 * plan.dpi;
    let col_w = (right - left - gutter * (plan.columns - 1) as f32) / plan.columns as f32;
    let first_base = y + body_px * 1.4;
    let mut last_base = first_base;
    for c in 0..plan.columns {
        let col_right = right - c as f32 * (col_w + gutter);
        let mut base = first_base;
        let n_lines = ((body_bottom - first_base) / pitch).floor().max(1.0) as u32;
        for i in 0..n_lines {
            // The last line of a column is short (end of a paragraph).
            let width = if i + 1 == n_lines {
                col_w * (0.25 + 0.4 * r.unit())
            } else {
                col_w
            };
            let text = words_for(&d, &mut r, width, body_px);
            d.line(&text, body_px, col_right, base, RegionKind::Body);
            last_base = last_base.max(base);
            base += pitch;
        }
    }
    if plan.columns == 2 && plan.column_rule {
        let x = right - col_w - gutter / 2.0;
        d.bar(Rect::new(
            x - 1.0,
            first_base - body_px,
            x + 2.0,
            last_base + body_px * 0.4,
        ));
    }
    let mut fy = last_base + body_px * 0.6;
    if plan.footnotes > 0 {
        fy += body_px * 0.6;
        d.bar(Rect::new(
            right - (right - left) * 0.33,
            fy,
            right,
            fy + (plan.dpi / 150.0).max(2.0),
        ));
        fy += foot_px * 0.4;
        for _ in 0..plan.footnotes {
            fy += foot_px * 1.7;
            let width = (right - left) * (0.5 + 0.5 * r.unit());
            let text = words_for(&d, &mut r, width, foot_px);
            d.line(&text, foot_px, right, fy, RegionKind::Footnote);
        }
    }
    if plan.number == NumberAt::Bottom {
        let size = body_px * 0.85;
        let n = arabic_number(1 + plan.seed % 400);
        let nw = d.measure(&n, size);
        d.line(
            &n,
            size,
            (left + right + nw) / 2.0,
            fy + body_px * 2.2,
            RegionKind::PageNumber,
        );
    }
    let mut ny = first_base;
    for _ in 0..plan.margin_notes {
        let size = body_px * 0.75;
        let text = words_for(&d, &mut r, note_w * 0.65, size);
        d.line(&text, size, margin + note_w * 0.7, ny, RegionKind::Margin);
        ny += size * 1.8;
    }
    Some(d.finish())
}

/// Scan-like damage with the truth kept: skew by `skew_deg`, lower contrast, a gutter shadow on the
/// left, a dark border strip on the right, grain, speckle and a slight blur. Labels follow the skew.
pub fn degrade(page: &DrawnPage, seed: u64, skew_deg: f32, dpi: f32) -> DrawnPage {
    use crate::cleanup::deskew::{transform_gray, PageTransform};
    let (w, h) = page.image.dimensions();
    let mut r = Lcg(seed ^ 0xdead_beef);
    // Lower contrast first (ink ~70, paper ~215), then skew so edges blur as a scan's do.
    let faded = GrayImage::from_fn(w, h, |x, y| {
        let p = page.image.get_pixel(x, y).0[0] as f32;
        image::Luma([(70.0 + (p - 20.0) * 145.0 / 235.0).clamp(0.0, 255.0) as u8])
    });
    let t = PageTransform::new(w, h, 0, -skew_deg);
    let img = transform_gray(&faded, &t);
    let (ow, oh) = img.dimensions();
    let mut labels = vec![0u16; (ow * oh) as usize];
    for y in 0..oh {
        for x in 0..ow {
            let (sx, sy) = t.to_original(x as f32 + 0.5, y as f32 + 0.5);
            if sx >= 0.0 && sy >= 0.0 && (sx as u32) < w && (sy as u32) < h {
                labels[(y * ow + x) as usize] = page.labels[(sy as u32 * w + sx as u32) as usize];
            }
        }
    }
    let shadow_px = 0.5 * dpi;
    let border_px = (0.06 + 0.1 * r.unit()) * dpi;
    let mut px = img.into_raw();
    for y in 0..oh {
        for x in 0..ow {
            let at = (y * ow + x) as usize;
            let shade = 1.0 - 0.4 * (-(x as f32) / shadow_px).exp();
            let grain = (r.unit() + r.unit() + r.unit() - 1.5) * 20.0;
            let mut v = px[at] as f32 * shade + grain;
            if (x as f32) > ow as f32 - border_px {
                v = 25.0 + grain;
            }
            px[at] = v.clamp(0.0, 255.0) as u8;
        }
    }
    for _ in 0..300 {
        let (x, y) = (r.next_bits() as u32 % ow, r.next_bits() as u32 % oh);
        px[(y * ow + x) as usize] = 40;
    }
    let blurred = image::imageops::blur(&GrayImage::from_raw(ow, oh, px).expect("size"), 0.7);
    let lines = page.lines.clone();
    DrawnPage {
        image: blurred,
        lines,
        labels,
        non_text: page.non_text.clone(),
    }
}
