//! A new PDF around image-file pages (pdf-writer): one page per image, the image as it came
//! (JPEG and JPEG 2000 bytes untouched; 1-bit pages as CCITT G4; the rest Flate), the text layer on top.

use image::GrayImage;
use pdf_writer::{Content, Filter, Finish, Name, Pdf, Rect as PdfRect, Ref, TextStr};

use super::pdf_font::{deflate, write_font, FontStreams};
use super::text_layer::{write_layer, LayerOptions};
use super::DocumentInfo;
use crate::input::{Embed, SourcePage};
use crate::text::PageText;

const FONT_NAME: Name<'static> = Name(b"MistaraF1");
const IMAGE_NAME: Name<'static> = Name(b"Im0");

/// Builds a new PDF page by page; `finish` returns the file's bytes.
pub struct FreshPdf {
    pdf: Pdf,
    next: i32,
    catalog: Ref,
    tree: Ref,
    font: Ref,
    info: Ref,
    pages: Vec<Ref>,
    opts: LayerOptions,
}

impl FreshPdf {
    /// Start an empty document.
    pub fn new(opts: LayerOptions) -> FreshPdf {
        let mut pdf = Pdf::new();
        let (catalog, tree, font, info) = (Ref::new(1), Ref::new(2), Ref::new(3), Ref::new(9));
        write_font(&mut pdf, font, &FontStreams::new()); // uses refs 3–8
        FreshPdf {
            pdf,
            next: 10,
            catalog,
            tree,
            font,
            info,
            pages: Vec::new(),
            opts,
        }
    }

    fn alloc(&mut self) -> Ref {
        let r = Ref::new(self.next);
        self.next += 1;
        r
    }

    /// Add one page: the source image and its text.
    pub fn add_page(&mut self, page: &SourcePage, text: &PageText) {
        let (page_ref, content_ref, image_ref) = (self.alloc(), self.alloc(), self.alloc());
        let img = &page.image;
        let (w, h) = (img.gray.width(), img.gray.height());
        write_image(&mut self.pdf, image_ref, page, &img.gray);

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
        self.pdf
            .stream(content_ref, &data)
            .filter(Filter::FlateDecode);

        let [x0, y0, x1, y1] = img.placement.media_box;
        let mut p = self.pdf.page(page_ref);
        p.parent(self.tree)
            .media_box(PdfRect::new(x0, y0, x1, y1))
            .contents(content_ref);
        let mut res = p.resources();
        res.x_objects().pair(IMAGE_NAME, image_ref);
        res.fonts().pair(FONT_NAME, self.font);
        res.finish();
        p.finish();
        self.pages.push(page_ref);
    }

    /// Close the document and return its bytes.
    pub fn finish(mut self, info: &DocumentInfo) -> Vec<u8> {
        let count = self.pages.len() as i32;
        self.pdf
            .pages(self.tree)
            .kids(self.pages.iter().copied())
            .count(count);
        self.pdf
            .catalog(self.catalog)
            .pages(self.tree)
            .pair(Name(b"Lang"), TextStr("ar"));
        let mut d = self.pdf.document_info(self.info);
        d.producer(TextStr(&info.producer))
            .subject(TextStr(&info.notice));
        if let Some(t) = &info.title {
            d.title(TextStr(t));
        }
        d.finish();
        self.pdf.finish()
    }
}

fn write_image(pdf: &mut Pdf, id: Ref, page: &SourcePage, gray: &GrayImage) {
    let (w, h) = (gray.width() as i32, gray.height() as i32);
    let embed = page.embed.as_ref().unwrap_or(&Embed::Gray);
    match embed {
        Embed::Jpeg {
            data,
            components,
            inverted_cmyk,
        } => {
            let mut x = pdf.image_xobject(id, data);
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
            // JPXDecode: width, height and colour come from the codestream (§7.4.9); keep them anyway.
            let mut x = pdf.image_xobject(id, data);
            x.width(w).height(h);
            x.filter(Filter::JpxDecode);
        }
        Embed::Bilevel => {
            let data = ccitt_g4(gray);
            let mut x = pdf.image_xobject(id, &data);
            x.width(w).height(h).bits_per_component(1);
            x.filter(Filter::CcittFaxDecode);
            x.color_space().device_gray();
            // K < 0: pure two-dimensional G4 (§7.4.6, Table 11); 0 bits are black unless BlackIs1.
            x.decode_parms().k(-1).columns(w).rows(h);
        }
        Embed::Gray => {
            let data = deflate(gray.as_raw());
            let mut x = pdf.image_xobject(id, &data);
            x.width(w).height(h).bits_per_component(8);
            x.filter(Filter::FlateDecode);
            x.color_space().device_gray();
        }
        Embed::Rgb(rgb) => {
            let data = deflate(rgb.as_raw());
            let mut x = pdf.image_xobject(id, &data);
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
