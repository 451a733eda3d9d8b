#!/usr/bin/env bash
# Run r13 of the line recognizer: makes its training and validation lines again and says how to
# resume it. Usage: .runs/r13/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara
# with the font shelf of the commit that added Ruwudu (29 train families; a later shelf draws
# other fonts). Run r12's data (.runs/r12/DATA.sh: v2, v6) is used beside these.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
# Training lines: train fonts, 25 000 lines each, with type variation (--vary).
$m synth lines --count 25000 --fonts train --seed 1301 --degrade 0.1 --vary 0.7 --out w1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1302 --degrade 0.3 --harakat 0.3 --vary 0.9 --out w3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1303 --degrade 0.5 --vary 1.0 --out w5 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1304 --degrade 0.7 --harakat 0.1 --vary 0.6 --out w7 >/dev/null
# Validation lines (train fonts, degrade 0.3, no variation).
$m synth lines --count 400 --fonts train --seed 1390 --degrade 0.3 --out val4 >/dev/null
if [ -f "$here/last.mstr" ]; then
  mkdir -p "$work/runs/r13"
  cp "$here"/last.mstr "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r13/"
fi
cat <<MSG
Data in $work/data. Start (from $work; r12's shipped model is src/recognize/weights/default.mstr
of the commit that shipped it):
  $m train data/w1 data/w3 data/w5 data/w7 data/v2 data/v6 --valid data/val4 --out runs/r13 \\
    --fine-tune r12.mstr --lr 2.5e-4 --seed 1313 --minutes 95 --checkpoint-minutes 8 --threads 2 --quiet
Resume: the same with --resume instead of --fine-tune/--lr, once last.mstr is in $work/runs/r13.
Run so far: 219 k lines, 1.48 h, validation 4.23 -> 3.64 % (best.mstr, 209 k). Not shipped:
its held-out gain is Alkalami (43 -> 32 %), a relative of the newly added Ruwudu; Harmattan and
Scheherazade and the train sets read about as r12 or slightly worse (see the issue note).
MSG
