#!/usr/bin/env python3
"""Writes layer_font.ttf, the text-layer font, with fontTools (PyPI, fonttools 4.68.0).

Two glyphs, both 500/1000 em wide: .notdef (empty) and "layer" (GID 1), whose one contour runs
from (0,-200) to (500,800) and back: zero area, so it never paints, but its bounding box is the
whole em box, which readers use for word boxes. Ascent 800 + descent 200 = 1000 units, so a
word's box is exactly as high as the font size. Run: python3 make_layer_font.py
"""
import sys
from fontTools.fontBuilder import FontBuilder
from fontTools.pens.ttGlyphPen import TTGlyphPen

def build(path):
    fb = FontBuilder(1000, isTTF=True)
    fb.setupGlyphOrder([".notdef", "layer"])
    fb.setupCharacterMap({})
    empty = TTGlyphPen(None).glyph()
    pen = TTGlyphPen(None)
    pen.moveTo((0, -200))
    pen.lineTo((500, 800))
    pen.closePath()
    fb.setupGlyf({".notdef": empty, "layer": pen.glyph()})
    fb.setupHorizontalMetrics({".notdef": (500, 0), "layer": (500, 0)})
    fb.setupHorizontalHeader(ascent=800, descent=-200)
    fb.setupNameTable({"familyName": "MistaraLayer", "styleName": "Regular"})
    fb.setupOS2(sTypoAscender=800, sTypoDescender=-200, sTypoLineGap=0,
                usWinAscent=800, usWinDescent=200, version=4)
    fb.setupPost()
    fb.font["head"].created = fb.font["head"].modified = 3_000_000_000  # fixed: reproducible bytes
    fb.save(path)

if __name__ == "__main__":
    build(sys.argv[1] if len(sys.argv) > 1 else "layer_font.ttf")
