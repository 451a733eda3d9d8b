#!/usr/bin/env python3
"""Make the PDF-input fixtures of mistara (tests/data/pdf/).

Run with the fixture venv:  /tmp/rv/bin/python tests/data/pdf/make_fixtures.py
Made with Pillow 13.0.0 (PyPI; its JPEG, JPEG 2000 (OpenJPEG) and libtiff CCITT encoders) and
qpdf 11.3.0 (Debian; encryption), PyMuPDF 2.0 (PyPI; as an outside decoder that checks every fixture image).
The PDF files themselves are written by hand below (objects, xref, trailer; ISO 32000-1 §7.5).

Every image shows the same known pattern (pattern.png, grey; pattern_bw.png, black and white):
dark bars on white paper above a left-to-right grey ramp. Neutral colours are used for RGB and
CMYK images so that their grey is the pattern itself.
"""
import io
import struct
import subprocess
import sys
import zlib
from pathlib import Path

import numpy as np
import pymupdf
from PIL import Image

OUT = Path(__file__).resolve().parent
W, H = 96, 64
DPI = 150.0


def pattern():
    a = np.full((H, W), 255, np.uint8)
    for x in range(8, 88):
        if (x // 6) % 2 == 0:
            a[8:24, x] = 0
    a[32:56, :] = (np.arange(W) * 255 // (W - 1)).astype(np.uint8)
    a[32:56, 40:44] = 0
    return a


GRAY = pattern()
BW = np.where(GRAY < 128, 0, 255).astype(np.uint8)


# ---------------------------------------------------------------- a tiny PDF writer
class Pdf:
    def __init__(self):
        self.objs = []  # bytes per object, 1-based ids

    def add(self, body: bytes) -> int:
        self.objs.append(body)
        return len(self.objs)

    def reserve(self) -> int:
        return self.add(b"null")

    def set(self, oid: int, body: bytes):
        self.objs[oid - 1] = body

    def stream(self, d: str, data: bytes) -> int:
        return self.add(f"<< {d} /Length {len(data)} >>\nstream\n".encode() + data + b"\nendstream")

    def bytes(self, root: int, info: int | None = None) -> bytes:
        out = bytearray(b"%PDF-1.7\n%\xe2\xe3\xcf\xd3\n")
        offs = []
        for i, body in enumerate(self.objs, 1):
            offs.append(len(out))
            out += f"{i} 0 obj\n".encode() + body + b"\nendobj\n"
        xref = len(out)
        out += f"xref\n0 {len(self.objs) + 1}\n0000000000 65535 f \n".encode()
        for o in offs:
            out += f"{o:010d} 00000 n \n".encode()
        extra = f" /Info {info} 0 R" if info else ""
        out += f"trailer\n<< /Size {len(self.objs) + 1} /Root {root} 0 R{extra} >>\nstartxref\n{xref}\n%%EOF\n".encode()
        return bytes(out)


def scan_pdf(pages, info=None, catalog_extra=""):
    """pages: list of dicts with image (dict text, data), optional rotate, cm, media, form, annots, content."""
    pdf = Pdf()
    tree = pdf.reserve()
    kids = []
    for p in pages:
        wpt, hpt = p.get("size_pt", (W * 72 / DPI, H * 72 / DPI))
        media = p.get("media", (0, 0, wpt, hpt))
        res = ""
        content = p.get("content")
        if "image" in p:
            d, data = p["image"]
            if "globals" in p:
                d = d.replace("GLOBALS", f"{pdf.stream('', p['globals'])} 0 R")
            im = pdf.stream(f"/Type /XObject /Subtype /Image {d}", data)
            if p.get("form"):
                fm = pdf.stream(f"/Type /XObject /Subtype /Form /BBox [0 0 1 1] /Matrix [{wpt} 0 0 {hpt} 0 0] "
                                f"/Resources << /XObject << /Im0 {im} 0 R >> >>", b"/Im0 Do")
                res = f"/XObject << /Fm0 {fm} 0 R >>"
                content = content or b"q /Fm0 Do Q"
            else:
                res = f"/XObject << /Im0 {im} 0 R >>"
                cm = p.get("cm", f"{wpt} 0 0 {hpt} 0 0")
                content = content or f"q {cm} cm /Im0 Do Q".encode()
        if p.get("font"):
            f = pdf.add(b"<< /Type /Font /Subtype /Type1 /BaseFont /Helvetica >>")
            res += f" /Font << /F1 {f} 0 R >>"
        c = pdf.stream("", content)
        extra = f" /Rotate {p['rotate']}" if "rotate" in p else ""
        if p.get("annots"):
            a = pdf.add(f"<< /Type /Annot /Subtype /Text /Rect [2 2 12 12] /Contents ({p['annots']}) >>".encode())
            extra += f" /Annots [{a} 0 R]"
        m = " ".join(f"{v:g}" for v in media)
        kids.append(pdf.add(f"<< /Type /Page /Parent {tree} 0 R /MediaBox [{m}] /Resources << {res} >> "
                            f"/Contents {c} 0 R{extra} >>".encode()))
    pdf.set(tree, f"<< /Type /Pages /Kids [{' '.join(f'{k} 0 R' for k in kids)}] /Count {len(kids)} >>".encode())
    root = pdf.reserve()
    cat = f"<< /Type /Catalog /Pages {tree} 0 R {catalog_extra} >>"
    if "{first_page}" in cat:
        cat = cat.replace("{first_page}", str(kids[0]))
    if "OUTLINE" in cat:
        outl = pdf.reserve()
        item = pdf.add(f"<< /Title (Register of acquisitions) /Parent {outl} 0 R /Dest [{kids[0]} 0 R /Fit] >>".encode())
        pdf.set(outl, f"<< /Type /Outlines /First {item} 0 R /Last {item} 0 R /Count 1 >>".encode())
        cat = cat.replace("OUTLINE", f"/Outlines {outl} 0 R")
    pdf.set(root, cat.encode())
    info_id = pdf.add(info.encode()) if info else None
    return pdf.bytes(root, info_id)


# ---------------------------------------------------------------- encoders
def png_predicted(a: np.ndarray, colors: int) -> bytes:
    """PNG 'Up' filter (type 2) on every row, then zlib (PNG spec §9.2; PDF Predictor 12)."""
    rows = a.reshape(a.shape[0], -1).astype(np.int16)
    out = bytearray()
    prev = np.zeros(rows.shape[1], np.int16)
    for r in rows:
        out += b"\x02" + ((r - prev) % 256).astype(np.uint8).tobytes()
        prev = r
    return zlib.compress(bytes(out))


def tiff_predicted(a: np.ndarray) -> bytes:
    """TIFF Predictor 2: horizontal differences per colour component (TIFF 6.0 §14)."""
    d = a.astype(np.int16).copy()
    d[:, 1:, :] = (a[:, 1:, :].astype(np.int16) - a[:, :-1, :].astype(np.int16)) % 256
    return zlib.compress(d.astype(np.uint8).tobytes())


def tiff_strip(img: Image.Image, **kw) -> tuple[bytes, dict]:
    """Save as a one-strip TIFF with libtiff and return the strip's bytes and the tags."""
    buf = io.BytesIO()
    img.save(buf, "TIFF", strip_size=1 << 20, **kw)
    t = Image.open(io.BytesIO(buf.getvalue()))
    tags = dict(t.tag_v2)
    offs, counts = tags[273], tags[279]
    assert len(offs) == 1, "fixture wants one strip"
    return buf.getvalue()[offs[0]:offs[0] + counts[0]], tags


def packbits_rows(bw: np.ndarray, ink_is_1: bool) -> bytes:
    bits = (bw == 0) if ink_is_1 else (bw != 0)
    return np.packbits(bits, axis=1).tobytes()


def jbig2_mmr(bw: np.ndarray) -> bytes:
    """A JBIG2 embedded stream (ITU-T T.88 Annex D.3): page information, one immediate lossless
    generic region coded with MMR (= T.6, here from libtiff's G4 encoder), end of page."""
    # T.6 data whose 'black' runs are the ink: libtiff codes 1 bits as black runs, and Pillow
    # writes mode "1" as min-is-black (1 = white), so the ink goes in as white (1) pixels.
    img = Image.fromarray(np.where(bw == 0, 255, 0).astype(np.uint8)).convert("1")
    g4, tags = tiff_strip(img, compression="group4")
    assert tags[262] == 1, "expected a min-is-black TIFF from Pillow"

    def seg(num, typ, data, page=1):
        return struct.pack(">IBBBI", num, typ, 0, page, len(data)) + data

    page_info = struct.pack(">IIIIBH", W, H, 0, 0, 0, 0)
    region = struct.pack(">IIIIB", W, H, 0, 0, 0) + bytes([0x01]) + g4  # MMR = 1
    return seg(0, 48, page_info) + seg(1, 38, region) + seg(2, 49, b"")


def jbig2_globals() -> bytes:
    """A globals stream holding one extension segment (T.88 §7.4.15) with a comment; page 0."""
    comment = struct.pack(">I", 0x20000000) + b"made for mistara tests\0value\0\0"
    return struct.pack(">IBBBI", 0, 62, 0, 0, len(comment)) + comment


def check_with_mupdf(name: str, want: np.ndarray, tol: float):
    """Decode the first image of the fixture with MuPDF (PyMuPDF) and compare with the pattern."""
    doc = pymupdf.open(OUT / name)
    xref = doc[0].get_images(full=True)[0][0]
    pix = pymupdf.Pixmap(doc, xref)
    if pix.n - pix.alpha == 4:  # CMYK: compare 1 − K (C, M, Y are 0), no colour management
        s = np.frombuffer(pix.samples, np.uint8).reshape(pix.h, pix.w, pix.n)
        assert s[:, :, :3].max() < 8, "CMYK fixture should carry only K"
        got = 255 - s[:, :, 3]
    else:
        if pix.n - pix.alpha != 1:
            pix = pymupdf.Pixmap(pymupdf.csGRAY, pix)
        got = np.frombuffer(pix.samples, np.uint8).reshape(pix.h, pix.w, pix.n)[:, :, 0]
    if got.shape != want.shape:
        got = np.rot90(got, 1) if got.shape[::-1] == want.shape else got
    diff = np.abs(got.astype(int) - want.astype(int)).mean()
    print(f"{name}: MuPDF mean |diff| = {diff:.2f}")
    assert diff <= tol, f"{name}: MuPDF decodes it {diff:.2f} away from the pattern"


def write(name, data):
    (OUT / name).write_bytes(data)
    assert len(data) < 60_000, name


def main():
    Image.fromarray(GRAY).save(OUT / "pattern.png")
    Image.fromarray(BW).save(OUT / "pattern_bw.png")
    g = f"/Width {W} /Height {H}"
    fl = "/Filter /FlateDecode"

    rgb = np.repeat(GRAY[:, :, None], 3, axis=2)
    write("flate_png_predictor.pdf", scan_pdf([{"image": (
        f"{g} /ColorSpace /DeviceGray /BitsPerComponent 8 {fl} /DecodeParms << /Predictor 12 /Colors 1 /Columns {W} >>",
        png_predicted(GRAY, 1))}]))
    write("flate_tiff_predictor_rgb.pdf", scan_pdf([{"image": (
        f"{g} /ColorSpace /DeviceRGB /BitsPerComponent 8 {fl} /DecodeParms << /Predictor 2 /Colors 3 /Columns {W} >>",
        tiff_predicted(rgb))}]))

    buf = io.BytesIO()
    Image.fromarray(GRAY).save(buf, "JPEG", quality=95)
    write("dct_gray.pdf", scan_pdf([{"image": (f"{g} /ColorSpace /DeviceGray /BitsPerComponent 8 /Filter /DCTDecode", buf.getvalue())}]))
    cmyk = np.zeros((H, W, 4), np.uint8)
    cmyk[:, :, 3] = 255 - GRAY
    buf = io.BytesIO()
    Image.fromarray(cmyk, "CMYK").save(buf, "JPEG", quality=95)  # Pillow writes Adobe-inverted CMYK
    write("dct_cmyk_adobe.pdf", scan_pdf([{"image": (
        f"{g} /ColorSpace /DeviceCMYK /BitsPerComponent 8 /Filter /DCTDecode /Decode [1 0 1 0 1 0 1 0]", buf.getvalue())}]))

    ink = Image.fromarray(BW).convert("1")
    g4, tags = tiff_strip(ink, compression="group4")
    black_is_1 = "true" if tags[262] == 1 else "false"  # min-is-black TIFF: fax 'black' runs are paper
    ccitt = f"{g} /ColorSpace /DeviceGray /BitsPerComponent 1 /Filter /CCITTFaxDecode"
    write("ccitt_g4.pdf", scan_pdf([{"image": (f"{ccitt} /DecodeParms << /K -1 /Columns {W} /Rows {H} /BlackIs1 {black_is_1} >>", g4)}]))
    g3, tags = tiff_strip(ink, compression="group3")
    opts = tags.get(292, 0)
    align = "true" if opts & 4 else "false"
    write("ccitt_g3_1d.pdf", scan_pdf([{"image": (
        f"{ccitt} /DecodeParms << /K 0 /Columns {W} /Rows {H} /EndOfLine true /EncodedByteAlign {align} /BlackIs1 {black_is_1} >>", g3)}]))
    g3, tags = tiff_strip(ink, compression="group3", tiffinfo={292: 1})
    assert tags.get(292, 0) & 1, "libtiff did not write 2-D G3"
    write("ccitt_g3_2d.pdf", scan_pdf([{"image": (
        f"{ccitt} /DecodeParms << /K 4 /Columns {W} /Rows {H} /EndOfLine true /BlackIs1 {black_is_1} >>", g3)}]))

    write("jbig2_generic_mmr.pdf", scan_pdf([{"globals": jbig2_globals(), "image": (
        f"{g} /ColorSpace /DeviceGray /BitsPerComponent 1 /Filter /JBIG2Decode /DecodeParms << /JBIG2Globals GLOBALS >>",
        jbig2_mmr(BW))}]))

    buf = io.BytesIO()
    Image.fromarray(GRAY).save(buf, "JPEG2000", irreversible=False, no_jp2=False)
    write("jpx_gray_lossless.pdf", scan_pdf([{"image": (f"{g} /Filter /JPXDecode", buf.getvalue())}]))

    # 4-bit Indexed and ImageMask paths (Flate, no predictor).
    pal = bytes(v for i in range(16) for v in (i * 17,) * 3)
    idx = (GRAY // 17).astype(np.uint8)
    packed = np.packbits(np.unpackbits(idx[:, :, None], axis=2)[:, :, 4:].reshape(H, -1), axis=1).tobytes()
    write("flate_indexed_4bit.pdf", scan_pdf([{"image": (
        f"{g} /ColorSpace [/Indexed /DeviceRGB 15 <{pal.hex()}>] /BitsPerComponent 4 {fl}", zlib.compress(packed))}]))
    write("flate_imagemask.pdf", scan_pdf([{"image": (
        f"{g} /ImageMask true /Decode [1 0] {fl}", zlib.compress(packbits_rows(BW, ink_is_1=True)))}]))

    for name in ["flate_png_predictor.pdf", "flate_tiff_predictor_rgb.pdf"]:
        check_with_mupdf(name, GRAY, 0.0)
    check_with_mupdf("flate_indexed_4bit.pdf", GRAY // 17 * 17, 0.0)  # 16 grey levels
    for name in ["dct_gray.pdf", "dct_cmyk_adobe.pdf", "jpx_gray_lossless.pdf"]:
        check_with_mupdf(name, GRAY, 3.0)
    for name in ["ccitt_g4.pdf", "ccitt_g3_1d.pdf", "ccitt_g3_2d.pdf", "jbig2_generic_mmr.pdf"]:
        check_with_mupdf(name, BW, 0.0)
    make_layout_fixtures(rgb)
    make_bad_fixtures()


def make_layout_fixtures(rgb):
    g, fl = f"/Width {W} /Height {H}", "/Filter /FlateDecode"
    gray_img = (f"{g} /ColorSpace /DeviceGray /BitsPerComponent 8 {fl}", zlib.compress(GRAY.tobytes()))
    # The image stored turned a quarter anticlockwise (Pillow rotate 90), shown upright by /Rotate 90.
    side = np.ascontiguousarray(np.rot90(GRAY, 1))
    side_img = (f"/Width {H} /Height {W} /ColorSpace /DeviceGray /BitsPerComponent 8 {fl}", zlib.compress(side.tobytes()))
    wpt, hpt = W * 72 / DPI, H * 72 / DPI
    write("rotate_90.pdf", scan_pdf([{"image": side_img, "rotate": 90, "size_pt": (hpt, wpt)}]))
    # The same sideways image turned upright by its own matrix: x axis → page x, y axis → page −y.
    write("cm_rotated.pdf", scan_pdf([{"image": side_img, "size_pt": (wpt, hpt), "cm": f"0 -{hpt} {wpt} 0 0 {hpt}"}]))
    write("form_wrapped.pdf", scan_pdf([{"image": gray_img, "form": True}]))
    # A vector page (no image): a black square 10–20 pt from the lower-left corner.
    write("vector_page.pdf", scan_pdf([{"content": b"0 g 10 10 10 10 re f", "size_pt": (72, 72)}]))
    # A small book: JPEG scan with a note annotation, a Flate scan on a larger page, a text page;
    # outline, page labels and Info entries that must survive.
    buf = io.BytesIO()
    Image.fromarray(GRAY).save(buf, "JPEG", quality=90)
    jpeg = (f"{g} /ColorSpace /DeviceGray /BitsPerComponent 8 /Filter /DCTDecode", buf.getvalue())
    info = "<< /Title (Wadi al-Rayhan library register) /Author (Town library staff) /Keywords (register) >>"
    cat = "OUTLINE /PageLabels << /Nums [0 << /S /r >> 2 << /S /D /St 1 >>] >> /PageMode /UseOutlines"
    write("book.pdf", scan_pdf([
        {"image": jpeg, "annots": "checked"},
        {"image": gray_img, "size_pt": (wpt * 2, hpt * 2), "cm": f"{wpt * 2} 0 0 {hpt * 2} 0 0"},
        {"content": b"BT /F1 9 Tf 4 20 Td (Reading room hours) Tj ET", "font": True},
    ], info=info, catalog_extra=cat))


def make_bad_fixtures():
    base = scan_pdf([{"image": (f"/Width {W} /Height {H} /ColorSpace /DeviceGray /BitsPerComponent 8 /Filter /FlateDecode",
                                zlib.compress(GRAY.tobytes()))}])
    # qpdf writes the /Encrypt dictionary as an indirect object, as most producers do.
    (OUT / "plain.tmp.pdf").write_bytes(base)
    for name, user in [("encrypted_user_password.pdf", "reading-room"), ("encrypted_empty_user_password.pdf", "")]:
        subprocess.run(["qpdf", "--encrypt", user, "head-librarian", "128", "--use-aes=y", "--print=full",
                        "--modify=none", "--", str(OUT / "plain.tmp.pdf"), str(OUT / name)], check=True)
    (OUT / "plain.tmp.pdf").unlink()
    # PyMuPDF writes /Encrypt directly inside the trailer, which lopdf 0.47 cannot authenticate.
    doc = pymupdf.open(stream=base, filetype="pdf")
    enc = doc.tobytes(encryption=pymupdf.PDF_ENCRYPT_AES_128, user_pw="", owner_pw="head-librarian")
    write("encrypted_inline_dictionary.pdf", enc)
    pdf = Pdf()
    tree = pdf.add(b"<< /Type /Pages /Kids [] /Count 0 >>")
    root = pdf.add(f"<< /Type /Catalog /Pages {tree} 0 R >>".encode())
    write("no_pages.pdf", pdf.bytes(root))


if __name__ == "__main__":
    sys.exit(main())
