"""Makes one shelf font file from the web subsets (WOFF) of an @fontsource npm package.

These packages ship a font only as subsets split by Unicode range, and the Arabic subset has no
ASCII digits or Latin letters. This script unpacks the Arabic and Latin WOFF subsets of one
weight to TrueType and merges them into one file with fontTools (4.68), which keeps the layout
tables (GSUB, GPOS) of both. Every family made this way is under the SIL Open Font License 1.1
with no reserved font name (OFL.txt beside each file), which allows the conversion.

    npm pack @fontsource/gulzar@5.3.0 && tar xzf fontsource-gulzar-5.3.0.tgz
    python3 merge_subsets.py package/files gulzar 400 gulzar/Gulzar-Regular.ttf

The shelf's files made so (FONTS.md names the package versions):

    ruwudu 400 ruwudu/Ruwudu_400Regular.ttf     ruwudu 700 ruwudu/Ruwudu_700Bold.ttf
    katibeh 400 katibeh/Katibeh-Regular.ttf     gulzar 400 gulzar/Gulzar-Regular.ttf
    vibes 400 vibes/Vibes-Regular.ttf
    playpen-sans-arabic 400 playpen-sans-arabic/PlaypenSansArabic-Regular.ttf
    playpen-sans-arabic 700 playpen-sans-arabic/PlaypenSansArabic-Bold.ttf
"""

import os
import sys
import tempfile

from fontTools.merge import Merger, Options
from fontTools.ttLib import TTFont


def main(src, family, weight, out):
    with tempfile.TemporaryDirectory() as tmp:
        parts = []
        for subset in ("arabic", "latin"):
            font = TTFont(f"{src}/{family}-{subset}-{weight}-normal.woff")
            font.flavor = None
            path = os.path.join(tmp, f"{subset}.ttf")
            font.save(path)
            parts.append(path)
        Merger(options=Options(drop_tables=[])).merge(parts).save(out)


if __name__ == "__main__":
    if len(sys.argv) != 5:
        sys.exit("usage: merge_subsets.py PACKAGE_FILES FAMILY WEIGHT OUT.ttf")
    main(*sys.argv[1:])
