#!/usr/bin/env bash
# Run r22 of the line recognizer (not shipped; see RUN.md): makes its training lines. The
# validation set val4 comes from .runs/r21/DATA.sh. Usage: .runs/r22/DATA.sh [WORK_DIR]
# (default /work); the lines were made with a release build whose synthesis is that of 28dc6d9
# (unchanged through e46e04b: a build of ad867bd remade sample files byte for byte). Its
# optimizer state was not kept: a new run starts from
# src/recognize/weights/default.mstr (r21) with --fine-tune.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
hard=(--family Vibes --family Gulzar --family Qahiri --family "Noto Nastaliq Urdu"
      --family Ruwudu --family Rakkas --family Zain --family "Aref Ruqaa")
mkdir -p "$work/data" && cd "$work/data"
$m synth lines --count 25000 --fonts train --seed 2201 --degrade 0.25 --harakat 0.2 --vary 0.9 --warp 0.7 --out v1 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2203 --degrade 0.45 --harakat 0.3 --vary 1.0 --warp 0.8 --out v3 >/dev/null
$m synth lines --count 25000 --fonts train --seed 2205 --degrade 0.6 --harakat 0.1 --vary 0.8 --warp 0.6 --out v5 >/dev/null
$m synth lines --count 20000 --fonts train "${hard[@]}" --seed 2207 --degrade 0.35 --harakat 0.2 --vary 0.9 --warp 0.7 --out h2 >/dev/null
cat <<MSG
Data in $work/data. r22 was started (from $work) with
  $m train data/v1 data/v3 data/v5 data/h2 --valid data/val4 --out runs/r22 \\
    --fine-tune r21.mstr --lr 1.5e-4 --seed 2222 --minutes 90 --checkpoint-minutes 8 \\
    --threads 2 --quiet
(r21.mstr: src/recognize/weights/default.mstr of commit 885d549).
MSG
