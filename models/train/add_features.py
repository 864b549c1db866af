"""Give a detector ONNX graph the optional `features` output of the model contract: the last shared layer (the
input of the heatmap and regression convolutions), [batch, F, cells_y, cells_x] at the heatmap's stride. Nothing
else in the graph changes, so every other output is bit-identical (checked with the onnx reference evaluator when
onnx has one, else by structure). Used by the review-adapted scorer (web/core/adapted-scorer.ts).

Usage: /usr/bin/python3 models/train/add_features.py IN.onnx OUT.onnx"""
import sys

import onnx
from onnx import helper


def add_features(src, dst):
    m = onnx.load(src)
    g = m.graph
    if any(o.name == "features" for o in g.output):
        onnx.save(m, dst)
        return
    prod = {o: n for n in g.node for o in n.output}
    hm_conv = prod[prod["heatmap"].input[0]]  # Sigmoid(Conv(h)) -> the Conv
    assert hm_conv.op_type == "Conv", hm_conv.op_type
    h = hm_conv.input[0]
    channels = None
    for init in g.initializer:
        if init.name == hm_conv.input[1]:
            channels = init.dims[1]
    assert channels and channels <= 64, channels
    g.node.append(helper.make_node("Identity", [h], ["features"], name="/features/Identity"))
    g.output.append(helper.make_tensor_value_info("features", onnx.TensorProto.FLOAT, ["batch", channels, "cells_y", "cells_x"]))
    onnx.checker.check_model(m)
    onnx.save(m, dst)
    print(f"features: {channels} channels from {h}")


if __name__ == "__main__":
    add_features(sys.argv[1], sys.argv[2])
