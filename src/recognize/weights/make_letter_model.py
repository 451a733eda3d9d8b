#!/usr/bin/env python3
"""Make `letters.lm`, the letter model the beam search weighs readings with.

Source: the Arabic word frequencies of `wordfreq` 3.1.1 (PyPI; code Apache-2.0, word lists
CC BY-SA 4.0, gathered by its authors from Wikipedia, subtitles, news, books, the web and
social media). Run:

    python3 -m venv /tmp/wf && /tmp/wf/bin/pip install wordfreq==3.1.1
    /tmp/wf/bin/python src/recognize/weights/make_letter_model.py src/recognize/weights/letters.lm

The model: letters of one word, with a boundary symbol before and after it, as an n-gram model
of order ORDER with interpolated Witten-Bell smoothing (Witten & Bell 1991; Chen & Goodman 1998,
section 2.5). Each word counts with its frequency times TOKENS, as if it were read from a text of
TOKENS words. n-grams counted fewer than MIN_COUNT times are left out; a context's share left
for unseen letters (its back-off weight) stays, so they read as the shorter context does.

File (all little-endian), deflated (zlib):
    b"MSLM", u8 version (1), u8 order, u8 letters, the letters as UTF-8 (u8 byte count first),
    u32 entries, then per entry a key delta (LEB128) and one byte q, where -ln p = q * STEP.
A key packs the symbols of an n-gram (boundary 0, letters 1..), each plus one, six bits each,
oldest first; a context's back-off weight is stored under its symbols followed by 63.
"""

import math
import sys
import zlib
from collections import defaultdict

import wordfreq

ORDER = 6
TOKENS = 1e8
MIN_COUNT = 3.0
STEP = 0.08  # nats per quantization step; 255 steps reach 20.4 nats
BOW = 63

# The recognizer's letters (src/recognize/charset.rs): hamza U+0621 .. ghain U+063A, feh U+0641
# .. yeh U+064A.
LETTERS = [chr(c) for c in range(0x621, 0x63B)] + [chr(c) for c in range(0x641, 0x64B)]
INDEX = {c: i + 1 for i, c in enumerate(LETTERS)}


def key(symbols):
    k = 0
    for s in symbols:
        k = (k << 6) | (s + 1 if s != BOW else BOW)
    return k


def quantize(logp):
    return max(0, min(255, round(-logp / STEP)))


def main(out_path):
    freqs = wordfreq.get_frequency_dict("ar", "large")
    counts = [defaultdict(float) for _ in range(ORDER + 1)]  # counts[n][ngram]
    kept = 0
    for word, f in freqs.items():
        word = word.replace("\u0640", "")
        if not word or any(ch not in INDEX for ch in word):
            continue
        kept += 1
        s = [0] + [INDEX[ch] for ch in word] + [0]
        c = f * TOKENS
        for i in range(1, len(s)):
            for n in range(1, ORDER + 1):
                if i - n + 1 < 0:
                    break
                counts[n][tuple(s[i - n + 1 : i + 1])] += c
    # Per context: total count and number of distinct followers.
    total = [defaultdict(float) for _ in range(ORDER + 1)]
    types = [defaultdict(int) for _ in range(ORDER + 1)]
    for n in range(1, ORDER + 1):
        for g, c in counts[n].items():
            total[n][g[:-1]] += c
            types[n][g[:-1]] += 1
    vocab = len(LETTERS) + 1
    prob = {}  # ngram -> interpolated probability

    def p(g):
        """Interpolated Witten-Bell probability of g[-1] after g[:-1]."""
        if not g[:-1]:
            h = ()
            lower = 1.0 / vocab
        else:
            h = g[:-1]
            lower = p(g[1:])
        n = len(g)
        t, c = types[n].get(h, 0), total[n].get(h, 0.0)
        if c == 0:
            return lower
        return (counts[n].get(g, 0.0) + t * lower) / (c + t)

    entries = {}
    for n in range(1, ORDER + 1):
        for g, c in counts[n].items():
            if c >= MIN_COUNT or n == 1:
                entries[key(g)] = quantize(math.log(p(g)))
        for h, c in total[n].items():
            if h and c >= MIN_COUNT:
                t = types[n][h]
                entries[key(h + (BOW,))] = quantize(math.log(t / (c + t)))
    body = bytearray()
    prev = 0
    for k in sorted(entries):
        d = k - prev
        prev = k
        while True:
            b = d & 0x7F
            d >>= 7
            body.append(b | (0x80 if d else 0))
            if not d:
                break
        body.append(entries[k])
    letters = "".join(LETTERS).encode("utf-8")
    head = b"MSLM" + bytes([1, ORDER, len(LETTERS), len(letters)]) + letters
    head += len(entries).to_bytes(4, "little")
    data = zlib.compress(bytes(head + body), 9)
    with open(out_path, "wb") as f:
        f.write(data)
    print(f"{kept} words, {len(entries)} entries, {len(data)} bytes", file=sys.stderr)


if __name__ == "__main__":
    main(sys.argv[1])
