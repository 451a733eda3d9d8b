#!/usr/bin/env bash
# Run r20 of the line recognizer: makes its training lines and the two evaluation sets over the
# shelf it trained on (the older evaluation and validation sets come from .runs/r18/DATA.sh,
# which needs an older build) and says how to resume it. Usage: .runs/r20/DATA.sh [WORK_DIR]
# (default /work); needs a release build of mistara with the font shelf of r20 (39 families,
# 36 train: Katibeh, Gulzar, Vibes, Playpen Sans Arabic and Handjet added) and the warp
# resampled with imageproc.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: four 25 000-line sets made as r19's, over the 36 train families.
$m synth lines --count 25000 --fonts train --seed 2001 --degrade 0.1 --vary 0.7 --warp 0.6 --out x1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2003 --degrade 0.3 --harakat 0.3 --vary 0.9 --warp 0.8 --out x3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2005 --degrade 0.5 --vary 1.0 --warp 0.7 --out x5 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2007 --degrade 0.7 --harakat 0.1 --vary 0.6 --warp 0.5 --out x7 >/dev/null
# Clean lines over the 36 train families: the older eval-train's command on the new shelf, and
# 1000 lines for per-family figures of the five new families (15-26 lines each).
$m synth lines --count 300 --fonts train --seed 101 --out eval-train2 >/dev/null
$m synth lines --count 1000 --fonts train --seed 2012 --out eval-train3 >/dev/null
mkdir -p "$work/runs/r20"
# r20's weights are default.mstr of the commit that shipped it
git -C "$root" show 7ab5016:src/recognize/weights/default.mstr > "$work/runs/r20/last.mstr"
# r20's optimizer state left the tree when r21 shipped: git show 7ab5016:.runs/r20/optim.bin
git -C "$root" show 7ab5016:.runs/r20/optim.bin > "$work/runs/r20/optim.bin"
cp "$here"/state.json "$here"/history.tsv "$work/runs/r20/"
cat <<MSG
Data in $work/data (validation set val4: .runs/r18/DATA.sh). r20 was started (from $work) with
  $m train data/x1 data/x3 data/x5 data/x7 --valid data/val4 --out runs/r20 \\
    --fine-tune r19.mstr --lr 2e-4 --seed 2020 --minutes 90 --checkpoint-minutes 8 \\
    --threads 2 --quiet
(r19.mstr: src/recognize/weights/default.mstr of a commit before r20 shipped). Continue it: the
same data arguments with --out runs/r20 --resume; last.mstr is the shipped default.mstr.
MSG
