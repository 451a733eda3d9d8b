#!/usr/bin/env bash
# Run r10 of the line recognizer: makes its training and validation lines again and says how to
# resume it. Usage: .runs/r10/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara.
# Superseded by run r11: its checkpoint files were dropped (they are in the git history at
# commit 05f1c62); run r11 started from r10's best checkpoint, kept as .runs/r11/start.mstr.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: train fonts (15 families of fonts_open at commit df7250f), 25 000 lines each.
$m synth lines --count 25000 --fonts train --seed 911 --degrade 0.0 --out t0 >/dev/null
$m synth lines --count 25000 --fonts train --seed 912 --degrade 0.2 --harakat 0.3 --out t2 >/dev/null
$m synth lines --count 25000 --fonts train --seed 913 --degrade 0.4 --out t4 >/dev/null
$m synth lines --count 25000 --fonts train --seed 914 --degrade 0.6 --out t6 >/dev/null
$m synth lines --count 25000 --fonts train --seed 915 --degrade 0.8 --harakat 0.1 --out t8 >/dev/null
# Validation lines (train fonts, degrade 0.3) and the model card's evaluation sets.
$m synth lines --count 400 --fonts train --seed 990 --degrade 0.3 --out val >/dev/null
$m synth lines --count 300 --fonts train --seed 101 --out eval-train-clean >/dev/null
$m synth lines --count 300 --fonts heldout --seed 102 --out eval-heldout-clean >/dev/null
$m synth lines --count 300 --fonts heldout --seed 103 --degrade 0.5 --out eval-heldout-deg >/dev/null
mkdir -p "$work/runs/r10"
cp "$here"/last.mstr "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r10/"
cat <<MSG
Data in $work/data, checkpoint in $work/runs/r10. Resume (from $work):
  $m train data/t0 data/t2 data/t4 data/t6 data/t8 --valid data/val --out runs/r10 --resume \\
    --seed 10 --minutes 100 --checkpoint-minutes 10 --threads 2 --quiet
The run started with --fine-tune from run r9's last checkpoint (the r6 network's convolution
blocks under a BiLSTM(128) head, 196 k lines in logical-order labels) and --label-order reading,
lr 1e-3, fresh Adam state; the model file says its label order, so --resume keeps it.
MSG
