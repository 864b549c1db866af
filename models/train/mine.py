"""Hard-example mining (as in online hard example mining, Shrivastava et al. 2016, here offline and per chip): run a
trained checkpoint over synthesizer chip shards and copy the chips where it raises the most vehicle false alarms
(peaks >= --min-score with no truth vehicle near them) into new shards, which a later training stage
oversamples. Written after version 6's false alarms on held-out low-sun scenes turned out to lie mostly beside parked
cars (an empty stall, often in shadow, or the car's own cast shadow; models/README.md); a stage that oversampled the
mined chips did not remove them.
Usage: /usr/bin/python3 models/train/mine.py CKPT.pt --sources DIR... --out DIR [--min-score 0.37] [--min-fp 2]"""
import argparse
import glob
import json
import os
import sys
import numpy as np
import torch
import torch.nn.functional as F

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from model import SeamtallyDet  # noqa: E402
from train import load_shard  # noqa: E402


def vehicle_false_alarms(heat, offset, objs, thr):
    """Vehicle peaks (3x3 local maxima >= thr) farther than max(4 px, 0.4 x its length) from the nearest truth vehicle
    (any visibility: a peak on a mostly hidden car is not held against the model)."""
    h = heat[0:1, 0:1]
    peaks = (h == F.max_pool2d(h, 3, 1, 1)) & (h >= thr)
    js, is_ = torch.nonzero(peaks[0, 0], as_tuple=True)
    veh = objs[objs[:, 0] == 0]
    fa = 0
    for j, i in zip(js.tolist(), is_.tolist()):
        cx, cy = (i + float(offset[0, 0, j, i])) * 4, (j + float(offset[0, 1, j, i])) * 4
        if len(veh) == 0:
            fa += 1
            continue
        d = np.hypot(veh[:, 1] - cx, veh[:, 2] - cy)
        k = int(np.argmin(d))
        if d[k] > max(4.0, 0.4 * veh[k, 3]):
            fa += 1
    return fa


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("ckpt")
    ap.add_argument("--sources", nargs="+", required=True)
    ap.add_argument("--out", required=True)
    ap.add_argument("--min-score", type=float, default=0.37)
    ap.add_argument("--min-fp", type=int, default=2)
    ap.add_argument("--threads", type=int, default=2)
    a = ap.parse_args()
    torch.set_num_threads(a.threads)
    model = SeamtallyDet()
    model.load_state_dict(torch.load(a.ckpt)["model"])
    model.eval()
    model.export_mode = True
    os.makedirs(a.out, exist_ok=True)
    kept_imgs, kept_objs, seen, total_fa, hist = [], [], 0, 0, {}
    for d in a.sources:
        for f in sorted(glob.glob(os.path.join(d, "shard_*.json")) + glob.glob(os.path.join(d, "shard_*.npz"))):
            imgs, objs = load_shard(f)
            for i in range(len(imgs)):
                o = objs[objs[:, 0] == i][:, 1:]
                with torch.no_grad():
                    heat, _, off, _ = model(torch.from_numpy(imgs[i].transpose(2, 0, 1).copy()).float()[None] / 255)
                fa = vehicle_false_alarms(heat, off, o, a.min_score)
                seen += 1
                total_fa += fa
                hist[min(fa, 10)] = hist.get(min(fa, 10), 0) + 1
                if fa >= a.min_fp:
                    kept_objs.extend([[len(kept_imgs)] + r.tolist() for r in o])
                    kept_imgs.append(imgs[i])
            print(f"{f}: {seen} chips, {len(kept_imgs)} kept, {total_fa} false alarms", flush=True)
    if not kept_imgs:
        print(f"no chip of {seen} has {a.min_fp} or more false alarms: nothing written")
        return
    px = kept_imgs[0].shape[0]
    np.stack(kept_imgs).astype(np.uint8).tofile(os.path.join(a.out, "shard_hard.u8"))
    json.dump({"n": len(kept_imgs), "px": px, "objects": kept_objs}, open(os.path.join(a.out, "shard_hard.json"), "w"))
    print(f"kept {len(kept_imgs)} of {seen} chips (false alarms per chip: {dict(sorted(hist.items()))})")


if __name__ == "__main__":
    main()
