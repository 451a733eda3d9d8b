"""Subset DejaVu Sans (Debian package fonts-dejavu-core 2.37, free licence, see DejaVu-LICENSE.txt)
to the Arabic block, Arabic presentation forms, digits and a little punctuation, so the drawn test
pages of the layout tests can shape Arabic without a system font. fontTools (PyPI) does the subset.
Run with /tmp/rv/bin/python from this folder.
"""
from fontTools import subset

SRC = "/usr/share/fonts/truetype/dejavu/DejaVuSans.ttf"
unicodes = (
    list(range(0x20, 0x7F))
    + list(range(0x0600, 0x0700))
    + list(range(0xFB50, 0xFE00))
    + list(range(0xFE70, 0xFF00))
    + [0x200C, 0x200D, 0x2014]
)
opts = subset.Options()
opts.layout_features = ["*"]
opts.name_IDs = ["*"]
opts.notdef_outline = True
font = subset.load_font(SRC, opts)
sub = subset.Subsetter(opts)
sub.populate(unicodes=unicodes)
sub.subset(font)
subset.save_font(font, "DejaVuSans-Arabic-subset.ttf", opts)
