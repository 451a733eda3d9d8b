#!/usr/bin/env bash
# Run r17 of the line recognizer: makes its new training lines again and says how to resume it.
# Usage: .runs/r17/DATA.sh [WORK_DIR] (default /work); needs a release build of mistara with the
# font shelf of the commit that added Lalezar and Kufam (31 train families) and the word-space
# variation of --vary. r13's sets (.runs/r13/DATA.sh: w1, w3, w5, w7, val4) are used beside these.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
$m synth lines --count 25000 --fonts train --seed 1701 --degrade 0.1 --vary 0.7 --out x1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1703 --degrade 0.3 --harakat 0.3 --vary 0.9 --out x3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1705 --degrade 0.5 --vary 1.0 --out x5 >/dev/null
$m synth lines --count 25000 --fonts train --seed 1707 --degrade 0.7 --harakat 0.1 --vary 0.6 --out x7 >/dev/null
mkdir -p "$work/runs/r17"
cp "$root/src/recognize/weights/default.mstr" "$work/runs/r17/last.mstr"
cp "$here"/state.json "$here"/history.tsv "$work/runs/r17/"
# Its optimizer state (optim.bin) left this folder when r18 shipped: git show cb0bf0f:.runs/r17/optim.bin
cat <<MSG
Data in $work/data. r17 was started (from $work) with
  $m train data/x1 data/x3 data/x5 data/x7 data/w1 data/w3 data/w5 data/w7 --valid data/val4 \\
    --out runs/r17 --fine-tune r14.mstr --lr 3e-4 --seed 1717 --minutes 80 --checkpoint-minutes 8 \\
    --threads 2 --quiet
(r14.mstr: src/recognize/weights/default.mstr of a commit before r17 shipped). Continue it: the
same data arguments with --out runs/r17 --resume; last.mstr is the shipped default.mstr.
MSG
