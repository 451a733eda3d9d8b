//! ALTO 4 XML (Analyzed Layout and Text Object, ALTO 4.4 schema of the ALTO Editorial Board):
//! one file per page, coordinates in pixels of the page image, words with their confidence.
//!
//! Layout of a page file: `Description` (pixel unit, source file, one `Processing` step naming
//! mistara and saying the text is machine-recognized), `Tags` (one `LayoutTag` per region kind
//! used on the page), `ReadingOrder` (the blocks in reading order), then `Layout/Page` with the
//! blocks placed in the page spaces ALTO defines: running headers in `TopMargin`, page numbers in
//! `TopMargin` or `BottomMargin` by where they sit, margin notes in `LeftMargin`/`RightMargin`,
//! everything else in `PrintSpace`. A block is a run of consecutive lines of one region kind.
//! Words are in logical order, with `SP` between them. Writing files is left to [`AltoDir`].

use std::fmt::Write as _;
use std::path::{Path, PathBuf};

use crate::error::{Error, Result};
use crate::layout::geometry::Rect;
use crate::pipeline::PageDone;
use crate::text::{PageText, RegionKind, TextLine};

/// The namespace of ALTO 4 (ALTO 4.4 schema, `targetNamespace`).
pub const ALTO_NAMESPACE: &str = "http://www.loc.gov/standards/alto/ns-v4#";
/// Where the ALTO 4.4 schema is published (for `xsi:schemaLocation`).
pub const ALTO_SCHEMA_URL: &str = "http://www.loc.gov/standards/alto/v4/alto-4-4.xsd";

/// The file name of page `number` (1-based) inside an ALTO folder: `page-0001.xml`.
pub fn page_file_name(number: usize) -> String {
    format!("page-{number:04}.xml")
}

/// What one page file says besides the text.
#[derive(Debug, Clone)]
pub struct AltoPage<'a> {
    /// 1-based page number in the document.
    pub number: usize,
    /// Size of the page image in pixels, when the page was read.
    pub size_px: Option<(u32, u32)>,
    /// The page's text (empty when not read).
    pub text: &'a PageText,
    /// Name of the input file the page came from, if known.
    pub source: Option<&'a str>,
    /// Why the page carries no text, when it was not read.
    pub not_read: Option<&'a str>,
    /// The text came from a supplied transcript, not from recognition.
    pub from_transcript: bool,
}

/// ALTO's page spaces, in the order the schema requires them inside `Page` (ALTO 4.4, `PageType`).
#[derive(Debug, Clone, Copy, PartialEq, Eq)]
enum Area {
    TopMargin,
    LeftMargin,
    RightMargin,
    BottomMargin,
    PrintSpace,
}

const SPACES: [Area; 5] = [
    Area::TopMargin,
    Area::LeftMargin,
    Area::RightMargin,
    Area::BottomMargin,
    Area::PrintSpace,
];

impl Area {
    fn element(self) -> &'static str {
        match self {
            Area::TopMargin => "TopMargin",
            Area::LeftMargin => "LeftMargin",
            Area::RightMargin => "RightMargin",
            Area::BottomMargin => "BottomMargin",
            Area::PrintSpace => "PrintSpace",
        }
    }
}

/// The tag ID and label of a region kind (`LayoutTag`, ALTO 4.4 `TagsType`).
fn kind_tag(kind: RegionKind) -> (&'static str, &'static str) {
    match kind {
        RegionKind::Body => ("kind_body", "body text"),
        RegionKind::Header => ("kind_header", "running header"),
        RegionKind::PageNumber => ("kind_page_number", "page number"),
        RegionKind::Footnote => ("kind_footnote", "footnote"),
        RegionKind::Margin => ("kind_margin", "margin note"),
        RegionKind::Title => ("kind_title", "title or heading"),
    }
}

/// A run of consecutive lines of one region kind.
struct Block<'a> {
    id: String,
    kind: RegionKind,
    lines: &'a [TextLine],
    bbox: Rect,
    space: Area,
}

/// Group consecutive lines of the same kind into blocks and give each its page space.
fn blocks<'a>(page: &AltoPage<'a>) -> Vec<Block<'a>> {
    let lines = &page.text.lines;
    let mut out = Vec::new();
    let mut start = 0;
    while start < lines.len() {
        let kind = lines[start].region;
        let end = (start..lines.len())
            .find(|&i| lines[i].region != kind)
            .unwrap_or(lines.len());
        let run = &lines[start..end];
        let bbox = run
            .iter()
            .skip(1)
            .fold(run[0].bbox, |a, l| a.union(&l.bbox));
        out.push(Block {
            id: format!("p{}_b{}", page.number, out.len() + 1),
            kind,
            lines: run,
            bbox,
            space: space_of(kind, &bbox, page.size_px),
        });
        start = end;
    }
    out
}

/// Where a block goes: headers in the top margin, page numbers in the margin they sit in,
/// margin notes in the side they sit on (ALTO 4.4 `PageType` documentation of each space).
fn space_of(kind: RegionKind, bbox: &Rect, size_px: Option<(u32, u32)>) -> Area {
    let Some((w, h)) = size_px else {
        return Area::PrintSpace;
    };
    let (cx, cy) = ((bbox.x0 + bbox.x1) / 2.0, (bbox.y0 + bbox.y1) / 2.0);
    match kind {
        RegionKind::Header => Area::TopMargin,
        RegionKind::PageNumber if cy < h as f32 / 2.0 => Area::TopMargin,
        RegionKind::PageNumber => Area::BottomMargin,
        RegionKind::Margin if cx < w as f32 / 2.0 => Area::LeftMargin,
        RegionKind::Margin => Area::RightMargin,
        _ => Area::PrintSpace,
    }
}

/// Escape text for an XML attribute value in double quotes (XML 1.0 §2.4, §3.3.3); control
/// characters XML cannot carry are dropped.
pub fn escape_attr(s: &str) -> String {
    let mut out = String::with_capacity(s.len());
    for c in s.chars() {
        match c {
            '&' => out.push_str("&amp;"),
            '<' => out.push_str("&lt;"),
            '>' => out.push_str("&gt;"),
            '"' => out.push_str("&quot;"),
            '\t' => out.push_str("&#9;"),
            '\n' => out.push_str("&#10;"),
            '\r' => out.push_str("&#13;"),
            // XML 1.0 `Char` production (§2.2): no other C0 controls, no U+FFFE/U+FFFF.
            c if (c as u32) < 0x20 || c == '\u{FFFE}' || c == '\u{FFFF}' => {}
            c => out.push(c),
        }
    }
    out
}

/// `HPOS="…" VPOS="…" WIDTH="…" HEIGHT="…"` of a box, in whole pixels, kept inside the page.
fn position(b: &Rect, size_px: Option<(u32, u32)>) -> String {
    let (w, h) = size_px.map_or((f32::MAX, f32::MAX), |(w, h)| (w as f32, h as f32));
    let x0 = b.x0.floor().clamp(0.0, w);
    let y0 = b.y0.floor().clamp(0.0, h);
    let x1 = b.x1.ceil().clamp(x0, w);
    let y1 = b.y1.ceil().clamp(y0, h);
    format!(
        "HPOS=\"{x0}\" VPOS=\"{y0}\" WIDTH=\"{}\" HEIGHT=\"{}\"",
        x1 - x0,
        y1 - y0
    )
}

/// `rtl` when the first strong character of the line is right-to-left (UAX #9 rules P2–P3),
/// `ltr` when it is left-to-right; lines with no strong character count as Arabic, `rtl`.
fn base_direction(line: &TextLine) -> &'static str {
    use unicode_bidi::BidiClass::{AL, L, R};
    for w in &line.words {
        for c in w.text.chars() {
            match unicode_bidi::bidi_class(c) {
                R | AL => return "rtl",
                L => return "ltr",
                _ => {}
            }
        }
    }
    "rtl"
}

/// A word confidence for `WC`: in `0..=1` (ALTO 4.4 `WCType`), three decimals.
fn word_confidence(c: f32) -> String {
    let c = if c.is_finite() {
        c.clamp(0.0, 1.0)
    } else {
        0.0
    };
    format!("{c:.3}")
}

/// The whole ALTO document of one page.
pub fn page_xml(page: &AltoPage) -> String {
    let blocks = blocks(page);
    let mut x = String::with_capacity(4096 + page.text.word_count() * 160);
    x.push_str("<?xml version=\"1.0\" encoding=\"UTF-8\"?>\n");
    let _ = writeln!(
        x,
        "<alto xmlns=\"{ALTO_NAMESPACE}\" xmlns:xsi=\"http://www.w3.org/2001/XMLSchema-instance\" \
         xsi:schemaLocation=\"{ALTO_NAMESPACE} {ALTO_SCHEMA_URL}\" SCHEMAVERSION=\"4.4\">"
    );
    write_description(&mut x, page);
    write_tags(&mut x, &blocks);
    write_reading_order(&mut x, page.number, &blocks);
    x.push_str("  <Layout>\n");
    write_page(&mut x, page, &blocks);
    x.push_str("  </Layout>\n</alto>\n");
    x
}

fn write_description(x: &mut String, page: &AltoPage) {
    x.push_str("  <Description>\n    <MeasurementUnit>pixel</MeasurementUnit>\n");
    if let Some(src) = page.source {
        let _ = writeln!(
            x,
            "    <sourceImageInformation>\n      <fileName>{}</fileName>\n    </sourceImageInformation>",
            escape_attr(src)
        );
    }
    let what = if page.from_transcript {
        "Text layer laid from a supplied transcript (words with boxes); not checked against the page image."
    } else {
        "Text lines found on the page image and recognized whole by a neural line recognizer. \
         The text is machine-recognized and may contain errors: verify it against the page image \
         before relying on it."
    };
    let _ = write!(
        x,
        "    <Processing ID=\"processing_1\">\n      <processingCategory>contentGeneration</processingCategory>\n      \
         <processingStepDescription>{}</processingStepDescription>\n      <processingSoftware>\n        \
         <softwareName>mistara</softwareName>\n        <softwareVersion>{}</softwareVersion>\n      \
         </processingSoftware>\n    </Processing>\n  </Description>\n",
        escape_attr(what),
        env!("CARGO_PKG_VERSION")
    );
}

fn write_tags(x: &mut String, blocks: &[Block]) {
    let mut kinds: Vec<RegionKind> = Vec::new();
    for b in blocks {
        if !kinds.contains(&b.kind) {
            kinds.push(b.kind);
        }
    }
    if kinds.is_empty() {
        return;
    }
    x.push_str("  <Tags>\n");
    for k in kinds {
        let (id, label) = kind_tag(k);
        let _ = writeln!(
            x,
            "    <LayoutTag ID=\"{id}\" TYPE=\"region\" LABEL=\"{label}\"/>"
        );
    }
    x.push_str("  </Tags>\n");
}

/// The blocks in reading order: needed because the page spaces reorder them (ALTO 4.3+
/// `ReadingOrder`, `OrderedGroup`, `ElementRef`).
fn write_reading_order(x: &mut String, number: usize, blocks: &[Block]) {
    if blocks.is_empty() {
        return;
    }
    let _ = writeln!(
        x,
        "  <ReadingOrder>\n    <OrderedGroup ID=\"p{number}_order\">"
    );
    for (i, b) in blocks.iter().enumerate() {
        let _ = writeln!(
            x,
            "      <ElementRef ID=\"p{number}_order_{}\" REF=\"{}\"/>",
            i + 1,
            b.id
        );
    }
    x.push_str("    </OrderedGroup>\n  </ReadingOrder>\n");
}

fn write_page(x: &mut String, page: &AltoPage, blocks: &[Block]) {
    let n = page.number;
    let _ = write!(
        x,
        "    <Page ID=\"page_{n}\" PHYSICAL_IMG_NR=\"{n}\" PROCESSINGREFS=\"processing_1\" LANG=\"ar\""
    );
    if let Some((w, h)) = page.size_px {
        let _ = write!(x, " WIDTH=\"{w}\" HEIGHT=\"{h}\"");
    }
    let words: Vec<f32> = blocks
        .iter()
        .flat_map(|b| b.lines.iter().flat_map(|l| &l.words))
        .map(|w| w.confidence)
        .collect();
    if !words.is_empty() {
        let mean = words.iter().map(|&c| c as f64).sum::<f64>() / words.len() as f64;
        let _ = write!(x, " PC=\"{}\"", word_confidence(mean as f32));
    }
    x.push_str(">\n");
    if let Some(why) = page.not_read {
        let _ = writeln!(x, "      <!-- no text: {} -->", why.replace("--", "- -"));
    }
    for space in SPACES {
        let inside: Vec<&Block> = blocks.iter().filter(|b| b.space == space).collect();
        if inside.is_empty() && space != Area::PrintSpace {
            continue;
        }
        let _ = write!(
            x,
            "      <{} ID=\"p{n}_{}\"",
            space.element(),
            space.element()
        );
        if let Some(first) = inside.first() {
            let bbox = inside.iter().fold(first.bbox, |a, b| a.union(&b.bbox));
            let _ = write!(x, " {}", position(&bbox, page.size_px));
        }
        if inside.is_empty() {
            x.push_str("/>\n");
            continue;
        }
        x.push_str(">\n");
        for b in inside {
            write_block(x, b, page.size_px);
        }
        let _ = writeln!(x, "      </{}>", space.element());
    }
    x.push_str("    </Page>\n");
}

fn write_block(x: &mut String, b: &Block, size_px: Option<(u32, u32)>) {
    let dir = b.lines.first().map_or("rtl", base_direction);
    let _ = writeln!(
        x,
        "        <TextBlock ID=\"{}\" TAGREFS=\"{}\" {} BASEDIRECTION=\"{dir}\">",
        b.id,
        kind_tag(b.kind).0,
        position(&b.bbox, size_px)
    );
    for (li, line) in b.lines.iter().enumerate() {
        if line.words.is_empty() {
            continue; // a TextLine needs at least one String (ALTO 4.4 `TextBlockType`)
        }
        let lid = format!("{}_l{}", b.id, li + 1);
        let _ = writeln!(
            x,
            "          <TextLine ID=\"{lid}\" {} BASEDIRECTION=\"{}\">",
            position(&line.bbox, size_px),
            base_direction(line)
        );
        for (wi, w) in line.words.iter().enumerate() {
            if wi > 0 {
                x.push_str("            <SP/>\n");
            }
            let _ = writeln!(
                x,
                "            <String ID=\"{lid}_w{}\" CONTENT=\"{}\" {} WC=\"{}\"/>",
                wi + 1,
                escape_attr(&w.text),
                position(&w.bbox, size_px),
                word_confidence(w.confidence)
            );
        }
        x.push_str("          </TextLine>\n");
    }
    x.push_str("        </TextBlock>\n");
}

/// An ALTO folder being written: page files go to a hidden temporary folder inside it and are
/// moved into place by [`AltoDir::commit`], so a failed run leaves no page files behind.
pub struct AltoDir {
    dir: PathBuf,
    tmp: tempfile::TempDir,
    inputs: Vec<PathBuf>,
    source: Option<String>,
    from_transcript: bool,
    written: Vec<String>,
}

impl AltoDir {
    /// Create `dir` (and its parents) if needed and a temporary folder inside it.
    ///
    /// `source` names the input file in each page's `sourceImageInformation`.
    pub fn create(
        dir: &Path,
        inputs: &[PathBuf],
        source: Option<String>,
        from_transcript: bool,
    ) -> Result<AltoDir> {
        let out_err = |why: String| Error::Output {
            path: dir.to_path_buf(),
            why,
        };
        if dir.is_file() {
            return Err(out_err("is a file; --alto needs a folder".into()));
        }
        std::fs::create_dir_all(dir).map_err(|e| out_err(format!("cannot create it: {e}")))?;
        let tmp = tempfile::Builder::new()
            .prefix(".mistara-alto-")
            .tempdir_in(dir)
            .map_err(|e| out_err(format!("cannot write in it: {e}")))?;
        Ok(AltoDir {
            dir: dir.to_path_buf(),
            tmp,
            inputs: inputs.to_vec(),
            source,
            from_transcript,
            written: Vec::new(),
        })
    }

    /// Write the file of one finished page.
    pub fn page(&mut self, p: &PageDone) -> Result<()> {
        let not_read = match (p.image.is_some(), p.had_text) {
            (_, true) => Some("the page already carried text and was left as it was"),
            (false, false) => Some("the page was not among the pages to read"),
            _ => None,
        };
        let page = AltoPage {
            number: p.done,
            size_px: p.image.map(|i| i.gray.dimensions()),
            text: p.text,
            source: self.source.as_deref(),
            not_read,
            from_transcript: self.from_transcript,
        };
        let name = page_file_name(p.done);
        let path = self.tmp.path().join(&name);
        std::fs::write(&path, page_xml(&page)).map_err(|e| Error::Output {
            path: self.dir.join(&name),
            why: e.to_string(),
        })?;
        self.written.push(name);
        Ok(())
    }

    /// Move every page file into the folder (each by one rename) and remove the temporary folder.
    pub fn commit(self) -> Result<()> {
        for name in &self.written {
            let target = self.dir.join(name);
            crate::output::refuse_overwriting_input(&target, &self.inputs)?;
            std::fs::rename(self.tmp.path().join(name), &target).map_err(|e| Error::Output {
                path: target.clone(),
                why: e.to_string(),
            })?;
        }
        self.tmp.close().map_err(|e| Error::Output {
            path: self.dir.clone(),
            why: format!("cannot remove the temporary folder: {e}"),
        })
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use crate::text::Word;

    fn line(words: &[(&str, f32)], y: f32, region: RegionKind) -> TextLine {
        let words: Vec<Word> = words
            .iter()
            .enumerate()
            .map(|(i, &(t, c))| Word {
                text: t.into(),
                bbox: Rect::new(
                    500.0 - 100.0 * i as f32,
                    y,
                    580.0 - 100.0 * i as f32,
                    y + 30.0,
                ),
                confidence: c,
            })
            .collect();
        let bbox = words.iter().fold(words[0].bbox, |a, w| a.union(&w.bbox));
        TextLine {
            words,
            bbox,
            region,
        }
    }

    fn page(text: &PageText) -> AltoPage<'_> {
        AltoPage {
            number: 3,
            size_px: Some((600, 800)),
            text,
            source: Some("book.pdf"),
            not_read: None,
            from_transcript: false,
        }
    }

    #[test]
    fn escapes_markup_and_drops_forbidden_controls() {
        assert_eq!(
            escape_attr("a<b>&\"c\"\u{1}"),
            "a&lt;b&gt;&amp;&quot;c&quot;"
        );
    }

    #[test]
    fn consecutive_lines_of_one_kind_form_one_block_in_its_space() {
        let text = PageText {
            lines: vec![
                line(&[("رأس", 0.9)], 10.0, RegionKind::Header),
                line(&[("كتاب", 0.9), ("المكتبة", 0.5)], 100.0, RegionKind::Body),
                line(&[("سجل", 1.0)], 140.0, RegionKind::Body),
                line(&[("١٢", 1.0)], 760.0, RegionKind::PageNumber),
            ],
        };
        let x = page_xml(&page(&text));
        assert_eq!(x.matches("<TextBlock ").count(), 3);
        assert_eq!(x.matches("<TextLine ").count(), 4);
        assert_eq!(x.matches("<SP/>").count(), 1);
        assert!(x.contains("<TopMargin ID=\"p3_TopMargin\""));
        assert!(x.contains("<BottomMargin ID=\"p3_BottomMargin\""));
        // Reading order keeps header → body → page number although spaces reorder them.
        let refs: Vec<&str> = x
            .match_indices("REF=\"")
            .map(|(i, _)| &x[i + 5..i + 10])
            .collect();
        assert_eq!(refs, ["p3_b1", "p3_b2", "p3_b3"]);
        assert!(x.contains("CONTENT=\"المكتبة\""));
        assert!(x.contains("WC=\"0.500\""));
        assert!(x.contains("PC=\"0.860\"")); // (0.9+0.9+0.5+1+1)/5
        assert!(x.contains("BASEDIRECTION=\"rtl\""));
    }

    #[test]
    fn boxes_are_clamped_to_the_page() {
        let text = PageText {
            lines: vec![line(&[("نص", 1.0)], 790.0, RegionKind::Body)],
        };
        let x = page_xml(&page(&text));
        assert!(x.contains("VPOS=\"790\" WIDTH=\"80\" HEIGHT=\"10\""), "{x}");
    }

    #[test]
    fn page_not_read_has_no_blocks() {
        let text = PageText::default();
        let mut p = page(&text);
        p.not_read = Some("outside --pages");
        p.size_px = None;
        let x = page_xml(&p);
        assert!(!x.contains("<TextBlock"));
        assert!(x.contains("<PrintSpace ID=\"p3_PrintSpace\"/>"));
        assert!(x.contains("<!-- no text: outside - -pages -->"));
    }

    #[test]
    fn latin_line_is_left_to_right() {
        let l = line(&[("2024", 1.0), ("Tell", 1.0)], 0.0, RegionKind::Body);
        assert_eq!(base_direction(&l), "ltr");
    }
}
