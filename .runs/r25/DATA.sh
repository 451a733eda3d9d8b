#!/usr/bin/env bash
# Run r25 of the line recognizer: makes its training lines. Usage: .runs/r25/DATA.sh [WORK_DIR]
# (default /work); made with a release build of the commit that added this file (`synth lines
# --nib`: a share of the lines swept with a slanted broad-nib pen). val4 and the evaluation sets
# come from .runs/r21/DATA.sh, .runs/r20/DATA.sh and .runs/r18/DATA.sh; w3 from
# .runs/r21/DATA.sh, s1 from .runs/r24/DATA.sh.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work/data"
$m synth lines --count 25000 --fonts train --seed 2501 --degrade 0.3 --harakat 0.2 --vary 0.9 --warp 0.6 --nib 0.6 --out n1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2503 --degrade 0.5 --harakat 0.2 --vary 0.9 --warp 0.7 --nib 0.6 --out n2 >/dev/null
cat <<MSG
Data in $work/data. r25 was started (from $work) with
  $m train data/n1 data/n2 data/s1 data/w3 --valid data/val4 --out runs/r25 \\
    --fine-tune r21.mstr --lr 1.5e-4 --seed 2525 --minutes 95 --checkpoint-minutes 8 \\
    --threads 2 --quiet
Continue it: the same data arguments with --out runs/r25 --resume.
MSG
