//! A new PDF around image-file pages (pdf-writer objects, streamed by [`PdfStream`]): one page per
//! image, the image as it came (JPEG and JPEG 2000 bytes untouched; 1-bit pages as CCITT G4; the
//! rest Flate), the text layer on top. Pages are written as they come, so memory stays flat.

use std::io::{self, Write};

use image::GrayImage;
use pdf_writer::types::OutputIntentSubtype;
use pdf_writer::{Chunk, Content, Filter, Finish, Name, Rect as PdfRect, Ref, TextStr};

use super::pdf_font::{deflate, font_objects, FontStreams};
use super::pdf_stream::PdfStream;
use super::pdfa::{ArchivalInfo, PdfDate, ICC_REGISTRY, SRGB_CONDITION, SRGB_ICC};
use super::text_layer::{write_layer, LayerOptions};
use super::DocumentInfo;
use crate::input::{Embed, SourcePage};
use crate::text::PageText;

const FONT_NAME: Name<'static> = Name(b"MistaraF1");
const IMAGE_NAME: Name<'static> = Name(b"Im0");

/// Builds a new PDF page by page into `W`.
pub struct FreshPdf<W: Write> {
    out: PdfStream<W>,
    catalog: Ref,
    tree: Ref,
    font: Ref,
    info: Ref,
    pages: Vec<Ref>,
    opts: LayerOptions,
}

impl<W: Write> FreshPdf<W> {
    /// Start a document; the font objects are written at once.
    pub fn new(writer: W, opts: LayerOptions) -> io::Result<FreshPdf<W>> {
        let mut out = PdfStream::new(writer)?;
        let (catalog, tree, info) = (out.alloc(), out.alloc(), out.alloc());
        let font = out.alloc_many(6);
        for (id, chunk) in font_objects(font, &FontStreams::new()) {
            out.object(id, &chunk)?;
        }
        Ok(FreshPdf {
            out,
            catalog,
            tree,
            font,
            info,
            pages: Vec::new(),
            opts,
        })
    }

    /// Add one page: the source image and its text.
    pub fn add_page(&mut self, page: &SourcePage, text: &PageText) -> io::Result<()> {
        let (page_ref, content_ref, image_ref) =
            (self.out.alloc(), self.out.alloc(), self.out.alloc());
        let img = &page.image;
        let (w, h) = (img.gray.width(), img.gray.height());
        let mut c = Chunk::new();
        write_image(&mut c, image_ref, page, &img.gray);
        self.out.object(image_ref, &c)?;

        let mut content = Content::new();
        content.save_state();
        content.transform(img.placement.image_matrix(w, h).0);
        content.x_object(IMAGE_NAME);
        content.restore_state();
        write_layer(
            &mut content,
            text,
            h as f32,
            &img.placement.to_page,
            FONT_NAME,
            self.opts,
        );
        let data = deflate(&content.finish());
        let mut c = Chunk::new();
        c.stream(content_ref, &data).filter(Filter::FlateDecode);
        self.out.object(content_ref, &c)?;

        let [x0, y0, x1, y1] = img.placement.media_box;
        let mut c = Chunk::new();
        let mut p = c.page(page_ref);
        p.parent(self.tree)
            .media_box(PdfRect::new(x0, y0, x1, y1))
            .contents(content_ref);
        let mut res = p.resources();
        res.x_objects().pair(IMAGE_NAME, image_ref);
        res.fonts().pair(FONT_NAME, self.font);
        res.finish();
        p.finish();
        self.out.object(page_ref, &c)?;
        self.pages.push(page_ref);
        Ok(())
    }

    /// Add an empty page of `media_box` (points): the place of a page whose image could not be
    /// decoded, so that the pages after it keep their numbers.
    pub fn add_blank_page(&mut self, media_box: [f32; 4]) -> io::Result<()> {
        let page_ref = self.out.alloc();
        let [x0, y0, x1, y1] = media_box;
        let mut c = Chunk::new();
        let mut p = c.page(page_ref);
        p.parent(self.tree).media_box(PdfRect::new(x0, y0, x1, y1));
        // Resources are required, even empty (ISO 32000-1 §7.7.3.3, Table 30).
        p.resources().finish();
        p.finish();
        self.out.object(page_ref, &c)?;
        self.pages.push(page_ref);
        Ok(())
    }

    /// Write the page tree, catalog, metadata and trailer; returns the writer.
    pub fn finish(mut self, info: &DocumentInfo) -> io::Result<W> {
        let mut c = Chunk::new();
        c.pages(self.tree)
            .kids(self.pages.iter().copied())
            .count(self.pages.len() as i32);
        self.out.object(self.tree, &c)?;
        let id = file_id(&self.pages, info);
        let archival = info.archival.then(|| archival_info(info, id));
        let archival_refs = match &archival {
            Some(a) => Some(self.write_archival(a)?),
            None => None,
        };
        let mut c = Chunk::new();
        let mut cat = c
            .indirect(self.catalog)
            .start::<pdf_writer::writers::Catalog>();
        cat.pages(self.tree).pair(Name(b"Lang"), TextStr("ar"));
        if let Some((metadata, icc)) = archival_refs {
            cat.metadata(metadata);
            cat.output_intents()
                .push()
                .subtype(OutputIntentSubtype::PDFA)
                .output_condition_identifier(TextStr(SRGB_CONDITION))
                .registry_name(TextStr(ICC_REGISTRY))
                .info(TextStr(SRGB_CONDITION))
                .dest_output_profile(icc);
        }
        cat.finish();
        self.out.object(self.catalog, &c)?;
        let mut c = Chunk::new();
        let mut d = c.indirect(self.info).dict();
        match &archival {
            // The same entries as the XMP packet (ISO 19005-2 §6.6.2.3.1).
            Some(a) => {
                for (key, text) in a.info_entries() {
                    d.pair(Name(key.as_bytes()), TextStr(&text));
                }
            }
            None => {
                d.pair(Name(b"Producer"), TextStr(&info.producer));
                d.pair(Name(b"Subject"), TextStr(&info.notice));
                if let Some(t) = &info.title {
                    d.pair(Name(b"Title"), TextStr(t));
                }
            }
        }
        d.finish();
        self.out.object(self.info, &c)?;
        self.out.finish(self.catalog, self.info, id)
    }

    /// The XMP metadata stream (unfiltered, ISO 19005-2 §6.6.2.1) and the sRGB ICC profile of the
    /// output intent (N = 3 components, ISO 32000-1 §8.6.5.5); returns their references.
    fn write_archival(&mut self, a: &ArchivalInfo) -> io::Result<(Ref, Ref)> {
        let (metadata, icc) = (self.out.alloc(), self.out.alloc());
        let xmp = a.xmp();
        let mut c = Chunk::new();
        c.metadata(metadata, &xmp);
        self.out.object(metadata, &c)?;
        let data = deflate(SRGB_ICC);
        let mut c = Chunk::new();
        c.icc_profile(icc, &data).n(3).filter(Filter::FlateDecode);
        self.out.object(icc, &c)?;
        Ok((metadata, icc))
    }
}

/// The archival metadata of a new document: the notice as subject, created and modified now.
fn archival_info(info: &DocumentInfo, id: [u8; 16]) -> ArchivalInfo {
    let now = PdfDate::now();
    ArchivalInfo {
        title: info.title.clone(),
        author: None,
        subject: Some(info.notice.clone()),
        keywords: None,
        creator: Some(info.producer.clone()),
        producer: info.producer.clone(),
        created: now,
        modified: now,
        id,
    }
}

/// A file identifier from the document's shape (deterministic: same input, same bytes).
fn file_id(pages: &[Ref], info: &DocumentInfo) -> [u8; 16] {
    let mut h: u64 = 0xcbf2_9ce4_8422_2325; // FNV-1a
    for b in info
        .producer
        .bytes()
        .chain((pages.len() as u64).to_le_bytes())
    {
        h = (h ^ b as u64).wrapping_mul(0x0100_0000_01b3);
    }
    let mut id = [0u8; 16];
    id[..8].copy_from_slice(&h.to_be_bytes());
    id[8..].copy_from_slice(&h.rotate_left(29).to_be_bytes());
    id
}

fn write_image(chunk: &mut Chunk, id: Ref, page: &SourcePage, gray: &GrayImage) {
    let (w, h) = (gray.width() as i32, gray.height() as i32);
    let embed = page.embed.as_ref().unwrap_or(&Embed::Gray);
    match embed {
        Embed::Jpeg {
            data,
            components,
            inverted_cmyk,
        } => {
            let mut x = chunk.image_xobject(id, data);
            x.width(w).height(h).bits_per_component(8);
            x.filter(Filter::DctDecode);
            match components {
                1 => x.color_space().device_gray(),
                4 => x.color_space().device_cmyk(),
                _ => x.color_space().device_rgb(),
            };
            if *inverted_cmyk {
                x.decode([1.0, 0.0, 1.0, 0.0, 1.0, 0.0, 1.0, 0.0]);
            }
        }
        Embed::Jpx { data } => {
            // JPXDecode: colour space and depth come from the codestream (§7.4.9).
            let mut x = chunk.image_xobject(id, data);
            x.width(w).height(h);
            x.filter(Filter::JpxDecode);
        }
        Embed::Bilevel => {
            let data = ccitt_g4(gray);
            let mut x = chunk.image_xobject(id, &data);
            x.width(w).height(h).bits_per_component(1);
            x.filter(Filter::CcittFaxDecode);
            x.color_space().device_gray();
            // K < 0: pure two-dimensional G4 (§7.4.6, Table 11); 0 bits are black unless BlackIs1.
            x.decode_parms().k(-1).columns(w).rows(h);
        }
        Embed::Gray => {
            let data = deflate(gray.as_raw());
            let mut x = chunk.image_xobject(id, &data);
            x.width(w).height(h).bits_per_component(8);
            x.filter(Filter::FlateDecode);
            x.color_space().device_gray();
        }
        Embed::Rgb(rgb) => {
            let data = deflate(rgb.as_raw());
            let mut x = chunk.image_xobject(id, &data);
            x.width(w).height(h).bits_per_component(8);
            x.filter(Filter::FlateDecode);
            x.color_space().device_rgb();
        }
    }
}

/// Encode a black-and-white page as CCITT Group 4 (ITU-T T.6) with the `fax` crate.
pub fn ccitt_g4(gray: &GrayImage) -> Vec<u8> {
    use fax::{encoder::Encoder, Color, VecWriter};
    let w = gray.width();
    let mut enc = Encoder::new(VecWriter::new());
    for row in gray.rows() {
        let pels = row.map(|p| {
            if p.0[0] < 128 {
                Color::Black
            } else {
                Color::White
            }
        });
        let Ok(()) = enc.encode_line(pels, w);
    }
    let Ok(writer) = enc.finish();
    writer.finish()
}
