//! Outputs: the searchable PDF, plain text, ALTO and the confidence report, written atomically.

pub mod alto;
pub mod old_layer;
pub mod pdf_font;
pub mod pdf_fresh;
pub mod pdf_overlay;
pub mod pdf_stream;
pub mod pdfa;
pub mod report;
pub mod review;
pub mod sidecar;
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
    /// Write PDF/A-2b: XMP metadata matching the Info dictionary, sRGB output intent, dates.
    pub archival: bool,
}

impl Default for DocumentInfo {
    fn default() -> Self {
        DocumentInfo {
            producer: format!("mistara {}", env!("CARGO_PKG_VERSION")),
            notice: MACHINE_TEXT_NOTICE.to_string(),
            title: None,
            archival: false,
        }
    }
}

/// Write `bytes` to `target` through a temporary file in the same folder and a rename, so a
/// reader never sees a partial file. Refuses to write over any of `inputs`.
pub fn write_atomic(target: &Path, bytes: &[u8], inputs: &[PathBuf]) -> Result<()> {
    let file = AtomicFile::create(target, inputs)?;
    let mut w = file.writer()?;
    w.write_all(bytes).map_err(|e| file.err(e))?;
    w.flush().map_err(|e| file.err(e))?;
    drop(w);
    file.commit()
}

/// A file being written: a temporary file beside the target, renamed over it by `commit`.
/// Dropped without `commit`, it is removed and the target is untouched.
pub struct AtomicFile {
    tmp: tempfile::NamedTempFile,
    target: PathBuf,
}

impl AtomicFile {
    /// Create the temporary file in the target's folder; refuses to write over an input.
    pub fn create(target: &Path, inputs: &[PathBuf]) -> Result<AtomicFile> {
        refuse_overwriting_input(target, inputs)?;
        let dir = match target.parent() {
            Some(d) if !d.as_os_str().is_empty() => d.to_path_buf(),
            _ => PathBuf::from("."),
        };
        let tmp = tempfile::Builder::new()
            .prefix(".mistara-")
            .suffix(".tmp")
            .tempfile_in(&dir)
            .map_err(|e| {
                // tempfile 3 appends ` at path "<random temporary name>"`: the OS reason is
                // enough, the folder is named below.
                let e = e.to_string();
                let e = e.split(" at path ").next().unwrap_or(&e);
                Error::Output {
                    path: target.to_path_buf(),
                    why: format!("cannot create a file in {}: {e}", dir.display()),
                }
            })?;
        Ok(AtomicFile {
            tmp,
            target: target.to_path_buf(),
        })
    }

    /// A buffered writer into the temporary file.
    pub fn writer(&self) -> Result<std::io::BufWriter<std::fs::File>> {
        let f = self.tmp.as_file().try_clone().map_err(|e| self.err(e))?;
        Ok(std::io::BufWriter::with_capacity(1 << 20, f))
    }

    /// Flush to disk and move into place, readable by others as a normal new file would be
    /// (the temporary file is created private, mode 0600).
    pub fn commit(self) -> Result<()> {
        #[cfg(unix)]
        {
            use std::os::unix::fs::PermissionsExt;
            let perm = std::fs::Permissions::from_mode(0o644);
            self.tmp
                .as_file()
                .set_permissions(perm)
                .map_err(|e| self.err(e))?;
        }
        self.tmp.as_file().sync_all().map_err(|e| self.err(e))?;
        let target = self.target.clone();
        self.tmp.persist(&target).map_err(|e| Error::Output {
            path: target,
            why: e.error.to_string(),
        })?;
        Ok(())
    }

    /// An output error about this file.
    pub fn err(&self, e: std::io::Error) -> Error {
        Error::Output {
            path: self.target.clone(),
            why: e.to_string(),
        }
    }
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
