//! A shelf of documents: the work list found under folders, where each document's outputs go,
//! which documents a shard takes, and which are already done (for resuming).
//!
//! The rules, in one place:
//! - **Documents.** Under a folder (walked recursively, names in natural order, digits compared
//!   as numbers): every PDF and every TIFF file is one document; the PNG, JPEG and JPEG 2000
//!   files lying directly in one folder are together the pages of one document, named after that
//!   folder. Formats are told by their first bytes, never by the file name; other files are
//!   ignored and counted. Names starting with `.` and links to folders are skipped, and so are the
//!   run's own output folders. A file given on the command line is one document.
//! - **Names.** A document's outputs mirror its path relative to the folder it was found in, with
//!   the extension replaced (`2024/case-17.tif` → `OUT/2024/case-17.pdf`); a folder of page
//!   images gives `OUT/<folder path>.pdf` (the folder given itself: `OUT/<its name>.pdf`). Two
//!   documents that would get the same name stop the run before anything is written.
//! - **Shards.** `I/N` takes the documents whose FNV-1a hash of the output name is `I - 1`
//!   modulo `N`: each document's shard depends on its own name only, so adding or removing other
//!   files never moves it, and every machine of an array job agrees without talking to others.
//! - **Done.** A document is done when every output asked for exists and is newer than all of
//!   its input files (and its folder, for a folder of pages). Outputs are written atomically, so
//!   an output that exists is complete.

use std::cmp::Ordering;
use std::collections::BTreeMap;
use std::ffi::OsString;
use std::path::{Path, PathBuf};
use std::time::SystemTime;

use crate::error::{Error, Result};
use crate::input::{self, Format};

/// One document of a batch.
#[derive(Debug, Clone, PartialEq, Eq)]
pub struct BatchDoc {
    /// Output name without extension, relative to the output folder, `/`-separated
    /// (`2024/case-17`).
    pub name: String,
    /// The input files: one PDF, one image file, or the page images of a folder in order.
    pub inputs: Vec<PathBuf>,
    /// The folder whose loose page images make this document, if it is one.
    pub folder: Option<PathBuf>,
}

/// What was found under the paths given.
#[derive(Debug, Clone, Default)]
pub struct Listing {
    /// The documents, sorted by name.
    pub docs: Vec<BatchDoc>,
    /// Files that are neither PDF nor an image mistara reads.
    pub ignored: Vec<PathBuf>,
}

/// List the documents under `paths` (folders walked, files taken as they are), leaving out the
/// folders in `skip` (the run's own outputs). Fails when two documents would share a name.
pub fn list_documents(paths: &[PathBuf], skip: &[PathBuf]) -> Result<Listing> {
    let skip: Vec<PathBuf> = skip.iter().filter_map(|p| p.canonicalize().ok()).collect();
    let mut listing = Listing::default();
    for path in paths {
        let meta = std::fs::metadata(path).map_err(|e| Error::io(path, e))?;
        if meta.is_dir() {
            let base = match path
                .canonicalize()
                .ok()
                .and_then(|p| p.file_name().map(Into::into))
            {
                Some(name) => name,
                None => OsString::from("pages"),
            };
            walk(path, &[], &base, &skip, &mut listing)?;
        } else {
            let name = stem(path.file_name().unwrap_or(path.as_os_str()));
            listing.docs.push(BatchDoc {
                name,
                inputs: vec![path.clone()],
                folder: None,
            });
        }
    }
    listing.docs.sort_by(|a, b| natural_cmp(&a.name, &b.name));
    listing.docs.dedup();
    refuse_shared_names(&listing.docs)?;
    Ok(listing)
}

/// A file name without its last extension, as text.
fn stem(name: &std::ffi::OsStr) -> String {
    let p = Path::new(name);
    p.file_stem().unwrap_or(name).to_string_lossy().into_owned()
}

/// Walk one folder: `rel` is its path below the folder given, `base` that folder's own name.
fn walk(
    dir: &Path,
    rel: &[String],
    base: &OsString,
    skip: &[PathBuf],
    out: &mut Listing,
) -> Result<()> {
    let mut entries: Vec<(String, PathBuf)> = Vec::new();
    for entry in std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))? {
        let entry = entry.map_err(|e| Error::io(dir, e))?;
        let name = entry.file_name().to_string_lossy().into_owned();
        if !name.starts_with('.') {
            entries.push((name, entry.path()));
        }
    }
    entries.sort_by(|a, b| natural_cmp(&a.0, &b.0));
    let mut pages = Vec::new();
    for (name, path) in entries {
        let link = std::fs::symlink_metadata(&path).map_err(|e| Error::io(&path, e))?;
        let is_dir = std::fs::metadata(&path).is_ok_and(|m| m.is_dir());
        if is_dir {
            let skipped = path.canonicalize().is_ok_and(|c| skip.contains(&c));
            if !link.file_type().is_symlink() && !skipped {
                let mut sub = rel.to_vec();
                sub.push(name);
                walk(&path, &sub, base, skip, out)?;
            }
            continue;
        }
        let mut doc_name = rel.to_vec();
        doc_name.push(stem(name.as_ref()));
        // A file that cannot be read stays on the list: its run fails and says why.
        match input::sniff_file(&path) {
            Ok(Some(Format::Png | Format::Jpeg | Format::Jpeg2000)) => pages.push(path),
            Ok(None) => out.ignored.push(path),
            Ok(Some(Format::Pdf | Format::Tiff)) | Err(_) => out.docs.push(BatchDoc {
                name: doc_name.join("/"),
                inputs: vec![path],
                folder: None,
            }),
        }
    }
    if !pages.is_empty() {
        let name = match rel {
            [] => base.to_string_lossy().into_owned(),
            _ => rel.join("/"),
        };
        out.docs.push(BatchDoc {
            name,
            inputs: pages,
            folder: Some(dir.to_path_buf()),
        });
    }
    Ok(())
}

fn refuse_shared_names(docs: &[BatchDoc]) -> Result<()> {
    let mut seen: BTreeMap<&str, &BatchDoc> = BTreeMap::new();
    for doc in docs {
        if let Some(first) = seen.insert(&doc.name, doc) {
            let what = |d: &BatchDoc| match &d.folder {
                Some(f) => format!("the page images in {}", f.display()),
                None => d.inputs[0].display().to_string(),
            };
            return Err(Error::Usage(format!(
                "{} and {} would both be written as {}.pdf; rename one of them",
                what(first),
                what(doc),
                doc.name
            )));
        }
    }
    Ok(())
}

/// Compare names in natural order: runs of ASCII digits by their value (`page-2` before
/// `page-10`), everything else character by character; ties broken by plain order.
pub fn natural_cmp(a: &str, b: &str) -> Ordering {
    let (mut x, mut y) = (a, b);
    while let (Some(cx), Some(cy)) = (x.chars().next(), y.chars().next()) {
        let ord = if cx.is_ascii_digit() && cy.is_ascii_digit() {
            let (nx, rx) = split_digits(x);
            let (ny, ry) = split_digits(y);
            (x, y) = (rx, ry);
            let (tx, ty) = (nx.trim_start_matches('0'), ny.trim_start_matches('0'));
            tx.len().cmp(&ty.len()).then(tx.cmp(ty))
        } else {
            (x, y) = (&x[cx.len_utf8()..], &y[cy.len_utf8()..]);
            cx.cmp(&cy)
        };
        if ord != Ordering::Equal {
            return ord;
        }
    }
    x.len().cmp(&y.len()).then(a.cmp(b))
}

fn split_digits(s: &str) -> (&str, &str) {
    let end = s.find(|c: char| !c.is_ascii_digit()).unwrap_or(s.len());
    s.split_at(end)
}

/// Part `index` (1-based) of `count` of a batch, for array jobs.
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
pub struct Shard {
    /// 1-based part number.
    pub index: u64,
    /// Number of parts.
    pub count: u64,
}

impl std::str::FromStr for Shard {
    type Err = Error;

    fn from_str(spec: &str) -> Result<Shard> {
        let bad = || {
            Error::Usage(format!(
                "--shard {spec:?}: write it as I/N with 1 ≤ I ≤ N, e.g. 3/8 (I counts from 1)"
            ))
        };
        let (i, n) = spec.split_once('/').ok_or_else(bad)?;
        let index: u64 = i.trim().parse().map_err(|_| bad())?;
        let count: u64 = n.trim().parse().map_err(|_| bad())?;
        if index == 0 || index > count {
            return Err(bad());
        }
        Ok(Shard { index, count })
    }
}

impl Shard {
    /// Whether this shard takes the document named `name` (a [`BatchDoc::name`]).
    pub fn takes(&self, name: &str) -> bool {
        fnv1a_64(name.as_bytes()) % self.count == self.index - 1
    }
}

/// FNV-1a, 64 bits (Fowler, Noll, Vo; IETF draft-eastlake-fnv): a fixed, documented hash, so
/// shards agree across machines, platforms and versions of Rust.
pub fn fnv1a_64(bytes: &[u8]) -> u64 {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325; // offset basis
    for &b in bytes {
        h = (h ^ b as u64).wrapping_mul(0x0000_0100_0000_01b3); // 64-bit FNV prime
    }
    h
}

/// `root/<name>.<ext>`: where a document's output of one kind goes. Every output of a batch is
/// named here, so they all mirror the inputs the same way.
pub fn output_path(root: &Path, doc: &BatchDoc, ext: &str) -> PathBuf {
    let mut path = root.to_path_buf();
    for part in doc.name.split('/') {
        path.push(part);
    }
    let mut file = path.into_os_string();
    file.push(".");
    file.push(ext);
    PathBuf::from(file)
}

/// Whether every one of `outputs` exists and is newer than all of the document's inputs.
pub fn is_done(doc: &BatchDoc, outputs: &[&Path]) -> bool {
    let modified = |p: &Path| std::fs::metadata(p).and_then(|m| m.modified()).ok();
    let mut newest_input = SystemTime::UNIX_EPOCH;
    for p in doc.inputs.iter().chain(&doc.folder) {
        match modified(p) {
            Some(t) => newest_input = newest_input.max(t),
            None => return false,
        }
    }
    !outputs.is_empty()
        && outputs
            .iter()
            .all(|o| modified(o).is_some_and(|t| t > newest_input))
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn fnv1a_matches_published_vectors() {
        // FNV-1a 64-bit test vectors, IETF draft-eastlake-fnv (values quoted from memory).
        assert_eq!(fnv1a_64(b""), 0xcbf2_9ce4_8422_2325);
        assert_eq!(fnv1a_64(b"a"), 0xaf63_dc4c_8601_ec8c);
        assert_eq!(fnv1a_64(b"foobar"), 0x8594_4171_f739_67e8);
    }

    #[test]
    fn shard_spec() {
        let s: Shard = "3/8".parse().unwrap();
        assert_eq!((s.index, s.count), (3, 8));
        for bad in ["0/8", "9/8", "3", "a/8", "3/0", "-1/8"] {
            assert!(bad.parse::<Shard>().is_err(), "{bad}");
        }
    }

    #[test]
    fn shards_split_a_list_exactly_once() {
        let names: Vec<String> = (0..500)
            .map(|i| format!("box-{}/case-{i}", i % 7))
            .collect();
        let count = 8;
        let mut sizes = vec![0; count as usize];
        for name in &names {
            let takers: Vec<u64> = (1..=count)
                .filter(|&index| Shard { index, count }.takes(name))
                .collect();
            assert_eq!(takers.len(), 1, "{name}: {takers:?}");
            sizes[takers[0] as usize - 1] += 1;
        }
        // Every shard gets work; none more than twice its fair share (62.5 here).
        assert!(sizes.iter().all(|&n| n > 20 && n < 125), "{sizes:?}");
    }

    #[test]
    fn natural_order() {
        let mut names = vec![
            "page-10", "page-2", "page-1", "Page-3", "page-02", "appendix",
        ];
        names.sort_by(|a, b| natural_cmp(a, b));
        assert_eq!(
            names,
            ["Page-3", "appendix", "page-1", "page-02", "page-2", "page-10"]
        );
    }

    #[test]
    fn output_names_mirror_the_input() {
        let doc = BatchDoc {
            name: "2024/case-17".into(),
            inputs: vec![],
            folder: None,
        };
        assert_eq!(
            output_path(Path::new("out"), &doc, "pdf"),
            Path::new("out/2024/case-17.pdf")
        );
    }
}
