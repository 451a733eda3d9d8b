#!/usr/bin/env bash
# Run r23 of the line recognizer (see RUN.md): no new lines. It trained on the sets of runs r21
# (w1, w3, w5, h1) and r22 (v1, v3, v5, h2), validated on val4; make them with
# .runs/r21/DATA.sh and .runs/r22/DATA.sh. Usage: .runs/r23/DATA.sh [WORK_DIR] (default /work)
# prints the command r23 was started with.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
for d in w1 w3 w5 h1 v1 v3 v5 h2 val4; do
  [ -d "$work/data/$d" ] || { echo "missing $work/data/$d: run .runs/r21/DATA.sh and .runs/r22/DATA.sh first" >&2; exit 1; }
done
cat <<MSG
Data in $work/data. r23 was started (from $work) with
  $m train data/w1 data/w3 data/w5 data/h1 data/v1 data/v3 data/v5 data/h2 \\
    --valid data/val4 --out runs/r23 --widen r21.mstr --hidden 192 --lr 3e-4 \\
    --seed 2323 --minutes 100 --checkpoint-minutes 10 --quiet
(r21.mstr: src/recognize/weights/default.mstr of commit 885d549; two replicas, the default).
MSG
