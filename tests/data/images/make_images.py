"""Make the image-input fixtures in this folder.

Tools (outside references, so the Rust decoders are checked against encoders we did not write):
  - Pillow 13.0.0 (PyPI), built with libtiff, libjpeg and OpenJPEG: most files.
  - ImageMagick 6.9.11-60 Q16 (Debian package imagemagick, libtiff 4.5.0): the 1-bit TIFFs stored
    WhiteIsZero and the 16-bit RGB TIFF, which Pillow does not write.
Run from the repository root:  /tmp/rv/bin/python tests/data/images/make_images.py

The patterns are plain formulas; tests/integration/image_input.rs computes the same formulas and
compares every decoded pixel (exactly for lossless files, within a tolerance for JPEG).
Every file is checked at the end: its tags as Pillow reads them back, and its size (< 50 KB).
"""

import os
import subprocess

from PIL import Image, TiffImagePlugin

HERE = os.path.dirname(os.path.abspath(__file__))
W, H = 96, 64


def ink(x, y):
    """Bilevel pattern: a solid block at the top left (shows flips) and a diagonal check below."""
    return (x < 24 and y < 12) or (y >= 16 and (x // 8 + y // 8) % 3 == 0)


def grey(x, y):
    return (2 * x + 3 * y) % 256


def grey16(x, y):
    """High byte and low byte differ, so a byte-order mistake shows."""
    g = grey(x, y)
    return g * 256 + (255 - g)


def rgb(x, y):
    return (grey(x, y), (5 * x) % 256, (7 * y) % 256)


def alpha(x, y):
    return (4 * x + y) % 256


def smooth(x, y):
    """Smooth gradients for lossy files, with a dark block at the top left."""
    if x < 24 and y < 12:
        return (0, 0, 0)
    return (round(x * 255 / (W - 1)), round(y * 255 / (H - 1)), 128)


def cmyk(x, y):
    if x < 24 and y < 12:
        return (0, 0, 0, 255)
    return (round(x * 255 / (W - 1)), round(y * 255 / (H - 1)), 0, 0)


def image(mode, f, size=(W, H)):
    im = Image.new(mode, size)
    im.putdata([f(x, y) for y in range(size[1]) for x in range(size[0])])
    return im


def out(name):
    return os.path.join(HERE, name)


def bilevel():
    return image("1", lambda x, y: 0 if ink(x, y) else 255)


def make_tiffs():
    bw = bilevel()
    # Pillow writes mode "1" as BlackIsZero (PhotometricInterpretation 1).
    bw.save(out("bw_none_minisblack.tif"), compression="raw", dpi=(200, 200))
    bw.save(out("bw_packbits.tif"), compression="packbits", dpi=(200, 200))
    bw.save(out("bw_g4.tif"), compression="group4", dpi=(300, 300))
    # ImageMagick: WhiteIsZero (PhotometricInterpretation 0), uncompressed and G4.
    bw.save(out("_bw.png"))
    for name, comp, extra in (
        ("bw_none_miniswhite.tif", "None", []),
        ("bw_g4_miniswhite.tif", "Group4", []),
        # FillOrder 2: bits of each byte stored least significant first (TIFF 6.0 §8)
        ("bw_g4_fillorder2.tif", "Group4", ["-define", "tiff:fill-order=lsb"]),
    ):
        subprocess.run(["convert", out("_bw.png"), "-type", "bilevel", "-depth", "1", "-compress", comp,
                        "-define", "quantum:polarity=min-is-white", "-units", "PixelsPerInch",
                        "-density", "240"] + extra + [out(name)], check=True)
    os.remove(out("_bw.png"))
    g = image("L", grey)
    g.save(out("grey8_lzw.tif"), compression="tiff_lzw", dpi=(300, 300))
    g.save(out("grey8_deflate_cm.tif"), compression="tiff_adobe_deflate",
           resolution=118.11, resolution_unit=3)  # 118.11 px/cm = 300 dpi
    g.save(out("grey8_none_nores.tif"), compression="raw")
    image("I;16", grey16).save(out("grey16_none.tif"), compression="raw", dpi=(150, 150))
    image("CMYK", cmyk).save(out("cmyk8_lzw.tif"), compression="tiff_lzw", dpi=(300, 300))
    image("RGB", rgb).save(out("rgb8_lzw.tif"), compression="tiff_lzw", dpi=(72, 144))
    rgba = image("RGBA", lambda x, y: rgb(x, y) + (alpha(x, y),))
    rgba.save(out("rgba8_deflate.tif"), compression="tiff_adobe_deflate", dpi=(100, 100))
    # 16-bit RGB from ImageMagick (input: the 8-bit RGB file, scaled by 257 on the way).
    subprocess.run(["convert", out("rgb8_lzw.tif"), "-depth", "16", "-compress", "None",
                    out("rgb16_none.tif")], check=True)


def make_multipage():
    """Three pages, each with its own size, compression and resolution."""
    pages = [
        (bilevel(), "group4", 200),
        (image("L", grey, (80, 40)), "tiff_lzw", 300),
        (image("RGB", rgb, (48, 96)), "tiff_adobe_deflate", 150),
    ]
    for i, (im, comp, dpi) in enumerate(pages):
        im.save(out(f"_p{i}.tif"), compression=comp, dpi=(dpi, dpi))
    # ImageMagick keeps each frame's compression and resolution when it joins them.
    subprocess.run(["convert"] + [out(f"_p{i}.tif") for i in range(3)] + [out("three_pages.tif")],
                   check=True)
    for i in range(3):
        os.remove(out(f"_p{i}.tif"))


def make_others():
    image("RGB", rgb).save(out("rgb_phys.png"), dpi=(200, 200))  # pHYs in pixels per metre
    bilevel().save(out("bw_1bit.png"))  # no pHYs: fallback resolution
    # A two-colour palette PNG (black, white) and a grey pattern stored as RGB: grey in truth.
    bilevel().convert("P").save(out("bw_palette.png"))
    image("RGB", lambda x, y: (grey(x, y),) * 3).save(out("grey_as_rgb.png"))
    image("RGB", smooth).save(out("rgb_jfif.jpg"), quality=95, dpi=(150, 150))
    image("L", lambda x, y: smooth(x, y)[0]).save(out("grey_jfif.jpg"), quality=95, dpi=(96, 96))
    # Pillow writes CMYK JPEGs with an Adobe APP14 marker and inverted samples.
    image("CMYK", cmyk).save(out("cmyk_adobe.jpg"), quality=95, dpi=(300, 300))
    image("RGB", rgb).save(out("rgb_lossless.jp2"), irreversible=False)
    image("L", grey).save(out("grey_lossless.j2k"), irreversible=False)


def check():
    expect = {
        "bw_none_minisblack.tif": (1, 1, 200), "bw_packbits.tif": (1, 32773, 200),
        "bw_g4.tif": (None, 4, 300), "bw_none_miniswhite.tif": (0, 1, 240),
        "bw_g4_miniswhite.tif": (0, 4, 240), "grey8_lzw.tif": (1, 5, 300),
        "bw_g4_fillorder2.tif": (0, 4, 240), "cmyk8_lzw.tif": (5, 5, 300),
        "grey8_deflate_cm.tif": (1, 8, None), "grey16_none.tif": (1, 1, 150),
        "rgb8_lzw.tif": (2, 5, None), "rgba8_deflate.tif": (2, 8, 100), "rgb16_none.tif": (2, 1, None),
    }
    for name, (photometric, compression, dpi) in expect.items():
        with Image.open(out(name)) as im:
            tags = im.tag_v2
            got = (tags.get(262), tags.get(259))
            assert photometric is None or got[0] == photometric, (name, got)
            assert got[1] == compression, (name, got)
            if dpi is not None:
                assert round(float(tags.get(282))) == dpi, (name, tags.get(282))
    with Image.open(out("three_pages.tif")) as im:
        seen = []
        for i in range(3):
            im.seek(i)
            seen.append((im.size, im.tag_v2.get(259), round(float(im.tag_v2.get(282)))))
        assert seen == [((96, 64), 4, 200), ((80, 40), 5, 300), ((48, 96), 8, 150)], seen
    with Image.open(out("rgb16_none.tif")) as im:
        assert im.tag_v2.get(258) == (16, 16, 16), im.tag_v2.get(258)
    with Image.open(out("bw_g4_fillorder2.tif")) as im:
        assert im.tag_v2.get(266) == 2, im.tag_v2.get(266)
    for name in ("bw_none_miniswhite.tif", "bw_g4_miniswhite.tif", "bw_packbits.tif", "bw_g4.tif"):
        with Image.open(out(name)) as im:
            assert im.tag_v2.get(258) == (1,), (name, im.tag_v2.get(258))
    for name in os.listdir(HERE):
        size = os.path.getsize(out(name))
        assert size < 50_000, (name, size)


if __name__ == "__main__":
    make_tiffs()
    make_multipage()
    make_others()
    check()
    print("ok")
