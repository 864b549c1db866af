"""Train seamtally-det from scratch on CPU: chips from shards (procedural chips from gen_worker.py and synthesizer
chips from chips.ts), CenterNet focal loss + L1 regressions, Adam with a time-based cosine schedule; exports ONNX
(export.py) at the end and at checkpoints."""
import argparse
import glob
import json
import math
import os
import sys
import time
import numpy as np
import torch
import torch.nn.functional as F

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from model import CLASSES  # noqa: E402
from arch import make_model  # noqa: E402
from targets import build, dihedral, MAX_OBJ  # noqa: E402
from degrade import jitter, strong_jitter, fake_shadows, shade_regions, beside_shadows  # noqa: E402


def load_shard(path):
    """(images uint8 [N,px,px,3], objects float32 [M,8] chip index first) from an .npz or a .json + .u8 pair."""
    if path.endswith(".npz"):
        z = np.load(path)
        return z["images"], z["objects"]
    meta = json.load(open(path))
    n, px = meta["n"], meta["px"]
    imgs = np.fromfile(path[:-5] + ".u8", np.uint8).reshape(n, px, px, 3)
    objs = np.array(meta["objects"], np.float32).reshape(-1, 8)
    return imgs, objs


def visible_arrays(objs):
    """Mask of the mostly visible solar_panel arrays (class 1, visible >= 0.5) among a chip's objects."""
    return (objs[:, 0] == 1) & (objs[:, 6] >= 0.5)


class ShardPool:
    """All chips of the shards found so far, per source; rescanned as generators add shards."""

    def __init__(self, dirs):
        self.dirs = dirs
        self.seen = set()
        self.chips = {d: [] for d in dirs}

    def rescan(self):
        for d in self.dirs:
            for f in sorted(glob.glob(os.path.join(d, "shard_*.npz")) + glob.glob(os.path.join(d, "shard_*.json"))):
                if f in self.seen:
                    continue
                try:
                    imgs, objs = load_shard(f)
                except Exception:
                    continue
                self.seen.add(f)
                for i in range(len(imgs)):
                    self.chips[d].append((imgs[i], objs[objs[:, 0] == i][:, 1:]))
        return {os.path.basename(d): len(v) for d, v in self.chips.items()}

    def solar(self):
        """Chips holding at least one mostly visible solar_panel array (class 1), over all sources."""
        if not hasattr(self, "_solar"):
            self._solar = [(d, c) for d in self.dirs for c in self.chips[d]
                           if len(c[1]) and visible_arrays(c[1]).any()]
        return self._solar

    def wide(self, min_px=20.0):
        """Chips holding a mostly visible array whose smaller side is at least min_px (6 m at 0.3 m): flat-roof blocks."""
        if not hasattr(self, "_wide"):
            self._wide = [(d, c) for d, c in self.solar()
                          if (visible_arrays(c[1]) & (np.minimum(c[1][:, 3], c[1][:, 4]) >= min_px)).any()]
        return self._wide

    def sample(self, rng, weights, solar_frac=0.0, wide_frac=0.0):
        u = rng.random()
        if wide_frac > 0 and self.wide() and u < wide_frac:
            return self._wide[rng.integers(len(self._wide))]
        if solar_frac > 0 and self.solar() and u < wide_frac + solar_frac:
            return self._solar[rng.integers(len(self._solar))]
        live = [(d, w) for d, w in zip(self.dirs, weights) if self.chips[d]]
        p = np.array([w for _, w in live], np.float64)
        d = live[rng.choice(len(live), p=p / p.sum())][0]
        lst = self.chips[d]
        return d, lst[rng.integers(len(lst))]


def focal_loss(logits, gt, ignore):
    """CenterNet penalty-reduced pixel-wise focal loss (alpha 2, beta 4), normalised by the number of peaks."""
    p = torch.sigmoid(logits).clamp(1e-4, 1 - 1e-4)
    pos = gt.eq(1).float()
    neg = (1 - pos) * (1 - ignore)
    pos_l = torch.log(p) * (1 - p) ** 2 * pos
    neg_l = torch.log(1 - p) * p ** 2 * (1 - gt) ** 4 * neg
    npos = pos.sum()
    return -(pos_l.sum() + neg_l.sum()) / torch.clamp(npos, min=1.0)


def colour_stats(pool, dirs):
    """Per-band mean and standard deviation of every chip of the given sources (real photographs)."""
    out = []
    for d in dirs:
        for img, _ in pool.chips.get(d, []):
            x = img.reshape(-1, 3).astype(np.float32)
            out.append((x.mean(0), x.std(0) + 1.0))
    return out


def real_colour(img, stats, rng):
    """Give a chip the per-band mean and spread of a random real photograph (Reinhard-style colour transfer, per band
    in RGB), half-way to fully."""
    m, sd = stats[rng.integers(len(stats))]
    x = img.reshape(-1, 3)
    mi, si = x.mean(0), x.std(0) + 1.0
    t = rng.uniform(0.5, 1.0)
    target_m, target_s = mi + t * (m - mi), si + t * (sd - si)
    return np.clip((img - mi) / si * target_s + target_m, 0, 255).astype(np.float32)


def make_batch(pool, rng, bs, px, weights, synth_dirs, strong=False, solar_frac=0.0, shadow_p=0.0, wide_frac=0.0, size_w=None,
               shade_p=0.0, beside_p=0.0, colour=None, colour_p=0.0):
    xs, hms, igs, inds, regs, wts = [], [], [], [], [], []
    for _ in range(bs):
        d, (img, objs) = pool.sample(rng, weights, solar_frac, wide_frac)
        if img.shape[0] > px:  # random crop of a larger chip
            ox, oy = rng.integers(0, img.shape[1] - px + 1), rng.integers(0, img.shape[0] - px + 1)
            img = img[oy:oy + px, ox:ox + px]
            objs = objs.copy()
            objs[:, 1] -= ox
            objs[:, 2] -= oy
        img, objs = dihedral(img, objs, int(rng.integers(0, 8)), px)
        img = img.astype(np.float32)
        if shadow_p > 0 and rng.random() < shadow_p:
            img = fake_shadows(img, objs, rng)
        if beside_p > 0 and rng.random() < beside_p:
            img = beside_shadows(img, objs, rng)
        if shade_p > 0 and rng.random() < shade_p:
            img = shade_regions(img, rng)
        if colour and d in synth_dirs and rng.random() < colour_p:
            img = real_colour(img, colour, rng)
        if strong:
            img = strong_jitter(img, rng)
        elif d in synth_dirs:
            img = jitter(img, rng)
        t = build(objs, px, len(CLASSES), size_w)
        xs.append(img.transpose(2, 0, 1) / 255.0)
        hms.append(t["hm"]); igs.append(t["ignore"]); inds.append(t["ind"]); regs.append(t["reg"]); wts.append(t["wt"])
    f = lambda a: torch.from_numpy(np.stack(a))  # noqa: E731
    return f(xs).float(), f(hms), f(igs), f(inds), f(regs), f(wts)


def losses(model, batch):
    x, hm, ig, ind, reg, wt = batch
    out_hm, out_reg = model(x)
    l_hm = focal_loss(out_hm, hm, ig)
    n, c, h, w = out_reg.shape
    pred = out_reg.view(n, c, h * w).gather(2, ind.unsqueeze(1).expand(n, c, MAX_OBJ)).permute(0, 2, 1)
    m = (wt[..., 1] > 0).float()  # every object; real labels without size or angle have weight 0 there
    denom = torch.clamp(m.sum(), min=1.0)
    l_size = (F.l1_loss(pred[..., 0:2], reg[..., 0:2], reduction="none").sum(-1) * wt[..., 0]).sum() / denom
    l_off = (F.l1_loss(pred[..., 2:4], reg[..., 2:4], reduction="none").sum(-1) * m).sum() / denom
    l_ang = (F.l1_loss(pred[..., 4:6], reg[..., 4:6], reduction="none").sum(-1) * wt[..., 2]).sum() / denom
    return l_hm, l_size, l_off, l_ang


def main():
    ap = argparse.ArgumentParser()
    ap.add_argument("--sources", nargs="+", required=True, help="shard directories")
    ap.add_argument("--weights", nargs="+", type=float, default=None)
    ap.add_argument("--synth", nargs="*", default=[], help="which of the sources are synthesizer chips")
    ap.add_argument("--minutes", type=float, default=30)
    ap.add_argument("--bs", type=int, default=16)
    ap.add_argument("--px", type=int, default=256)
    ap.add_argument("--lr", type=float, default=2e-3)
    ap.add_argument("--init", default=None, help="checkpoint to start from (fine-tuning)")
    ap.add_argument("--ckpt", required=True)
    ap.add_argument("--export", default=None, help="ONNX path written at every checkpoint and at the end")
    ap.add_argument("--seed", type=int, default=7)
    ap.add_argument("--threads", type=int, default=2)
    ap.add_argument("--strong-aug", action="store_true", help="wide colour/light/blur/noise jitter on every chip")
    ap.add_argument("--solar-frac", type=float, default=0.0, help="share of chips drawn from those with arrays")
    ap.add_argument("--wide-frac", type=float, default=0.0, help="share of chips drawn from those with a wide (>= 6 m) array")
    ap.add_argument("--solar-size-w", type=float, default=1.0, help="weight of the size loss of solar_panel objects (vehicles: 1)")
    ap.add_argument("--shadow-p", type=float, default=0.0, help="chance of unlabelled fake cast shadows per chip")
    ap.add_argument("--shade-p", type=float, default=0.0, help="chance of unlabelled building-like shade over part of a chip")
    ap.add_argument("--beside-p", type=float, default=0.0, help="chance of unlabelled car-sized dark patches beside labelled cars")
    ap.add_argument("--warmup", type=int, default=150, help="warm-up steps")
    ap.add_argument("--colour-from", nargs="*", default=[], help="sources (real photographs) whose colour statistics "
                    "synthesizer chips are given, with chance --colour-p")
    ap.add_argument("--colour-p", type=float, default=0.0)
    ap.add_argument("--arch", default="plain", help="plain (SeamtallyDet) or mbv1-0.25 (MobileNet V1 backbone)")
    ap.add_argument("--pretrained", default=None, help="converted ImageNet MobileNet (mobilenet/convert.py) for --arch mbv1-*")
    ap.add_argument("--freeze-bn", action="store_true",
                    help="keep BatchNorm in inference mode (needed when --init comes from from_onnx.py)")
    a = ap.parse_args()
    torch.set_num_threads(a.threads)
    torch.manual_seed(a.seed)
    rng = np.random.default_rng(a.seed)
    weights = a.weights or [1.0] * len(a.sources)
    pool = ShardPool(a.sources)
    while sum(pool.rescan().values()) < a.bs * 4:
        print("waiting for shards ...", pool.rescan(), flush=True)
        time.sleep(10)
    if a.wide_frac > 0 or a.solar_frac > 0:
        print(f"chips with arrays: {len(pool.solar())}, with a wide array: {len(pool.wide())}", flush=True)
    colour = colour_stats(pool, a.colour_from) if a.colour_p > 0 else None
    model = make_model(a.arch, a.pretrained)
    opt = torch.optim.Adam(model.parameters(), lr=a.lr)
    t0 = time.time()
    budget = a.minutes * 60
    step, last_ck, avg = 0, t0, None
    if os.path.exists(a.ckpt):  # resume: a finished stage is skipped, an interrupted one goes on from its checkpoint
        ck = torch.load(a.ckpt)
        if ck.get("done"):
            print(f"{a.ckpt} is finished ({ck['step']} steps): skipping", flush=True)
            return
        if "elapsed" in ck:
            model.load_state_dict(ck["model"])
            opt.load_state_dict(ck["opt"])
            step, t0 = ck["step"], time.time() - ck["elapsed"]
            rng = np.random.default_rng(a.seed + step)
            print(f"resuming {a.ckpt} at step {step}, {ck['elapsed']:.0f} s of {budget:.0f}", flush=True)
    if a.init and step == 0:
        model.load_state_dict(torch.load(a.init)["model"])
    while True:
        frac = (time.time() - t0) / budget
        if frac >= 1:
            break
        lr = a.lr * min(1.0, (step + 1) / a.warmup) * (0.02 + 0.98 * 0.5 * (1 + math.cos(math.pi * frac)))
        for g in opt.param_groups:
            g["lr"] = lr
        model.train()
        if a.freeze_bn:
            for mod in model.modules():
                if isinstance(mod, torch.nn.BatchNorm2d):
                    mod.eval()
        batch = make_batch(pool, rng, a.bs, a.px, weights, set(a.synth), a.strong_aug, a.solar_frac, a.shadow_p, a.wide_frac, [1.0, a.solar_size_w],
                           a.shade_p, a.beside_p, colour, a.colour_p)
        l_hm, l_size, l_off, l_ang = losses(model, batch)
        loss = l_hm + 0.5 * l_size + l_off + 0.5 * l_ang
        opt.zero_grad()
        loss.backward()
        torch.nn.utils.clip_grad_norm_(model.parameters(), 10.0)
        opt.step()
        v = np.array([loss.item(), l_hm.item(), l_size.item(), l_off.item(), l_ang.item()])
        avg = v if avg is None else 0.98 * avg + 0.02 * v
        step += 1
        if step % 50 == 0:
            counts = pool.rescan()
            print(f"step {step} t={time.time()-t0:.0f}s lr={lr:.2e} loss={avg[0]:.3f} hm={avg[1]:.3f} size={avg[2]:.3f}"
                  f" off={avg[3]:.3f} ang={avg[4]:.3f} chips={counts}", flush=True)
        if time.time() - last_ck > 300:
            save(model, a, step, opt, time.time() - t0)
            last_ck = time.time()
    save(model, a, step, opt, time.time() - t0, done=True)
    print(f"done: {step} steps, {step * a.bs} chips, {time.time() - t0:.0f}s", flush=True)


def save(model, a, step, opt, elapsed, done=False):
    tmp = a.ckpt + ".tmp"
    torch.save({"model": model.state_dict(), "arch": a.arch, "step": step, "opt": opt.state_dict(), "elapsed": elapsed,
                "done": done}, tmp)
    os.replace(tmp, a.ckpt)  # a stop while writing never leaves a broken checkpoint
    if a.export:
        from export import export_onnx
        export_onnx(a.ckpt, a.export)


if __name__ == "__main__":
    main()
