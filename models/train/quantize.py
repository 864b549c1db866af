"""Static int8 (QDQ) variant of an fp32 seamtally detector, built by hand with the onnx Python API.

Weights: per-channel symmetric int8 (DequantizeLinear axis=0, opset 13), 7-bit range [-63, 63] unless --full-range;
biases int32 at input_scale x weight_scale.
Activations: per-tensor asymmetric uint8 (ReLU outputs get zero point 0, so onnxruntime drops the ReLU and fuses
DQ -> Conv -> Q into QLinearConv, DQ/DQ -> Add -> Q into QLinearAdd and runs the nearest Resize on uint8).
Ranges come from the fp32 model run in onnxruntime-node on tiles of TRAINING scenes made by the pipeline
(models/train/calibrate.ts); never the evaluation scenes. The 1x1 output heads and the post-processing (Sigmoid, Exp,
Clip, Slice, atan angle) stay float: they read the dequantized last feature map.
Usage: python3 models/train/quantize.py --out models/train/work/int8/seamtally-det-int8.onnx
       [--model models/seamtally-det.onnx] [--scenes models/train/work/scenes-train] [--calib mse|percentile|minmax]
       [--stats STATS.json (reuse a calibration)] [--tiles-per-scene 3] [--full-range] [--float-convs NAME,...]
Writes OUT and OUT's sidecar (the model's, beside it as *.model.json: name and version with "-int8", a summary, no
quality curves until `seamtally eval --write-quality` measures the int8 file)."""
import argparse
import json
import os
import subprocess
import sys

import numpy as np
import onnx
from onnx import TensorProto, helper, numpy_helper

REPO = os.path.abspath(os.path.join(os.path.dirname(__file__), "..", ".."))
INT8_OPS = {"Conv", "Relu", "Resize", "Add"}


def sidecar_of(path):
    return path[: -len(".onnx")] + ".model.json"


def consumers_of(graph):
    out = {}
    for n in graph.node:
        for t in n.input:
            if t:
                out.setdefault(t, []).append(n)
    return out


def plan(graph, float_convs=()):
    """The int8 region: which nodes run quantized and which tensors get a Q -> DQ pair.
    A Conv/Relu/Resize/Add is int8 when all its activation inputs are quantized tensors (the graph input, or outputs
    of int8 nodes) and no consumer of its output is a float post-processing op; a Conv followed only by a Relu
    is quantized after the Relu (the pair becomes one QLinearConv). Convs named in `float_convs` keep float weights
    and read float (dequantized) inputs, but their outputs are still quantized for the int8 layers after them."""
    inits = {i.name for i in graph.initializer}
    consts = {o for n in graph.node if n.op_type == "Constant" for o in n.output}
    cons = consumers_of(graph)
    graph_outputs = {o.name for o in graph.output}
    quantized = {graph.input[0].name}  # tensors with a Q -> DQ pair
    int8_nodes = set()
    conv_to_relu = set()  # outputs of int8 Convs that are quantized after their Relu
    for n in graph.node:  # nodes are topologically sorted in an exported graph
        if n.op_type not in INT8_OPS:
            continue
        acts = [t for t in n.input if t and t not in inits and t not in consts]
        ok = quantized | conv_to_relu if n.op_type == "Relu" else quantized
        if not acts or not (n.name in float_convs or all(t in ok for t in acts)):
            continue
        out = n.output[0]
        users = cons.get(out, [])
        if out in graph_outputs or any(u.op_type not in INT8_OPS for u in users):
            continue  # feeds post-processing: keep this node's output float (it reads a DQ'd input)
        if n.op_type == "Add" and any(u.op_type == "Add" for u in users):
            continue
        int8_nodes.add(n.name)
        if n.op_type == "Conv" and len(users) == 1 and users[0].op_type == "Relu":
            conv_to_relu.add(out)
            continue  # quantized after the Relu
        quantized.add(out)
    inp = graph.input[0].name
    if all(u.name in float_convs for u in cons.get(inp, [])):
        quantized.discard(inp)  # only float Convs read the input: leave it float
    return quantized, int8_nodes - set(float_convs)


def instrument(model, tensors):
    """A copy of `model` with every tensor in `tensors` (except the graph input) as an extra graph output."""
    m = onnx.ModelProto()
    m.CopyFrom(model)
    have = {o.name for o in m.graph.output}
    for t in sorted(tensors):
        if t != m.graph.input[0].name and t not in have:
            m.graph.output.append(helper.make_tensor_value_info(t, TensorProto.FLOAT, None))
    return m


def qparams_u8(lo, hi):
    """uint8 scale and zero point for [lo, hi] widened to hold 0 (0 is exact)."""
    lo, hi = min(lo, 0.0), max(hi, 0.0)
    scale = max((hi - lo) / 255.0, 1e-8)
    zp = int(np.clip(round(-lo / scale), 0, 255))
    return np.float32(scale), np.uint8(zp)


def choose_range(s, method):
    """[lo, hi] from a calibration histogram: min/max, the 99.99th percentile, or the clip that minimises the
    expected squared error (rounding inside the range, clipping outside) over the histogram."""
    lo, hi = float(s["min"]), float(s["max"])
    lo, hi = min(lo, 0.0), max(hi, 0.0)
    if method == "minmax" or hi - lo <= 0:
        return lo, hi
    hist = np.asarray(s["hist"], dtype=np.float64)
    edges = np.linspace(float(s["min"]), float(s["max"]), len(hist) + 1)
    centres = 0.5 * (edges[:-1] + edges[1:])
    if method == "percentile":
        cdf = np.cumsum(hist) / hist.sum()
        a = 1e-4
        plo = centres[min(np.searchsorted(cdf, a), len(hist) - 1)] if lo < 0 else 0.0
        phi = centres[min(np.searchsorted(cdf, 1 - a), len(hist) - 1)]
        return min(plo, 0.0), max(phi, 0.0)
    best, best_err = (lo, hi), None
    for f in np.linspace(0.05, 1.0, 96):  # shrink both ends by the same factor (keeps the zero point)
        clo, chi = lo * f, hi * f
        scale = (chi - clo) / 255.0
        inside = (centres >= clo) & (centres <= chi)
        err = np.sum(hist[inside]) * scale * scale / 12.0
        err += np.sum(hist[~inside] * (np.clip(centres[~inside], clo, chi) - centres[~inside]) ** 2)
        if best_err is None or err < best_err:
            best, best_err = (clo, chi), err
    return best


def quantize_weight(w, qmax=127):
    """Per-output-channel symmetric int8: w ~ q * scale[c], q in [-qmax, qmax]. qmax 63 ("reduce range") keeps
    u8 x s8 pair sums inside int16 (2 x 255 x 63 < 32768): x86 AVX2 kernels without VNNI add pairs of products with
    saturating VPMADDUBSW, so full-range weights can saturate there (onnxruntime's quantization documentation)."""
    amax = np.abs(w.reshape(w.shape[0], -1)).max(axis=1)
    scale = np.where(amax > 0, amax / qmax, 1.0).astype(np.float32)
    q = np.clip(np.round(w / scale.reshape(-1, 1, 1, 1)), -qmax, qmax).astype(np.int8)
    return q, scale


def build_qdq(model, ranges, int8_nodes, weight_qmax=127):
    g = model.graph
    inits = {i.name: i for i in g.initializer}
    new_inits, nodes = [], []
    qp = {}  # quantized tensor -> (scale name, zp name, scale value)

    def const(name, arr):
        new_inits.append(numpy_helper.from_array(arr, name))
        return name

    def add_q(t, lo, hi):
        s, z = qparams_u8(lo, hi)
        sn, zn = const(f"{t}_scale", np.array(s, np.float32)), const(f"{t}_zp", np.array(z, np.uint8))
        nodes.append(helper.make_node("QuantizeLinear", [t, sn, zn], [f"{t}_q"], name=f"{t}_Q"))
        qp[t] = (sn, zn, float(s))

    dq_count = {}

    def dq(t):
        """A fresh DequantizeLinear of quantized tensor t for one consumer."""
        k = dq_count[t] = dq_count.get(t, 0) + 1
        sn, zn, _ = qp[t]
        out = f"{t}_dq{k}"
        nodes.append(helper.make_node("DequantizeLinear", [f"{t}_q", sn, zn], [out], name=f"{t}_DQ{k}"))
        return out

    inp = g.input[0].name
    if inp in ranges:
        add_q(inp, *ranges[inp])
    for n in g.node:
        ins = list(n.input)
        for i, t in enumerate(ins):
            if t in qp:
                ins[i] = dq(t)
        if n.op_type == "Conv" and n.name in int8_nodes:
            src = n.input[0]
            w = numpy_helper.to_array(inits[n.input[1]])
            q, ws = quantize_weight(w, weight_qmax)
            wn = n.input[1]
            ins[1] = f"{wn}_dq"
            nodes.append(helper.make_node("DequantizeLinear", [const(f"{wn}_q", q), const(f"{wn}_wscale", ws),
                                                               const(f"{wn}_wzp", np.zeros(len(ws), np.int8))],
                                          [ins[1]], name=f"{wn}_DQ", axis=0))
            if len(n.input) > 2 and n.input[2]:
                b = numpy_helper.to_array(inits[n.input[2]]).astype(np.float64)
                bs = (qp[src][2] * ws.astype(np.float64)).astype(np.float32)
                bq = np.round(b / bs).astype(np.int32)
                bn = n.input[2]
                ins[2] = f"{bn}_dq"
                nodes.append(helper.make_node("DequantizeLinear", [const(f"{bn}_q", bq), const(f"{bn}_bscale", bs),
                                                                   const(f"{bn}_bzp", np.zeros(len(bs), np.int32))],
                                              [ins[2]], name=f"{bn}_DQ", axis=0))
        m = helper.make_node(n.op_type, ins, list(n.output), name=n.name, domain=n.domain)
        m.attribute.extend(n.attribute)
        nodes.append(m)
        out = n.output[0]
        if out in ranges:
            if n.op_type == "Resize":
                sn, zn, s = qp[n.input[0]]
                nodes.append(helper.make_node("QuantizeLinear", [out, sn, zn], [f"{out}_q"], name=f"{out}_Q"))
                qp[out] = (sn, zn, s)  # nearest resize: same values, same parameters
            else:
                add_q(out, *ranges[out])
    used = {t for nd in nodes for t in nd.input}
    keep = [i for i in g.initializer if i.name in used]
    graph = helper.make_graph(nodes, g.name + "_int8", list(g.input), list(g.output), keep + new_inits)
    out = helper.make_model(graph, opset_imports=[helper.make_opsetid("", 13)], producer_name="seamtally quantize.py")
    out.ir_version = model.ir_version
    onnx.checker.check_model(out)
    return out


def main():
    ap = argparse.ArgumentParser(description=__doc__, formatter_class=argparse.RawDescriptionHelpFormatter)
    ap.add_argument("--model", default=os.path.join(REPO, "models", "seamtally-det.onnx"))
    ap.add_argument("--scenes", default=os.path.join(REPO, "models", "train", "work", "scenes-train"))
    ap.add_argument("--out", required=True)
    ap.add_argument("--calib", default="mse", choices=["mse", "percentile", "minmax"])
    ap.add_argument("--stats", help="reuse calibration statistics written by an earlier run")
    ap.add_argument("--tiles-per-scene", default="3")
    ap.add_argument("--full-range", action="store_true",
                    help="8-bit weights ([-127, 127]); default 7-bit, which cannot saturate AVX2's int16 pair sums")
    ap.add_argument("--float-convs", default="", help="comma-separated Conv node names (or unique substrings) kept float")
    a = ap.parse_args()
    if os.path.abspath(a.out) == os.path.abspath(a.model):
        sys.exit("--out must not be the fp32 model: write the int8 variant to a new path")
    if "eval" in os.path.basename(os.path.normpath(a.scenes)):
        sys.exit(f"refusing to calibrate on {a.scenes}: use training scenes, never the evaluation set")
    model = onnx.load(a.model)
    if model.opset_import[0].version != 13:
        sys.exit(f"expected an opset-13 model, got {model.opset_import[0].version}")
    conv_names = [n.name for n in model.graph.node if n.op_type == "Conv"]
    float_convs = set()
    for pat in filter(None, a.float_convs.split(",")):
        hits = [c for c in conv_names if pat in c]
        if len(hits) != 1:
            sys.exit(f"--float-convs {pat!r} matches {hits or 'no Conv'}; name one of {conv_names}")
        float_convs.add(hits[0])
    quantized, int8_nodes = plan(model.graph, float_convs)
    os.makedirs(os.path.dirname(os.path.abspath(a.out)), exist_ok=True)
    stats_path = a.stats or a.out[: -len(".onnx")] + ".calib.json"
    if not a.stats:
        calib_model = a.out[: -len(".onnx")] + ".calib.onnx"
        onnx.save(instrument(model, quantized), calib_model)
        subprocess.run(["npx", "tsx", os.path.join(REPO, "models", "train", "calibrate.ts"), "--model", calib_model,
                        "--sidecar", sidecar_of(a.model), "--scenes", a.scenes, "--out", stats_path,
                        "--tiles-per-scene", a.tiles_per_scene], check=True, cwd=REPO)
        os.remove(calib_model)
    with open(stats_path) as f:
        stats = json.load(f)["tensors"]
    inp = model.graph.input[0].name
    ranges = {t: (choose_range(stats[t], "minmax" if t == inp else a.calib)) for t in quantized if t in stats}
    missing = sorted(set(quantized) - set(ranges) - {n.output[0] for n in model.graph.node if n.op_type == "Resize"})
    if missing:
        sys.exit(f"no calibration statistics for {missing}")
    for n in model.graph.node:  # Resize outputs reuse their input's parameters
        if n.op_type == "Resize" and n.output[0] in quantized:
            ranges[n.output[0]] = ranges[n.input[0]]
    q = build_qdq(model, ranges, int8_nodes, 127 if a.full_range else 63)
    onnx.save(q, a.out)
    # the fp32 model's sidecar, renamed; its quality curves are dropped: `seamtally eval --write-quality` on the int8
    # file measures its own (the app's caveats read them)
    with open(sidecar_of(a.model)) as f:
        side = json.load(f)
    side.pop("quality", None)
    base_name, base_version = side.get("name", "model"), str(side.get("version", "1"))
    side["name"], side["version"] = base_name + "-int8", base_version + "-int8"
    side["summary"] = (f"int8-quantized copy of {base_name} {base_version}: about 1.2x faster in the browser, "
                       "AP@0.5 within 1 point of it (model card)")
    with open(sidecar_of(a.out), "w") as f:
        json.dump(side, f, indent=2)
        f.write("\n")
    n_conv = sum(1 for n in model.graph.node if n.op_type == "Conv")
    n_q = sum(1 for n in model.graph.node if n.op_type == "Conv" and n.name in int8_nodes)
    print(f"{a.out}: {n_q}/{n_conv} Conv int8, {len(ranges)} quantized activations ({a.calib}), "
          f"{os.path.getsize(a.out) / 1e6:.2f} MB (fp32 {os.path.getsize(a.model) / 1e6:.2f} MB)")
    for t in sorted(ranges, key=lambda t: list(quantized).index(t) if t in quantized else 0):
        lo, hi = ranges[t]
        print(f"  {t}: [{lo:.4g}, {hi:.4g}] (seen [{stats.get(t, {}).get('min', lo):.4g}, {stats.get(t, {}).get('max', hi):.4g}])")


if __name__ == "__main__":
    main()
