#!/usr/bin/env bash
# Run r18 of the line recognizer: makes its training, validation and evaluation lines again and
# says how to resume it. Usage: .runs/r18/DATA.sh [WORK_DIR] (default /work); needs a release
# build of mistara with the font shelf of r17 (34 families, 31 train; a later shelf draws other
# fonts).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Evaluation sets of MODEL.md (300 lines each) and the validation set.
$m synth lines --count 300 --fonts heldout --seed 102 --out eval-heldout-clean >/dev/null
$m synth lines --count 300 --fonts heldout --seed 103 --degrade 0.5 --out eval-heldout-deg >/dev/null
$m synth lines --count 300 --fonts train --seed 101 --out eval-train >/dev/null
$m synth lines --count 400 --fonts train --seed 1390 --degrade 0.3 --out val4 >/dev/null
# Training lines: four new 25 000-line sets made as r17's, other seeds.
$m synth lines --count 25000 --fonts train --seed 1801 --degrade 0.1 --vary 0.7 --out y1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1803 --degrade 0.3 --harakat 0.3 --vary 0.9 --out y3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1805 --degrade 0.5 --vary 1.0 --out y5 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1807 --degrade 0.7 --harakat 0.1 --vary 0.6 --out y7 >/dev/null
mkdir -p "$work/runs/r18"
git -C "$root" show 14c4edf:src/recognize/weights/default.mstr > "$work/runs/r18/last.mstr"
cp "$here"/state.json "$here"/history.tsv "$work/runs/r18/"
# Its optimizer state (optim.bin) left this folder when r19 shipped: git show 14c4edf:.runs/r18/optim.bin
cat <<MSG
Data in $work/data. r18 was started (from $work) with
  $m train data/y1 data/y3 data/y5 data/y7 --valid data/val4 --out runs/r18 \\
    --fine-tune r17.mstr --lr 2e-4 --seed 1818 --minutes 95 --checkpoint-minutes 8 \\
    --threads 2 --quiet
(r17.mstr: src/recognize/weights/default.mstr of a commit before r18 shipped). Continue it: the
same data arguments with --out runs/r18 --resume; last.mstr is r18's shipped default.mstr.
MSG
