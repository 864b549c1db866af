"""Write the shipped model: models/<name>.onnx from a checkpoint and its sidecar <name>.model.json
(seamtally-model/1). Quality curves are added afterwards by `seamtally eval --write-quality`."""
import argparse
import json
import os
import sys

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from export import export_onnx, OUTPUT_NAMES  # noqa: E402
import math  # noqa: E402
import tempfile  # noqa: E402
import torch  # noqa: E402
from model import CLASSES, STRIDE, count_macs  # noqa: E402
from arch import load_checkpoint  # noqa: E402


def shift_class_scores(ckpt_path, class_thresholds, common):
    """A checkpoint whose heatmap logit of class c is shifted by logit(common) - logit(t_c): a detection scores
    `common` exactly where it scored t_c before (monotone per class), so one shipped threshold gives each class its own
    operating point (the model contract has one minScore and the app one slider)."""
    ck = torch.load(ckpt_path)
    logit = lambda p: math.log(p / (1 - p))  # noqa: E731
    bias = ck["model"]["hm.bias"].clone()
    for c, t in class_thresholds.items():
        bias[CLASSES.index(c)] += logit(common) - logit(t)
    ck["model"]["hm.bias"] = bias
    out = os.path.join(tempfile.mkdtemp(), "shifted.pt")
    torch.save(ck, out)
    return out


def sidecar(name, min_score, version):
    return {
        "format": "seamtally-model/1",
        "name": name,
        "version": version,
        "card": "models/README.md",
        "classes": CLASSES,
        "inputGsdM": 0.3,
        "tilePx": 512,
        # dynamic H, W: the planner may pick tiles up to 1792 px (about 300 MB per onnxruntime session) to keep the
        # overlap share low; windows start on multiples of the network's total stride 32
        "maxTilePx": 1792,
        "tileAlignPx": 32,
        # context around an object beyond its own extent, in model px, so that its score does not depend on where a
        # window ends: measured on the tiling scene (seed 9100), an overlap of 50 px (context 8) let 6 of 640 arrays
        # flip across the threshold between tile sizes, 80 px (context 38) 1 of 642 (models/README.md)
        "contextPx": 38,
        "input": {"name": "image", "bands": "rgb", "scale": 1 / 255, "mean": [0, 0, 0], "std": [1, 1, 1]},
        "output": {"layout": "center-heatmap", "stride": STRIDE, "heatmap": OUTPUT_NAMES[0], "size": OUTPUT_NAMES[1],
                   "offset": OUTPUT_NAMES[2], "angle": OUTPUT_NAMES[3]},
        "minScore": min_score,
        "objects": {
            # vehicle: car width ~1.8 m (critical dimension); trucks up to ~10 m long
            "vehicle": {"criticalDimM": 1.8, "maxExtentM": 10},
            # solar_panel: one module's short side ~1.1 m; the synthesizer's largest array 25 m
            "solar_panel": {"criticalDimM": 1.1, "maxExtentM": 25},
        },
    }


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("ckpt")
    ap.add_argument("--out-dir", default=os.path.join(os.path.dirname(os.path.abspath(__file__)), ".."))
    ap.add_argument("--name", default="seamtally-det")
    ap.add_argument("--min-score", type=float, default=0.3)
    ap.add_argument("--version", default="1")
    ap.add_argument("--class-thresholds", default=None,
                    help="per-class operating points, e.g. vehicle=0.41,solar_panel=0.28: scores are shifted so that each "
                         "lands on --min-score (see shift_class_scores)")
    a = ap.parse_args()
    onnx_path = os.path.join(a.out_dir, a.name + ".onnx")
    ckpt = a.ckpt
    if a.class_thresholds:
        ckpt = shift_class_scores(ckpt, {k: float(v) for k, v in (p.split("=") for p in a.class_thresholds.split(","))},
                                  a.min_score)
    export_onnx(ckpt, onnx_path)
    side_path = os.path.join(a.out_dir, a.name + ".model.json")
    old = {}
    if os.path.exists(side_path):
        old = json.load(open(side_path))
    sc = sidecar(a.name, a.min_score, a.version)
    if "quality" in old:
        sc["quality"] = old["quality"]  # replaced by the next `seamtally eval --write-quality`
    with open(side_path, "w") as f:
        json.dump(sc, f, indent=2)
        f.write("\n")
    macs = count_macs(load_checkpoint(ckpt))
    print(f"wrote {onnx_path} ({os.path.getsize(onnx_path) / 1e6:.2f} MB), {side_path}; "
          f"{macs / 1e9:.3f} GMAC = {2 * macs / 1e9:.3f} GFLOP per 512x512 tile")


if __name__ == "__main__":
    main()
