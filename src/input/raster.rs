//! Rasterizing PDF pages that are not a single scan (text, vector art, several images), with
//! hayro, at the requested resolution, onto white paper.
//!
//! The rendering covers the page's crop box as displayed (its /Rotate applied), so it reads
//! upright; the placement maps its pixels back to unrotated page space for the text layer.

use std::sync::Arc;

use hayro::hayro_interpret::InterpreterSettings;
use hayro::hayro_syntax::object::{Dict, Name, Stream};
use hayro::hayro_syntax::page::Resources;
use hayro::hayro_syntax::Pdf;
use hayro::vello_cpu::color::palette::css::WHITE;
use hayro::vello_cpu::peniko::ImageAlphaType;
use hayro::{PixmapSettings, RenderCache, RenderSettings};
use image::GrayImage;

use crate::layout::geometry::{Affine, Placement};
use crate::limits::Limits;
use crate::page::PageImage;

/// Why a page could not be rendered.
#[derive(Debug, Clone, PartialEq, Eq)]
pub enum RenderError {
    /// The rendering would exceed a size limit.
    Limit(String),
    /// The file or page cannot be read by the renderer.
    Broken(String),
}

/// Render page `index` (0-based) of the PDF in `data` at `dpi` as grey pixels.
pub fn render_page(
    data: &Arc<Vec<u8>>,
    index: usize,
    dpi: f32,
    limits: &Limits,
) -> Result<PageImage, RenderError> {
    let pdf = Pdf::new(Arc::clone(data)).map_err(|e| {
        RenderError::Broken(format!("the page renderer cannot read this PDF ({e:?})"))
    })?;
    let page = pdf
        .pages()
        .get(index)
        .ok_or_else(|| RenderError::Broken("the page renderer finds no such page".into()))?;
    // The renderer decodes every image the page uses at full size: check the declared sizes as
    // the renderer itself reads them (a file may define an object twice, and parsers disagree).
    check_images(&page.resources().x_objects, 0, limits).map_err(RenderError::Limit)?;
    let scale = dpi / 72.0;
    let (w_pt, h_pt) = page.render_dimensions();
    let (w_px, h_px) = ((w_pt * scale) as u64, (h_pt * scale) as u64);
    limits.check_size(w_px, h_px).map_err(RenderError::Limit)?;
    if w_px > u16::MAX as u64 || h_px > u16::MAX as u64 {
        return Err(RenderError::Limit(format!(
            "rendering at {dpi} dpi gives {w_px}×{h_px} pixels; lower --dpi"
        )));
    }
    let cache = RenderCache::new();
    let pixmap_settings = PixmapSettings {
        x_scale: scale,
        y_scale: scale,
        bg_color: WHITE,
    };
    let pixmap = hayro::render(
        page,
        &cache,
        &InterpreterSettings::default(),
        &RenderSettings::default(),
        &pixmap_settings,
    );
    let (w, h) = (pixmap.width() as u32, pixmap.height() as u32);
    let rgba = pixmap.take_rgba8(ImageAlphaType::Alpha);
    // Luma weights of ITU-R BT.601; the background is white, so alpha is already flattened.
    let gray: Vec<u8> = rgba
        .chunks_exact(4)
        .map(|p| (0.299 * p[0] as f32 + 0.587 * p[1] as f32 + 0.114 * p[2] as f32).round() as u8)
        .collect();
    let gray = GrayImage::from_raw(w, h, gray)
        .ok_or_else(|| RenderError::Broken("renderer returned a short image".into()))?;

    // Device pixels (y down) = scale × initial transform × page space; invert it, and flip y so
    // that the map starts from y-up pixels as `Placement` wants.
    let [a, b, c, d, e, f] = page.initial_transform(true).as_coeffs();
    let device = Affine([a as f32, b as f32, c as f32, d as f32, e as f32, f as f32])
        .then(&Affine([scale, 0.0, 0.0, scale, 0.0, 0.0]));
    let flip = Affine([1.0, 0.0, 0.0, -1.0, 0.0, h as f32]);
    let to_page = flip.then(
        &invert(&device).ok_or_else(|| RenderError::Broken("page has a degenerate size".into()))?,
    );
    let mb = page.media_box();
    let media_box = [mb.x0 as f32, mb.y0 as f32, mb.x1 as f32, mb.y1 as f32];
    Ok(PageImage {
        gray,
        dpi_x: dpi,
        dpi_y: dpi,
        placement: Placement { to_page, media_box },
    })
}

/// Deepest Form XObject nesting searched for images.
const MAX_FORM_DEPTH: usize = 8;

/// Check the declared size of every image XObject in `x_objects`, and in the resources of the
/// Form XObjects there, against the limits.
fn check_images(x_objects: &Dict<'_>, depth: usize, limits: &Limits) -> Result<(), String> {
    for key in x_objects.keys() {
        let Some(stream) = x_objects.get::<Stream<'_>>(key.as_ref()) else {
            continue;
        };
        let dict = stream.dict();
        match dict.get::<Name<'_>>(b"Subtype").as_deref() {
            Some(b"Image") => {
                let w = dict.get::<i64>(b"Width").unwrap_or(0).max(0) as u64;
                let h = dict.get::<i64>(b"Height").unwrap_or(0).max(0) as u64;
                // A missing size is the renderer's to skip; only declared sizes can be too big.
                if w > 0 && h > 0 {
                    limits.check_size(w, h)?;
                }
            }
            Some(b"Form") if depth < MAX_FORM_DEPTH => {
                if let Some(res) = dict.get::<Dict<'_>>(b"Resources") {
                    check_images(&Resources::new(res).x_objects, depth + 1, limits)?;
                }
            }
            _ => {}
        }
    }
    Ok(())
}

/// The inverse of an affine map, `None` when it is singular.
pub fn invert(m: &Affine) -> Option<Affine> {
    let [a, b, c, d, e, f] = m.0;
    let det = a * d - b * c;
    if det.abs() < 1e-12 {
        return None;
    }
    let (ia, ib, ic, id) = (d / det, -b / det, -c / det, a / det);
    Some(Affine([
        ia,
        ib,
        ic,
        id,
        -(e * ia + f * ic),
        -(e * ib + f * id),
    ]))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn inverse_undoes_the_map() {
        let m = Affine([0.0, -2.0, 3.0, 0.0, 10.0, 20.0]);
        let inv = invert(&m).unwrap();
        let (x, y) = m.apply(4.0, 5.0);
        let (u, v) = inv.apply(x, y);
        assert!((u - 4.0).abs() < 1e-4 && (v - 5.0).abs() < 1e-4, "{u} {v}");
        assert!(invert(&Affine([1.0, 2.0, 2.0, 4.0, 0.0, 0.0])).is_none());
    }
}
