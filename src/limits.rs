//! Resource limits checked before anything large is allocated.

/// Caps that protect against hostile or broken inputs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Limits {
    /// Most pixels a single page image may have (width × height).
    pub max_pixels: u64,
    /// Longest side of a page image in pixels.
    pub max_side_px: u32,
    /// Most bytes one decoded page may occupy.
    pub max_alloc_bytes: u64,
}

impl Default for Limits {
    /// 200 megapixels (an A0 sheet at 600 dpi is ~ 560 MP; a book page at 600 dpi is ~ 20 MP),
    /// 40 000 px a side, 1 GiB per decoded page. Sizes chosen for book scanning: common practice, no source.
    fn default() -> Self {
        Limits {
            max_pixels: 200_000_000,
            max_side_px: 40_000,
            max_alloc_bytes: 1 << 30,
        }
    }
}

impl Limits {
    /// Check a declared image size; the message names the size and the limit.
    pub fn check_size(&self, width: u64, height: u64) -> Result<(), String> {
        if width == 0 || height == 0 {
            return Err(format!("image declares an empty size {width}×{height}"));
        }
        if width > self.max_side_px as u64 || height > self.max_side_px as u64 {
            return Err(format!(
                "image declares {width}×{height} pixels, more than the {} px a side mistara accepts",
                self.max_side_px
            ));
        }
        if width * height > self.max_pixels {
            return Err(format!(
                "image declares {width}×{height} = {} pixels, more than the limit of {}",
                width * height,
                self.max_pixels
            ));
        }
        Ok(())
    }
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn sixty_thousand_square_is_refused() {
        let err = Limits::default().check_size(60_000, 60_000).unwrap_err();
        assert!(err.contains("60000×60000"), "{err}");
        assert!(Limits::default().check_size(2480, 3508).is_ok()); // A4 at 300 dpi
        assert!(Limits::default().check_size(0, 10).is_err());
    }
}
