//! Synthetic scanned text with exact ground truth: single lines for training, whole pages and
//! image-only books for tests and the demo.
//!
//! [`shelf`] holds the open fonts, [`corpus`] the text, [`render`] shapes and draws, [`degrade`]
//! adds scan damage, [`typeset`] sets words into lines, [`page`] lays out pages, [`truth`] makes
//! pages with their ground truth and [`book`] wraps pages into a PDF. Every sample is
//! drawn from its own ChaCha8 stream (seed, sample index), so output does not depend on the number
//! of threads. This module writes the files; it reports progress through a callback and never prints.

pub mod book;
#[cfg(test)]
mod checks;
pub mod corpus;
pub mod degrade;
pub mod nib;
pub mod page;
pub mod render;
pub mod shelf;
mod shelf_files;
pub mod truth;
pub mod typeset;
pub mod vary;
pub mod warp;

use std::fs;
use std::path::{Path, PathBuf};

use image::GrayImage;
use rand::seq::IndexedRandom;
use rand::{Rng, SeedableRng};
use rand_chacha::ChaCha8Rng;
use rayon::prelude::*;
use tiny_skia::Mask;

use crate::error::{Error, Result};
use crate::layout::geometry::Rect;
use crate::text::Word;
use corpus::CorpusConfig;
use degrade::{DamageConfig, DamageLog};
use render::{draw_line, ink_box, shape_line_spaced, word_ranges};
use shelf::{FontSet, Shelf};

/// Settings shared by every synthetic product.
#[derive(Debug, Clone, PartialEq)]
pub struct SynthConfig {
    /// Which fonts to draw with.
    pub fonts: FontSet,
    /// Font families of the set to draw from (names as the shelf spells them, any case); empty
    /// draws from the whole set. A set of lines in a few hard faces, mixed with lines in all of
    /// them, draws those faces more often in training.
    pub families: Vec<String>,
    /// Seed: the same seed gives the same files.
    pub seed: u64,
    /// Scan damage strength, 0 (clean) to 1.
    pub degrade: f32,
    /// Text mix.
    pub corpus: CorpusConfig,
    /// Scan resolution of pages and books in dots per inch; `None` draws it per page from the
    /// usual scanning resolutions.
    pub dpi: Option<f32>,
    /// Type variation of training lines (wider or narrower letters, heavier or lighter strokes,
    /// narrower or wider word spaces),
    /// 0 (the fonts as they are) to 1; see [`vary`]. Pages and books ignore it.
    pub vary: f32,
    /// Elastic warp of training lines (letters bent by a smooth random field), 0 (none) to 1;
    /// see [`warp`]. Pages and books ignore it.
    pub warp: f32,
    /// Share of training lines drawn as with a broad-nib pen (thick and thin strokes), 0 to 1;
    /// see [`nib`]. Pages and books ignore it.
    pub nib: f32,
}

impl Default for SynthConfig {
    fn default() -> Self {
        SynthConfig {
            fonts: FontSet::Train,
            families: Vec::new(),
            seed: 1,
            degrade: 0.0,
            corpus: CorpusConfig::default(),
            dpi: None,
            vary: 0.0,
            warp: 0.0,
            nib: 0.0,
        }
    }
}

impl SynthConfig {
    /// Check option values; the message names the option to change.
    pub fn validate(&self) -> Result<()> {
        if !(0.0..=1.0).contains(&self.degrade) {
            return Err(Error::Usage(format!(
                "--degrade {}: give a value from 0 to 1",
                self.degrade
            )));
        }
        if !(0.0..=1.0).contains(&self.corpus.harakat_share) {
            return Err(Error::Usage(format!(
                "--harakat {}: give a share from 0 to 1",
                self.corpus.harakat_share
            )));
        }
        if !(0.0..=1.0).contains(&self.vary) {
            return Err(Error::Usage(format!(
                "--vary {}: give a value from 0 to 1",
                self.vary
            )));
        }
        if !(0.0..=1.0).contains(&self.warp) {
            return Err(Error::Usage(format!(
                "--warp {}: give a value from 0 to 1",
                self.warp
            )));
        }
        if !(0.0..=1.0).contains(&self.nib) {
            return Err(Error::Usage(format!(
                "--nib {}: give a share from 0 to 1",
                self.nib
            )));
        }
        let shelf = Shelf::get();
        for name in &self.families {
            if !shelf.indices(self.fonts).into_iter().any(|i| {
                shelf.fonts[i]
                    .entry
                    .family
                    .eq_ignore_ascii_case(name.trim())
            }) {
                let mut known: Vec<&str> = shelf
                    .indices(self.fonts)
                    .into_iter()
                    .map(|i| shelf.fonts[i].entry.family.as_str())
                    .collect();
                known.dedup();
                return Err(Error::Usage(format!(
                    "--family {name:?}: no font of that family in the {} set; it has: {}",
                    self.fonts.name(),
                    known.join(", ")
                )));
            }
        }
        if let Some(dpi) = self.dpi.filter(|d| !(72.0..=600.0).contains(d)) {
            return Err(Error::Usage(format!(
                "--dpi {dpi}: give a scan resolution from 72 to 600"
            )));
        }
        Ok(())
    }

    /// Shelf indices of the fonts to draw from: the set, narrowed to the named families.
    pub fn font_indices(&self, shelf: &Shelf) -> Vec<usize> {
        shelf
            .indices(self.fonts)
            .into_iter()
            .filter(|&i| {
                self.families.is_empty()
                    || self
                        .families
                        .iter()
                        .any(|n| shelf.fonts[i].entry.family.eq_ignore_ascii_case(n.trim()))
            })
            .collect()
    }

    /// The RNG for sample `index` of product `stream` (lines, pages...): independent of threads.
    pub fn rng(&self, stream: u64, index: u64) -> ChaCha8Rng {
        let mut rng =
            ChaCha8Rng::seed_from_u64(self.seed ^ stream.wrapping_mul(0x9E37_79B9_7F4A_7C15));
        rng.set_stream(index);
        rng
    }
}

/// Scan resolutions drawn for samples, with weights (300 dpi is the common archive scan).
const DPI_CHOICES: &[(f32, u32)] = &[(150.0, 3), (200.0, 3), (300.0, 4), (400.0, 1), (600.0, 1)];

/// Draw a resolution in dpi.
pub fn pick_dpi<R: Rng>(rng: &mut R) -> f32 {
    DPI_CHOICES
        .choose_weighted(rng, |c| c.1)
        .map_or(300.0, |c| c.0)
}

/// One synthetic text line with its transcript.
#[derive(Debug, Clone)]
pub struct LineSample {
    /// Grey image, dark ink on light paper.
    pub image: GrayImage,
    /// Logical-order UTF-8 text, single spaces, no leading or trailing space.
    pub text: String,
    /// Shelf index of the font.
    pub font: usize,
    /// Type size in points.
    pub size_pt: f32,
    /// Resolution in dots per inch.
    pub dpi: f32,
    /// What the scan damage did.
    pub damage: DamageLog,
    /// Words in logical order with their ink boxes in the line image (from the glyphs of each
    /// word's clusters, one pixel added for anti-aliased edges; moved with any skew).
    pub words: Vec<Word>,
}

/// Make line `index` of a run (deterministic in `cfg.seed` and `index`).
pub fn make_line(cfg: &SynthConfig, index: u64) -> LineSample {
    let shelf = Shelf::get();
    let mut rng = cfg.rng(1, index);
    let fonts = cfg.font_indices(shelf);
    let font = *fonts
        .choose(&mut rng)
        .expect("every font set has fonts (tested)");
    let size_pt = rng.random_range(8.0..=22.0f32);
    let dpi = pick_dpi(&mut rng);
    let em_px = size_pt * dpi / 72.0;
    let words = rng.random_range(1..=10);
    let text = corpus::sample_line(&mut rng, &cfg.corpus, words);
    // Its own stream, so that lines made without variation stay as they were.
    let space = vary::space_scale(cfg.vary, &mut cfg.rng(10, index));
    let line = shape_line_spaced(shelf, font, &text, em_px, space);
    let ink = ink_box(shelf, &line, 0..text.len(), (0.0, 0.0)).unwrap_or_default();
    let pad_x = em_px * rng.random_range(0.1..0.5);
    let pad_y = em_px * rng.random_range(0.05..0.3);
    let w = (ink.width() + 2.0 * pad_x).ceil().max(1.0) as u32;
    let h = (ink.height() + 2.0 * pad_y).ceil().max(1.0) as u32;
    let mut mask = Mask::new(w, h).expect("line size is positive");
    draw_line(
        shelf,
        &line,
        (pad_x - ink.x0, pad_y - ink.y0),
        None,
        &mut mask,
    );
    let coverage = GrayImage::from_raw(w, h, mask.take()).expect("mask is w × h bytes");
    let origin = (pad_x - ink.x0, pad_y - ink.y0);
    let ranges = word_ranges(&text);
    let pad = |r: Rect| Rect::new(r.x0 - 1.0, r.y0 - 1.0, r.x1 + 1.0, r.y1 + 1.0);
    let mut boxes: Vec<Rect> = ranges
        .iter()
        .map(|r| {
            ink_box(shelf, &line, r.clone(), origin)
                .map(pad)
                .unwrap_or_default()
        })
        .collect();
    // Its own stream, so that lines made without variation stay as they were.
    let variation = vary::draw(cfg.vary, em_px, &mut cfg.rng(9, index));
    let coverage = vary::apply(&coverage, &mut boxes, variation);
    // Its own stream too; without --nib no pen is drawn and the lines stay as they were.
    let coverage = match nib::draw(cfg.nib, em_px, &mut cfg.rng(12, index)) {
        Some(pen) => nib::apply(&coverage, &mut boxes, pen),
        None => coverage,
    };
    let coverage = warp::apply(
        &coverage,
        &mut boxes,
        cfg.warp,
        em_px,
        &mut cfg.rng(11, index),
    );
    let mut marks = degrade::Marks {
        boxes,
        points: Vec::new(),
    };
    let damage = DamageConfig {
        strength: cfg.degrade,
        max_skew_deg: 1.5,
        gutter_left: None,
    };
    let (image, damage) = degrade::scan(&coverage, &mut marks, &damage, &mut rng);
    let words = ranges
        .iter()
        .zip(marks.boxes)
        .map(|(r, bbox)| Word {
            text: text[r.clone()].to_string(),
            bbox,
            confidence: 1.0,
        })
        .collect();
    LineSample {
        image,
        text,
        font,
        size_pt,
        dpi,
        damage,
        words,
    }
}

/// Make an output folder (or check an existing one).
pub fn prepare_dir(dir: &Path) -> Result<()> {
    if dir.exists() && !dir.is_dir() {
        return Err(Error::Usage(format!(
            "{}: exists and is not a folder; give a folder for --out",
            dir.display()
        )));
    }
    fs::create_dir_all(dir).map_err(|e| Error::io(dir, e))
}

/// Write bytes to `path` through a temporary file in the same folder, so no half file is left.
pub fn write_file(path: &Path, bytes: &[u8]) -> Result<()> {
    let tmp = path.with_extension(format!(
        "{}.tmp",
        path.extension().and_then(|e| e.to_str()).unwrap_or("out")
    ));
    fs::write(&tmp, bytes).map_err(|e| Error::Output {
        path: path.to_path_buf(),
        why: e.to_string(),
    })?;
    fs::rename(&tmp, path).map_err(|e| {
        let _ = fs::remove_file(&tmp);
        Error::Output {
            path: path.to_path_buf(),
            why: e.to_string(),
        }
    })
}

/// PNG bytes of a grey image, with its resolution recorded (pHYs, pixels per metre).
pub fn png_bytes(img: &GrayImage, dpi: f32) -> Vec<u8> {
    let mut out = Vec::new();
    let mut enc = png::Encoder::new(&mut out, img.width(), img.height());
    enc.set_color(png::ColorType::Grayscale);
    enc.set_depth(png::BitDepth::Eight);
    enc.set_compression(png::Compression::Fast);
    let ppm = (dpi / 0.0254).round() as u32; // 1 inch = 0.0254 m (SI definition)
    enc.set_pixel_dims(Some(png::PixelDimensions {
        xppu: ppm,
        yppu: ppm,
        unit: png::Unit::Meter,
    }));
    let mut w = enc
        .write_header()
        .expect("writing PNG into memory cannot fail");
    w.write_image_data(img.as_raw())
        .expect("image size matches header");
    drop(w);
    out
}

/// Write `count` lines to `dir`: `000000.png`, `000000.gt.txt`, and `manifest.tsv` listing the font
/// and size of each. Calls `tick` once per finished line (from worker threads).
pub fn write_lines(
    cfg: &SynthConfig,
    dir: &Path,
    count: usize,
    tick: &(dyn Fn() + Sync),
) -> Result<()> {
    cfg.validate()?;
    prepare_dir(dir)?;
    let shelf = Shelf::get();
    let rows: Vec<String> = (0..count)
        .into_par_iter()
        .map(|i| {
            let s = make_line(cfg, i as u64);
            let stem = dir.join(format!("{i:06}"));
            write_file(&stem.with_extension("png"), &png_bytes(&s.image, s.dpi))?;
            write_file(
                &PathBuf::from(format!("{}.gt.txt", stem.display())),
                format!("{}\n", s.text).as_bytes(),
            )?;
            tick();
            let f = &shelf.fonts[s.font];
            Ok(format!(
                "{i:06}\t{}\t{}\t{}\t{}\t{:.1}\t{}\t{:.2}",
                f.name(),
                f.entry.family,
                f.entry.class.name(),
                f.entry.role.name(),
                s.size_pt,
                s.dpi,
                cfg.degrade
            ))
        })
        .collect::<Result<_>>()?;
    let mut tsv = String::from("id\tfont\tfamily\tclass\trole\tsize_pt\tdpi\tdegrade\n");
    for r in rows {
        tsv.push_str(&r);
        tsv.push('\n');
    }
    write_file(&dir.join("manifest.tsv"), tsv.as_bytes())
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::synth::render::shape_line;

    #[test]
    fn same_seed_same_line_bytes_other_seed_differs() {
        let cfg = SynthConfig {
            degrade: 0.6,
            ..SynthConfig::default()
        };
        for i in [0u64, 7, 31] {
            let a = make_line(&cfg, i);
            let b = make_line(&cfg, i);
            assert_eq!(a.image.as_raw(), b.image.as_raw());
            assert_eq!(a.text, b.text);
        }
        let other = SynthConfig {
            seed: 2,
            ..cfg.clone()
        };
        assert_ne!(make_line(&cfg, 3).text, make_line(&other, 3).text);
    }

    #[test]
    fn every_font_draws_every_generated_character() {
        // No .notdef (glyph 0) in any shelf font, thanks to the fallback font.
        let shelf = Shelf::get();
        let cfg = SynthConfig {
            fonts: FontSet::All,
            ..SynthConfig::default()
        };
        let mut rng = cfg.rng(9, 0);
        for i in 0..400 {
            let text = corpus::sample_line(
                &mut rng,
                &CorpusConfig {
                    harakat_share: 0.5,
                    ..cfg.corpus
                },
                8,
            );
            let font = i % shelf.fonts.len();
            let line = shape_line(shelf, font, &text, 20.0);
            assert!(
                line.glyphs.iter().all(|g| g.glyph != 0),
                "{}: {text:?}",
                shelf.fonts[font].name()
            );
        }
    }

    #[test]
    fn line_word_boxes_hold_the_ink_even_when_skewed() {
        // Damage 0.9 skews most lines (as a shear), type variation stretches them and changes
        // their strokes, the pen sweeps them; ink is read back from the image itself.
        for (degrade, vary, nib) in [
            (0.0f32, 0.0f32, 0.0f32),
            (0.9, 0.0, 0.0),
            (0.0, 1.0, 0.0),
            (0.9, 1.0, 0.0),
            (0.0, 0.0, 1.0),
            (0.5, 1.0, 1.0),
        ] {
            let cfg = SynthConfig {
                degrade,
                vary,
                nib,
                ..SynthConfig::default()
            };
            for i in 0..30 {
                let s = make_line(&cfg, i);
                assert_eq!(
                    s.words
                        .iter()
                        .map(|w| w.text.as_str())
                        .collect::<Vec<_>>()
                        .join(" "),
                    s.text
                );
                let (mut inside, mut all) = (0u64, 0u64);
                let dark = degrade::bilevel_level(&s.image, 0.5);
                for (x, y, p) in s.image.enumerate_pixels() {
                    if p.0[0] < dark {
                        all += 1;
                        let (fx, fy) = (x as f32 + 0.5, y as f32 + 0.5);
                        let hit = s.words.iter().any(|w| {
                            fx >= w.bbox.x0 && fx <= w.bbox.x1 && fy >= w.bbox.y0 && fy <= w.bbox.y1
                        });
                        inside += u64::from(hit);
                    }
                }
                // Speckle adds dark dots outside words on damaged lines.
                let need = if degrade == 0.0 { 1.0 } else { 0.9 };
                assert!(
                    inside as f64 >= need * all as f64,
                    "line {i} degrade {degrade} vary {vary} nib {nib}: {inside} of {all}"
                );
            }
        }
    }

    #[test]
    fn heldout_lines_use_only_heldout_fonts() {
        let shelf = Shelf::get();
        let cfg = SynthConfig {
            fonts: FontSet::Heldout,
            ..SynthConfig::default()
        };
        for i in 0..20 {
            let s = make_line(&cfg, i);
            assert_eq!(shelf.fonts[s.font].entry.role, shelf::Role::Heldout);
        }
    }

    #[test]
    fn named_families_narrow_the_draw_and_unknown_names_are_refused() {
        let shelf = Shelf::get();
        let cfg = SynthConfig {
            families: vec!["vibes".into(), " Noto Naskh Arabic ".into()],
            ..SynthConfig::default()
        };
        cfg.validate().unwrap();
        let mut seen = std::collections::BTreeSet::new();
        for i in 0..40 {
            seen.insert(shelf.fonts[make_line(&cfg, i).font].entry.family.as_str());
        }
        // Both families drawn, nothing else (two regular/bold files for Noto Naskh Arabic).
        assert_eq!(
            seen.into_iter().collect::<Vec<_>>(),
            ["Noto Naskh Arabic", "Vibes"]
        );
        assert_eq!(cfg.font_indices(shelf).len(), 3);
        // A family of another role, and a name not on the shelf, are refused with the set's
        // families listed.
        for name in ["Alkalami", "Noto Nask"] {
            let bad = SynthConfig {
                families: vec![name.into()],
                ..SynthConfig::default()
            };
            let msg = bad.validate().unwrap_err().to_string();
            assert!(msg.contains("--family") && msg.contains("Amiri"), "{msg}");
        }
        // No names: the whole set, drawn as before.
        assert_eq!(
            SynthConfig::default().font_indices(shelf),
            shelf.indices(FontSet::Train)
        );
    }

    #[test]
    fn degrade_out_of_range_is_refused() {
        let cfg = SynthConfig {
            degrade: 1.5,
            ..SynthConfig::default()
        };
        let dir = tempfile::tempdir().unwrap();
        let err = write_lines(&cfg, dir.path(), 1, &|| {}).unwrap_err();
        assert!(err.to_string().contains("--degrade"));
    }

    #[test]
    fn vary_out_of_range_is_refused_and_zero_keeps_lines_as_they_were() {
        let cfg = SynthConfig {
            vary: -0.1,
            ..SynthConfig::default()
        };
        let dir = tempfile::tempdir().unwrap();
        let err = write_lines(&cfg, dir.path(), 1, &|| {}).unwrap_err();
        assert!(err.to_string().contains("--vary"));
        // Variation draws from its own stream: text, font and size do not move with it.
        let varied = SynthConfig {
            vary: 1.0,
            ..SynthConfig::default()
        };
        let mut changed = 0;
        for i in 0..10 {
            let (a, b) = (make_line(&SynthConfig::default(), i), make_line(&varied, i));
            assert_eq!((a.text, a.font, a.size_pt), (b.text, b.font, b.size_pt));
            changed += usize::from(a.image != b.image);
        }
        assert!(changed >= 5, "variation changed {changed} of 10 lines");
    }

    #[test]
    fn warp_out_of_range_is_refused_and_zero_keeps_lines_as_they_were() {
        let cfg = SynthConfig {
            warp: 1.5,
            ..SynthConfig::default()
        };
        let dir = tempfile::tempdir().unwrap();
        let err = write_lines(&cfg, dir.path(), 1, &|| {}).unwrap_err();
        assert!(err.to_string().contains("--warp"));
        // The warp draws from its own stream: text, font, size and the other effects stay.
        let warped = SynthConfig {
            warp: 1.0,
            degrade: 0.3,
            ..SynthConfig::default()
        };
        let plain = SynthConfig {
            degrade: 0.3,
            ..SynthConfig::default()
        };
        let mut changed = 0;
        for i in 0..10 {
            let (a, b) = (make_line(&plain, i), make_line(&warped, i));
            assert_eq!((a.text, a.font, a.size_pt), (b.text, b.font, b.size_pt));
            assert_eq!(a.image.dimensions(), b.image.dimensions());
            changed += usize::from(a.image != b.image);
        }
        assert!(changed >= 8, "the warp changed {changed} of 10 lines");
    }

    #[test]
    fn nib_out_of_range_is_refused_and_a_pen_only_adds_ink() {
        let cfg = SynthConfig {
            nib: -0.5,
            ..SynthConfig::default()
        };
        let dir = tempfile::tempdir().unwrap();
        let err = write_lines(&cfg, dir.path(), 1, &|| {}).unwrap_err();
        assert!(err.to_string().contains("--nib"));
        // The pen draws from its own stream: text, font, size and image size stay, and a swept
        // line holds at least the ink it had (a dilation never removes ink).
        let swept = SynthConfig {
            nib: 1.0,
            ..SynthConfig::default()
        };
        let ink = |img: &GrayImage| img.pixels().filter(|p| p.0[0] < 128).count();
        for i in 0..10 {
            let (a, b) = (make_line(&SynthConfig::default(), i), make_line(&swept, i));
            assert_eq!((a.text, a.font, a.size_pt), (b.text, b.font, b.size_pt));
            assert_eq!(a.image.dimensions(), b.image.dimensions());
            assert!(
                ink(&b.image) > ink(&a.image),
                "line {i}: the pen added no ink"
            );
        }
    }
}
