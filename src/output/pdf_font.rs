//! The text-layer font: a composite font (ISO 32000-1 §9.7) whose 2-byte codes are Unicode code
//! points, every code drawn with one invisible glyph 0.5 em wide, and a ToUnicode CMap (§9.10.3)
//! that maps each code to itself, so readers extract logical base-letter Unicode.

use std::io::Write;

use flate2::write::ZlibEncoder;
use flate2::Compression;
use pdf_writer::{Chunk, Filter, Finish, Name, Ref, Str};

/// The embedded TrueType program, made by `make_layer_font.py` (fontTools).
pub const LAYER_FONT_TTF: &[u8] = include_bytes!("layer_font.ttf");
/// PostScript-style name of the font in the PDF.
pub const BASE_FONT: &str = "MistaraTextLayer";

/// The byte contents of the font's streams, shared by both PDF writers.
pub struct FontStreams {
    /// CIDToGIDMap: every CID 0–65535 → GID 1, zlib-compressed (§9.7.4.2).
    pub cid_to_gid: Vec<u8>,
    /// The ToUnicode CMap, zlib-compressed.
    pub to_unicode: Vec<u8>,
    /// The TrueType program, zlib-compressed.
    pub font_file: Vec<u8>,
}

impl FontStreams {
    /// Build the three compressed streams.
    pub fn new() -> FontStreams {
        let map: Vec<u8> = std::iter::repeat_n([0u8, 1u8], 65536).flatten().collect();
        FontStreams {
            cid_to_gid: deflate(&map),
            to_unicode: deflate(to_unicode_cmap().as_bytes()),
            font_file: deflate(LAYER_FONT_TTF),
        }
    }
}

impl Default for FontStreams {
    fn default() -> Self {
        Self::new()
    }
}

/// Zlib-compress (FlateDecode, §7.4.4).
pub fn deflate(data: &[u8]) -> Vec<u8> {
    let mut enc = ZlibEncoder::new(Vec::new(), Compression::best());
    enc.write_all(data).expect("writing to a Vec cannot fail");
    enc.finish().expect("writing to a Vec cannot fail")
}

/// An identity ToUnicode CMap over the Basic Multilingual Plane, surrogates excluded: one
/// `bfrange` per 256-code block, since a range may vary only in its last byte (§9.10.3),
/// at most 100 ranges per `beginbfrange` section (Adobe Technical Note #5411).
pub fn to_unicode_cmap() -> String {
    let mut s = String::from(
        "/CIDInit /ProcSet findresource begin\n12 dict begin\nbegincmap\n\
         /CIDSystemInfo << /Registry (Adobe) /Ordering (UCS) /Supplement 0 >> def\n\
         /CMapName /Adobe-Identity-UCS def\n/CMapType 2 def\n\
         1 begincodespacerange\n<0000> <FFFF>\nendcodespacerange\n",
    );
    let blocks: Vec<u32> = (0u32..=0xFF)
        .filter(|b| !(0xD8..=0xDF).contains(b))
        .collect();
    for chunk in blocks.chunks(100) {
        s.push_str(&format!("{} beginbfrange\n", chunk.len()));
        for b in chunk {
            let lo = b << 8;
            s.push_str(&format!("<{lo:04X}> <{:04X}> <{lo:04X}>\n", lo | 0xFF));
        }
        s.push_str("endbfrange\n");
    }
    s.push_str("endcmap\nCMapName currentdict /CMap defineresource pop\nend\nend\n");
    s
}

/// Write the font objects with pdf-writer; returns nothing, the Type0 font is at `type0`.
///
/// Uses `type0` and the four refs after it (`type0 + 1` … `type0 + 5`).
pub fn write_font(chunk: &mut Chunk, type0: Ref, streams: &FontStreams) {
    let cid = Ref::new(type0.get() + 1);
    let descriptor = Ref::new(type0.get() + 2);
    let file = Ref::new(type0.get() + 3);
    let to_unicode = Ref::new(type0.get() + 4);
    let cid_to_gid = Ref::new(type0.get() + 5);

    chunk
        .type0_font(type0)
        .base_font(Name(BASE_FONT.as_bytes()))
        .encoding_predefined(Name(b"Identity-H"))
        .descendant_font(cid)
        .to_unicode(to_unicode);

    let mut cid_font = chunk.cid_font(cid);
    cid_font
        .subtype(pdf_writer::types::CidFontType::Type2)
        .base_font(Name(BASE_FONT.as_bytes()))
        .system_info(pdf_writer::types::SystemInfo {
            registry: Str(b"Adobe"),
            ordering: Str(b"Identity"),
            supplement: 0,
        })
        .font_descriptor(descriptor)
        .default_width(500.0)
        .cid_to_gid_map_stream(cid_to_gid);
    cid_font.finish();

    chunk
        .font_descriptor(descriptor)
        .name(Name(BASE_FONT.as_bytes()))
        .flags(pdf_writer::types::FontFlags::SYMBOLIC)
        .bbox(pdf_writer::Rect::new(0.0, -200.0, 500.0, 800.0))
        .italic_angle(0.0)
        .ascent(800.0)
        .descent(-200.0)
        .cap_height(800.0)
        .stem_v(80.0)
        .font_file2(file);

    let mut s = chunk.stream(file, &streams.font_file);
    s.filter(Filter::FlateDecode);
    s.pair(Name(b"Length1"), LAYER_FONT_TTF.len() as i32);
    s.finish();
    chunk
        .cmap(to_unicode, &streams.to_unicode)
        .filter(Filter::FlateDecode);
    chunk
        .stream(cid_to_gid, &streams.cid_to_gid)
        .filter(Filter::FlateDecode);
}

#[cfg(test)]
mod tests {
    use super::*;

    #[test]
    fn layer_font_parses_with_ttf_parser() {
        // ttf-parser (crates.io) is an independent TrueType reader.
        let face = ttf_parser::Face::parse(LAYER_FONT_TTF, 0).expect("valid TrueType");
        assert_eq!(face.units_per_em(), 1000);
        assert_eq!(face.number_of_glyphs(), 2);
        assert_eq!(face.ascender() - face.descender(), 1000);
        let g = ttf_parser::GlyphId(1);
        assert_eq!(face.glyph_hor_advance(g), Some(500));
        let bbox = face.glyph_bounding_box(g).expect("glyph 1 has a box");
        assert_eq!(
            (bbox.x_min, bbox.y_min, bbox.x_max, bbox.y_max),
            (0, -200, 500, 800)
        );
    }

    #[test]
    fn cmap_maps_arabic_block_to_itself() {
        let c = to_unicode_cmap();
        assert!(c.contains("<0600> <06FF> <0600>"));
        assert!(!c.contains("<D800>"));
        assert_eq!(c.matches("beginbfrange").count(), 3); // 248 blocks, ≤ 100 per section
    }
}
