//! The search index: page text already extracted from a PDF, kept so that searching a shelf again
//! reads a small file per PDF instead of parsing every PDF.
//!
//! One JSON file per PDF in a cache folder (by default `$XDG_CACHE_HOME/mistara/find-index`, else
//! `$HOME/.cache/mistara/find-index`; `find --index-dir` chooses another, `--no-index` turns it
//! off), named by a hash of the PDF's absolute path. An entry holds that path, the PDF's size and
//! modification time when it was read, and its text lines page by page; it is used only while all
//! three still match, otherwise the PDF is read again and the entry rewritten (temporary file and
//! rename). Nothing is ever written beside the PDFs. A cache that cannot be read or written is
//! passed over: search works without it, only slower.

use std::path::{Path, PathBuf};
use std::time::UNIX_EPOCH;

use serde::{Deserialize, Serialize};

use crate::error::{Error, Result};

/// Bumped whenever extraction changes what it returns, so older entries are read again.
const ENTRY_FORMAT: u32 = 1;

/// Text lines of each page of one PDF, in page order (an empty list for a page without text).
pub type PageLines = Vec<Vec<String>>;

/// A folder of index entries.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct IndexCache {
    dir: PathBuf,
}

#[derive(Debug, Serialize, Deserialize)]
struct Entry {
    format: u32,
    path: PathBuf,
    size: u64,
    mtime_s: u64,
    mtime_ns: u32,
    pages: PageLines,
}

/// What identifies one state of a file: its absolute path, size and modification time.
#[derive(Debug, PartialEq, Eq)]
struct Stamp {
    path: PathBuf,
    size: u64,
    mtime_s: u64,
    mtime_ns: u32,
}

impl IndexCache {
    /// An index kept in `dir` (created when first written).
    pub fn at(dir: impl Into<PathBuf>) -> IndexCache {
        IndexCache { dir: dir.into() }
    }

    /// The usual place: `$XDG_CACHE_HOME/mistara/find-index`, else `$HOME/.cache/…`; `None` when
    /// neither variable is set.
    pub fn default_location() -> Option<IndexCache> {
        let base = std::env::var_os("XDG_CACHE_HOME")
            .filter(|v| !v.is_empty())
            .map(PathBuf::from)
            .or_else(|| {
                std::env::var_os("HOME")
                    .filter(|v| !v.is_empty())
                    .map(|h| PathBuf::from(h).join(".cache"))
            })?;
        Some(IndexCache::at(base.join("mistara").join("find-index")))
    }

    /// The folder the entries live in.
    pub fn dir(&self) -> &Path {
        &self.dir
    }

    /// The page lines of `pdf`: from its entry when the entry matches the file as it is now,
    /// otherwise from `extract`, whose result is then stored.
    pub fn page_lines(
        &self,
        pdf: &Path,
        extract: impl FnOnce() -> Result<PageLines>,
    ) -> Result<PageLines> {
        let Ok(stamp) = stamp(pdf) else {
            return extract();
        };
        let file = self.entry_file(&stamp.path);
        if let Some(pages) = read_entry(&file, &stamp) {
            return Ok(pages);
        }
        let pages = extract()?;
        // A failed write only costs speed next time.
        let _ = self.write_entry(&file, stamp, &pages);
        Ok(pages)
    }

    fn entry_file(&self, abs: &Path) -> PathBuf {
        self.dir.join(format!(
            "{:016x}.json",
            fnv1a(abs.as_os_str().as_encoded_bytes())
        ))
    }

    fn write_entry(&self, file: &Path, stamp: Stamp, pages: &PageLines) -> Result<()> {
        std::fs::create_dir_all(&self.dir).map_err(|e| Error::io(&self.dir, e))?;
        let entry = Entry {
            format: ENTRY_FORMAT,
            path: stamp.path,
            size: stamp.size,
            mtime_s: stamp.mtime_s,
            mtime_ns: stamp.mtime_ns,
            pages: pages.clone(),
        };
        let bytes = serde_json::to_vec(&entry).map_err(|e| Error::Output {
            path: file.to_path_buf(),
            why: e.to_string(),
        })?;
        crate::output::write_atomic(file, &bytes, &[])
    }
}

fn read_entry(file: &Path, stamp: &Stamp) -> Option<PageLines> {
    let bytes = std::fs::read(file).ok()?;
    let e: Entry = serde_json::from_slice(&bytes).ok()?;
    let same = e.format == ENTRY_FORMAT
        && e.path == stamp.path
        && e.size == stamp.size
        && e.mtime_s == stamp.mtime_s
        && e.mtime_ns == stamp.mtime_ns;
    same.then_some(e.pages)
}

fn stamp(pdf: &Path) -> std::io::Result<Stamp> {
    let path = pdf.canonicalize()?;
    let meta = std::fs::metadata(&path)?;
    let since = meta
        .modified()?
        .duration_since(UNIX_EPOCH)
        .map_err(std::io::Error::other)?;
    Ok(Stamp {
        path,
        size: meta.len(),
        mtime_s: since.as_secs(),
        mtime_ns: since.subsec_nanos(),
    })
}

/// 64-bit FNV-1a (Fowler–Noll–Vo; offset basis and prime from the authors' published parameters,
/// from memory): a stable name for an entry, the same in every build.
fn fnv1a(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325;
    for b in bytes {
        h ^= *b as u64;
        h = h.wrapping_mul(0x0000_0100_0000_01b3);
    }
    h
}

#[cfg(test)]
mod tests {
    use super::*;
    use std::cell::Cell;

    fn lines(s: &str) -> PageLines {
        vec![vec![s.to_string()], vec![]]
    }

    #[test]
    fn fnv1a_known_values() {
        // Test vectors of the FNV reference test suite (fnv-0.10 test file; from memory):
        // "" → cbf29ce484222325, "a" → af63dc4c8601ec8c.
        assert_eq!(fnv1a(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a(b"a"), 0xaf63_dc4c_8601_ec8c);
    }

    #[test]
    fn entry_is_reused_until_the_file_changes() {
        let dir = tempfile::tempdir().unwrap();
        let pdf = dir.path().join("book.pdf");
        std::fs::write(&pdf, b"first").unwrap();
        let cache = IndexCache::at(dir.path().join("index"));
        let calls = Cell::new(0);
        let read = |s: &'static str| {
            calls.set(calls.get() + 1);
            Ok(lines(s))
        };
        assert_eq!(
            cache.page_lines(&pdf, || read("one")).unwrap(),
            lines("one")
        );
        assert_eq!(
            cache.page_lines(&pdf, || read("two")).unwrap(),
            lines("one")
        );
        assert_eq!(calls.get(), 1, "second search must come from the index");
        // Another size: read again.
        std::fs::write(&pdf, b"second version").unwrap();
        assert_eq!(
            cache.page_lines(&pdf, || read("three")).unwrap(),
            lines("three")
        );
        // Same size, other modification time: read again.
        std::fs::write(&pdf, b"third version!").unwrap();
        let f = std::fs::File::options().write(true).open(&pdf).unwrap();
        f.set_modified(UNIX_EPOCH + std::time::Duration::from_secs(1_000_000))
            .unwrap();
        assert_eq!(
            cache.page_lines(&pdf, || read("four")).unwrap(),
            lines("four")
        );
        assert_eq!(calls.get(), 3);
        // Nothing was written beside the PDF.
        let names: Vec<_> = std::fs::read_dir(dir.path()).unwrap().collect();
        assert_eq!(names.len(), 2);
    }

    #[test]
    fn unwritable_index_is_passed_over() {
        let dir = tempfile::tempdir().unwrap();
        let pdf = dir.path().join("book.pdf");
        std::fs::write(&pdf, b"x").unwrap();
        // The index folder's place is taken by a file: nothing can be stored, search still works.
        let blocked = dir.path().join("blocked");
        std::fs::write(&blocked, b"").unwrap();
        let cache = IndexCache::at(&blocked);
        assert_eq!(
            cache.page_lines(&pdf, || Ok(lines("a"))).unwrap(),
            lines("a")
        );
        assert_eq!(
            cache.page_lines(&pdf, || Ok(lines("b"))).unwrap(),
            lines("b")
        );
    }

    #[test]
    fn extraction_errors_pass_through() {
        let dir = tempfile::tempdir().unwrap();
        let pdf = dir.path().join("bad.pdf");
        std::fs::write(&pdf, b"x").unwrap();
        let cache = IndexCache::at(dir.path().join("index"));
        let r = cache.page_lines(&pdf, || Err(Error::input(&pdf, "cannot read as PDF")));
        assert!(r.is_err());
        assert!(!dir.path().join("index").exists());
    }
}
