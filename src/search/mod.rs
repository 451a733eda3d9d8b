//! Arabic-aware search across the text layers of many PDFs.
//!
//! Each page's text is read in logical order (see [`extract`]), folded (see
//! [`crate::text::fold`]) together with the query, and matched; a hit may run across a line break
//! but never across pages.

pub mod extract;
pub mod index;

use std::path::{Path, PathBuf};

use rayon::prelude::*;
use serde::Serialize;

use crate::error::{Error, Result};
use crate::text::fold::{fold_for_search, FoldOptions};
use index::{IndexCache, PageLines};

/// One place where the query was found.
#[derive(Debug, Clone, PartialEq, Eq, Serialize)]
pub struct Hit {
    /// The PDF.
    pub file: PathBuf,
    /// 1-based page number.
    pub page: usize,
    /// The page text that matched (line breaks as spaces).
    pub matched: String,
    /// Text before the match on the same page.
    pub before: String,
    /// Text after the match on the same page.
    pub after: String,
}

/// What searching one file found.
#[derive(Debug, Clone, Default)]
pub struct FileResult {
    /// Hits in page order.
    pub hits: Vec<Hit>,
    /// Pages in the file.
    pub pages: usize,
    /// Pages that carry any text.
    pub pages_with_text: usize,
}

/// PDF files under the given paths (folders searched recursively), sorted, each once.
pub fn pdf_files(paths: &[PathBuf]) -> Result<Vec<PathBuf>> {
    let mut out = Vec::new();
    for p in paths {
        let meta = std::fs::metadata(p).map_err(|e| Error::io(p, e))?;
        if meta.is_dir() {
            walk(p, &mut out)?;
        } else {
            out.push(p.clone());
        }
    }
    out.sort();
    out.dedup();
    Ok(out)
}

fn walk(dir: &Path, out: &mut Vec<PathBuf>) -> Result<()> {
    for entry in std::fs::read_dir(dir).map_err(|e| Error::io(dir, e))? {
        let path = entry.map_err(|e| Error::io(dir, e))?.path();
        if path.is_dir() {
            walk(&path, out)?;
        } else if path
            .extension()
            .is_some_and(|e| e.eq_ignore_ascii_case("pdf"))
        {
            out.push(path);
        }
    }
    Ok(())
}

/// Text lines of every page of a PDF, read from its text layer (see [`extract`]).
pub fn read_page_lines(path: &Path) -> Result<PageLines> {
    let doc = lopdf::Document::load(path)
        .map_err(|e| Error::input(path, format!("cannot read as PDF: {e}")))?;
    Ok(doc
        .get_pages()
        .into_values()
        .map(|id| extract::page_lines(&doc, id).unwrap_or_default())
        .collect())
}

/// Search one PDF, through the index when one is given.
pub fn search_file(
    path: &Path,
    query: &str,
    opts: &FoldOptions,
    context_chars: usize,
    index: Option<&IndexCache>,
) -> Result<FileResult> {
    let needle = fold_for_search(query, opts).text.trim().to_string();
    if needle.is_empty() {
        return Err(Error::Usage(
            "the search text is empty after folding".into(),
        ));
    }
    let pages = match index {
        Some(cache) => cache.page_lines(path, || read_page_lines(path))?,
        None => read_page_lines(path)?,
    };
    let mut result = FileResult {
        pages: pages.len(),
        ..FileResult::default()
    };
    for (i, lines) in pages.iter().enumerate() {
        if lines.is_empty() {
            continue;
        }
        result.pages_with_text += 1;
        let text = lines.join("\n");
        result.hits.extend(
            find_in_page(&text, &needle, opts, context_chars)
                .into_iter()
                .map(|(before, matched, after)| Hit {
                    file: path.to_path_buf(),
                    page: i + 1,
                    matched,
                    before,
                    after,
                }),
        );
    }
    Ok(result)
}

/// Every match of the folded `needle` in `text`: (before, match, after) in the original text.
pub fn find_in_page(
    text: &str,
    needle: &str,
    opts: &FoldOptions,
    context_chars: usize,
) -> Vec<(String, String, String)> {
    let folded = fold_for_search(text, opts);
    let hay: Vec<char> = folded.text.chars().collect();
    let pat: Vec<char> = needle.chars().collect();
    let flat = |s: &str| s.split_whitespace().collect::<Vec<_>>().join(" ");
    let mut hits = Vec::new();
    let mut i = 0;
    while i + pat.len() <= hay.len() {
        if hay[i..i + pat.len()] == pat[..] {
            let start = folded.origin[i];
            let last = folded.origin[i + pat.len() - 1];
            let end = last + text[last..].chars().next().map_or(0, char::len_utf8);
            // Extend over marks that folding dropped right after the match.
            let end = end
                + text[end..]
                    .chars()
                    .take_while(|c| fold_char_dropped(*c, opts))
                    .map(char::len_utf8)
                    .sum::<usize>();
            let before: String = text[..start]
                .chars()
                .rev()
                .take(context_chars)
                .collect::<Vec<_>>()
                .into_iter()
                .rev()
                .collect();
            let after: String = text[end..].chars().take(context_chars).collect();
            hits.push((flat(&before), flat(&text[start..end]), flat(&after)));
            i += pat.len();
        } else {
            i += 1;
        }
    }
    hits
}

fn fold_char_dropped(c: char, opts: &FoldOptions) -> bool {
    !c.is_whitespace() && crate::text::fold::fold_char(c, opts).is_none()
}

/// Search many files in parallel, through the index when one is given; results in file order.
/// Files that cannot be read are returned as errors beside the others.
pub fn search_files(
    files: &[PathBuf],
    query: &str,
    opts: &FoldOptions,
    context_chars: usize,
    index: Option<&IndexCache>,
) -> Vec<(PathBuf, Result<FileResult>)> {
    files
        .par_iter()
        .map(|f| (f.clone(), search_file(f, query, opts, context_chars, index)))
        .collect()
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn hit_across_a_line_break() {
        let hits = find_in_page(
            "سجل المقتنيات في مكتبة\nوادي الريحان",
            "مكتبه وادي",
            &FoldOptions::default(),
            10,
        );
        assert_eq!(hits.len(), 1);
        assert_eq!(hits[0].1, "مكتبة وادي");
    }

    #[test]
    fn folded_hit_keeps_original_spelling() {
        let hits = find_in_page(
            "قرار المَحكَمة رقم ٢٠٢٤/١١٧",
            "2024/117",
            &FoldOptions::default(),
            20,
        );
        assert_eq!(hits.len(), 1);
        assert_eq!(hits[0].1, "٢٠٢٤/١١٧");
        let hits = find_in_page(
            "قرار المَحكَمة رقم ٢٠٢٤/١١٧",
            "المحكمه",
            &FoldOptions::default(),
            20,
        );
        assert_eq!(hits[0].1, "المَحكَمة");
    }

    #[test]
    fn exact_search_does_not_fold() {
        assert!(find_in_page("مكتبة", "مكتبه", &FoldOptions::EXACT, 5).is_empty());
    }
}
