#!/usr/bin/env bash
# A collection's own typeface: fine-tune the built-in model on 400 transcribed lines of one face
# it never saw in training (Alkalami, a held-out face) and measure it on other lines of that face
# and on the other held-out faces. Usage: .runs/ft-alkalami/RUN.sh [WORK_DIR] (default /work);
# needs a release build (`cargo build --release`) and, for the last step, the evaluation sets
# of .runs/r18/DATA.sh and .runs/r20/DATA.sh (held-out clean and degraded, eval-train2) in
# WORK_DIR/data. Results: RUN.md beside this script.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
work=${1:-/work}
m="$root/target/release/mistara"
mkdir -p "$work/data" && cd "$work"
alk=(--fonts heldout --family Alkalami)
# 400 lines to learn from and 100 to pick the checkpoint by, scanned lightly (degradation 0.3);
# 300 clean and 300 badly scanned lines to measure on. Each set has its own seed, so its own text.
$m synth lines --count 400 "${alk[@]}" --seed 3401 --degrade 0.3 --out data/alk_ft >/dev/null
$m synth lines --count 100 "${alk[@]}" --seed 3402 --degrade 0.3 --out data/alk_val >/dev/null
$m synth lines --count 300 "${alk[@]}" --seed 3403 --degrade 0 --out data/alk_test_clean >/dev/null
$m synth lines --count 300 "${alk[@]}" --seed 3404 --degrade 0.5 --out data/alk_test_deg >/dev/null
# Beside them, 1 600 lines over the training faces, so that the model keeps reading those.
$m synth lines --count 1600 --fonts train --seed 3406 --degrade 0.3 --harakat 0.2 --vary 0.8 \
    --warp 0.7 --out data/gen_1600 >/dev/null
# Twelve minutes each on two cores: the face's lines alone, and the face's lines with the others.
rm -rf runs/ft_alk runs/ft_alk_mix
$m train data/alk_ft --valid data/alk_val --out runs/ft_alk \
    --fine-tune "$root/src/recognize/weights/default.mstr" \
    --minutes 12 --checkpoint-minutes 3 --threads 2 --seed 3405 --quiet
$m train data/alk_ft data/gen_1600 --valid data/alk_val --out runs/ft_alk_mix \
    --fine-tune "$root/src/recognize/weights/default.mstr" \
    --minutes 12 --checkpoint-minutes 3 --threads 2 --seed 3405 --quiet
for set in alk_test_clean alk_test_deg eval-heldout-clean eval-heldout-deg eval-train2; do
    for model in "$root/src/recognize/weights/default.mstr" runs/ft_alk/best.mstr \
        runs/ft_alk_mix/best.mstr; do
        echo "== $set, $model"
        $m eval "data/$set" --model "$model" --threads 2 --worst 0 | grep -E "^(exact|  [A-Z])"
    done
done
