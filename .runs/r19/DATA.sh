#!/usr/bin/env bash
# Run r19 of the line recognizer: makes its training lines (and, with .runs/r18/DATA.sh, the
# evaluation and validation sets it was measured on) and says how to resume it. Usage:
# .runs/r19/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara at commit
# 482acfc: the font shelf of r17 (34 families, 31 train) and the warp's own bilinear resampling
# (later builds draw from 36 train families and resample with imageproc, other pixels).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: four 25 000-line sets as r18's, with an elastic warp on 50-80 % of the lines
# (named w1-w7 when the run was made; z here, as r17's sets are named w).
$m synth lines --count 25000 --fonts train --seed 1901 --degrade 0.1 --vary 0.7 --warp 0.6 --out z1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1903 --degrade 0.3 --harakat 0.3 --vary 0.9 --warp 0.8 --out z3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1905 --degrade 0.5 --vary 1.0 --warp 0.7 --out z5 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1907 --degrade 0.7 --harakat 0.1 --vary 0.6 --warp 0.5 --out z7 >/dev/null
mkdir -p "$work/runs/r19"
git -C "$root" show 0d52caa:src/recognize/weights/default.mstr > "$work/runs/r19/last.mstr"
cp "$here"/state.json "$here"/history.tsv "$work/runs/r19/"
# Its optimizer state (optim.bin) left this folder when r20 shipped: git show 0d52caa:.runs/r19/optim.bin
cat <<MSG
Data in $work/data (evaluation and validation sets: .runs/r18/DATA.sh). r19 was started (from
$work) with
  $m train data/z1 data/z3 data/z5 data/z7 --valid data/val4 --out runs/r19 \\
    --fine-tune r18.mstr --lr 2e-4 --seed 1919 --minutes 95 --checkpoint-minutes 8 \\
    --threads 2 --quiet
(r18.mstr: src/recognize/weights/default.mstr of a commit before r19 shipped). Continue it: the
same data arguments with --out runs/r19 --resume (optim.bin put back first); last.mstr is r19's
shipped default.mstr (commit 0d52caa).
MSG
