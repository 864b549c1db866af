"""Small numpy reference interpreter for the QUANTIZED (uint8, per-tensor or per-channel) TFLite graph.

This is the source of truth that test_convert.py checks the float PyTorch network against: it executes the
8-bit model with the integer arithmetic that the TFLite format defines (written from memory of TFLite's
reference kernels, not copied):
  * real value = scale * (q - zero_point) for every tensor;
  * CONV_2D / DEPTHWISE_CONV_2D: int32 accumulation of (x - x_zp) * (w - w_zp) plus the int32 bias, then
    requantisation by the real multiplier M = x_scale * w_scale / y_scale, expressed as a Q31 fixed-point
    multiplier and a power-of-two shift (SaturatingRoundingDoublingHighMul + RoundingDivideByPOT), plus y_zp,
    clamped to the fused activation's range (RELU6 -> [q(0), q(6)] intersected with [0, 255]). SAME padding is
    TF's (pad_before = total // 2, the extra row/column at the bottom/right); padded pixels hold x_zp;
  * ADD: both inputs rescaled to a common scale with a 20-bit left shift, summed, requantised (TFLite's
    uint8 Add);
  * AVERAGE_POOL_2D: integer sum over the window, rounded division by the count (input/output quantisation
    must be equal, as TFLite requires);
  * RESHAPE / SQUEEZE: reinterpretation of the same bytes;
  * SOFTMAX: computed in float from the dequantised input and quantised to the output (TFLite uses a
    fixed-point exp here; this can differ by ~1 LSB. Tests compare the pre-softmax logits anyway).
Integer accumulations are done with float64 matrix products: all products are < 2^16 and the sums < 2^31, so
float64 holds them exactly and BLAS is used. Exactness to the last LSB against the TFLite runtime is not
claimed (no runtime was run to compare).

run(model, q_input) -> dict tensor_index -> quantized numpy array (NHWC) for every tensor computed.
"""
import numpy as np

from tflite_reader import read_tflite  # noqa: F401  (re-exported for convenience)

INT32_MIN, INT32_MAX = -(1 << 31), (1 << 31) - 1


# ---- fixed-point helpers (gemmlowp / TFLite semantics), vectorised over int64 arrays ------------------------
def quantize_multiplier(real):
    """real multiplier -> (Q31 int multiplier, shift) with real ~= m * 2^(shift - 31)."""
    if real == 0.0:
        return 0, 0
    q, shift = np.frexp(real)
    qf = int(round(q * (1 << 31)))
    if qf == (1 << 31):
        qf //= 2
        shift += 1
    return qf, int(shift)


def _srdhm(a, b):
    """SaturatingRoundingDoublingHighMul(a, b) for int32-range a (array) and scalar/array b."""
    a = np.asarray(a, np.int64)
    b = np.asarray(b, np.int64)
    ab = a * b
    nudge = np.where(ab >= 0, 1 << 30, 1 - (1 << 30))
    s = ab + nudge
    # C integer division truncates toward zero
    res = np.where(s >= 0, s >> 31, -((-s) >> 31))
    overflow = (a == INT32_MIN) & (b == INT32_MIN)
    return np.where(overflow, INT32_MAX, res)


def _rdpot(x, exponent):
    """RoundingDivideByPOT: round-half-away-from-zero division by 2^exponent."""
    x = np.asarray(x, np.int64)
    exponent = np.asarray(exponent, np.int64)
    mask = (np.int64(1) << exponent) - 1
    remainder = x & mask
    threshold = (mask >> 1) + (x < 0)
    return (x >> exponent) + (remainder > threshold)


def multiply_by_quantized_multiplier(x, qm, shift):
    qm = np.asarray(qm, np.int64)
    shift = np.asarray(shift, np.int64)
    left = np.maximum(shift, 0)
    right = np.maximum(-shift, 0)
    x = np.asarray(x, np.int64) * (np.int64(1) << left)
    x = np.clip(x, INT32_MIN, INT32_MAX)
    return _rdpot(_srdhm(x, qm), right)


def _act_range(act, scale, zp, qmin=0, qmax=255):
    if act == "NONE":
        return qmin, qmax
    lo = max(qmin, zp + int(round(0.0 / scale)))
    if act == "RELU":
        return lo, qmax
    if act == "RELU6":
        return lo, min(qmax, zp + int(round(6.0 / scale)))
    if act == "RELU_N1_TO_1":
        return max(qmin, zp + int(round(-1.0 / scale))), min(qmax, zp + int(round(1.0 / scale)))
    raise NotImplementedError(act)


def same_pads(size, k, s, d=1):
    """TF 'SAME' padding for one axis: (before, after); the odd extra pixel goes after (bottom/right)."""
    eff = (k - 1) * d + 1
    out = -(-size // s)
    total = max((out - 1) * s + eff - size, 0)
    return total // 2, total - total // 2


def _pad_and_windows(x, kh, kw, sh, sw, padding, fill, dh=1, dw=1):
    """x: (H, W, C) int64 already offset (x - zp) so fill is 0; returns list of ((i, j), view (Ho, Wo, C))."""
    H, W, _ = x.shape
    if padding == "SAME":
        pt, pb = same_pads(H, kh, sh, dh)
        pl, pr = same_pads(W, kw, sw, dw)
        Ho, Wo = -(-H // sh), -(-W // sw)
    else:
        pt = pb = pl = pr = 0
        Ho, Wo = (H - ((kh - 1) * dh + 1)) // sh + 1, (W - ((kw - 1) * dw + 1)) // sw + 1
    xp = np.pad(x, ((pt, pb), (pl, pr), (0, 0)), constant_values=fill)
    views = []
    for i in range(kh):
        for j in range(kw):
            r0, c0 = i * dh, j * dw
            views.append(((i, j), xp[r0:r0 + sh * (Ho - 1) + 1:sh, c0:c0 + sw * (Wo - 1) + 1:sw, :]))
    return views, Ho, Wo


def _requant(acc, x_scale, w, y, act):
    """acc int64 (..., C); per-tensor or per-channel weight scales."""
    ws = w.scale.astype(np.float64)
    real = float(x_scale) * ws / float(y.scale[0])
    qms = [quantize_multiplier(r) for r in np.atleast_1d(real)]
    qm = np.array([a for a, _ in qms], np.int64)
    sh = np.array([b for _, b in qms], np.int64)
    if qm.size == 1:
        qm, sh = qm[0], sh[0]
    out = multiply_by_quantized_multiplier(acc, qm, sh) + int(y.zero_point[0])
    lo, hi = _act_range(act, float(y.scale[0]), int(y.zero_point[0]))
    return np.clip(out, lo, hi).astype(np.uint8)


def _conv(m, op, env):
    T = m.tensors
    xt, wt, bt = (T[i] for i in op.inputs[:3])
    yt = T[op.outputs[0]]
    o = op.options
    x = env[op.inputs[0]][0].astype(np.int64) - int(xt.zero_point[0])       # (H, W, Cin), batch 1
    wzp = wt.zero_point.reshape(-1) if wt.zero_point.size > 1 else int(wt.zero_point[0])
    if op.op == "CONV_2D":
        w = wt.data.astype(np.int64)                                          # (O, kh, kw, I)
        if wt.zero_point.size > 1:
            w = w - wzp.reshape(-1, 1, 1, 1)
        else:
            w = w - wzp
        O, kh, kw, I = w.shape
    else:
        w = wt.data.astype(np.int64)                                          # (1, kh, kw, O)
        w = w - (wzp.reshape(1, 1, 1, -1) if wt.zero_point.size > 1 else wzp)
        _, kh, kw, O = w.shape
        dm = o["depth_multiplier"]
        if dm != 1:
            x = np.repeat(x, dm, axis=2)   # TF channel order: out = in_c * dm + m
    views, Ho, Wo = _pad_and_windows(x, kh, kw, o["stride_h"], o["stride_w"], o["padding"], 0,
                                     o.get("dilation_h", 1), o.get("dilation_w", 1))
    if op.op == "CONV_2D":
        if kh == kw == 1:
            cols = views[0][1].reshape(Ho * Wo, -1)
        else:
            cols = np.stack([v for _, v in views], axis=2).reshape(Ho * Wo, kh * kw * I)  # order (kh, kw, I)
        acc = cols.astype(np.float64) @ w.reshape(O, -1).T.astype(np.float64)
        acc = np.rint(acc).astype(np.int64).reshape(Ho, Wo, O)
    else:
        acc = np.zeros((Ho, Wo, O), np.int64)
        for (i, j), v in views:
            acc += v * w[0, i, j, :]
    acc = acc + bt.data.astype(np.int64)
    return _requant(acc, xt.scale[0], wt, yt, o["activation"])[None]


def _add(m, op, env):
    T = m.tensors
    a, b = (T[i] for i in op.inputs[:2])
    y = T[op.outputs[0]]
    left_shift = 20
    sa, sb, sy = float(a.scale[0]), float(b.scale[0]), float(y.scale[0])
    twice_max = 2 * max(sa, sb)
    m1, s1 = quantize_multiplier(sa / twice_max)
    m2, s2 = quantize_multiplier(sb / twice_max)
    mo, so = quantize_multiplier(twice_max / ((1 << left_shift) * sy))
    xa = (env[op.inputs[0]].astype(np.int64) - int(a.zero_point[0])) << left_shift
    xb = (env[op.inputs[1]].astype(np.int64) - int(b.zero_point[0])) << left_shift
    raw = multiply_by_quantized_multiplier(xa, m1, s1) + multiply_by_quantized_multiplier(xb, m2, s2)
    out = multiply_by_quantized_multiplier(raw, mo, so) + int(y.zero_point[0])
    lo, hi = _act_range(op.options.get("activation", "NONE"), sy, int(y.zero_point[0]))
    return np.clip(out, lo, hi).astype(np.uint8)


def _avgpool(m, op, env):
    T = m.tensors
    xt, yt = T[op.inputs[0]], T[op.outputs[0]]
    assert np.allclose(xt.scale, yt.scale) and np.all(xt.zero_point == yt.zero_point), \
        "AVERAGE_POOL_2D with rescaling is not supported"
    o = op.options
    x = env[op.inputs[0]][0].astype(np.int64)
    H, W, C = x.shape
    kh, kw, sh, sw = o["filter_h"], o["filter_w"], o["stride_h"], o["stride_w"]
    if o["padding"] == "SAME":
        # TFLite counts only the in-image pixels of each window
        pt, _ = same_pads(H, kh, sh)
        pl, _ = same_pads(W, kw, sw)
        Ho, Wo = -(-H // sh), -(-W // sw)
    else:
        pt = pl = 0
        Ho, Wo = (H - kh) // sh + 1, (W - kw) // sw + 1
    out = np.zeros((Ho, Wo, C), np.int64)
    for r in range(Ho):
        r0, r1 = max(r * sh - pt, 0), min(r * sh - pt + kh, H)
        for c in range(Wo):
            c0, c1 = max(c * sw - pl, 0), min(c * sw - pl + kw, W)
            n = (r1 - r0) * (c1 - c0)
            s = x[r0:r1, c0:c1].reshape(-1, C).sum(0)
            out[r, c] = (s + n // 2) // n
    lo, hi = _act_range(o["activation"], float(yt.scale[0]), int(yt.zero_point[0]))
    return np.clip(out, lo, hi).astype(np.uint8)[None]


def _softmax(m, op, env):
    T = m.tensors
    xt, yt = T[op.inputs[0]], T[op.outputs[0]]
    x = float(xt.scale[0]) * (env[op.inputs[0]].astype(np.float64) - int(xt.zero_point[0]))
    z = op.options.get("beta", 1.0) * x
    z = z - z.max(axis=-1, keepdims=True)
    p = np.exp(z)
    p /= p.sum(axis=-1, keepdims=True)
    q = np.rint(p / float(yt.scale[0])) + int(yt.zero_point[0])
    return np.clip(q, 0, 255).astype(np.uint8)


def _same_quant(m, op):
    a, y = m.tensors[op.inputs[0]], m.tensors[op.outputs[0]]
    assert np.allclose(a.scale, y.scale) and np.all(a.zero_point == y.zero_point), f"{op.op} changes quantisation"


def run(m, q_input, stop_after=None):
    """Execute the quantized graph on q_input (uint8, shape of the input tensor, NHWC).

    Returns env: tensor index -> uint8 array. stop_after: an op index to stop at (inclusive)."""
    x = m.tensors[m.inputs[0]]
    q_input = np.asarray(q_input)
    assert q_input.dtype == np.uint8 and tuple(q_input.shape) == tuple(x.shape), (q_input.shape, x.shape)
    env = {m.inputs[0]: q_input}
    for op in m.operators:
        if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D"):
            y = _conv(m, op, env)
        elif op.op == "ADD":
            y = _add(m, op, env)
        elif op.op == "AVERAGE_POOL_2D":
            y = _avgpool(m, op, env)
        elif op.op in ("RESHAPE", "SQUEEZE"):
            _same_quant(m, op)
            y = env[op.inputs[0]].reshape(m.tensors[op.outputs[0]].shape)
        elif op.op == "SOFTMAX":
            y = _softmax(m, op, env)
        else:
            raise NotImplementedError(op.op)
        assert tuple(y.shape) == tuple(m.tensors[op.outputs[0]].shape), (op.index, op.op, y.shape)
        env[op.outputs[0]] = y
        if stop_after is not None and op.index >= stop_after:
            break
    return env


def dequant(m, idx, q):
    t = m.tensors[idx]
    return (float(t.scale[0]) * (q.astype(np.float64) - int(t.zero_point[0]))).astype(np.float32)


def logits_tensor(m):
    """Index of the pre-softmax logits tensor (input of the final SOFTMAX, or the graph output)."""
    for op in m.operators:
        if op.op == "SOFTMAX" and op.outputs[0] in m.outputs:
            return op.inputs[0]
    return m.outputs[0]
