#!/usr/bin/env bash
# Run r24 of the line recognizer: makes its training lines. Usage: .runs/r24/DATA.sh [WORK_DIR]
# (default /work); made with a release build of the commit that added this file (word spaces
# drawn down to 0.25× the font's own). val4 and the evaluation sets come from .runs/r21/DATA.sh,
# .runs/r20/DATA.sh and .runs/r18/DATA.sh; w3 from .runs/r21/DATA.sh (older, wider spaces).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
hard=(--family Vibes --family Gulzar --family Qahiri --family "Noto Nastaliq Urdu"
      --family Ruwudu --family Rakkas --family Zain --family "Aref Ruqaa")
mkdir -p "$work/data" && cd "$work/data"
$m synth lines --count 25000 --fonts train --seed 2401 --degrade 0.3 --harakat 0.2 --vary 0.9 --warp 0.7 --out s1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2403 --degrade 0.5 --harakat 0.2 --vary 0.9 --warp 0.8 --out s2 >/dev/null
$m synth lines --count 15000 --fonts train "${hard[@]}" --seed 2405 --degrade 0.3 --harakat 0.2 --vary 0.9 --warp 0.7 --out s3 >/dev/null
cat <<MSG
Data in $work/data. r24 was started (from $work) with
  $m train data/s1 data/s2 data/s3 data/w3 --valid data/val4 --out runs/r24 \\
    --fine-tune r21.mstr --lr 2e-4 --seed 2424 --minutes 95 --checkpoint-minutes 8 \\
    --threads 2 --quiet
Continue it: the same data arguments with --out runs/r24 --resume.
MSG
