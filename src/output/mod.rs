//! Outputs: the searchable PDF and plain text, written atomically.

pub mod pdf_font;
pub mod pdf_fresh;
pub mod text_layer;
pub mod txt;

use std::io::Write;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};

/// Caution carried in every PDF's metadata and in the report.
pub const MACHINE_TEXT_NOTICE: &str =
    "The invisible text layer was produced by machine recognition (OCR) \
with mistara and may contain errors. Verify against the page image before relying on it; \
legal users should follow their local rules of evidence and practice.";

/// Document-level metadata written into every PDF.
#[derive(Debug, Clone)]
pub struct DocumentInfo {
    /// Producer string.
    pub producer: String,
    /// The caution that the text is machine-recognized.
    pub notice: String,
    /// Optional title.
    pub title: Option<String>,
}

impl Default for DocumentInfo {
    fn default() -> Self {
        DocumentInfo {
            producer: format!("mistara {}", env!("CARGO_PKG_VERSION")),
            notice: MACHINE_TEXT_NOTICE.to_string(),
            title: None,
        }
    }
}

/// Write `bytes` to `target` through a temporary file in the same folder and a rename, so a
/// reader never sees a partial file. Refuses to write over any of `inputs`.
pub fn write_atomic(target: &Path, bytes: &[u8], inputs: &[PathBuf]) -> Result<()> {
    refuse_overwriting_input(target, inputs)?;
    let dir = match target.parent() {
        Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
        _ => PathBuf::from("."),
    };
    let out_err = |why: String| Error::Output {
        path: target.to_path_buf(),
        why,
    };
    let mut tmp = tempfile::Builder::new()
        .prefix(".mistara-")
        .suffix(".tmp")
        .tempfile_in(&dir)
        .map_err(|e| out_err(format!("cannot create a file in {}: {e}", dir.display())))?;
    tmp.write_all(bytes).map_err(|e| out_err(e.to_string()))?;
    tmp.as_file()
        .sync_all()
        .map_err(|e| out_err(e.to_string()))?;
    tmp.persist(target)
        .map_err(|e| out_err(e.error.to_string()))?;
    Ok(())
}

/// An error when `target` is one of the inputs (same file, after resolving links).
pub fn refuse_overwriting_input(target: &Path, inputs: &[PathBuf]) -> Result<()> {
    let Ok(t) = target.canonicalize() else {
        return Ok(());
    };
    for input in inputs {
        if input.canonicalize().is_ok_and(|i| i == t) {
            return Err(Error::Output {
                path: target.to_path_buf(),
                why: "it is one of the inputs; choose another output name".into(),
            });
        }
    }
    Ok(())
}
