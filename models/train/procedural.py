"""Procedural training chips, independent of seamtally's scene synthesizer: a second, deliberately different "look"
(random palettes, textures, lighting, blur, noise, sensor GSD) so the detector learns shapes, not one renderer.
Each chip is rendered at 0.15 m, degraded to a random sensor GSD (0.12-0.9 m) and resampled to the model GSD 0.3 m,
exactly as the pipeline would see a scene of that GSD."""
import math
import numpy as np
import torch
import torch.nn.functional as F

FINE_GSD_M = 0.15
MODEL_GSD_M = 0.3

CAR_COLOURS = np.array([
    [235, 235, 235], [20, 20, 22], [120, 120, 124], [175, 178, 182], [60, 62, 66],  # white black grey silver dark
    [150, 20, 20], [20, 40, 120], [30, 80, 40], [200, 170, 120], [230, 200, 40], [200, 90, 30], [90, 60, 40],
], np.float32)
CAR_WEIGHTS = np.array([24, 20, 14, 14, 8, 5, 5, 2, 2, 2, 2, 2], np.float64)
CAR_WEIGHTS /= CAR_WEIGHTS.sum()


def _noise_field(rng, h, w, scales=(4, 16, 64), amps=(1.0, 0.5, 0.25)):
    """Multi-scale value noise in roughly -1..1 (bilinear-upsampled random grids)."""
    acc = torch.zeros(1, 1, h, w)
    for s, a in zip(scales, amps):
        gh, gw = max(2, h // s + 2), max(2, w // s + 2)
        g = torch.from_numpy(rng.standard_normal((1, 1, gh, gw)).astype(np.float32))
        acc += a * F.interpolate(g, size=(h, w), mode="bilinear", align_corners=False)
    return acc[0, 0].numpy()


def _rand_colour(rng, base=None, spread=40.0):
    if base is None:
        base = rng.uniform(30, 220, 3)
    return np.clip(base + rng.normal(0, spread, 3), 0, 255).astype(np.float32)


class Canvas:
    """An RGB float image at FINE_GSD_M with helpers to paint oriented rectangles and blobs."""

    def __init__(self, rng, size_px):
        self.rng = rng
        self.n = size_px
        ys, xs = np.mgrid[0:size_px, 0:size_px].astype(np.float32) + 0.5
        self.xs, self.ys = xs, ys
        self.img = np.zeros((size_px, size_px, 3), np.float32)
        self.owner = np.full((size_px, size_px), -1, np.int32)  # which object is on top at each pixel (-1: none)

    def window(self, cx, cy, r):
        x0, x1 = max(0, int(cx - r)), min(self.n, int(cx + r) + 1)
        y0, y1 = max(0, int(cy - r)), min(self.n, int(cy + r) + 1)
        return slice(y0, y1), slice(x0, x1)

    def rect_mask(self, cx, cy, length, width, ang, soft=0.7):
        """Coverage (0..1) of an oriented rectangle; returns (window, mask) or None when off-canvas."""
        r = 0.5 * math.hypot(length, width) + 2
        sy, sx = self.window(cx, cy, r)
        if sy.stop <= sy.start or sx.stop <= sx.start:
            return None
        dx, dy = self.xs[sy, sx] - cx, self.ys[sy, sx] - cy
        ca, sa = math.cos(ang), math.sin(ang)
        u, v = dx * ca + dy * sa, -dx * sa + dy * ca
        m = np.clip((length / 2 - np.abs(u)) / soft + 0.5, 0, 1) * np.clip((width / 2 - np.abs(v)) / soft + 0.5, 0, 1)
        return (sy, sx), m, u, v

    def paint(self, win_mask, colour, alpha=1.0, owner=-1):
        if win_mask is None:
            return
        (sy, sx), m = win_mask[0], win_mask[1]
        if alpha > 0.5:
            o = self.owner[sy, sx]
            o[m > 0.5] = owner
        a = (m * alpha)[..., None]
        self.img[sy, sx] = self.img[sy, sx] * (1 - a) + a * colour

    def darken(self, win_mask, factor):
        if win_mask is None:
            return
        (sy, sx), m = win_mask[0], win_mask[1]
        self.img[sy, sx] *= (1 - m * (1 - factor))[..., None]

    def blob_mask(self, cx, cy, radius):
        sy, sx = self.window(cx, cy, radius * 1.4 + 2)
        if sy.stop <= sy.start or sx.stop <= sx.start:
            return None
        dx, dy = self.xs[sy, sx] - cx, self.ys[sy, sx] - cy
        d = np.sqrt(dx * dx + dy * dy) / radius
        d += 0.25 * np.sin(np.arctan2(dy, dx) * self.rng.integers(3, 7) + self.rng.uniform(0, 6))
        return (sy, sx), np.clip((1 - d) * 4, 0, 1)

    def blob(self, cx, cy, radius, colour, alpha=1.0, texture=0.25):
        wm = self.blob_mask(cx, cy, radius)
        if wm is None:
            return None
        (sy, sx), m = wm
        tex = 1 + texture * self.rng.standard_normal(m.shape).astype(np.float32)
        a = (m * alpha)[..., None]
        self.img[sy, sx] = self.img[sy, sx] * (1 - a) + a * colour * tex[..., None]
        self.owner[sy, sx][m > 0.5] = -1
        return (sy, sx), m


def _shadow(cv, mask_fn, sun_dx, sun_dy, strength):
    """Cast shadow: the object's footprint shifted along the sun direction, darkened."""
    wm = mask_fn(sun_dx, sun_dy)
    if wm is not None:
        cv.darken(wm, strength)


def _car(cv, rng, cx, cy, ang, sun, objs, kind=None):
    kind = kind or rng.choice(["car", "car", "car", "car", "van", "truck"])
    if kind == "car":
        L, W = rng.uniform(3.6, 5.2), rng.uniform(1.6, 2.0)
    elif kind == "van":
        L, W = rng.uniform(4.8, 6.5), rng.uniform(1.9, 2.2)
    else:
        L, W = rng.uniform(6.0, 10.0), rng.uniform(2.2, 2.6)
    Lp, Wp = L / FINE_GSD_M, W / FINE_GSD_M
    oid = len(objs)
    col = CAR_COLOURS[rng.choice(len(CAR_COLOURS), p=CAR_WEIGHTS)] * rng.uniform(0.8, 1.15)
    col = np.clip(col + rng.normal(0, 8, 3), 0, 255)
    sdx, sdy, sstr, slen = sun
    _shadow(cv, lambda dx, dy: cv.rect_mask(cx + dx * slen, cy + dy * slen, Lp, Wp, ang), sdx, sdy, sstr)
    body = cv.rect_mask(cx, cy, Lp, Wp, ang, soft=rng.uniform(0.5, 1.5))
    if body is None:
        return
    cv.paint(body, col, owner=oid)
    ca, sa = math.cos(ang), math.sin(ang)
    if kind != "truck" or rng.random() < 0.5:
        # windscreen (dark) toward the front, rear window, lighter roof panel
        f = rng.uniform(0.12, 0.22) * Lp
        ws = cv.rect_mask(cx + ca * f, cy + sa * f, 0.16 * Lp, 0.8 * Wp, ang)
        cv.paint(ws, np.array([25, 30, 38], np.float32) * rng.uniform(0.6, 1.6), alpha=rng.uniform(0.6, 1.0), owner=oid)
        rw = cv.rect_mask(cx - ca * 0.3 * Lp, cy - sa * 0.3 * Lp, 0.1 * Lp, 0.75 * Wp, ang)
        cv.paint(rw, np.array([25, 30, 38], np.float32), alpha=rng.uniform(0.3, 0.9), owner=oid)
        roof = cv.rect_mask(cx - ca * 0.05 * Lp, cy - sa * 0.05 * Lp, 0.35 * Lp, 0.7 * Wp, ang)
        cv.paint(roof, np.clip(col * rng.uniform(0.85, 1.2), 0, 255), alpha=0.7, owner=oid)
    else:
        cab = cv.rect_mask(cx + ca * 0.4 * Lp, cy + sa * 0.4 * Lp, 0.2 * Lp, Wp, ang)
        cv.paint(cab, _rand_colour(rng), owner=oid)
    objs.append((0, cx, cy, Lp, Wp, ang, 1.0))


def _panel_array(cv, rng, cx, cy, ang, nr, nc, mod_l, mod_w, sun, objs, ground):
    """Array of nr x nc modules, module long side across the rows; returns nothing, appends one object."""
    gap = rng.uniform(0.02, 0.08) / FINE_GSD_M
    ml, mw = mod_l / FINE_GSD_M, mod_w / FINE_GSD_M
    L, W = nc * (mw + gap), nr * (ml + gap)
    if W > L:
        L, W, ang = W, L, ang + math.pi / 2
        swap = True
    else:
        swap = False
    sdx, sdy, sstr, slen = sun
    if ground:
        _shadow(cv, lambda dx, dy: cv.rect_mask(cx + dx * slen * 0.6, cy + dy * slen * 0.6, L, W, ang), sdx, sdy, sstr)
    frame = cv.rect_mask(cx, cy, L, W, ang)
    if frame is None:
        return
    cell = np.array([rng.uniform(10, 40), rng.uniform(15, 45), rng.uniform(35, 90)], np.float32) * rng.uniform(0.6, 1.4)
    frame_col = np.array([150, 155, 165], np.float32) * rng.uniform(0.5, 1.3)
    oid = len(objs)
    cv.paint(frame, frame_col, owner=oid)
    (sy, sx), m, u, v = frame
    # module grid inside the frame: modules of (along u) pitch pu, (along v) pitch pv
    pu, pv = (ml + gap, mw + gap) if swap else (mw + gap, ml + gap)
    gu = np.abs(((u + L / 2) % pu) - pu / 2) < (pu - gap) / 2
    gv = np.abs(((v + W / 2) % pv) - pv / 2) < (pv - gap) / 2
    inner = (gu & gv).astype(np.float32) * m
    glare = 1 + rng.uniform(0, 0.5) * np.clip(u / max(L, 1), -0.5, 0.5)
    cv.img[sy, sx] = cv.img[sy, sx] * (1 - inner[..., None]) + inner[..., None] * cell * glare[..., None]
    objs.append((1, cx, cy, L, W, ang, 1.0))


def _sun(rng):
    az = rng.uniform(0, 2 * math.pi)
    elev = rng.uniform(20, 70)
    slen = min(12.0, 1.5 / math.tan(math.radians(elev))) / FINE_GSD_M
    return (math.cos(az), math.sin(az), rng.uniform(0.35, 0.8), slen * rng.uniform(0.5, 1.0))


def _background(cv, rng):
    n = cv.n
    base = _rand_colour(rng, np.array(rng.choice([[90, 120, 60], [140, 130, 110], [110, 110, 105], [70, 90, 50],
                                                   [180, 170, 150], [60, 60, 62]])), 35)
    tex = _noise_field(rng, n, n, scales=(8, 32, 128), amps=(rng.uniform(0.05, 0.3), 0.3, 0.4))
    cv.img[:] = base * (1 + 0.25 * tex[..., None])
    for _ in range(rng.integers(0, 4)):  # patches of other ground cover
        blob = cv.blob(rng.uniform(0, n), rng.uniform(0, n), rng.uniform(40, 250), _rand_colour(rng), texture=0.1)


def _parking(cv, rng, sun, objs, cx, cy, ang, big):
    """A lot: asphalt rectangle, painted stall lines, rows of cars with random occupancy."""
    stall_w, stall_l = rng.uniform(2.3, 2.7) / FINE_GSD_M, rng.uniform(4.8, 5.5) / FINE_GSD_M
    nrows = rng.integers(1, 4 if big else 2) * 2
    nst = rng.integers(4, 16 if big else 8)
    aisle = rng.uniform(5.5, 7.5) / FINE_GSD_M
    lot_l, lot_w = nst * stall_w + 20, (nrows // 2) * (2 * stall_l + aisle) + 20
    lot = cv.rect_mask(cx, cy, lot_l, lot_w, ang, soft=1.0)
    if lot is None:
        return
    asphalt = np.array([1, 1, 1], np.float32) * rng.uniform(40, 150) + rng.normal(0, 6, 3)
    cv.paint(lot, asphalt)
    line_col = np.array([230, 230, 220], np.float32) if rng.random() < 0.8 else np.array([230, 200, 50], np.float32)
    ca, sa = math.cos(ang), math.sin(ang)
    occ = rng.uniform(0.2, 1.0)
    for r in range(nrows):
        pair, side = r // 2, (r % 2) * 2 - 1
        vrow = -lot_w / 2 + 10 + pair * (2 * stall_l + aisle) + stall_l * (1 if side > 0 else 0) + stall_l / 2
        for s in range(nst):
            urow = -lot_l / 2 + 10 + (s + 0.5) * stall_w
            px, py = cx + ca * urow - sa * vrow, cy + sa * urow + ca * vrow
            line = cv.rect_mask(px + ca * stall_w / 2, py + sa * stall_w / 2, 0.12 / FINE_GSD_M, stall_l * 0.9,
                                ang)
            if line is not None and rng.random() < 0.9:
                cv.paint(line, line_col, alpha=rng.uniform(0.3, 0.9))
            if rng.random() < occ:
                jitter = rng.normal(0, 0.15 / FINE_GSD_M, 2)
                head = ang + math.pi / 2 + (math.pi if rng.random() < 0.5 else 0) + rng.normal(0, 0.06)
                _car(cv, rng, px + jitter[0], py + jitter[1], head, sun, objs,
                     kind="car" if rng.random() < 0.9 else "van")


def _road(cv, rng, sun, objs):
    n = cv.n
    ang = rng.uniform(0, math.pi)
    cx, cy = rng.uniform(0, n), rng.uniform(0, n)
    lanes = rng.integers(1, 3)
    lw = rng.uniform(3.0, 3.7) / FINE_GSD_M
    road = cv.rect_mask(cx, cy, 3 * n, 2 * lanes * lw, ang, soft=1.0)
    cv.paint(road, np.array([1, 1, 1], np.float32) * rng.uniform(50, 130))
    ca, sa = math.cos(ang), math.sin(ang)
    for k in range(-12, 13):  # dashed centre line
        mark = cv.rect_mask(cx + ca * k * 9 / FINE_GSD_M, cy + sa * k * 9 / FINE_GSD_M, 3 / FINE_GSD_M, 0.15 / FINE_GSD_M,
                            ang)
        if mark is not None:
            cv.paint(mark, np.array([235, 235, 225], np.float32), alpha=0.8)
    for _ in range(rng.integers(0, 10)):
        t = rng.uniform(-n * 0.8, n * 0.8)
        lane = (rng.integers(0, 2 * lanes) - lanes + 0.5) * lw
        _car(cv, rng, cx + ca * t - sa * lane, cy + sa * t + ca * lane, ang + (math.pi if lane < 0 else 0)
             + rng.normal(0, 0.03), sun, objs)


def _building(cv, rng, sun, objs, panels):
    n = cv.n
    L, W = rng.uniform(60, 400), rng.uniform(50, 250)
    cx, cy, ang = rng.uniform(0, n), rng.uniform(0, n), rng.uniform(0, math.pi) if rng.random() < 0.6 else 0.0
    sdx, sdy, sstr, slen = sun
    h = rng.uniform(1.5, 6)
    sh = cv.rect_mask(cx + sdx * slen * h, cy + sdy * slen * h, L, W, ang)
    if sh is not None:
        cv.darken(sh, sstr)
    roof = cv.rect_mask(cx, cy, L, W, ang, soft=1.0)
    if roof is None:
        return
    grey = rng.random() < 0.6
    cv.paint(roof, _rand_colour(rng, np.full(3, rng.uniform(60, 220), np.float32), 12) if grey else _rand_colour(rng))
    if rng.random() < 0.4:  # pitched roof: one half darker
        ca, sa = math.cos(ang), math.sin(ang)
        half = cv.rect_mask(cx - sa * W / 4, cy + ca * W / 4, L, W / 2, ang)
        cv.darken(half, rng.uniform(0.6, 0.9))
    if rng.random() < 0.35:  # roof clutter: small boxes (not vehicles) -- hard negatives
        for _ in range(rng.integers(1, 6)):
            b = cv.rect_mask(cx + rng.uniform(-L, L) / 3, cy + rng.uniform(-W, W) / 3, rng.uniform(5, 20),
                             rng.uniform(5, 20), ang)
            if b is not None:
                cv.paint(b, _rand_colour(rng))
    if panels and rng.random() < 0.75:
        mod_l, mod_w = [(1.72, 1.13), (2.28, 1.13), (1.65, 0.99)][rng.integers(0, 3)]
        nr, nc = rng.integers(1, 5), rng.integers(2, 14)
        ca, sa = math.cos(ang), math.sin(ang)
        ox, oy = rng.uniform(-0.15, 0.15) * L, rng.uniform(-0.15, 0.15) * W
        _panel_array(cv, rng, cx + ca * ox - sa * oy, cy + sa * ox + ca * oy, ang, nr, nc, mod_l, mod_w, sun, objs,
                     ground=False)


def _solar_field(cv, rng, sun, objs):
    n = cv.n
    mod_l, mod_w = [(1.72, 1.13), (2.28, 1.13), (1.65, 0.99)][rng.integers(0, 3)]
    ang = rng.uniform(0, math.pi)
    cx, cy = rng.uniform(0.2, 0.8) * n, rng.uniform(0.2, 0.8) * n
    rows, nr, nc = rng.integers(2, 6), rng.integers(1, 3), rng.integers(6, 30)
    pitch = (nr * mod_l * 1.0 + rng.uniform(2.0, 5.0)) / FINE_GSD_M
    ca, sa = math.cos(ang), math.sin(ang)
    for r in range(rows):
        off = (r - (rows - 1) / 2) * pitch
        _panel_array(cv, rng, cx - sa * off, cy + ca * off, ang, nr, nc, mod_l, mod_w, sun, objs, ground=True)


def _trees(cv, rng, sun):
    n = cv.n
    for _ in range(rng.integers(0, 25)):
        r = rng.uniform(8, 40)
        cx, cy = rng.uniform(0, n), rng.uniform(0, n)
        sdx, sdy, sstr, slen = sun
        sh = cv.blob_mask(cx + sdx * slen * 2, cy + sdy * slen * 2, r)
        cv.darken(sh, 1 - 0.6 * sstr)
        cv.blob(cx, cy, r, _rand_colour(rng, np.array([50, 80, 40], np.float32), 15), texture=0.35)


def generate_chip(rng, out_px=256, sensor_gsd_m=None):
    """One chip at MODEL_GSD_M: (uint8 HxWx3, float32 objects [M,7] = class, cx, cy, length, width, angle, visible)
    in output pixels, angle of the length axis in the pixel frame (y down)."""
    from degrade import sensor, sample_sensor_gsd
    fine = int(out_px * MODEL_GSD_M / FINE_GSD_M)
    cv = Canvas(rng, fine)
    sun = _sun(rng)
    objs = []
    _background(cv, rng)
    for _ in range(rng.integers(0, 3)):
        _road(cv, rng, sun, objs)
    nb = rng.integers(0, 5)
    for _ in range(nb):
        _building(cv, rng, sun, objs, panels=True)
    if rng.random() < 0.35:
        _solar_field(cv, rng, sun, objs)
    for _ in range(rng.integers(0, 4)):
        _parking(cv, rng, sun, objs, rng.uniform(0, fine), rng.uniform(0, fine), rng.uniform(0, math.pi),
                 big=rng.random() < 0.5)
    for _ in range(rng.integers(0, 6)):  # loose cars anywhere
        _car(cv, rng, rng.uniform(0, fine), rng.uniform(0, fine), rng.uniform(0, 2 * math.pi), sun, objs)
    _trees(cv, rng, sun)
    out = []
    for oid, (c, cx, cy, L, W, ang, _) in enumerate(objs):
        wm = cv.rect_mask(cx, cy, L, W, ang)
        if wm is None:
            continue
        (sy, sx), m = wm[0], wm[1]
        inside = m > 0.5
        # visible fraction: own pixels still on top (trees, later lots, roofs or cars may cover it)
        vis = float((cv.owner[sy, sx][inside] == oid).sum() / max(inside.sum(), 1))
        if vis > 0.02:
            out.append([c, cx, cy, L, W, ang, vis])
    g = sensor_gsd_m if sensor_gsd_m is not None else sample_sensor_gsd(rng)
    img = sensor(cv.img, FINE_GSD_M, g, out_px, rng)
    k = out_px / fine
    arr = np.array(out, np.float32).reshape(-1, 7)
    arr[:, 1:5] *= k
    return img.astype(np.uint8), arr, g
