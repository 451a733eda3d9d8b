#!/usr/bin/env bash
# Run r26 of the line recognizer: a network that reads 48-px lines, started from r21's
# convolution blocks (`train --features-from`), trained over several sessions on all the line
# sets of runs r21-r25. It makes no lines of its own: each set comes from the DATA.sh of the run
# that made it, with a release build of the commit that added that file (the synthesis changed
# between them: r24 widened the word-space range, r25 added the pen):
#   .runs/r21/DATA.sh  w1 w3 w5 h1 val4      .runs/r22/DATA.sh  v1 v3 v5 h2
#   .runs/r24/DATA.sh  s1 s2 s3              .runs/r25/DATA.sh  n1 n2
# Usage: .runs/r26/DATA.sh [WORK_DIR] (default /work), after those; it checks the sets are
# there and puts the checkpoint to resume in place.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
sets=(w1 w3 w5 v1 v3 v5 s1 s2 s3 n1 n2 h1 h2)
for s in "${sets[@]}" val4; do
  [ -d "$work/data/$s" ] || { echo "missing $work/data/$s: run the DATA.sh that makes it" >&2; exit 1; }
done
mkdir -p "$work/runs/r26"
cp "$here"/last.mstr "$here"/optim.bin "$here"/state.json "$here"/history.tsv "$work/runs/r26/"
args=$(printf ' data/%s' "${sets[@]}")
cat <<MSG
Data in $work/data. r26 was started (from $work, with r21's default.mstr as r21.mstr) with
  $m train$args \\
    --valid data/val4 --out runs/r26 --features-from r21.mstr --height 48 \\
    --channels 16,32,64 --hidden 128 --seed 2626 --minutes 100 --checkpoint-minutes 8 \\
    --threads 2 --quiet
Continue it: the same data arguments with --out runs/r26 --resume --minutes M.
MSG
