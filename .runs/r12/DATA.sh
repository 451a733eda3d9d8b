#!/usr/bin/env bash
# Run r12 of the line recognizer: makes its training and validation lines again and says how to
# resume it. Usage: .runs/r12/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara
# with the font shelf of the commit that added Alexandria, Zain, Rubik, Marhey, Qahiri and
# Noto Nastaliq Urdu (28 train families; a later shelf draws other fonts).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: train fonts, 25 000 lines each, with type variation (--vary).
$m synth lines --count 25000 --fonts train --seed 1201 --degrade 0.0 --vary 0.6 --out v0 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1202 --degrade 0.2 --harakat 0.3 --vary 0.8 --out v2 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1203 --degrade 0.4 --vary 1.0 --out v4 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1204 --degrade 0.6 --vary 0.8 --out v6 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1205 --degrade 0.8 --harakat 0.1 --vary 0.5 --out v8 >/dev/null
# Validation lines (train fonts, degrade 0.3, no variation).
$m synth lines --count 400 --fonts train --seed 1290 --degrade 0.3 --out val3 >/dev/null
if [ -f "$here/last.mstr" ]; then
  mkdir -p "$work/runs/r12"
  cp "$here"/last.mstr "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r12/"
fi
cat <<MSG
Data in $work/data, checkpoint (phase b) in $work/runs/r12. Resume (from $work):
  $m train data/v0 data/v2 data/v4 data/v6 data/v8 --valid data/val3 --out runs/r12 --resume \\
    --seed 13 --minutes 30 --checkpoint-minutes 7 --threads 2 --quiet
Phase a: --fine-tune from r11 (start.mstr), lr 5e-4, 177 k lines (history-phase-a.tsv,
phase-a-last.mstr). Phase b: --fine-tune phase-a-last.mstr, lr 1.5e-4, 89 k lines so far
(history.tsv, last.mstr + optim.bin). Not yet evaluated for shipping.
MSG
