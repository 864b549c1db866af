"""Quick training monitor (not the reported evaluation, which is `seamtally eval`): recall / precision by centre
distance on fixed held-out procedural chips (seed 999, never used in training) at the five evaluation GSDs."""
import sys
import os
import numpy as np
import torch
import torch.nn.functional as F

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from model import SeamtallyDet, CLASSES  # noqa: E402
from procedural import generate_chip  # noqa: E402


def decode(heat, size, offset, thr):
    """Peaks (3x3 local maxima >= thr) → list of (class, score, cx, cy, length, width) in input px."""
    peaks = (heat == F.max_pool2d(heat, 3, 1, 1)) & (heat >= thr)
    out = []
    for c, j, i in zip(*[t.tolist() for t in torch.nonzero(peaks[0], as_tuple=True)]):
        out.append((c, float(heat[0, c, j, i]), (i + float(offset[0, 0, j, i])) * 4, (j + float(offset[0, 1, j, i])) * 4,
                    float(size[0, 0, j, i]), float(size[0, 1, j, i])))
    return out


def run(ckpt, n=24, thr=0.3):
    model = SeamtallyDet()
    model.load_state_dict(torch.load(ckpt)["model"])
    model.eval()
    model.export_mode = True
    for g in [0.15, 0.3, 0.45, 0.6, 0.8]:
        rng = np.random.default_rng(999)
        st = {c: [0, 0, 0] for c in range(len(CLASSES))}  # tp, fp, positives
        for _ in range(n):
            img, objs, _ = generate_chip(rng, 256, sensor_gsd_m=g)
            with torch.no_grad():
                heat, size, off, _ = model(torch.from_numpy(img.transpose(2, 0, 1).copy()).float()[None] / 255)
            dets = decode(heat, size, off, thr)
            truth = [o for o in objs if o[6] >= 0.5 and 0 <= o[1] < 256 and 0 <= o[2] < 256]
            for c in st:
                tc = [o for o in truth if int(o[0]) == c]
                used = set()
                st[c][2] += len(tc)
                for d in sorted([d for d in dets if d[0] == c], key=lambda d: -d[1]):
                    best = None
                    for k, o in enumerate(tc):
                        if k not in used and np.hypot(o[1] - d[2], o[2] - d[3]) < 0.5 * o[4] and 0.5 < d[4] / o[3] < 2:
                            best = k
                            break
                    if best is None:
                        st[c][1] += 1
                    else:
                        used.add(best)
                        st[c][0] += 1
        msg = " ".join(f"{CLASSES[c]} R={s[0]/max(1,s[2]):.2f} P={s[0]/max(1,s[0]+s[1]):.2f} (n={s[2]})" for c, s in st.items())
        print(f"gsd {g}: {msg}", flush=True)


if __name__ == "__main__":
    torch.set_num_threads(1)
    run(sys.argv[1])
