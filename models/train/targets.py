"""CenterNet training targets (Zhou et al. 2019): per-class Gaussian heatmaps at stride 4, and at each object's
centre cell the regression targets log(length), log(width), sub-cell offset and (cos 2a, sin 2a) of the length-axis
angle a (pixel frame, y down). An object with angle NaN (real labels: an axis-aligned box whose length and width are
its x and y extents, or a point given a nominal extent) trains the heatmap and the offset only. Objects mostly hidden (visible fraction < MIN_VISIBLE) are ignored, not negatives."""
import math
import numpy as np

STRIDE = 4
MIN_VISIBLE = 0.35
MAX_OBJ = 256


def gaussian_radius(h, w, min_overlap=0.7):
    """CenterNet's radius (from CornerNet): largest corner shift keeping IoU >= min_overlap; h, w in cells."""
    a1, b1, c1 = 1, h + w, w * h * (1 - min_overlap) / (1 + min_overlap)
    r1 = (b1 + math.sqrt(b1 ** 2 - 4 * a1 * c1)) / 2
    a2, b2, c2 = 4, 2 * (h + w), (1 - min_overlap) * w * h
    r2 = (b2 + math.sqrt(b2 ** 2 - 4 * a2 * c2)) / 2
    a3, b3, c3 = 4 * min_overlap, -2 * min_overlap * (h + w), (min_overlap - 1) * w * h
    r3 = (b3 + math.sqrt(b3 ** 2 - 4 * a3 * c3)) / 2
    return min(r1, r2, r3)


def draw_gaussian(hm, cx, cy, radius):
    r = max(0, int(radius))
    sigma = (2 * r + 1) / 6
    H, W = hm.shape
    x0, x1 = max(0, cx - r), min(W, cx + r + 1)
    y0, y1 = max(0, cy - r), min(H, cy + r + 1)
    if x1 <= x0 or y1 <= y0:
        return
    ys, xs = np.mgrid[y0:y1, x0:x1]
    g = np.exp(-((xs - cx) ** 2 + (ys - cy) ** 2) / (2 * sigma * sigma))
    np.maximum(hm[y0:y1, x0:x1], g, out=hm[y0:y1, x0:x1])


def build(objs, size_px, num_classes, size_w=None):
    """objs: float32 [M,7] class, cx, cy, length, width, angle, visible (input px); size_w: weight of the size loss per
    class (default 1 for all). Returns a dict of arrays."""
    n = size_px // STRIDE
    hm = np.zeros((num_classes, n, n), np.float32)
    ignore = np.zeros((num_classes, n, n), np.float32)
    ind = np.zeros(MAX_OBJ, np.int64)
    reg = np.zeros((MAX_OBJ, 6), np.float32)
    wt = np.zeros((MAX_OBJ, 3), np.float32)  # weights: size, offset, angle
    k = 0
    for c, cx, cy, L, W, ang, vis in objs:
        c = int(c)
        if not (0 <= cx < size_px and 0 <= cy < size_px):
            continue
        unknown = math.isnan(ang)  # real labels: axis-aligned box (L = x extent, W = y extent) or a point
        if W > L and not unknown:  # the length axis is the longer side: swap and turn the axis a quarter turn with it
            L, W, ang = W, L, ang + math.pi / 2
        fx, fy = cx / STRIDE, cy / STRIDE
        ix, iy = min(n - 1, int(fx)), min(n - 1, int(fy))
        if unknown:
            ext = 0.5 * L, 0.5 * W
        else:
            ext = 0.5 * (L * abs(math.cos(ang)) + W * abs(math.sin(ang))), 0.5 * (L * abs(math.sin(ang)) + W * abs(math.cos(ang)))
        r = max(1.0, gaussian_radius(2 * ext[1] / STRIDE, 2 * ext[0] / STRIDE))
        if vis < MIN_VISIBLE:
            rr = max(1, int(r) + 1)
            ignore[c, max(0, iy - rr):iy + rr + 1, max(0, ix - rr):ix + rr + 1] = 1
            continue
        draw_gaussian(hm[c], ix, iy, r)
        if k < MAX_OBJ and unknown:  # heatmap peak and centre offset only
            ind[k] = iy * n + ix
            reg[k] = [0.0, 0.0, fx - ix, fy - iy, 0.0, 0.0]
            wt[k] = [0.0, 1.0, 0.0]
            k += 1
        elif k < MAX_OBJ:
            ind[k] = iy * n + ix
            reg[k] = [math.log(L), math.log(max(W, 0.5)), fx - ix, fy - iy, math.cos(2 * ang), math.sin(2 * ang)]
            wt[k] = [size_w[c] if size_w else 1.0, 1.0, min(1.0, 2.0 * (L / max(W, 1e-3) - 1.0))]
            k += 1
    ignore[hm >= 0.999] = 0
    return {"hm": hm, "ignore": ignore, "ind": ind, "reg": reg, "wt": wt}


def dihedral(img, objs, k, size_px):
    """Apply one of the 8 flips/rotations to a chip and its objects (k in 0..7)."""
    o = objs.copy()
    S = size_px
    if k & 1:  # horizontal flip
        img = img[:, ::-1]
        o[:, 1] = S - o[:, 1]
        o[:, 5] = math.pi - o[:, 5]
    if k & 2:  # vertical flip
        img = img[::-1]
        o[:, 2] = S - o[:, 2]
        o[:, 5] = -o[:, 5]
    if k & 4:  # transpose
        img = img.transpose(1, 0, 2)
        o[:, [1, 2]] = o[:, [2, 1]]
        o[:, 5] = math.pi / 2 - o[:, 5]
        unk = np.isnan(o[:, 5])  # axis-aligned extents swap with the axes
        o[np.ix_(unk, [3, 4])] = o[np.ix_(unk, [4, 3])]
    return np.ascontiguousarray(img), o
