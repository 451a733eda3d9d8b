#!/usr/bin/env bash
# Makes other_writer.pdf: a two-page PDF whose text was written by another program — Chromium's
# print-to-PDF (Debian package chromium 148.0.7778.167-1~deb12u1, Skia PDF backend) — with the
# Arabic text shaped by HarfBuzz and every font carrying a ToUnicode map. `mistara find` must read
# it through those maps. The text is our own invented library register; the font is
# fonts_open/noto-naskh-arabic (OFL). Run from this folder: ./make_other_writer.sh
set -euo pipefail
here=$(pwd)
font="$here/../../../fonts_open/noto-naskh-arabic/NotoNaskhArabic-Regular.ttf"
tmp=$(mktemp -d)
cat > "$tmp/page.html" <<HTML
<!DOCTYPE html>
<html lang="ar" dir="rtl"><head><meta charset="utf-8">
<style>
@font-face { font-family: naskh; src: url("file://$font"); }
body { font: 22px/1.8 naskh; margin: 2cm; }
.next { break-before: page; }
</style></head><body>
<p>سجل المقتنيات في مكتبة وادي الريحان العامة</p>
<p>وصلت إلى المكتبة كتب قديمة من الرف الثالث</p>
<p class="next">القضية رقم ٢٠٢٤/١١٧ أمام المحكمة</p>
<p>صدر الحكم سنة 1934 في دفتر الإعارة</p>
</body></html>
HTML
chromium --headless --no-sandbox --disable-gpu --no-first-run --user-data-dir="$tmp/profile" \
  --no-pdf-header-footer --print-to-pdf="$here/other_writer.pdf" "file://$tmp/page.html"
rm -rf "$tmp"
