"""Make the bad-input corpus: every file here must make `mistara ocr` fail cleanly.

Tools: Python 3 standard library only (struct, zlib) for the hand-built files, and the good
fixtures in ../images (made by make_images.py with Pillow 13.0.0 / ImageMagick 6.9.11) for the
truncated ones. Run from the repository root:  python3 tests/data/bad/make_bad.py

File layouts follow the PNG specification (ISO/IEC 15948, W3C PNG 2nd ed.: signature, IHDR, IDAT,
IEND, CRC-32 over type + data) and TIFF 6.0 (Adobe 1992: 8-byte header, IFD of 12-byte entries).
"""

import os
import struct
import zlib

HERE = os.path.dirname(os.path.abspath(__file__))
IMAGES = os.path.join(HERE, "..", "images")


def write(name, data):
    with open(os.path.join(HERE, name), "wb") as f:
        f.write(data)


def png_chunk(kind, data):
    return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data))


def huge_png():
    """IHDR declares 60000 x 60000 8-bit grey; the IDAT holds only a few rows."""
    ihdr = struct.pack(">IIBBBBB", 60000, 60000, 8, 0, 0, 0, 0)
    idat = zlib.compress(b"\0" + b"\xff" * 60000)
    return (b"\x89PNG\r\n\x1a\n" + png_chunk(b"IHDR", ihdr) + png_chunk(b"IDAT", idat)
            + png_chunk(b"IEND", b""))


def huge_jpeg():
    """SOI, a baseline frame header (T.81 §B.2.2) declaring 60000 x 60000 grey, EOI."""
    sof = struct.pack(">BHHB", 8, 60000, 60000, 1) + bytes([1, 0x11, 0])
    return b"\xff\xd8" + b"\xff\xc0" + struct.pack(">H", 2 + len(sof)) + sof + b"\xff\xd9"


def tiff(entries, next_ifd=0, ifd_at=8, tail=b""):
    """Little-endian TIFF with one IFD at `ifd_at`; entries are (tag, type, count, value)."""
    head = b"II*\0" + struct.pack("<I", ifd_at)
    ifd = struct.pack("<H", len(entries))
    for tag, typ, count, value in sorted(entries):
        ifd += struct.pack("<HHII", tag, typ, count, value)
    ifd += struct.pack("<I", next_ifd)
    return head + ifd + tail


SHORT, LONG = 3, 4


def grey_entries(width, height, data_at, data_len):
    return [
        (256, LONG, 1, width), (257, LONG, 1, height), (258, SHORT, 1, 8), (259, SHORT, 1, 1),
        (262, SHORT, 1, 1), (273, LONG, 1, data_at), (277, SHORT, 1, 1), (278, LONG, 1, height),
        (279, LONG, 1, data_len),
    ]


def huge_tiff():
    """One IFD declaring 60000 x 60000 8-bit grey in one strip of 3.6 GB; 16 bytes follow."""
    n = 9
    data_at = 8 + 2 + 12 * n + 4
    return tiff(grey_entries(60000, 60000, data_at, 60000 * 60000), tail=b"\xff" * 16)


def loop_tiff():
    """A valid 8 x 8 grey page whose IFD names itself as the next IFD: a reader must not loop."""
    n = 9
    data_at = 8 + 2 + 12 * n + 4
    return tiff(grey_entries(8, 8, data_at, 64), next_ifd=8, tail=b"\x80" * 64)


def palette_tiff():
    """A valid 8 x 8 palette-colour page (PhotometricInterpretation 3, TIFF 6.0 §5), which mistara
    does not read: it must say so, not guess."""
    n = 10
    data_at = 8 + 2 + 12 * n + 4
    cmap_at = data_at + 64
    entries = [e for e in grey_entries(8, 8, data_at, 64) if e[0] != 262]
    entries += [(262, SHORT, 1, 3), (320, SHORT, 3 * 256, cmap_at)]
    cmap = b"".join(struct.pack("<H", v * 257) for _ in range(3) for v in range(256))
    return tiff(entries, tail=bytes(range(64)) + cmap)


def broken_ifd_tiff():
    """The header points at an IFD past the end of the file."""
    return b"II*\0" + struct.pack("<I", 4000) + b"\0" * 32


def garbage_ifd_tiff():
    """The IFD claims 4000 entries but the file ends after two."""
    entries = grey_entries(8, 8, 0, 64)[:2]
    data = b"II*\0" + struct.pack("<IH", 8, 4000)
    for tag, typ, count, value in entries:
        data += struct.pack("<HHII", tag, typ, count, value)
    return data


def broken_second_ifd_tiff():
    """The 3-page fixture with its first IFD's next-IFD pointer aimed past the end of the file."""
    with open(os.path.join(IMAGES, "three_pages.tif"), "rb") as f:
        data = bytearray(f.read())
    order = "<" if data[:2] == b"II" else ">"
    ifd0 = struct.unpack_from(order + "I", data, 4)[0]
    n = struct.unpack_from(order + "H", data, ifd0)[0]
    struct.pack_into(order + "I", data, ifd0 + 2 + 12 * n, len(data) + 5000)
    return bytes(data)


def truncated(name, keep):
    with open(os.path.join(IMAGES, name), "rb") as f:
        data = f.read()
    return data[: int(len(data) * keep)]


def huge_unsupported_depth_pdf():
    """A fuzzer's find (tests/fuzz), rebuilt from ../pdf/huge_declared_image.pdf by its five
    byte edits: the 60000 x 60000 image at 6 bits per component (a depth mistara does not decode
    itself), a damaged /Count, and a damaged page-content `endstream`, so the page goes to the
    renderer, which then tried to decode the whole image (3.5 GB). Offsets are into the original."""
    with open(os.path.join(HERE, "..", "pdf", "huge_declared_image.pdf"), "rb") as f:
        data = f.read()
    assert len(data) == 714 and data[183:184] == b"8"
    edits = [(54, 54, b"4"), (183, 184, b"6"), (335, 335, b"st"), (339, 341, b""),
             (495, 495, b"endstream")]
    out, at = b"", 0
    for a, b, new in edits:
        out += data[at:a] + new
        at = b
    return out + data[at:]


# render_duplicate_object.pdf is not made here: it is a fuzzer's find (tests/fuzz), committed as
# found. It defines object 3 twice; lopdf reads a 96 x 64 image, the page renderer (hayro) a
# 60000 x 60000 one, so the size check before rendering must read the renderer's view.


if __name__ == "__main__":
    write("empty.tif", b"")
    write("note_named.pdf", "Desk note from the Wadi al-Rayhan town library: return the atlas "
          "by Thursday.\n".encode())
    write("truncated.png", truncated("rgb_phys.png", 0.6))
    write("truncated.jpg", truncated("rgb_jfif.jpg", 0.5))
    write("truncated.tif", truncated("rgb8_lzw.tif", 0.5))
    write("broken_ifd.tif", broken_ifd_tiff())
    write("garbage_ifd.tif", garbage_ifd_tiff())
    write("ifd_loop.tif", loop_tiff())
    write("palette.tif", palette_tiff())
    write("broken_second_ifd.tif", broken_second_ifd_tiff())
    write("huge_60000.png", huge_png())
    write("huge_60000.tif", huge_tiff())
    write("huge_60000.jpg", huge_jpeg())
    print("ok")
    write("huge_6bit_rendered.pdf", huge_unsupported_depth_pdf())
