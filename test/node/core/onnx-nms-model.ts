// Test helper: a tiny protobuf encoder that writes a one-node ONNX model running the NonMaxSuppression operator.
// Field numbers from onnx/onnx.proto (ModelProto, GraphProto, NodeProto, ValueInfoProto, TypeProto, TensorShapeProto).

type Bytes = number[];

function varint(v: number | bigint): Bytes {
  let x = BigInt(v);
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

const ELEM_FLOAT = 1;
const ELEM_INT64 = 7;

/** ValueInfoProto: name(1), type(2) → TypeProto.tensor_type(1) → elem_type(1), shape(2) → dim(1) → dim_param(2). */
function valueInfo(name: string, elemType: number, dimParams: string[]): Bytes {
  const shape = cat(...dimParams.map((d) => fBytes(1, fStr(2, d))));
  const tensorType = cat(fInt(1, elemType), fBytes(2, shape));
  return cat(fStr(1, name), fBytes(2, fBytes(1, tensorType)));
}

/**
 * ModelProto{ir_version(1)=7, opset_import(8){domain(1)="", version(2)=11}, graph(7)} with one
 * NodeProto{input(1)×5, output(2), op_type(4)="NonMaxSuppression"}; center_point_box defaults to 0 (corners
 * [y1, x1, y2, x2]).
 */
export function nmsModelBytes(): Uint8Array {
  const inputs = ['boxes', 'scores', 'max_output_boxes_per_class', 'iou_threshold', 'score_threshold'];
  const node = cat(...inputs.map((n) => fStr(1, n)), fStr(2, 'selected_indices'), fStr(3, 'nms'), fStr(4, 'NonMaxSuppression'));
  const graph = cat(
    fBytes(1, node),
    fStr(2, 'nms_graph'),
    fBytes(11, valueInfo('boxes', ELEM_FLOAT, ['B', 'N', 'four'])),
    fBytes(11, valueInfo('scores', ELEM_FLOAT, ['B', 'C', 'N'])),
    fBytes(11, valueInfo('max_output_boxes_per_class', ELEM_INT64, ['one'])),
    fBytes(11, valueInfo('iou_threshold', ELEM_FLOAT, ['one'])),
    fBytes(11, valueInfo('score_threshold', ELEM_FLOAT, ['one'])),
    fBytes(12, valueInfo('selected_indices', ELEM_INT64, ['K', 'three'])),
  );
  const model = cat(fInt(1, 7), fStr(2, 'seamtally-test'), fBytes(7, graph), fBytes(8, cat(fStr(1, ''), fInt(2, 11))));
  return Uint8Array.from(model);
}
