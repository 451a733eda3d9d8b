#!/usr/bin/env bash
# Run r21 of the line recognizer: makes its training lines and its validation set and says how to
# resume it. Usage: .runs/r21/DATA.sh [WORK_DIR] (default /work); the lines were made with a
# release build of commit 28dc6d9 (`synth lines --family`, 36 train families); the evaluation
# sets eval-train2 and eval-train3 come from .runs/r20/DATA.sh, the held-out ones from
# .runs/r18/DATA.sh (their commands give the same lines with this build).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
hard=(--family Vibes --family Gulzar --family Qahiri --family "Noto Nastaliq Urdu"
      --family Ruwudu --family Rakkas --family Zain --family "Aref Ruqaa")
mkdir -p "$work/data" && cd "$work/data"
# Three 25 000-line sets over all 36 train families, and 20 000 lines over the eight families
# read worst after r20 (eval-train3: 3-25 % CER), drawn alone so each gets about 2 500 lines.
$m synth lines --count 25000 --fonts train --seed 2101 --degrade 0.2 --harakat 0.2 --vary 0.8 --warp 0.7 --out w1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2103 --degrade 0.4 --harakat 0.3 --vary 0.9 --warp 0.8 --out w3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2105 --degrade 0.6 --harakat 0.1 --vary 0.7 --warp 0.6 --out w5 >/dev/null
$m synth lines --count 20000 --fonts train "${hard[@]}" --seed 2107 --degrade 0.3 --harakat 0.2 --vary 0.8 --warp 0.7 --out h1 >/dev/null
# Validation: r18's val4 command on the 36-family shelf (r18's own val4 had 31 families).
$m synth lines --count 400 --fonts train --seed 1390 --degrade 0.3 --out val4 >/dev/null
mkdir -p "$work/runs/r21"
# r21's weights are default.mstr of the commit that shipped it (this file's first commit).
git -C "$root" show "$(git -C "$root" log --format=%h --diff-filter=A -1 -- .runs/r21/DATA.sh)":src/recognize/weights/default.mstr > "$work/runs/r21/last.mstr"
git -C "$root" show 7ab5016:src/recognize/weights/default.mstr > "$work/r20.mstr"
cp "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r21/"
cat <<MSG
Data in $work/data. r21 was started (from $work) with
  $m train data/w1 data/w3 data/w5 data/h1 --valid data/val4 --out runs/r21 \\
    --fine-tune r20.mstr --lr 2e-4 --seed 2121 --minutes 95 --checkpoint-minutes 8 \\
    --threads 2 --quiet
Continue it: the same data arguments with --out runs/r21 --resume.
MSG
