//! Image-only books (in progress).

use std::path::Path;

use super::SynthConfig;
use crate::error::{Error, Result};

/// Write a book (not built yet).
pub fn write_book(_cfg: &SynthConfig, _out: &Path, _pages: usize, _tick: &(dyn Fn() + Sync)) -> Result<()> {
    Err(Error::Usage("`synth book` is not built yet".into()))
}
