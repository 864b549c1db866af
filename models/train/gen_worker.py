"""Writes procedural training chips as shards (work/proc/shard_<seed>_<n>.npz) until told to stop (a STOP file)
or until --count shards exist. Run it beside train.py (under nice) so generation and training overlap."""
import argparse
import os
import sys
import time
import numpy as np
import torch

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from procedural import generate_chip  # noqa: E402


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--out", required=True)
    ap.add_argument("--seed", type=int, default=1000)
    ap.add_argument("--shards", type=int, default=1000)
    ap.add_argument("--per-shard", type=int, default=64)
    ap.add_argument("--px", type=int, default=256)
    a = ap.parse_args()
    torch.set_num_threads(1)
    os.makedirs(a.out, exist_ok=True)
    rng = np.random.default_rng(a.seed)
    for s in range(a.shards):
        if os.path.exists(os.path.join(a.out, "STOP")):
            break
        imgs, objs = [], []
        for i in range(a.per_shard):
            im, o, _ = generate_chip(rng, a.px)
            imgs.append(im)
            objs.append(np.concatenate([np.full((len(o), 1), i, np.float32), o], 1))
        tmp = os.path.join(a.out, f".tmp_{a.seed}.npz")
        np.savez(tmp, images=np.stack(imgs), objects=np.concatenate(objs, 0))
        os.replace(tmp, os.path.join(a.out, f"shard_{a.seed}_{s:05d}.npz"))
        print(f"shard {s} done {time.strftime('%H:%M:%S')}", flush=True)


if __name__ == "__main__":
    main()
