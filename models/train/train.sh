#!/usr/bin/env bash
# `npm run train`: regenerate training scenes with `seamtally synth`, cut chips the way the pipeline sees scenes,
# generate procedural chips alongside, train seamtally-det from scratch on the CPU, export the ONNX + sidecar,
# then evaluate on held-out scenes and store the quality curves in the sidecar. Debian's system python3 with
# python3-torch / python3-onnx (apt-get install -y python3-torch python3-onnx). Not part of CI.
# Environment: TRAIN_MINUTES (default 40), WORK (default models/train/work), THREADS (default 2).
set -euo pipefail
cd "$(dirname "$0")/../.."
PY=/usr/bin/python3
WORK=${WORK:-models/train/work}
MINUTES=${TRAIN_MINUTES:-40}
THREADS=${THREADS:-2}
# the preload gives a CommonJS dependency of the core named ESM exports when run outside a bundler
NODE="node --import ./models/train/cjs-named-exports.mjs"
ST="$NODE bin/seamtally.mjs"
TSX="$NODE --import tsx"
mkdir -p "$WORK"
$PY -c "import torch, onnx" || { echo "needs Debian's python3-torch and python3-onnx: apt-get install -y python3-torch python3-onnx" >&2; exit 1; }

# 1. training scenes (synthesizer's scene writer, as `seamtally synth`): town scenario, seeds 1-32, GSD 0.13-0.85 m,
#    every band layout and bit depth, spring/summer dates, random PSF / haze / noise / occupancy
$TSX models/train/make-scenes.ts train "$WORK/scenes-train" 32
# 2. chips exactly as the pipeline sees them (band roles, per-scene stretch, resampling to 0.3 m)
$TSX models/train/chips.ts --scenes "$WORK/scenes-train" --out "$WORK/synth" --px 320 --step 240
# 3. procedural chips (a second look), generated while training runs
rm -f "$WORK/proc/STOP"
nice -n 15 $PY models/train/gen_worker.py --out "$WORK/proc" --seed 1001 --shards 400 > "$WORK/gen.log" 2>&1 &
GEN=$!
# 4. train from scratch
nice -n 10 $PY models/train/train.py --sources "$WORK/synth" "$WORK/proc" --weights 0.5 0.5 --synth "$WORK/synth" \
  --minutes "$MINUTES" --threads "$THREADS" --ckpt "$WORK/model.pt"
touch "$WORK/proc/STOP"; wait $GEN || true
# 5. ship: ONNX + sidecar
$PY models/train/finalize.py "$WORK/model.pt" --min-score "${MIN_SCORE:-0.3}"
EVAL_SET="10 held-out synthesizer scenes (models/train/make-scenes.ts eval): seeds 9001-9010, 2 per GSD 0.15/0.3/0.45/0.6/0.8 m, business-park and town, Oct-Feb dates, all band layouts and bit depths; never used in training"
# 6. held-out evaluation (other seeds, scenario, dates, layouts) → quality curves in the sidecar
$TSX models/train/make-scenes.ts eval "$WORK/scenes-eval" 10
$ST eval --model models/seamtally-det.onnx --scenes "$WORK/scenes-eval" --out "$WORK/eval.json" --write-quality \
  --eval-set "$EVAL_SET"
echo "done: models/seamtally-det.onnx, models/seamtally-det.model.json, $WORK/eval.json"
