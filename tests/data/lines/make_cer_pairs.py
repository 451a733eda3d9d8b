"""Make cer_pairs.tsv: 50 (truth, read) string pairs with their edit distances computed by
rapidfuzz (PyPI, version printed into the file header; made with rapidfuzz 3.14.6), an
implementation independent of ours. Columns: truth, read, character edits (Levenshtein over
Unicode code points), word edits (Levenshtein over white-space-split word lists).

Run: /tmp/rv/bin/python tests/data/lines/make_cer_pairs.py > tests/data/lines/cer_pairs.tsv
The strings are our own invented text, damaged by seeded random edits.
"""
import random

import rapidfuzz
from rapidfuzz.distance import Levenshtein

BASE = [
    "قرأ الطالب الكتاب في مكتبة البلدة",
    "كَتَبَ الناسخ الفصل الأول من الرسالة",
    "سنة ١٩٤٨ فتحت المدرسة بابها للطلاب",
    "وجاء في الوثيقة أن الأرض ملك للوقف",
    "رأى المسافر القلعة على الجبل، فنزل",
    "هل قرأت «المقدمة» أم الخاتمة؟",
    "صفحة 12 من الجزء الثاني [الفهرس]",
    "مؤسسة الشاطئ للطباعة والنشر",
    "إلى مستشفى المدينة الكبرى",
    "ضوء القمر على ماء النهر",
]
ALPHABET = "ءآأؤإئابةتثجحخدذرزسشصضطظعغفقكلمنهوىي ً ٌ ٍ َ ُ ِ ّ ْ ٠١٢٣٤٥٦٧٨٩.،"


def damage(s, r):
    s = list(s)
    for _ in range(r.randint(0, 6)):
        op = r.random()
        i = r.randrange(len(s) + 1)
        if op < 0.35 and s:
            del s[min(i, len(s) - 1)]
        elif op < 0.7:
            s.insert(i, r.choice(ALPHABET))
        elif s:
            s[min(i, len(s) - 1)] = r.choice(ALPHABET)
    return " ".join("".join(s).split())


def main():
    r = random.Random(20261202)
    print(f"# truth\tread\tchar_edits\tword_edits\t(rapidfuzz {rapidfuzz.__version__})")
    for n in range(50):
        truth = BASE[n % len(BASE)]
        read = "" if n == 49 else damage(truth, r)
        c = Levenshtein.distance(truth, read)
        w = Levenshtein.distance(truth.split(), read.split())
        print(f"{truth}\t{read}\t{c}\t{w}")


main()
