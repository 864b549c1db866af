"""Detections of the real validation sets with everything the review-adapted scorer needs, for the simulation in
bench/adapt-simulation.ts: per set (drone frames and roof crops at 0.3 m) and image, every heatmap peak >= 0.05 with
its score, box size (m), the model's 32 features at the peak (the ONNX `features` output = the head's input), its
centre (px) and its label by the matching rules of real_eval.py (1 a real object, 0 a false one, -1 ignored), and
the number of labelled objects. Runs the shipped ONNX rebuilt in PyTorch (from_onnx.py).

Usage: /usr/bin/python3 models/train/real/adapt_extract.py [--model models/seamtally-det.onnx]
       [--val models/train/work/real-val] [--out .cache/adapt-sim/real-detections.json]"""
import argparse
import json
import os
import sys

import numpy as np
import torch
import torch.nn.functional as F

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)
sys.path.insert(0, os.path.dirname(HERE))
import real_eval  # noqa: E402
from real_eval import PX_M, array_hit, match, vehicle_rules  # noqa: E402

FLOOR = 0.05


def detect_with_features(model, img, feats):
    H, W = img.shape[:2]
    Hp, Wp = -(-H // 32) * 32, -(-W // 32) * 32
    x = np.full((Hp, Wp, 3), 128, np.float32)
    x[:H, :W] = img
    with torch.no_grad():
        heat, size, offset, _ = model(torch.from_numpy(x.transpose(2, 0, 1) / 255.0)[None].float())
    f = feats[0][0]  # [32, h, w]
    peaks = (heat == F.max_pool2d(heat, 3, 1, 1)) & (heat >= FLOOR)
    out = []
    for c in range(heat.shape[1]):
        j, i = torch.nonzero(peaks[0, c], as_tuple=True)
        rows = []
        for jj, ii in zip(j.tolist(), i.tolist()):
            cx = (ii + float(offset[0, 0, jj, ii])) * 4
            cy = (jj + float(offset[0, 1, jj, ii])) * 4
            if cx >= W or cy >= H:
                continue
            w, h = float(size[0, 0, jj, ii]) * PX_M, float(size[0, 1, jj, ii]) * PX_M
            rows.append([float(heat[0, c, jj, ii]), cx, cy, max(w, h), min(w, h), f[:, jj, ii].tolist()])
        rows.sort(key=lambda r: -r[0])
        out.append(rows)
    return out


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--model", default="models/seamtally-det.onnx")
    ap.add_argument("--val", default="models/train/work/real-val")
    ap.add_argument("--out", default=".cache/adapt-sim/real-detections.json")
    a = ap.parse_args()
    model = real_eval.load_model(a.model)
    feats = []
    model.head.register_forward_hook(lambda m, i, o: feats.__setitem__(slice(None), [o]))
    sets = []
    for kind in ["drone", "roofs"]:
        z = np.load(os.path.join(a.val, f"{kind}-g0.3.npz"))
        imgs, objs = z["images"], z["objects"]
        polys = json.loads(str(z["polygons"])) if "polygons" in z else []
        shapes = z["shapes"] if "shapes" in z else [im.shape[:2] for im in imgs]
        per_class = {"vehicle": [], "solar_panel": []}
        for j, img in enumerate(imgs):
            h, w = shapes[j]
            dets = detect_with_features(model, img[:h, :w].astype(np.float32), feats)
            veh, hit, ignore = vehicle_rules(kind, objs[objs[:, 0] == j][:, 1:])
            arr = np.array([[r[0], r[1], r[2]] for r in dets[0]]).reshape(-1, 3)
            lab = match(arr, hit, len(veh), ignore)
            per_class["vehicle"].append({"truth": int(len(veh)), "dets": [r + [int(l)] for r, l in zip(dets[0], lab)]})
            if kind == "roofs":
                pj = [p for m, p in polys if m == j]
                arr = np.array([[r[0], r[1], r[2]] for r in dets[1]]).reshape(-1, 3)
                lab = match(arr, array_hit(pj), len(pj))
                per_class["solar_panel"].append({"truth": len(pj), "dets": [r + [int(l)] for r, l in zip(dets[1], lab)]})
        for cls, images in per_class.items():
            if images:
                sets.append({"set": kind, "class": cls, "gsdM": 0.3, "images": images})
    os.makedirs(os.path.dirname(a.out), exist_ok=True)
    with open(a.out, "w") as fh:
        json.dump({"model": a.model, "floor": FLOOR, "sets": sets}, fh)
    for s in sets:
        n = sum(len(im["dets"]) for im in s["images"])
        t = sum(im["truth"] for im in s["images"])
        print(s["set"], s["class"], "detections", n, "labelled objects", t)


if __name__ == "__main__":
    main()
