"""Prints the text an outside reader extracts from a PDF, pages separated by form feed.

Usage: python py_text.py pdfium|mupdf FILE.pdf
pdfium: PDFium (the engine of Chromium) through pypdfium2 (PyPI), get_text_range per page.
mupdf:  MuPDF through PyMuPDF (PyPI), page.get_text() per page.
"""
import sys

def main(reader, path):
    pages = []
    if reader == "pdfium":
        import pypdfium2
        doc = pypdfium2.PdfDocument(path)
        for i in range(len(doc)):
            pages.append(doc[i].get_textpage().get_text_range().replace("\r", ""))
    elif reader == "mupdf":
        import pymupdf
        for page in pymupdf.open(path):
            pages.append(page.get_text())
    else:
        raise SystemExit(f"unknown reader {reader}")
    sys.stdout.write("\f".join(pages))

if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
