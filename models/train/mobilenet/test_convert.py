"""Test: the float PyTorch networks built by convert.py classify like the 8-bit TFLite models they came from.

    nice -n 15 /usr/bin/python3 models/train/mobilenet/test_convert.py [--quick]

Source of truth: the QUANTIZED TFLite model's own arithmetic as the format defines it (uint8 tensors,
real = scale * (q - zero_point), int32 accumulation, fixed-point requantisation), executed by int8_ref.py. No
TFLite runtime is used. The float network is expected to differ from it only by activation quantisation noise.

Per model and image the checks are:
  * top-1 equal. The quantized logits are uint8 (one step = the logits' scale, ~0.1-0.15), so several classes
    can be tied at the maximum; then the float top-1 must be one of the tied classes (reported as "tie");
  * top-5 overlap >= 3 of 5;
  * Pearson correlation of the 1001 logits > 0.98;
and, for the detector's use, the correlation of each backbone feature map (strides 4, 8, 16, 32) with the
quantized model's dequantised tensor at the same place is printed and must be > 0.95.
All three models run by default (~10 s on one core); --quick skips V2 1.0/224.
Exit status is non-zero on any failure.
"""
import os
import sys

import numpy as np
import torch
from PIL import Image

HERE = os.path.dirname(os.path.abspath(__file__))
sys.path.insert(0, HERE)

from tflite_reader import read_tflite, check_schema  # noqa: E402
import int8_ref  # noqa: E402
from convert import convert, preprocess, save, load_converted, count_params  # noqa: E402

WEIGHTS = "/work/shared/weights/imagenet-mobilenet"
REAL = "/work/shared/realdata"
MODELS = ["mobilenet_v1_0.25_128_quant", "mobilenet_v1_0.5_160_quant"]


def test_images():
    """~5 small RGB uint8 images (name, PIL image): real photo crops and two generated scenes."""
    ims = []
    p = f"{REAL}/aerial-cars-drone/DJI-00760-00001.jpg"
    if os.path.exists(p):
        im = Image.open(p).convert("RGB")
        ims.append(("drone intersection crop", im.crop((660, 240, 1260, 840))))
        ims.append(("drone close crop", im.crop((900, 450, 1150, 700))))
    p = f"{REAL}/roofs-pv-registry/crops/ortho_2558439_1217457.png"
    if os.path.exists(p):
        ims.append(("roof orthophoto crop", Image.open(p).convert("RGB")))
    rng = np.random.default_rng(0)
    # generated 1: sky gradient over a green field with a red ball (soft edges, mild noise)
    h = w = 224
    yy, xx = np.mgrid[0:h, 0:w].astype(np.float32)
    img = np.zeros((h, w, 3), np.float32)
    sky = yy < 120
    img[sky] = np.stack([120 + 0.5 * yy[sky], 170 + 0.4 * yy[sky], 250 - 0.2 * yy[sky]], -1)
    img[~sky] = np.stack([60 + 0.2 * yy[~sky], 140 - 0.1 * yy[~sky], 40 + 0 * yy[~sky]], -1)
    d = np.sqrt((yy - 140) ** 2 + (xx - 110) ** 2)
    a = np.clip((45 - d) / 3, 0, 1)[..., None]
    shade = np.clip(1.2 - ((yy - 125) ** 2 + (xx - 95) ** 2) / 4000, 0.4, 1.2)[..., None]
    img = img * (1 - a) + a * np.array([220, 30, 30], np.float32) * shade
    img += rng.normal(0, 6, img.shape)
    ims.append(("generated red ball on grass", Image.fromarray(np.clip(img, 0, 255).astype(np.uint8))))
    # generated 2: a grey road with white lane stripes and a dark car-like box, seen from above
    img = np.full((h, w, 3), 95, np.float32) + rng.normal(0, 8, (h, w, 3))
    img[:, 100:106] = 235
    for x0 in (30, 170):
        stripe = ((yy.astype(int) // 24) % 2 == 0) & (np.abs(xx - x0) < 3)
        img[stripe] = 240
    img[60:150, 120:165] = [30, 40, 110]
    img[75:95, 124:161] = [20, 25, 35]
    ims.append(("generated road with car", Image.fromarray(np.clip(img, 0, 255).astype(np.uint8))))
    return ims


def block_output_tensors(m, net):
    """TFLite tensor index of each module block's output (ADD output for residual blocks)."""
    ops = m.operators
    sizes = [len(b.convs()) for b in net.layers]
    out, bi, seen = [], 0, 0
    for i, op in enumerate(ops):
        if bi >= len(sizes):
            break
        if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D"):
            seen += 1
            if seen == sizes[bi]:
                nxt = ops[i + 1] if i + 1 < len(ops) else None
                out.append(nxt.outputs[0] if nxt is not None and nxt.op == "ADD" else op.outputs[0])
                bi, seen = bi + 1, 0
    return out


def corr(a, b):
    a = np.asarray(a, np.float64).ravel()
    b = np.asarray(b, np.float64).ravel()
    a, b = a - a.mean(), b - b.mean()
    return float((a * b).sum() / np.sqrt((a * a).sum() * (b * b).sum() + 1e-30))


def check_model(name, labels, images, tmpdir):
    path = f"{WEIGHTS}/{name}.tflite"
    m = read_tflite(path)
    check_schema(m)
    net, meta = convert(path)
    # round trip through the saved checkpoint, as a detector would load it
    ck = os.path.join(tmpdir, name + ".pt")
    save(net, meta, ck)
    net, meta = load_converted(ck)
    size = meta["input_size"]
    li = int8_ref.logits_tensor(m)
    ends = block_output_tensors(m, net)
    stride_idx = {}
    for k, s in enumerate(net.layer_strides):
        if s >= 4:
            stride_idx[s] = k       # last block at each stride
    failures, rows = [], []
    print(f"\n== {name}: {meta['arch']} alpha {meta['alpha']}, {size}px, {count_params(net)} params; "
          f"input scale {meta['input_scale']} zp {meta['input_zero_point']}")
    for title, im in images:
        q = np.asarray(im.resize((size, size), Image.BILINEAR), np.uint8)
        env = int8_ref.run(m, q[None])
        lq = int8_ref.dequant(m, li, env[li]).ravel()
        x = preprocess(q, meta["input_scale"], meta["input_zero_point"])
        with torch.no_grad():
            feats = net.features(x, 32)
            lf = net(x).numpy().ravel()
        fc = {s: corr(feats[s].numpy().transpose(0, 2, 3, 1),
                      int8_ref.dequant(m, ends[k], env[ends[k]])) for s, k in stride_idx.items()}
        top5q = list(np.argsort(-lq, kind="stable")[:5])
        top5f = list(np.argsort(-lf, kind="stable")[:5])
        tied = set(np.flatnonzero(lq == lq.max()).tolist())
        top1_ok = top5f[0] in tied
        overlap = len(set(top5q) & set(top5f))
        c = corr(lq, lf)
        ok = top1_ok and overlap >= 3 and c > 0.98 and min(fc.values()) > 0.95
        tag = "equal" if top5f[0] == top5q[0] else ("tie" if top1_ok else "DIFFERENT")
        print(f"  {title:28s} int8 top-1: {labels[top5q[0]][:34]:34s} float top-1: {labels[top5f[0]][:34]:34s} "
              f"[{tag}{', %d-way quantized tie' % len(tied) if len(tied) > 1 else ''}]")
        print(f"  {'':28s} top-5 overlap {overlap}/5, logit corr {c:.4f}, feature corr "
              + " ".join(f"s{s}:{v:.3f}" for s, v in sorted(fc.items())) + ("" if ok else "   <-- FAIL"))
        rows.append((overlap, c, min(fc.values()), top5f[0] == top5q[0]))
        if not ok:
            failures.append(f"{name} / {title}")
    ov = [r[0] for r in rows]
    cs = [r[1] for r in rows]
    print(f"  summary: top-1 strictly equal {sum(r[3] for r in rows)}/{len(rows)}, top-5 overlap min {min(ov)} "
          f"mean {np.mean(ov):.1f}, logit corr min {min(cs):.4f} mean {np.mean(cs):.4f}, "
          f"feature corr min {min(r[2] for r in rows):.3f}")
    for s in (16, 32):
        p = count_params(net.backbone(s))
        print(f"  backbone to stride {s}: {p} params = {p * 4 / 1e6:.2f} MB fp32, channels {net.feature_channels(s)}")
    return failures


def test_same_padding():
    """TF SAME for stride 2 on an even input pads 0 top/left and 1 bottom/right."""
    from convert import tf_same_pad
    x = torch.zeros(1, 1, 8, 8)
    assert tf_same_pad(x, 3, 2) == (0, 1, 0, 1), tf_same_pad(x, 3, 2)
    assert tf_same_pad(torch.zeros(1, 1, 7, 7), 3, 2) == (1, 1, 1, 1)
    assert tf_same_pad(x, 3, 1) == (1, 1, 1, 1)
    assert int8_ref.same_pads(8, 3, 2) == (0, 1)


def test_fixed_point():
    """Requantisation helpers against float rounding on a few values."""
    for real in (0.0003, 0.17, 0.93, 1.7):
        qm, sh = int8_ref.quantize_multiplier(real)
        xs = np.array([-100000, -12345, -1, 0, 1, 999, 54321, 1000000], np.int64)
        got = int8_ref.multiply_by_quantized_multiplier(xs, qm, sh)
        exp = np.sign(xs * real) * np.floor(np.abs(xs * real) + 0.5)
        assert np.all(np.abs(got - exp) <= 1), (real, got, exp)


def main():
    torch.set_num_threads(1)
    import tempfile
    models = MODELS + ([] if "--quick" in sys.argv else ["mobilenet_v2_1.0_224_quant"])
    labels = open(f"{WEIGHTS}/imagenet_labels.txt").read().splitlines()
    test_same_padding()
    test_fixed_point()
    images = test_images()
    failures = []
    with tempfile.TemporaryDirectory() as td:
        for name in models:
            failures += check_model(name, labels, images, td)
    if failures:
        print("\nFAILED:", *failures, sep="\n  ")
        sys.exit(1)
    print(f"\nOK: {len(models)} models x {len(images)} images agree")


if __name__ == "__main__":
    main()
