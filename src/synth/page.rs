//! Page layout (in progress).

use std::path::Path;

use super::SynthConfig;
use crate::error::{Error, Result};

/// Write pages (not built yet).
pub fn write_pages(_cfg: &SynthConfig, _dir: &Path, _count: usize, _tick: &(dyn Fn() + Sync)) -> Result<()> {
    Err(Error::Usage("`synth pages` is not built yet".into()))
}
