"""Training chips and validation sets from the real labelled imagery (the folder given by --real, default
../shared/realdata; its README gives the sources and licences).

Drone frames (aerial-cars-drone, YOLO labels: 0 car, 1 truck, 2 bus, 3 minibus, 4 cyclist): every motor vehicle is a
`vehicle`; cyclists become ignore regions (neither positive nor negative). Split by sequence, never by frame:
DJI_0762 and DJI_0013 are validation, DJI-00760 and DJI_0005 training. Each sequence's GSD is estimated from its
cars (median longer box side taken as 4.6 m; a car's axis-aligned box is a little longer than the car when it is
not parallel to the frame). The labels are axis-aligned boxes, so the objects carry angle NaN: the training targets
use their heatmap peak and centre offset only (targets.build), never their size or angle.

Roof crops (roofs-pv-registry, 0.2 m, EPSG:2056): the crops labelled by eye (labels/*.json, rule in LABELS.md),
split by 2 km blocks (roof_split.py): arrays as oriented boxes (minimum-area rectangle of the drawn corners), cars
as centre points (angle NaN, like the drone boxes). Crops are laid out 4 x 4 into mosaics so that a chip holds
several roofs; every unlabelled object on them (dormers, skylights, chimneys, trees) is a negative.

Each source image is degraded to a random sensor GSD (Gaussian point-spread of 0.3-0.6 sensor pixels, area
average, light radiometry) and resampled to the model's 0.3 m grid as resample.ts does (area average down,
bilinear up), the way degrade.sensor treats synthetic renders.

Usage: /usr/bin/python3 models/train/real/real_chips.py --out WORK [--real DIR] [--variants 6] [--seed 1]
Writes WORK/real-drone/shard_*.npz and WORK/real-roofs/shard_*.npz (training, train.py's shard format) and
WORK/real-val/{drone,roofs}-g{GSD}.npz (validation images at 0.15 / 0.3 / 0.45 / 0.6 / 0.8 m with their truth)."""
import argparse
import glob
import json
import math
import os
import sys

import numpy as np
import torch
import torch.nn.functional as F
from PIL import Image

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, os.path.dirname(HERE))
from degrade import gaussian_blur  # noqa: E402

MODEL_GSD_M = 0.3
CAR_LENGTH_M = 4.6  # typical European car length (common practice, no source); see the module doc
VAL_SEQUENCES = ("DJI_0762", "DJI_0013")
EVAL_GSDS_M = (0.15, 0.3, 0.45, 0.6, 0.8)
ROOF_GSD_M = 0.2
ROOF_CAR_PX_M = 3.6  # heatmap extent given to a car point (a car at unknown heading), metres
MOSAIC = 4


def load_drone(real):
    """{sequence: [(name, image uint8 HxWx3, boxes float [K,5] class cx cy w h in px)]} and {sequence: gsd_m}."""
    seqs = {}
    for jpg in sorted(glob.glob(os.path.join(real, "aerial-cars-drone", "*.jpg"))):
        name = os.path.basename(jpg)[:-4]
        img = np.asarray(Image.open(jpg).convert("RGB"))
        H, W = img.shape[:2]
        rows = [list(map(float, ln.split())) for ln in open(jpg[:-4] + ".txt") if ln.strip()]
        b = np.array(rows, np.float32).reshape(-1, 5)
        b[:, [1, 3]] *= W
        b[:, [2, 4]] *= H
        seq = name[: name.rfind("-")]
        seqs.setdefault(seq, []).append((name, img, b))
    gsd = {}
    for seq, frames in seqs.items():
        cars = np.concatenate([f[2][f[2][:, 0] == 0] for f in frames])
        gsd[seq] = CAR_LENGTH_M / float(np.median(np.maximum(cars[:, 3], cars[:, 4])))
    return seqs, gsd


def to_model_grid(img, src_gsd_m, sensor_gsd_m, rng, radiometry=True):
    """Degrade an image at src_gsd_m to a sensor at sensor_gsd_m and resample to the 0.3 m grid. Returns float32
    0..255 and the scale factor from source px to output px."""
    t = torch.from_numpy(np.ascontiguousarray(img.transpose(2, 0, 1), dtype=np.float32))[None]
    H, W = img.shape[:2]
    ratio = sensor_gsd_m / src_gsd_m
    if ratio > 1:
        t = gaussian_blur(t, rng.uniform(0.3, 0.6) * ratio)
        t = F.interpolate(t, size=(max(8, round(H / ratio)), max(8, round(W / ratio))), mode="area")
    if radiometry:
        x = t / 255.0
        x = x.clamp(0, 1) ** float(rng.uniform(0.85, 1.2))
        x = x * torch.from_numpy(rng.uniform(0.92, 1.08, 3).astype(np.float32)).view(1, 3, 1, 1) * float(rng.uniform(0.85, 1.15))
        x = x + torch.randn_like(x) * float(rng.uniform(0.0, 0.015))
        t = (x.clamp(0, 1) * 255).round()
    outH, outW = round(H * src_gsd_m / MODEL_GSD_M), round(W * src_gsd_m / MODEL_GSD_M)
    if t.shape[-1] > outW:
        t = F.interpolate(t, size=(outH, outW), mode="area")
    else:
        t = F.interpolate(t, size=(outH, outW), mode="bilinear", align_corners=False)
    return np.clip(t[0].numpy().transpose(1, 2, 0), 0, 255), outW / W


def drone_objects(boxes, s):
    """[K,7] class, cx, cy, L, W, angle, visible in output px; vehicles with angle NaN, cyclists as ignore regions."""
    out = []
    for c, cx, cy, w, h in boxes:
        if int(c) == 4:
            out.append([0, cx * s, cy * s, w * s, h * s, math.nan, 0.0])
        else:
            out.append([0, cx * s, cy * s, w * s, h * s, math.nan, 1.0])
    return np.array(out, np.float32).reshape(-1, 7)


def min_area_rect(pts):
    """Minimum-area enclosing rectangle of a polygon (rotating the hull's edges): cx, cy, length, width, angle of the
    length axis (pixel frame, y down)."""
    p = np.asarray(pts, np.float64)
    best = None
    for i in range(len(p)):
        e = p[(i + 1) % len(p)] - p[i]
        n = np.hypot(*e)
        if n < 1e-9:
            continue
        u = e / n
        v = np.array([-u[1], u[0]])
        a, b = p @ u, p @ v
        area = (a.max() - a.min()) * (b.max() - b.min())
        if best is None or area < best[0]:
            c = u * (a.max() + a.min()) / 2 + v * (b.max() + b.min()) / 2
            la, lb = a.max() - a.min(), b.max() - b.min()
            ang = math.atan2(u[1], u[0]) if la >= lb else math.atan2(v[1], v[0])
            best = (area, c[0], c[1], max(la, lb), min(la, lb), ang)
    return best[1:]


def load_roof_labels(names):
    crops = {}
    for f in sorted(glob.glob(os.path.join(HERE, "labels", "roofs-*.json"))):
        for c in json.load(open(f))["crops"]:
            if c["crop"] in names:
                crops[c["crop"]] = c
    return crops


def roof_mosaics(real, labels, rng, n_mosaics, blank_fill=False):
    """Mosaics of MOSAIC x MOSAIC labelled crops: (image uint8 at 0.2 m, objects [K,7] in 0.2 m px, [(crop, x0, y0)],
    array polygons in 0.2 m px). blank_fill: each crop once, the last mosaic filled with grey tiles (validation)."""
    names = sorted(labels)
    out = []
    order = []
    while len(order) < n_mosaics * MOSAIC * MOSAIC:
        order += [names[i] for i in rng.permutation(len(names))]
        if blank_fill:
            order += [None] * (n_mosaics * MOSAIC * MOSAIC - len(order))
    for m in range(n_mosaics):
        pick = order[m * MOSAIC * MOSAIC:(m + 1) * MOSAIC * MOSAIC]
        s = 125
        img = np.full((s * MOSAIC, s * MOSAIC, 3), 128, np.uint8)
        objs, where, polys = [], [], []
        for k, n in enumerate(pick):
            if n is None:
                continue
            t = np.asarray(Image.open(os.path.join(real, "roofs-pv-registry", "crops", n)).convert("RGB"))
            y0, x0 = (k // MOSAIC) * s, (k % MOSAIC) * s
            img[y0:y0 + s, x0:x0 + s] = t[:s, :s]
            where.append((n, x0, y0))
            lab = labels[n]
            for a in lab["arrays"]:
                cx, cy, L, W, ang = min_area_rect(a["corners"])
                objs.append([1, cx + x0, cy + y0, L, W, ang, 1.0])
                polys.append([[x + x0, y + y0] for x, y in a["corners"]])
            for vx, vy in lab["vehicles"]:
                d = ROOF_CAR_PX_M / ROOF_GSD_M
                objs.append([0, vx + x0, vy + y0, d, d, math.nan, 1.0])
        out.append((img, np.array(objs, np.float32).reshape(-1, 7), where, polys))
    return out


def square_chips_from_drone(frames, gsd, rng, variants):
    """Chips at the model grid from two frames stacked (a drone frame is wider than tall): square, side = width."""
    chips = []
    for _ in range(variants):
        for i in range(len(frames)):
            parts = [frames[i], frames[rng.integers(len(frames))]]
            g = float(np.exp(rng.uniform(np.log(0.15), np.log(0.6))))
            imgs, objs, yoff = [], [], 0
            for seq, (name, img, boxes) in parts:
                im, s = to_model_grid(img, gsd[seq], g, rng)
                o = drone_objects(boxes, s)
                o[:, 2] += yoff
                imgs.append(im); objs.append(o)
                yoff += im.shape[0]
            W = min(im.shape[1] for im in imgs)
            stack = np.concatenate([im[:, :W] for im in imgs], 0)
            side = min(W, stack.shape[0])
            chip = stack[:side, :side]
            o = np.concatenate(objs)
            o = o[(o[:, 1] < side) & (o[:, 2] < side)]
            chips.append((chip.astype(np.uint8), o))
    return chips


def pad_stack(imgs):
    """Images of different sizes in one array (grey padding; the true sizes are stored beside them)."""
    H, W = max(i.shape[0] for i in imgs), max(i.shape[1] for i in imgs)
    out = np.full((len(imgs), H, W, 3), 128, np.uint8)
    for k, i in enumerate(imgs):
        out[k, :i.shape[0], :i.shape[1]] = i
    return out


def write_shards(chips, out_dir, per_shard=32):
    os.makedirs(out_dir, exist_ok=True)
    for f in glob.glob(os.path.join(out_dir, "shard_*.npz")):
        os.remove(f)
    by_size = {}
    for c in chips:
        by_size.setdefault(c[0].shape[0], []).append(c)
    k = 0
    for side, cs in sorted(by_size.items()):
        for i in range(0, len(cs), per_shard):
            part = cs[i:i + per_shard]
            objs = [np.concatenate([np.full((len(o), 1), j, np.float32), o], 1) for j, (_, o) in enumerate(part)]
            np.savez(os.path.join(out_dir, f"shard_{k:03d}.npz"), images=np.stack([c[0] for c in part]),
                     objects=np.concatenate(objs).astype(np.float32))
            k += 1
    return k


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--real", default=os.path.join(HERE, "..", "..", "..", "..", "shared", "realdata"))
    ap.add_argument("--out", required=True)
    ap.add_argument("--variants", type=int, default=6, help="random sensor GSDs per training image")
    ap.add_argument("--seed", type=int, default=1)
    ap.add_argument("--val-only", action="store_true", help="write the validation sets only")
    a = ap.parse_args()
    if not os.path.isdir(os.path.join(a.real, "aerial-cars-drone")):
        sys.exit(f"No real data at {a.real}: pass --real DIR (a folder with aerial-cars-drone/ and roofs-pv-registry/).")
    rng = np.random.default_rng(a.seed)
    seqs, gsd = load_drone(a.real)
    print("drone GSD per sequence (m):", {k: round(v, 4) for k, v in gsd.items()})
    train_frames = [(s, f) for s in sorted(seqs) if s not in VAL_SEQUENCES for f in seqs[s]]
    val_frames = [(s, f) for s in sorted(seqs) if s in VAL_SEQUENCES for f in seqs[s]]
    if a.val_only:
        a.variants = 0
    chips = square_chips_from_drone(train_frames, gsd, rng, a.variants)
    if not a.val_only:
        print("drone training chips:", write_shards(chips, os.path.join(a.out, "real-drone")), "shards,", len(chips), "chips,",
          int(sum((o[:, 6] > 0).sum() for _, o in chips)), "vehicles")

    split = json.load(open(os.path.join(HERE, "split.json")))
    train_lab = load_roof_labels(set(split["trainLabel"]))
    val_lab = load_roof_labels(set(split["valLabel"]))
    chips = []
    for _ in range(a.variants):
        for img, o, _, _ in roof_mosaics(a.real, train_lab, rng, max(1, len(train_lab) // (MOSAIC * MOSAIC))):
            sg = float(rng.uniform(ROOF_GSD_M, 0.5))
            im, s = to_model_grid(img, ROOF_GSD_M, sg, rng)
            o = o.copy()
            o[:, 1:5] *= s
            chips.append((im.astype(np.uint8), o))
    if not a.val_only:
        print("roof training chips:", write_shards(chips, os.path.join(a.out, "real-roofs")), "shards,", len(chips), "chips")

    # validation: fixed seed per set, no radiometry beyond the sensor model, every evaluation GSD
    vdir = os.path.join(a.out, "real-val")
    os.makedirs(vdir, exist_ok=True)
    for g in EVAL_GSDS_M:
        r = np.random.default_rng(int(g * 1000))
        imgs, objs, names = [], [], []
        for seq, (name, img, boxes) in val_frames:
            im, s = to_model_grid(img, gsd[seq], max(g, gsd[seq]), r, radiometry=False)
            imgs.append(im.astype(np.uint8)); objs.append(drone_objects(boxes, s)); names.append(name)
        np.savez(os.path.join(vdir, f"drone-g{g}.npz"), images=pad_stack(imgs), shapes=np.array([i.shape[:2] for i in imgs]),
                 names=np.array(names),
                 objects=np.concatenate([np.concatenate([np.full((len(o), 1), j, np.float32), o], 1) for j, o in enumerate(objs)]))
        r = np.random.default_rng(int(g * 1000) + 1)
        mos = roof_mosaics(a.real, val_lab, np.random.default_rng(99), math.ceil(len(val_lab) / (MOSAIC * MOSAIC)), True)
        imgs, objs, wh, pl = [], [], [], []
        for j, (img, o, where, polys) in enumerate(mos):
            im, s = to_model_grid(img, ROOF_GSD_M, max(g, ROOF_GSD_M), r, radiometry=False)
            o = o.copy(); o[:, 1:5] *= s
            imgs.append(im.astype(np.uint8)); objs.append(np.concatenate([np.full((len(o), 1), j, np.float32), o], 1))
            wh += [(j, n, x0 * s, y0 * s, 125 * s) for n, x0, y0 in where]
            pl += [(j, [[x * s, y * s] for x, y in p]) for p in polys]
        np.savez(os.path.join(vdir, f"roofs-g{g}.npz"), images=np.stack(imgs), objects=np.concatenate(objs),
                 tiles=json.dumps(wh), polygons=json.dumps(pl))
    print("validation sets written to", vdir)


if __name__ == "__main__":
    main()
