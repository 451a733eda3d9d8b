//! A PDF file written object by object to any `Write`, so a long book never sits in memory:
//! each indirect object is built with pdf-writer in its own [`Chunk`], appended to the output,
//! and its byte offset recorded for the cross-reference table (ISO 32000-1 §7.5.4) written at the end.

use std::io::{self, Write};

use pdf_writer::{Chunk, Ref};

/// Streams indirect objects to `W` and finishes with xref table and trailer.
pub struct PdfStream<W: Write> {
    out: W,
    pos: u64,
    /// Byte offset of object `i + 1`, once written.
    offsets: Vec<Option<u64>>,
    next_id: i32,
}

impl<W: Write> PdfStream<W> {
    /// Start a file: header with a binary comment line (§7.5.2).
    pub fn new(out: W) -> io::Result<PdfStream<W>> {
        let mut s = PdfStream {
            out,
            pos: 0,
            offsets: Vec::new(),
            next_id: 1,
        };
        s.raw(b"%PDF-1.7\n%\x80\x80\x80\x80\n")?;
        Ok(s)
    }

    /// A fresh object number.
    pub fn alloc(&mut self) -> Ref {
        let r = Ref::new(self.next_id);
        self.next_id += 1;
        r
    }

    /// `n` consecutive fresh object numbers; returns the first.
    pub fn alloc_many(&mut self, n: i32) -> Ref {
        let r = Ref::new(self.next_id);
        self.next_id += n;
        r
    }

    fn raw(&mut self, bytes: &[u8]) -> io::Result<()> {
        self.out.write_all(bytes)?;
        self.pos += bytes.len() as u64;
        Ok(())
    }

    /// Append a chunk that holds exactly one indirect object, `id`.
    pub fn object(&mut self, id: Ref, chunk: &Chunk) -> io::Result<()> {
        debug_assert_eq!(
            chunk.refs().collect::<Vec<_>>(),
            vec![id],
            "one object per chunk"
        );
        let idx = (id.get() - 1) as usize;
        if self.offsets.len() <= idx {
            self.offsets.resize(idx + 1, None);
        }
        assert!(
            self.offsets[idx].is_none(),
            "object {} written twice",
            id.get()
        );
        self.offsets[idx] = Some(self.pos);
        self.raw(chunk.as_bytes())
    }

    /// Write the cross-reference table and trailer; returns the writer.
    ///
    /// Every allocated number must have been written. `id` is the file identifier (§14.4).
    pub fn finish(mut self, catalog: Ref, info: Ref, id: [u8; 16]) -> io::Result<W> {
        let size = self.next_id as usize;
        self.offsets.resize(size - 1, None);
        let xref_at = self.pos;
        let mut table = format!("xref\n0 {size}\n0000000000 65535 f\r\n");
        for (i, off) in self.offsets.iter().enumerate() {
            let off =
                off.unwrap_or_else(|| panic!("object {} was allocated but never written", i + 1));
            table.push_str(&format!("{off:010} 00000 n\r\n"));
        }
        let hex: String = id.iter().map(|b| format!("{b:02X}")).collect();
        table.push_str(&format!(
            "trailer\n<< /Size {size} /Root {} 0 R /Info {} 0 R /ID [<{hex}> <{hex}>] >>\nstartxref\n{xref_at}\n%%EOF\n",
            catalog.get(),
            info.get()
        ));
        self.raw(table.as_bytes())?;
        self.out.flush()?;
        Ok(self.out)
    }
}

#[cfg(test)]
mod tests {
    use super::*;
    use pdf_writer::Finish;

    #[test]
    fn lopdf_reads_a_streamed_file() {
        // lopdf (crates.io) is an independent parser: it must find every object through our xref.
        let mut s = PdfStream::new(Vec::new()).unwrap();
        let (catalog, pages, info) = (s.alloc(), s.alloc(), s.alloc());
        let mut c = Chunk::new();
        c.indirect(catalog)
            .start::<pdf_writer::writers::Catalog>()
            .pages(pages);
        s.object(catalog, &c).unwrap();
        let mut c = Chunk::new();
        c.pages(pages).count(0).kids([]);
        s.object(pages, &c).unwrap();
        let mut c = Chunk::new();
        c.indirect(info)
            .start::<pdf_writer::writers::DocumentInfo>()
            .producer(pdf_writer::TextStr("test"))
            .finish();
        s.object(info, &c).unwrap();
        let bytes = s.finish(catalog, info, [7; 16]).unwrap();
        let doc = lopdf::Document::load_mem(&bytes).expect("lopdf parses it");
        assert_eq!(doc.objects.len(), 3);
        assert_eq!(
            doc.trailer.get(b"Root").unwrap().as_reference().unwrap(),
            (1, 0)
        );
    }
}
