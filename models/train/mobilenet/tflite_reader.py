"""Minimal reader for TensorFlow Lite (.tflite) FlatBuffers files.

Uses only the low-level `flatbuffers` Table API (python3-flatbuffers); no generated schema module.

The field numbers below are the public TFLite schema (tensorflow/lite/schema/schema.fbs, Apache-2.0),
WRITTEN FROM MEMORY, not copied. They are checked empirically by `check_schema()` (run this file on a
.tflite): the file identifier must be TFL3, tensor names must look like TF op names, CONV_2D weights must be
[out, kh, kw, in] with in == the input tensor's channels, DEPTHWISE_CONV_2D weights [1, kh, kw, out], bias
int32 with scale == input_scale * weight_scale, and every op's output shape must match what its options
(stride, padding) predict. A wrong field number would break one of those checks.

Usage: python3 tflite_reader.py FILE.tflite   (prints the graph and runs the checks)
"""
import sys
from dataclasses import dataclass, field

import numpy as np
import flatbuffers
from flatbuffers import number_types as N
from flatbuffers.table import Table
from flatbuffers import util as fb_util


def _vt(i):
    """vtable offset of field number i (flatbuffers: 4 + 2*i)."""
    return 4 + 2 * i


# ---- schema facts (from memory; verified by check_schema) -------------------------------------------
# table Model        { version:uint 0; operator_codes:[OperatorCode] 1; subgraphs:[SubGraph] 2;
#                      description:string 3; buffers:[Buffer] 4; ... }
# table OperatorCode { deprecated_builtin_code:byte 0; custom_code:string 1; version:int 2;
#                      builtin_code:BuiltinOperator(int) 3 }
# table SubGraph     { tensors:[Tensor] 0; inputs:[int] 1; outputs:[int] 2; operators:[Operator] 3; name 4 }
# table Tensor       { shape:[int] 0; type:TensorType(byte) 1; buffer:uint 2; name:string 3;
#                      quantization:QuantizationParameters 4; ... }
# table QuantizationParameters { min:[float] 0; max:[float] 1; scale:[float] 2; zero_point:[long] 3;
#                      details_type 4; details 5; quantized_dimension:int 6 }
# table Operator     { opcode_index:uint 0; inputs:[int] 1; outputs:[int] 2;
#                      builtin_options_type:ubyte 3; builtin_options:union 4; ... }
# table Buffer       { data:[ubyte] 0; offset:ulong 1; size:ulong 2 }
M_OPCODES, M_SUBGRAPHS, M_DESCRIPTION, M_BUFFERS = 1, 2, 3, 4

TENSOR_TYPES = {0: np.float32, 1: np.float16, 2: np.int32, 3: np.uint8, 4: np.int64, 6: np.bool_,
                7: np.int16, 9: np.int8}
BUILTIN_OPS = {0: "ADD", 1: "AVERAGE_POOL_2D", 2: "CONCATENATION", 3: "CONV_2D", 4: "DEPTHWISE_CONV_2D",
               6: "DEQUANTIZE", 9: "FULLY_CONNECTED", 14: "LOGISTIC", 17: "MAX_POOL_2D", 18: "MUL",
               19: "RELU", 21: "RELU6", 22: "RESHAPE", 25: "SOFTMAX", 34: "PAD", 40: "MEAN",
               43: "SQUEEZE", 114: "QUANTIZE"}
PADDING = {0: "SAME", 1: "VALID"}
ACTIVATION = {0: "NONE", 1: "RELU", 2: "RELU_N1_TO_1", 3: "RELU6", 4: "TANH", 5: "SIGN_BIT"}


@dataclass
class TensorInfo:
    index: int
    name: str
    shape: tuple
    dtype: type
    buffer: int
    scale: np.ndarray          # float32, shape (1,) per-tensor or (C,) per-channel; empty if none
    zero_point: np.ndarray     # int64, same length as scale
    quantized_dimension: int
    data: np.ndarray = None    # constant data reshaped to `shape`, or None for activations

    def dequantize(self):
        """float = scale * (q - zero_point), per-channel along quantized_dimension if needed."""
        q = self.data.astype(np.float64)
        if self.scale.size == 0:
            return q.astype(np.float32)
        if self.scale.size == 1:
            return (self.scale[0] * (q - self.zero_point[0])).astype(np.float32)
        bshape = [1] * q.ndim
        bshape[self.quantized_dimension] = -1
        s = self.scale.reshape(bshape).astype(np.float64)
        z = self.zero_point.reshape(bshape)
        return (s * (q - z)).astype(np.float32)


@dataclass
class OperatorInfo:
    index: int
    op: str
    inputs: list
    outputs: list
    options: dict = field(default_factory=dict)


@dataclass
class TFLiteModel:
    tensors: list
    operators: list
    inputs: list
    outputs: list
    description: str

    def tensor(self, i):
        return self.tensors[i]


def _int_vector(t, slot, np_dtype=np.int32):
    o = t.Offset(_vt(slot))
    if o == 0:
        return np.zeros(0, np_dtype)
    n = t.VectorLen(o)
    start = t.Vector(o)
    return np.frombuffer(bytes(t.Bytes[start:start + n * np.dtype(np_dtype).itemsize]), np_dtype).copy()


def _table_vector(t, slot):
    o = t.Offset(_vt(slot))
    if o == 0:
        return []
    n = t.VectorLen(o)
    start = t.Vector(o)
    out = []
    for k in range(n):
        p = t.Indirect(start + 4 * k)
        out.append(Table(t.Bytes, p))
    return out


def _scalar(t, slot, flags, default):
    return t.GetSlot(_vt(slot), default, flags)


def _string(t, slot):
    o = t.Offset(_vt(slot))
    return t.String(o + t.Pos).decode("utf-8", "replace") if o else ""


def _sub_table(t, slot):
    o = t.Offset(_vt(slot))
    if o == 0:
        return None
    return Table(t.Bytes, t.Indirect(o + t.Pos))


def _options(op_name, opt):
    """Decode the builtin_options table for the ops we need (field order from memory, see check_schema)."""
    I, B, F = N.Int32Flags, N.Int8Flags, N.Float32Flags
    if opt is None:
        return {}
    if op_name == "CONV_2D":  # Conv2DOptions { padding 0; stride_w 1; stride_h 2; fused_act 3; dil_w 4; dil_h 5 }
        return dict(padding=PADDING[_scalar(opt, 0, B, 0)], stride_w=_scalar(opt, 1, I, 0),
                    stride_h=_scalar(opt, 2, I, 0), activation=ACTIVATION[_scalar(opt, 3, B, 0)],
                    dilation_w=_scalar(opt, 4, I, 1), dilation_h=_scalar(opt, 5, I, 1))
    if op_name == "DEPTHWISE_CONV_2D":  # { padding 0; stride_w 1; stride_h 2; depth_multiplier 3; fused_act 4; dil_w 5; dil_h 6 }
        return dict(padding=PADDING[_scalar(opt, 0, B, 0)], stride_w=_scalar(opt, 1, I, 0),
                    stride_h=_scalar(opt, 2, I, 0), depth_multiplier=_scalar(opt, 3, I, 0),
                    activation=ACTIVATION[_scalar(opt, 4, B, 0)],
                    dilation_w=_scalar(opt, 5, I, 1), dilation_h=_scalar(opt, 6, I, 1))
    if op_name in ("AVERAGE_POOL_2D", "MAX_POOL_2D"):  # Pool2DOptions { padding; stride_w; stride_h; filter_w; filter_h; fused_act }
        return dict(padding=PADDING[_scalar(opt, 0, B, 0)], stride_w=_scalar(opt, 1, I, 0),
                    stride_h=_scalar(opt, 2, I, 0), filter_w=_scalar(opt, 3, I, 0),
                    filter_h=_scalar(opt, 4, I, 0), activation=ACTIVATION[_scalar(opt, 5, B, 0)])
    if op_name == "ADD":  # AddOptions { fused_act 0; ... }
        return dict(activation=ACTIVATION[_scalar(opt, 0, B, 0)])
    if op_name == "FULLY_CONNECTED":  # FullyConnectedOptions { fused_act 0; weights_format 1; keep_num_dims 2; ... }
        return dict(activation=ACTIVATION[_scalar(opt, 0, B, 0)])
    if op_name == "SOFTMAX":  # SoftmaxOptions { beta:float 0 }
        return dict(beta=_scalar(opt, 0, F, 0.0))
    if op_name == "RESHAPE":  # ReshapeOptions { new_shape:[int] 0 }
        return dict(new_shape=_int_vector(opt, 0).tolist())
    if op_name == "SQUEEZE":  # SqueezeOptions { squeeze_dims:[int] 0 }
        return dict(squeeze_dims=_int_vector(opt, 0).tolist())
    return {}


def read_tflite(path):
    buf = bytearray(open(path, "rb").read())
    if fb_util.GetBufferIdentifier(buf, 0) != b"TFL3":
        raise ValueError(f"{path}: not a TFLite file (identifier {bytes(fb_util.GetBufferIdentifier(buf, 0))!r})")
    root = Table(buf, flatbuffers.encode.Get(N.UOffsetTFlags.packer_type, buf, 0))

    # buffers
    buffers = []
    for b in _table_vector(root, M_BUFFERS):
        buffers.append(_int_vector(b, 0, np.uint8))

    # operator codes: builtin_code (field 3, int32) is authoritative when present; older files only
    # fill deprecated_builtin_code (field 0, int8). Take the max, as the TFLite runtime does.
    opcodes = []
    for oc in _table_vector(root, M_OPCODES):
        dep = _scalar(oc, 0, N.Int8Flags, 0)
        new = _scalar(oc, 3, N.Int32Flags, 0)
        code = max(dep, new)
        opcodes.append(BUILTIN_OPS.get(code, f"BUILTIN_{code}"))

    subgraphs = _table_vector(root, M_SUBGRAPHS)
    if len(subgraphs) != 1:
        raise ValueError(f"expected one subgraph, got {len(subgraphs)}")
    sg = subgraphs[0]

    tensors = []
    for i, t in enumerate(_table_vector(sg, 0)):
        shape = tuple(int(s) for s in _int_vector(t, 0))
        ttype = _scalar(t, 1, N.Int8Flags, 0)
        dtype = TENSOR_TYPES.get(ttype)
        if dtype is None:
            raise ValueError(f"tensor {i}: unsupported TensorType {ttype}")
        bidx = _scalar(t, 2, N.Uint32Flags, 0)
        name = _string(t, 3)
        q = _sub_table(t, 4)
        if q is not None:
            scale = _int_vector(q, 2, np.float32)
            zp = _int_vector(q, 3, np.int64)
            qdim = _scalar(q, 6, N.Int32Flags, 0)
        else:
            scale, zp, qdim = np.zeros(0, np.float32), np.zeros(0, np.int64), 0
        raw = buffers[bidx] if bidx < len(buffers) else np.zeros(0, np.uint8)
        data = None
        if raw.size:
            data = np.frombuffer(raw.tobytes(), dtype).reshape(shape).copy()
        tensors.append(TensorInfo(i, name, shape, dtype, bidx, scale, zp, qdim, data))

    operators = []
    for k, o in enumerate(_table_vector(sg, 3)):
        name = opcodes[_scalar(o, 0, N.Uint32Flags, 0)]
        ins = _int_vector(o, 1).tolist()
        outs = _int_vector(o, 2).tolist()
        opt = _sub_table(o, 4)  # builtin_options union value (type byte is field 3)
        operators.append(OperatorInfo(k, name, ins, outs, _options(name, opt)))

    return TFLiteModel(tensors, operators, _int_vector(sg, 1).tolist(), _int_vector(sg, 2).tolist(),
                       _string(root, M_DESCRIPTION))


def _same_out(n, s):
    return -(-n // s)


def check_schema(m):
    """Empirical checks that the from-memory field numbers are right. Raises AssertionError if not."""
    T = m.tensors
    assert m.inputs and m.outputs, "no graph inputs/outputs"
    assert any("/" in t.name for t in T), "tensor names do not look like TF names"
    n_conv = 0
    for op in m.operators:
        if op.op in ("CONV_2D", "DEPTHWISE_CONV_2D"):
            n_conv += 1
            x, w, b = (T[i] for i in op.inputs[:3])
            y = T[op.outputs[0]]
            assert w.data is not None and x.data is None, f"op {op.index}: weight/activation mixup"
            assert b.dtype == np.int32, f"op {op.index}: bias is {b.dtype}"
            if op.op == "CONV_2D":
                assert w.shape[3] == x.shape[3] and w.shape[0] == y.shape[3], \
                    f"op {op.index}: CONV_2D weights {w.shape} vs in {x.shape} out {y.shape}"
            else:
                assert w.shape[0] == 1 and w.shape[3] == y.shape[3] == x.shape[3] * op.options["depth_multiplier"], \
                    f"op {op.index}: DEPTHWISE weights {w.shape} vs in {x.shape} out {y.shape}"
            sh, sw = op.options["stride_h"], op.options["stride_w"]
            assert sh in (1, 2) and sw in (1, 2), f"op {op.index}: odd stride {sh},{sw}"
            if op.options["padding"] == "SAME":
                exp = (_same_out(x.shape[1], sh), _same_out(x.shape[2], sw))
            else:
                exp = ((x.shape[1] - w.shape[1]) // sh + 1, (x.shape[2] - w.shape[2]) // sw + 1)
            assert tuple(y.shape[1:3]) == exp, f"op {op.index}: output {y.shape} != predicted {exp}"
            assert op.options["activation"] in ("NONE", "RELU6", "RELU"), op.options
            # bias scale = input scale * weight scale (per channel or per tensor)
            exp_bs = x.scale[0].astype(np.float64) * w.scale.astype(np.float64)
            assert np.allclose(b.scale, exp_bs, rtol=1e-4), f"op {op.index}: bias scale mismatch"
            assert np.all(b.zero_point == 0)
    assert n_conv > 0
    return True


def describe(m, file=sys.stdout):
    print(f"description: {m.description!r}; inputs {m.inputs} outputs {m.outputs}", file=file)
    for op in m.operators:
        ins = ", ".join(f"{i}{list(m.tensors[i].shape)}" for i in op.inputs)
        y = m.tensors[op.outputs[0]]
        print(f"{op.index:3d} {op.op:18s} in[{ins}] -> {op.outputs[0]}{list(y.shape)} "
              f"s={y.scale[:1]} zp={y.zero_point[:1]} {op.options}", file=file)
        print(f"      {m.tensors[op.inputs[1]].name if len(op.inputs) > 1 else ''}", file=file)


if __name__ == "__main__":
    for p in sys.argv[1:]:
        m = read_tflite(p)
        describe(m)
        x = m.tensors[m.inputs[0]]
        print("input", x.name, x.shape, x.dtype.__name__, "scale", x.scale, "zp", x.zero_point)
        check_schema(m)
        print("schema checks OK:", p)
