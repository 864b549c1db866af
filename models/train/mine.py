"""Hard-example mining (as in online hard example mining, Shrivastava et al. 2016, here offline and per chip): run a
trained checkpoint over synthesizer chip shards and copy the chips where it raises the most vehicle false alarms
(peaks >= --min-score with no truth vehicle near them) into new shards, which a later training stage
oversamples. Written after version 6's false alarms on held-out low-sun scenes turned out to lie mostly beside parked
cars (an empty stall, often in shadow, or the car's own cast shadow; models/README.md); a stage that oversampled the
mined chips did not remove them.
Usage: /usr/bin/python3 models/train/mine.py CKPT.pt --sources DIR... --out DIR [--min-score 0.37] [--min-fp 2]"""
import argparse
import glob
import os
import sys
import numpy as np
import torch

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from model import SeamtallyDet  # noqa: E402
from quick_eval import decode  # noqa: E402
from train import load_shard  # noqa: E402


def vehicle_false_alarms(dets, objs):
    """Vehicle detections (quick_eval.decode's peaks) farther than max(4 px, 0.4 x its length) from the nearest truth
    vehicle (any visibility: a peak on a mostly hidden car is not held against the model)."""
    veh = objs[objs[:, 0] == 0]
    fa = 0
    for c, _, cx, cy, _, _ in dets:
        if c != 0:
            continue
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
                    heat, size, off, _ = model(torch.from_numpy(imgs[i].transpose(2, 0, 1).copy()).float()[None] / 255)
                fa = vehicle_false_alarms(decode(heat, size, off, a.min_score), o)
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
    # the procedural chips' shard format (gen_worker.py), which train.load_shard reads
    np.savez(os.path.join(a.out, "shard_hard.npz"), images=np.stack(kept_imgs).astype(np.uint8),
             objects=np.array(kept_objs, np.float32).reshape(-1, 8))
    print(f"kept {len(kept_imgs)} of {seen} chips (false alarms per chip: {dict(sorted(hist.items()))})")


if __name__ == "__main__":
    main()
