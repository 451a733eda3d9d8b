"""Expected shaping results from HarfBuzz, for checking rustybuzz in src/synth/render.rs.

Outside reference: HarfBuzz through uharfbuzz 0.57.0 (PyPI, `pip install uharfbuzz==0.57.0`).
Each string is shaped as one right-to-left Arabic run (direction rtl, script Arab, no features
beyond the defaults), exactly as `render::shape_units` does. Output, one line per font × string:

    font<TAB>text<TAB>gid=cluster@x_offset,y_offset+x_advance|...

Run from the repository root: /tmp/rv/bin/python tests/data/synth/make_shaping_fixture.py
"""
import uharfbuzz as hb

FONTS = [
    "amiri/Amiri-Regular.ttf",
    "noto-naskh-arabic/NotoNaskhArabic-Regular.ttf",
    "noto-sans-arabic/NotoSansArabic-Regular.ttf",
    "scheherazade/Scheherazade-Regular.ttf",
]

# Our own sample strings: joining in all positions, lam-alef, hamza seats, ta marbuta, alef
# maqsura, harakat and shadda, tatweel, Arabic punctuation and digits.
STRINGS = [
    "ب", "بب", "ببب", "كتاب", "مكتبة", "سجل", "القضية", "المكتبة", "العامة", "دفتر",
    "لا", "لأن", "إلى", "الآن", "سلام", "سماء", "سأل", "مسؤول", "بئر", "هيئة",
    "قراءة", "إذن", "آخر", "شيء", "ضوء", "على", "مستشفى", "حتى", "مدرسة", "ورقة",
    "كِتَابٌ", "مُحَمَّدٌ", "الشَّمْسُ", "قُرْآنٌ", "سُؤَالٌ", "مَدْرَسَةً", "فِي", "عِلْمٍ",
    "كتـــاب", "مـكـتـبـة", "عين الزيتون", "في البلدة", "دار العدل", "زر", "وذر",
    "قال: نعم؟", "«سجل»", "نعم، لا؛", "٢٠٢٤", "١٢٣", "ظظظ", "غيث", "صفحة", "خط نسخ",
]


def serialize(buf):
    out = []
    for info, pos in zip(buf.glyph_infos, buf.glyph_positions):
        out.append(f"{info.codepoint}={info.cluster}@{pos.x_offset},{pos.y_offset}+{pos.x_advance}")
    return "|".join(out)


def main():
    lines = [f"# made by tests/data/synth/make_shaping_fixture.py with uharfbuzz {hb.__version__}"]
    for font_path in FONTS:
        blob = hb.Blob.from_file_path("fonts_open/" + font_path)
        font = hb.Font(hb.Face(blob))
        for text in STRINGS:
            buf = hb.Buffer()
            buf.add_str(text)
            buf.direction = "rtl"
            buf.script = "Arab"
            hb.shape(font, buf, {})
            lines.append(f"{font_path}\t{text}\t{serialize(buf)}")
    with open("tests/data/synth/shaping_harfbuzz.tsv", "w", encoding="utf-8") as f:
        f.write("\n".join(lines) + "\n")


if __name__ == "__main__":
    main()
