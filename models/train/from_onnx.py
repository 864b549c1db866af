"""Rebuild a PyTorch checkpoint from a shipped seamtally-det ONNX file, so a new training stage can start from the
shipped weights (the training checkpoints are not kept in the repository). The export folded each BatchNorm into
its convolution; here each folded conv keeps the weights and its bias goes to an identity BatchNorm (scale 1,
mean 0, variance 1 − eps), so the rebuilt network computes the same function. Train it with `--freeze-bn` (the
BatchNorms stay in inference mode), or the batch statistics would change that function.
Usage: /usr/bin/python3 models/train/from_onnx.py models/seamtally-det.onnx OUT.pt"""
import os
import sys
import onnx
import torch
import torch.nn as nn
from onnx import numpy_helper

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from model import SeamtallyDet  # noqa: E402


def conv_order(model):
    """(conv, batchnorm or None) in the order the forward pass runs them (the ONNX graph's node order)."""
    out = []
    for name in ["stem", "s4", "s8", "s16", "s32", "lat32", "fuse16", "lat16", "fuse8", "lat8", "fuse4", "head", "hm", "reg"]:
        mod = getattr(model, name)
        if isinstance(mod, nn.Conv2d):
            out.append((mod, None))
            continue
        blocks = [mod] if isinstance(mod[0], nn.Conv2d) else list(mod)
        for b in blocks:
            out.append((b[0], b[1]))
    return out


def rebuild(onnx_path):
    g = onnx.load(onnx_path).graph
    inits = {i.name: numpy_helper.to_array(i) for i in g.initializer}
    convs = [n for n in g.node if n.op_type == "Conv"]
    model = SeamtallyDet()
    pairs = conv_order(model)
    if len(convs) != len(pairs):
        raise SystemExit(f"{onnx_path} has {len(convs)} Conv nodes, the network {len(pairs)}: not this architecture")
    with torch.no_grad():
        for node, (conv, bn) in zip(convs, pairs):
            w, b = inits[node.input[1]], inits[node.input[2]]
            if tuple(w.shape) != tuple(conv.weight.shape):
                raise SystemExit(f"shape mismatch at {node.input[0]}: {w.shape} vs {tuple(conv.weight.shape)}")
            conv.weight.copy_(torch.from_numpy(w))
            if bn is None:
                conv.bias.copy_(torch.from_numpy(b))
            else:
                bn.weight.fill_(1.0)
                bn.bias.copy_(torch.from_numpy(b))
                bn.running_mean.zero_()
                bn.running_var.fill_(1.0 - bn.eps)
    return model


if __name__ == "__main__":
    m = rebuild(sys.argv[1])
    torch.save({"model": m.state_dict(), "step": 0}, sys.argv[2])
    print("wrote", sys.argv[2])
