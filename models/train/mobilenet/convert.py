"""Convert an 8-bit TFLite MobileNet (V1 any alpha, V2) into a float PyTorch network.

    python3 convert.py IN.tflite OUT.pt

The network is built as an explicit module (MobileNetV1(alpha) / MobileNetV2(alpha)); convert() fills it with
the dequantised weights of the TFLite file, matching the file's CONV_2D / DEPTHWISE_CONV_2D ops in order and
checking every kernel shape, stride, padding, fused activation and (V2) the position of every residual ADD.
  weight  float = w_scale * (q - w_zp)               (per tensor, or per channel along quantized_dimension)
  bias    float = b_scale * q_int32, b_scale = x_scale * w_scale as stored in the bias tensor
Layout: TFLite CONV_2D weights [out, kh, kw, in] -> torch [out, in, kh, kw];
        DEPTHWISE_CONV_2D weights [1, kh, kw, out] -> torch [out, 1, kh, kw] (groups = in channels).
Padding: TF "SAME" (pad_total = max((ceil(n/s)-1)*s + k - n, 0), pad_before = total // 2, the extra pixel at the
bottom/right), done with F.pad, so stride-2 layers match TF exactly. Activations: ReLU6 (the quantized model's
activation range is [0, 6] exactly: scale 6/255, zero point 0), none after V2's projection convs and logits.

INPUT NORMALISATION: the quantized models take uint8 RGB 0..255 with input scale 1/128 and zero point 128, so
the float network takes x = (q - 128) / 128 in [-1, 1], NCHW RGB (see preprocess()). The values actually read
from the file are stored in the checkpoint (input_scale, input_zero_point).

Checkpoint OUT.pt: {"arch", "alpha", "input_size", "num_classes", "input_scale", "input_zero_point",
"source", "state_dict"}; load_converted(OUT.pt) rebuilds the module. Class 0 is "background" (1001 classes,
labels in imagenet_labels.txt).

For a detector: model.features(x, upto_stride) returns {4: ..., 8: ..., 16: ..., 32: ...} (the last feature map
at each stride <= upto_stride), and model.backbone(upto_stride) returns a truncated nn.Module with only the
layers those need (no classifier).
"""
import sys

import numpy as np
import torch
import torch.nn as nn
import torch.nn.functional as F

from tflite_reader import read_tflite


def _make_divisible(v, divisor=8, min_value=None):
    min_value = min_value or divisor
    new_v = max(min_value, int(v + divisor / 2) // divisor * divisor)
    if new_v < 0.9 * v:
        new_v += divisor
    return new_v


def tf_same_pad(x, k, s, d=1):
    """F.pad arguments for TF SAME padding of an NCHW tensor (asymmetric when needed: more bottom/right)."""
    h, w = x.shape[-2], x.shape[-1]
    eff = (k - 1) * d + 1

    def one(n):
        total = max((-(-n // s) - 1) * s + eff - n, 0)
        return total // 2, total - total // 2

    (pt, pb), (pl, pr) = one(h), one(w)
    return (pl, pr, pt, pb)


class ConvAct(nn.Module):
    """Conv2d (with bias: batch norm is already folded into the TFLite weights) + TF SAME padding + ReLU6."""

    def __init__(self, cin, cout, k=1, stride=1, groups=1, relu6=True):
        super().__init__()
        self.k, self.stride, self.relu6 = k, stride, relu6
        self.conv = nn.Conv2d(cin, cout, k, stride, padding=0, groups=groups, bias=True)

    def forward(self, x):
        if self.k > 1:
            x = F.pad(x, tf_same_pad(x, self.k, self.stride))
        x = self.conv(x)
        return F.relu6(x) if self.relu6 else x


class DepthSep(nn.Module):
    """MobileNet V1 block: 3x3 depthwise + 1x1 pointwise, both with ReLU6."""

    def __init__(self, cin, cout, stride):
        super().__init__()
        self.dw = ConvAct(cin, cin, 3, stride, groups=cin)
        self.pw = ConvAct(cin, cout, 1)
        self.stride = stride

    def convs(self):
        return [self.dw, self.pw]

    def forward(self, x):
        return self.pw(self.dw(x))


class InvertedResidual(nn.Module):
    """MobileNet V2 block: optional 1x1 expand (ReLU6), 3x3 depthwise (ReLU6), 1x1 linear projection, + skip."""

    def __init__(self, cin, cout, stride, expand):
        super().__init__()
        hid = cin * expand
        self.expand = ConvAct(cin, hid, 1) if expand != 1 else None
        self.dw = ConvAct(hid, hid, 3, stride, groups=hid)
        self.project = ConvAct(hid, cout, 1, relu6=False)
        self.residual = stride == 1 and cin == cout
        self.stride = stride

    def convs(self):
        return ([self.expand] if self.expand is not None else []) + [self.dw, self.project]

    def forward(self, x):
        y = x
        if self.expand is not None:
            y = self.expand(y)
        y = self.project(self.dw(y))
        return x + y if self.residual else y


class Stem(ConvAct):
    def convs(self):
        return [self]


class _MobileNetBase(nn.Module):
    """self.layers: ModuleList of blocks, each with .stride (1 or 2); self.classifier: 1x1 conv logits."""

    def _init_strides(self):
        s, self.layer_strides = 1, []
        for b in self.layers:
            s *= b.stride
            self.layer_strides.append(s)

    def convs(self):
        out = []
        for b in self.layers:
            out += b.convs()
        return out + [self.classifier]

    def features(self, x, upto_stride=32):
        """Return {stride: last feature map at that stride} for strides 4, 8, 16, 32 that are <= upto_stride."""
        feats = {}
        for b, s in zip(self.layers, self.layer_strides):
            if s > upto_stride:
                break
            x = b(x)
            if s >= 4:
                feats[s] = x
        return feats

    def forward(self, x):
        x = self.features(x, 32)[32]
        x = x.mean(dim=(2, 3), keepdim=True)      # TFLite: AVERAGE_POOL_2D over the whole final map
        return self.classifier(x).flatten(1)      # logits (N, 1001); class 0 = background

    def backbone(self, upto_stride=16):
        """A truncated feature extractor (shares parameters with self) returning features(x, upto_stride)."""
        return Backbone(self, upto_stride)

    def feature_channels(self, upto_stride=32):
        ch = {}
        for b, s in zip(self.layers, self.layer_strides):
            if s > upto_stride:
                break
            if s >= 4:
                ch[s] = b.convs()[-1].conv.out_channels
        return ch


class Backbone(nn.Module):
    def __init__(self, net, upto_stride):
        super().__init__()
        n = sum(1 for s in net.layer_strides if s <= upto_stride)
        self.layers = nn.ModuleList(list(net.layers)[:n])
        self.layer_strides = net.layer_strides[:n]
        self.upto_stride = upto_stride
        self.channels = net.feature_channels(upto_stride)

    def forward(self, x):
        feats = {}
        for b, s in zip(self.layers, self.layer_strides):
            x = b(x)
            if s >= 4:
                feats[s] = x
        return feats


class MobileNetV1(_MobileNetBase):
    CFG = [(64, 1), (128, 2), (128, 1), (256, 2), (256, 1), (512, 2), (512, 1), (512, 1), (512, 1), (512, 1),
           (512, 1), (1024, 2), (1024, 1)]

    def __init__(self, alpha=1.0, num_classes=1001):
        super().__init__()
        self.arch, self.alpha = "mobilenet_v1", alpha
        c = lambda n: _make_divisible(n * alpha, 8)  # noqa: E731
        layers = [Stem(3, c(32), 3, 2)]
        cin = c(32)
        for cout, s in self.CFG:
            layers.append(DepthSep(cin, c(cout), s))
            cin = c(cout)
        self.layers = nn.ModuleList(layers)
        self.classifier = ConvAct(cin, num_classes, 1, relu6=False)
        self._init_strides()


class MobileNetV2(_MobileNetBase):
    CFG = [(1, 16, 1, 1), (6, 24, 2, 2), (6, 32, 3, 2), (6, 64, 4, 2), (6, 96, 3, 1), (6, 160, 3, 2),
           (6, 320, 1, 1)]  # (expansion t, channels c, repeats n, first stride s)

    def __init__(self, alpha=1.0, num_classes=1001):
        super().__init__()
        self.arch, self.alpha = "mobilenet_v2", alpha
        c = lambda n: _make_divisible(n * alpha, 8)  # noqa: E731
        layers = [Stem(3, c(32), 3, 2)]
        cin = c(32)
        for t, ch, n, s in self.CFG:
            for i in range(n):
                layers.append(InvertedResidual(cin, c(ch), s if i == 0 else 1, t))
                cin = c(ch)
        last = _make_divisible(1280 * max(1.0, alpha), 8)
        layers.append(Stem(cin, last, 1, 1))  # "Conv_1": 1x1 to 1280, ReLU6, at stride 32
        self.layers = nn.ModuleList(layers)
        self.classifier = ConvAct(last, num_classes, 1, relu6=False)
        self._init_strides()


ARCHS = {"mobilenet_v1": MobileNetV1, "mobilenet_v2": MobileNetV2}


def build(arch, alpha, num_classes=1001):
    return ARCHS[arch](alpha=alpha, num_classes=num_classes)


def _guess_arch(m):
    names = " ".join(t.name for t in m.tensors)
    convs = [op for op in m.operators if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D")]
    stem_out = m.tensors[convs[0].inputs[1]].shape[0]
    if "MobilenetV2" in names or any(op.op == "ADD" for op in m.operators):
        return "mobilenet_v2", stem_out / 32.0
    return "mobilenet_v1", stem_out / 32.0


def convert(path):
    """Read the .tflite at path and return (float nn.Module with its weights, metadata dict)."""
    m = read_tflite(path)
    arch, alpha = _guess_arch(m)
    T = m.tensors
    ops = [op for op in m.operators if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D")]
    ncls = T[ops[-1].inputs[1]].shape[0]
    net = build(arch, alpha, ncls)
    convs = net.convs()
    if len(convs) != len(ops):
        raise ValueError(f"{path}: {len(ops)} conv ops in the file, {len(convs)} in {arch}({alpha})")

    # residual ADDs: index (in conv order) of the conv just before each ADD must be a residual block's projection
    file_adds, k = [], -1
    for op in m.operators:
        if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D"):
            k += 1
        elif op.op == "ADD":
            file_adds.append(k)
    mod_adds, k = [], -1
    for b in net.layers:
        k += len(b.convs())
        if getattr(b, "residual", False):
            mod_adds.append(k)
    if file_adds != mod_adds:
        raise ValueError(f"residual ADD positions differ: file {file_adds} vs module {mod_adds}")

    sd = {}
    prev_out = m.inputs[0]
    for op, mod in zip(ops, convs):
        wt, bt = T[op.inputs[1]], T[op.inputs[2]]
        o = op.options
        w = wt.dequantize()
        if op.op == "CONV_2D":
            w = w.transpose(0, 3, 1, 2)                    # [O,kh,kw,I] -> [O,I,kh,kw]
            assert mod.conv.groups == 1, f"op {op.index}: CONV_2D vs grouped module conv"
        else:
            w = w.transpose(3, 0, 1, 2)                    # [1,kh,kw,O] -> [O,1,kh,kw]
            assert mod.conv.groups == mod.conv.in_channels, f"op {op.index}: DEPTHWISE vs non-grouped module conv"
        if tuple(w.shape) != tuple(mod.conv.weight.shape):
            raise ValueError(f"op {op.index} {wt.name}: weight {w.shape} vs module {tuple(mod.conv.weight.shape)}")
        if (o["stride_h"], o["stride_w"]) != (mod.stride, mod.stride):
            raise ValueError(f"op {op.index}: stride {o['stride_h']} vs module {mod.stride}")
        if w.shape[-1] > 1 and o["padding"] != "SAME":
            raise ValueError(f"op {op.index}: padding {o['padding']} (module uses TF SAME)")
        if (o["activation"] == "RELU6") != mod.relu6 or o["activation"] not in ("RELU6", "NONE"):
            raise ValueError(f"op {op.index}: activation {o['activation']} vs module relu6={mod.relu6}")
        b = bt.dequantize()
        exp_bs = T[op.inputs[0]].scale.astype(np.float64) * wt.scale.astype(np.float64)
        if not np.allclose(bt.scale, exp_bs, rtol=1e-3):
            raise ValueError(f"op {op.index}: bias scale != input scale * weight scale")
        sd[id(mod)] = (torch.from_numpy(np.ascontiguousarray(w)), torch.from_numpy(b.astype(np.float32)))
    with torch.no_grad():
        for mod in convs:
            w, b = sd[id(mod)]
            mod.conv.weight.copy_(w)
            mod.conv.bias.copy_(b)
    xt = T[m.inputs[0]]
    meta = dict(arch=arch, alpha=alpha, input_size=int(xt.shape[1]), num_classes=int(ncls),
                input_scale=float(xt.scale[0]), input_zero_point=int(xt.zero_point[0]), source=str(path))
    return net.eval(), meta


def preprocess(img_u8, input_scale=1 / 128, input_zero_point=128):
    """uint8 RGB HxWx3 (or NxHxWx3) -> float NCHW tensor scale * (q - zero_point), i.e. [-1, 1]."""
    a = np.asarray(img_u8)
    if a.ndim == 3:
        a = a[None]
    x = (a.astype(np.float32) - input_zero_point) * input_scale
    return torch.from_numpy(np.ascontiguousarray(x.transpose(0, 3, 1, 2)))


def save(net, meta, out):
    torch.save(dict(meta, state_dict=net.state_dict()), out)


def load_converted(path):
    ck = torch.load(path, map_location="cpu")
    net = build(ck["arch"], ck["alpha"], ck["num_classes"])
    net.load_state_dict(ck["state_dict"])
    return net.eval(), {k: v for k, v in ck.items() if k != "state_dict"}


def count_params(module):
    return sum(p.numel() for p in module.parameters())


if __name__ == "__main__":
    if len(sys.argv) != 3:
        sys.exit("usage: python3 convert.py IN.tflite OUT.pt")
    torch.set_num_threads(1)
    net, meta = convert(sys.argv[1])
    save(net, meta, sys.argv[2])
    print(f"{meta['arch']} alpha={meta['alpha']} input {meta['input_size']}px, {meta['num_classes']} classes, "
          f"{count_params(net)} params -> {sys.argv[2]}")
    for s in (16, 32):
        p = count_params(net.backbone(s))
        print(f"  backbone up to stride {s}: {p} params, {p * 4 / 1e6:.2f} MB fp32, channels {net.feature_channels(s)}")
