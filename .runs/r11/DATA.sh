#!/usr/bin/env bash
# Run r11 of the line recognizer: makes its training and validation lines again and says how to
# resume it. Usage: .runs/r11/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara
# with the font shelf of commit 4e309f4 (22 train families; a later shelf draws other fonts).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: train fonts, 25 000 lines each, with type variation (--vary).
$m synth lines --count 25000 --fonts train --seed 1101 --degrade 0.0 --vary 0.5 --out u0 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1102 --degrade 0.2 --harakat 0.3 --vary 0.8 --out u2 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1103 --degrade 0.4 --vary 1.0 --out u4 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1104 --degrade 0.6 --vary 0.8 --out u6 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1105 --degrade 0.8 --harakat 0.1 --vary 0.5 --out u8 >/dev/null
# Validation lines (train fonts, degrade 0.3, no variation).
$m synth lines --count 400 --fonts train --seed 1190 --degrade 0.3 --out val2 >/dev/null
mkdir -p "$work/runs/r11"
cp "$here"/last.mstr "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r11/"
cat <<MSG
Data in $work/data, checkpoint in $work/runs/r11. Resume (from $work):
  $m train data/u0 data/u2 data/u4 data/u6 data/u8 --valid data/val2 --out runs/r11 --resume \\
    --seed 11 --minutes 100 --checkpoint-minutes 10 --threads 2 --quiet
The run started with --fine-tune from run r10's best checkpoint (start.mstr here: 295 k lines,
validation 2.68 % on r10's set), lr 5e-4, fresh Adam state; reading-order labels.
MSG
