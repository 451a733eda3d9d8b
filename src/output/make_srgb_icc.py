"""Make src/output/srgb.icc: the sRGB ICC profile embedded as the output intent of archival PDFs.

Run with the project's Python environment (Pillow 13.0.0 with its bundled LittleCMS 2):
    python src/output/make_srgb_icc.py

Pillow's ImageCms.createProfile("sRGB") makes LittleCMS's built-in sRGB profile ("No copyright,
use freely"), written as ICC version 4.4. PDF/A-2 output intents are safest with an ICC version 2
profile (ICC.1:2001-04), which every reader supports, so this script writes the same profile
again in version 2 form: the white point and the three colorant XYZ tags are copied byte for
byte from the LittleCMS profile, and each parametric tone curve (v4 'para') is replaced by a
1024-entry 'curv' table computed from the sRGB transfer function (IEC 61966-2-1:1999, §5.2).
The result is then checked against LittleCMS itself: sRGB colours converted to Lab with our
profile and with the built-in one differ by less than 1 (CIE76 delta E on 8-bit Lab, whose
rounding alone is about that size).
"""

import io
import struct
import sys
from pathlib import Path

from PIL import Image, ImageCms

OUT = Path(__file__).with_name("srgb.icc")


def tags_of(icc: bytes) -> dict:
    n = struct.unpack(">I", icc[128:132])[0]
    tags = {}
    for i in range(n):
        sig, off, size = struct.unpack(">4sII", icc[132 + 12 * i : 144 + 12 * i])
        tags[sig] = icc[off : off + size]
    return tags


def srgb_to_linear(v: float) -> float:
    # IEC 61966-2-1:1999 §5.2, equation (4).
    return v / 12.92 if v <= 0.04045 else ((v + 0.055) / 1.055) ** 2.4


def curv_table(n: int = 1024) -> bytes:
    values = [round(srgb_to_linear(i / (n - 1)) * 65535) for i in range(n)]
    return b"curv" + b"\0" * 4 + struct.pack(">I", n) + struct.pack(f">{n}H", *values)


def text_description(s: str) -> bytes:
    # ICC.1:2001-04 §6.5.17 textDescriptionType: ASCII part, then empty Unicode and ScriptCode parts.
    a = s.encode("ascii") + b"\0"
    return (b"desc" + b"\0" * 4 + struct.pack(">I", len(a)) + a
            + struct.pack(">II", 0, 0) + struct.pack(">HB", 0, 0) + b"\0" * 67)


def text_type(s: str) -> bytes:
    return b"text" + b"\0" * 4 + s.encode("ascii") + b"\0"


def pad4(b: bytes) -> bytes:
    return b + b"\0" * (-len(b) % 4)


def build() -> bytes:
    base = ImageCms.ImageCmsProfile(ImageCms.createProfile("sRGB")).tobytes()
    t = tags_of(base)
    trc = curv_table()
    tags = [
        (b"desc", text_description("sRGB (mistara output intent, ICC v2)")),
        (b"cprt", text_type("No copyright, use freely")),
        (b"wtpt", t[b"wtpt"]),
        (b"rXYZ", t[b"rXYZ"]),
        (b"gXYZ", t[b"gXYZ"]),
        (b"bXYZ", t[b"bXYZ"]),
        (b"rTRC", trc),
        (b"gTRC", trc),
        (b"bTRC", trc),
    ]
    table_len = 4 + 12 * len(tags)
    offset = 128 + table_len
    table, data, seen = b"", b"", {}
    for sig, body in tags:
        if body in seen:  # the three curves share one copy (allowed, ICC.1:2001-04 §6.3)
            off = seen[body]
        else:
            off = offset + len(data)
            seen[body] = off
            data += pad4(body)
        table += struct.pack(">4sII", sig, off, len(body))
    size = 128 + table_len + len(data)
    header = bytearray(base[:128])
    header[0:4] = struct.pack(">I", size)
    header[8:12] = bytes([2, 0x10, 0, 0])  # version 2.1.0
    header[84:100] = b"\0" * 16  # profile ID: only defined from v4
    return bytes(header) + struct.pack(">I", len(tags)) + table + data


def check(icc: bytes) -> float:
    ours = ImageCms.ImageCmsProfile(io.BytesIO(icc))
    lab = ImageCms.createProfile("LAB")
    ref = ImageCms.createProfile("sRGB")
    img = Image.new("RGB", (64, 1))
    img.putdata([(i * 4, 255 - i * 4, (i * 37) % 256) for i in range(64)])
    a = ImageCms.profileToProfile(img, ours, lab, outputMode="LAB")
    b = ImageCms.profileToProfile(img, ref, lab, outputMode="LAB")
    worst = 0.0
    ta, tb = a.tobytes(), b.tobytes()
    for i in range(0, len(ta), 3):
        p, q = ta[i : i + 3], tb[i : i + 3]
        # Pillow's 8-bit Lab: L scaled to 0..255, a and b offset by 128.
        d = ((p[0] - q[0]) * 100 / 255) ** 2 + (p[1] - q[1]) ** 2 + (p[2] - q[2]) ** 2
        worst = max(worst, d ** 0.5)
    return worst


if __name__ == "__main__":
    icc = build()
    worst = check(icc)
    print(f"{len(icc)} bytes, worst delta E against LittleCMS sRGB: {worst:.2f}")
    if worst >= 1.0:
        sys.exit("profile does not match sRGB")
    OUT.write_bytes(icc)
