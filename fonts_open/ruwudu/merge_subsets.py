"""Makes the two Ruwudu files of the shelf from the npm package @fontsource/ruwudu 5.0.3.

The package ships the font only as web subsets (WOFF), split by Unicode range; the Arabic
subset has no ASCII digits or punctuation. This script unpacks the Arabic and Latin WOFF
subsets of one weight to TrueType and merges them into one file with fontTools (4.68), which
keeps the layout tables (GSUB, GPOS) of both. The font is under the SIL Open Font License 1.1
with no reserved font name (OFL.txt beside this script), which allows this conversion.

    npm pack @fontsource/ruwudu@5.0.3 && tar xzf fontsource-ruwudu-5.0.3.tgz
    python3 merge_subsets.py package/files .
"""

import os
import sys

from fontTools.merge import Merger, Options
from fontTools.ttLib import TTFont


def main(src, dst):
    for weight, name in (("400", "Ruwudu_400Regular.ttf"), ("700", "Ruwudu_700Bold.ttf")):
        parts = []
        for subset in ("arabic", "latin"):
            font = TTFont(f"{src}/ruwudu-{subset}-{weight}-normal.woff")
            font.flavor = None
            path = f"{dst}/{subset}-{weight}.tmp.ttf"
            font.save(path)
            parts.append(path)
        Merger(options=Options(drop_tables=[])).merge(parts).save(f"{dst}/{name}")
        for path in parts:
            os.remove(path)


if __name__ == "__main__":
    main(sys.argv[1], sys.argv[2])
