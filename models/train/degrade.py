"""Sensor and radiometry randomisation shared by every training source: point-spread blur, pixel aggregation to a
sensor GSD, shot/read noise, bit depth, band layout (pan replicated), per-scene-like percentile stretch and colour
jitter. Images are float32 HxWx3 in 0..255 (8-bit display range)."""
import math
import numpy as np
import torch
import torch.nn.functional as F


def gaussian_blur(t, sigma):
    """t: [1,C,H,W]; separable Gaussian, reflect padding."""
    if sigma < 0.3:
        return t
    r = max(1, int(math.ceil(2.5 * sigma)))
    x = torch.arange(-r, r + 1, dtype=torch.float32)
    k = torch.exp(-0.5 * (x / sigma) ** 2)
    k = k / k.sum()
    c = t.shape[1]
    t = F.pad(t, (r, r, r, r), mode="reflect")
    t = F.conv2d(t, k.view(1, 1, 1, -1).repeat(c, 1, 1, 1), groups=c)
    return F.conv2d(t, k.view(1, 1, -1, 1).repeat(c, 1, 1, 1), groups=c)


def percentile_stretch(img, rng, lo_pct=None, hi_pct=None):
    """Map [p_lo, p_hi] of all bands to 0..255 (the pipeline computes these per scene from an overview)."""
    # the pipeline's default is 1 / 99 over all three bands together, from an overview (radiometry.ts)
    lo_pct = rng.uniform(0.5, 2) if lo_pct is None else lo_pct
    hi_pct = rng.uniform(98, 99.5) if hi_pct is None else hi_pct
    lo, hi = np.percentile(img, [lo_pct, hi_pct])
    return np.clip((img - lo) * (255.0 / max(hi - lo, 1e-3)), 0, 255)


def sensor(img_fine, fine_gsd_m, sensor_gsd_m, out_px, rng):
    """Degrade a fine render to a sensor at sensor_gsd_m and resample to an out_px grid over the same extent."""
    t = torch.from_numpy(np.ascontiguousarray(img_fine.transpose(2, 0, 1)))[None]
    ratio = sensor_gsd_m / fine_gsd_m
    t = gaussian_blur(t, rng.uniform(0.3, 0.6) * ratio)
    n_sensor = max(8, int(round(t.shape[-1] / ratio)))
    t = F.interpolate(t, size=(n_sensor, n_sensor), mode="area" if ratio >= 1 else "bilinear",
                      align_corners=None if ratio >= 1 else False)
    img = t[0].numpy().transpose(1, 2, 0)
    img = radiometry(img, rng)
    t = torch.from_numpy(np.ascontiguousarray(img.transpose(2, 0, 1)))[None]
    # as resample.ts: area average when downsampling, bilinear (pixel-centre aligned) when upsampling
    if n_sensor > out_px:
        t = F.interpolate(t, size=(out_px, out_px), mode="area")
    else:
        t = F.interpolate(t, size=(out_px, out_px), mode="bilinear", align_corners=False)
    return np.clip(t[0].numpy().transpose(1, 2, 0), 0, 255)


def radiometry(img, rng):
    """Lighting, colour, haze, noise, bit depth, band layout, then a percentile stretch back to 0..255."""
    img = img / 255.0
    img = np.clip(img, 0, 1) ** rng.uniform(0.7, 1.4)
    img = img * rng.uniform(0.85, 1.15, 3).astype(np.float32) * rng.uniform(0.5, 1.2)
    if rng.random() < 0.3:  # haze
        img = img * rng.uniform(0.6, 0.95) + rng.uniform(0.05, 0.3)
    if rng.random() < 0.08:
        img = img[..., rng.permutation(3)]
    bits = rng.choice([8, 11, 12, 16], p=[0.4, 0.25, 0.25, 0.1])
    full = float(2 ** bits - 1)
    dn = img * full * (rng.uniform(0.6, 1.0) if bits == 8 else rng.uniform(0.15, 0.9))
    noise_rel = rng.uniform(0.002, 0.03)
    dn = dn + rng.standard_normal(dn.shape).astype(np.float32) * (noise_rel * full * 0.3 + np.sqrt(np.maximum(dn, 0) *
                                                                                             noise_rel * full * 0.05))
    dn = np.round(np.clip(dn, 0, full))
    if rng.random() < 0.15:  # panchromatic: replicated to three bands as the pipeline does
        g = dn @ np.array([0.3, 0.45, 0.25], np.float32)
        dn = np.repeat(g[..., None], 3, axis=2)
    if bits == 8:  # the pipeline passes 8-bit data through unchanged (radiometry.ts: identity stretch)
        return dn.astype(np.float32)
    return percentile_stretch(dn.astype(np.float32), rng).astype(np.float32)


def jitter(img, rng):
    """Mild photometric jitter for already-rendered chips (synthesizer scenes): gamma, gains, noise."""
    x = np.clip(img / 255.0, 0, 1) ** rng.uniform(0.8, 1.25)
    x = x * rng.uniform(0.9, 1.1, 3).astype(np.float32) * rng.uniform(0.85, 1.15)
    x = x + rng.standard_normal(x.shape).astype(np.float32) * rng.uniform(0, 0.02)
    if rng.random() < 0.05:
        x = x[..., rng.permutation(3)]
    return np.clip(x * 255, 0, 255).astype(np.float32)


def sample_sensor_gsd(rng):
    """Sensor GSD in metres: log-uniform 0.12-0.9 m (covers the 0.15-0.8 m evaluation grid)."""
    return float(math.exp(rng.uniform(math.log(0.12), math.log(0.9))))


def strong_jitter(img, rng):
    """Wider photometric randomisation (training stage 4, for unseen light / sensors): gamma, contrast, brightness,
    per-band gains, saturation, haze / colour cast, optional blur and noise, band permutation."""
    x = np.clip(img / 255.0, 0, 1) ** rng.uniform(0.65, 1.5)
    m = x.mean()
    x = (x - m) * rng.uniform(0.65, 1.35) + m * rng.uniform(0.7, 1.3)
    x = x * rng.uniform(0.8, 1.2, 3).astype(np.float32)
    if rng.random() < 0.4:  # saturation: towards grey or away from it
        g = x.mean(-1, keepdims=True)
        x = g + (x - g) * rng.uniform(0.0, 1.6)
    if rng.random() < 0.3:  # haze / colour cast
        x = x * (1 - (a := rng.uniform(0.05, 0.3))) + a * rng.uniform(0.5, 1.0, 3).astype(np.float32)
    if rng.random() < 0.3:
        t = torch.from_numpy(np.ascontiguousarray(x.transpose(2, 0, 1), dtype=np.float32))[None]
        x = gaussian_blur(t, rng.uniform(0.4, 1.3))[0].numpy().transpose(1, 2, 0)
    x = x + rng.standard_normal(x.shape).astype(np.float32) * rng.uniform(0, 0.04)
    if rng.random() < 0.1:
        x = x[..., rng.permutation(3)]
    return np.clip(x * 255, 0, 255).astype(np.float32)


def fake_shadows(img, objs, rng, px_per_m=1 / 0.3):
    """Hard negatives: unlabelled car-sized or longer dark soft-edged rotated bars (like low-sun cast shadows),
    multiplied into the image (ground texture stays) away from labelled object centres."""
    h, w = img.shape[:2]
    out = img.copy()
    yy, xx = np.mgrid[0:h, 0:w].astype(np.float32)
    for _ in range(int(rng.integers(1, 8))):
        cx, cy = rng.uniform(0, w), rng.uniform(0, h)
        if len(objs) and (np.hypot(objs[:, 1] - cx, objs[:, 2] - cy) < 12).any():
            continue
        ln = rng.uniform(4.0, 12.0) * px_per_m
        wd = rng.uniform(1.5, 2.3) * px_per_m
        a = rng.uniform(0, math.pi)
        u = (xx - cx) * math.cos(a) + (yy - cy) * math.sin(a)
        v = -(xx - cx) * math.sin(a) + (yy - cy) * math.cos(a)
        inside = np.clip(1.5 - np.maximum(np.abs(u) / (ln / 2), np.abs(v) / (wd / 2)) * 1.5 + 0.5, 0, 1)
        out *= (1 - inside * rng.uniform(0.35, 0.65))[..., None]
    return out


def shade_regions(img, rng):
    """Unlabelled building-like shade over part of the chip (stage 9): a soft-edged half-plane or wide rotated band,
    darkened to 25-60 % with a slight blue cast (sky light only), over objects and ground alike, so that being dark
    and in shade is not a cue for "car" (the false positives of version 6 are mostly shaded empty stalls)."""
    h, w = img.shape[:2]
    yy, xx = np.mgrid[0:h, 0:w].astype(np.float32)
    a = rng.uniform(0, 2 * math.pi)
    cx, cy = rng.uniform(0.2, 0.8) * w, rng.uniform(0.2, 0.8) * h
    u = (xx - cx) * math.cos(a) + (yy - cy) * math.sin(a)
    soft = rng.uniform(0.7, 4.0)
    inside = np.clip(0.5 - u / (2 * soft), 0, 1)  # half-plane
    if rng.random() < 0.5:  # a band: a building's shadow across a car park
        v = -(xx - cx) * math.sin(a) + (yy - cy) * math.cos(a)
        half = rng.uniform(0.15, 0.5) * max(h, w)
        inside *= np.clip(0.5 + (half - np.abs(v)) / (2 * soft), 0, 1)
    f = rng.uniform(0.25, 0.6)
    tint = np.array([rng.uniform(0.88, 1.0), rng.uniform(0.95, 1.02), rng.uniform(1.0, 1.15)], np.float32)
    gain = 1 - inside[..., None] * (1 - f * tint)
    return np.clip(img * gain, 0, 255)


def beside_shadows(img, objs, rng):
    """Unlabelled car-footprint dark patches where a car could be but is not (stage 9): beside a labelled vehicle,
    one stall away across its axis or a car length along it or its cast-shadow side, only where no labelled object
    is near, multiplied in so the ground texture (stall lines) stays."""
    h, w = img.shape[:2]
    out = img.copy()
    cars = objs[objs[:, 0] == 0] if len(objs) else objs
    if len(cars) == 0:
        return out
    yy, xx = np.mgrid[0:h, 0:w].astype(np.float32)
    for k in rng.permutation(len(cars))[: int(rng.integers(1, 7))]:
        _, cx, cy, L, W, ang, _ = cars[k]
        if W > L:
            L, W, ang = W, L, ang + math.pi / 2
        ca, sa = math.cos(ang), math.sin(ang)
        kind = rng.random()
        if kind < 0.5:  # neighbouring stall: across the axis, ~1.3-1.6 widths
            d = rng.choice([-1, 1]) * W * rng.uniform(1.25, 1.6)
            px, py, pa = cx - sa * d, cy + ca * d, ang
        else:  # a car length away in any direction (cast shadow, next car in a row)
            t = rng.uniform(0, 2 * math.pi)
            d = L * rng.uniform(0.7, 1.1)
            px, py, pa = cx + math.cos(t) * d, cy + math.sin(t) * d, ang + rng.uniform(-0.3, 0.3)
        if not (0 <= px < w and 0 <= py < h):
            continue
        if (np.hypot(objs[:, 1] - px, objs[:, 2] - py) < 0.8 * W + 2).any():
            continue
        ln, wd = L * rng.uniform(0.8, 1.3), W * rng.uniform(0.8, 1.2)
        u = (xx - px) * math.cos(pa) + (yy - py) * math.sin(pa)
        v = -(xx - px) * math.sin(pa) + (yy - py) * math.cos(pa)
        inside = np.clip(1.5 - np.maximum(np.abs(u) / (ln / 2), np.abs(v) / (wd / 2)) * 1.5 + 0.5, 0, 1)
        out *= (1 - inside * rng.uniform(0.3, 0.7))[..., None]
    return out
