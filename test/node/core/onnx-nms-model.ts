// Test helper: a tiny protobuf encoder that writes one-node ONNX models (NonMaxSuppression, MaxPool) for onnxruntime.
// Field numbers from onnx/onnx.proto: ModelProto, GraphProto, NodeProto, AttributeProto, ValueInfoProto, TypeProto.

type Bytes = number[];

function varint(v: number | bigint): Bytes {
  let x = BigInt.asUintN(64, BigInt(v));
  const out: Bytes = [];
  do {
    let b = Number(x & 0x7fn);
    x >>= 7n;
    if (x > 0n) b |= 0x80;
    out.push(b);
  } while (x > 0n);
  return out;
}
const key = (field: number, wire: number) => varint((field << 3) | wire);
const fInt = (field: number, v: number): Bytes => [...key(field, 0), ...varint(v)];
const fBytes = (field: number, b: Bytes): Bytes => [...key(field, 2), ...varint(b.length), ...b];
const fStr = (field: number, s: string): Bytes => fBytes(field, [...new TextEncoder().encode(s)]);
const cat = (...parts: Bytes[]): Bytes => parts.flat();

export const ELEM_FLOAT = 1;
export const ELEM_INT64 = 7;

export interface ValueSpec { name: string; elemType: number; dims: Array<number | string> }

/** ValueInfoProto: name(1), type(2) → TypeProto.tensor_type(1) → elem_type(1), shape(2) → dim(1) → value(1)|param(2). */
function valueInfo(v: ValueSpec): Bytes {
  const shape = cat(...v.dims.map((d) => fBytes(1, typeof d === 'number' ? fInt(1, d) : fStr(2, d))));
  const tensorType = cat(fInt(1, v.elemType), fBytes(2, shape));
  return cat(fStr(1, v.name), fBytes(2, fBytes(1, tensorType)));
}

/** AttributeProto with INTS: name(1), ints(8) repeated, type(20) = 7. */
function intsAttribute(name: string, values: number[]): Bytes {
  return cat(fStr(1, name), ...values.map((x) => fInt(8, x)), fInt(20, 7));
}

/** ModelProto{ir_version(1)=7, graph(7), opset_import(8){domain(1)="", version(2)}} with one NodeProto. */
export function singleNodeModel(opType: string, inputs: ValueSpec[], outputs: ValueSpec[], intsAttrs: Record<string, number[]> = {}, opset = 11): Uint8Array {
  const node = cat(
    ...inputs.map((v) => fStr(1, v.name)), ...outputs.map((v) => fStr(2, v.name)), fStr(3, 'node0'), fStr(4, opType),
    ...Object.entries(intsAttrs).map(([k, v]) => fBytes(5, intsAttribute(k, v))),
  );
  const graph = cat(
    fBytes(1, node), fStr(2, 'graph0'),
    ...inputs.map((v) => fBytes(11, valueInfo(v))), ...outputs.map((v) => fBytes(12, valueInfo(v))),
  );
  return Uint8Array.from(cat(fInt(1, 7), fStr(2, 'seamtally-test'), fBytes(7, graph), fBytes(8, cat(fStr(1, ''), fInt(2, opset)))));
}

/** NonMaxSuppression (opset 11), center_point_box = 0 (corners [y1, x1, y2, x2]). */
export function nmsModelBytes(): Uint8Array {
  return singleNodeModel('NonMaxSuppression', [
    { name: 'boxes', elemType: ELEM_FLOAT, dims: ['B', 'N', 4] },
    { name: 'scores', elemType: ELEM_FLOAT, dims: ['B', 'C', 'N'] },
    { name: 'max_output_boxes_per_class', elemType: ELEM_INT64, dims: [1] },
    { name: 'iou_threshold', elemType: ELEM_FLOAT, dims: [1] },
    { name: 'score_threshold', elemType: ELEM_FLOAT, dims: [1] },
  ], [{ name: 'selected_indices', elemType: ELEM_INT64, dims: ['K', 3] }]);
}

/** MaxPool 3×3, stride 1, pad 1: CenterNet's peak rule is heat == maxpool(heat). */
export function maxPool3Bytes(): Uint8Array {
  return singleNodeModel('MaxPool',
    [{ name: 'x', elemType: ELEM_FLOAT, dims: [1, 'C', 'H', 'W'] }],
    [{ name: 'y', elemType: ELEM_FLOAT, dims: [1, 'C', 'H', 'W'] }],
    { kernel_shape: [3, 3], pads: [1, 1, 1, 1], strides: [1, 1] });
}
