// A block's detections in compact binary (what a block job stores on Redis): its tiles' tables, in tile order, with
// every column at full precision (f64 centres, f32 sizes/angle/score), so the finishing job merges exactly what
// detect would have merged. Layout (little-endian): "STB1", u32 header length, header JSON, zero padding to a multiple
// of 8, then the rows of all tables column by column: cxM f64, cyM f64, lengthM, widthM, angleRad, score f32,
// sceneIdx u16, classIdx u8.
import { createDetectionTable, type DetectionTable } from '../../web/core/types.ts';

const MAGIC = 'STB1';

export interface TileTable {
  tileIndex: number;
  table: DetectionTable;
}

interface Header {
  frameCrs: string;
  tiles: { tileIndex: number; count: number }[];
}

const pad8 = (n: number) => (n + 7) & ~7;

export function encodeBlock(tiles: readonly TileTable[]): Uint8Array {
  const header: Header = { frameCrs: tiles[0]?.table.frameCrs ?? '', tiles: tiles.map((t) => ({ tileIndex: t.tileIndex, count: t.table.count })) };
  const head = new TextEncoder().encode(JSON.stringify(header));
  const n = header.tiles.reduce((a, t) => a + t.count, 0);
  const start = pad8(8 + head.length);
  const bytes = new Uint8Array(start + n * (8 + 8 + 4 * 4 + 2 + 1));
  const dv = new DataView(bytes.buffer);
  bytes.set(new TextEncoder().encode(MAGIC), 0);
  dv.setUint32(4, head.length, true);
  bytes.set(head, 8);
  let o = start;
  const f64 = (get: (t: DetectionTable) => Float64Array) => { for (const { table } of tiles) for (let i = 0; i < table.count; i++, o += 8) dv.setFloat64(o, get(table)[i], true); };
  const f32 = (get: (t: DetectionTable) => Float32Array) => { for (const { table } of tiles) for (let i = 0; i < table.count; i++, o += 4) dv.setFloat32(o, get(table)[i], true); };
  f64((t) => t.cxM); f64((t) => t.cyM);
  f32((t) => t.lengthM); f32((t) => t.widthM); f32((t) => t.angleRad); f32((t) => t.score);
  for (const { table } of tiles) for (let i = 0; i < table.count; i++, o += 2) dv.setUint16(o, table.sceneIdx[i], true);
  for (const { table } of tiles) for (let i = 0; i < table.count; i++, o += 1) dv.setUint8(o, table.classIdx[i]);
  return bytes;
}

export function decodeBlock(bytes: Uint8Array): TileTable[] {
  const dv = new DataView(bytes.buffer, bytes.byteOffset, bytes.byteLength);
  if (new TextDecoder().decode(bytes.subarray(0, 4)) !== MAGIC) throw new Error('not a seamtally block (STB1)');
  const headLen = dv.getUint32(4, true);
  const header = JSON.parse(new TextDecoder().decode(bytes.subarray(8, 8 + headLen))) as Header;
  const out = header.tiles.map((t) => ({ tileIndex: t.tileIndex, table: Object.assign(createDetectionTable(header.frameCrs, t.count), { count: t.count }) }));
  let o = pad8(8 + headLen);
  const f64 = (get: (t: DetectionTable) => Float64Array) => { for (const { table } of out) for (let i = 0; i < table.count; i++, o += 8) get(table)[i] = dv.getFloat64(o, true); };
  const f32 = (get: (t: DetectionTable) => Float32Array) => { for (const { table } of out) for (let i = 0; i < table.count; i++, o += 4) get(table)[i] = dv.getFloat32(o, true); };
  f64((t) => t.cxM); f64((t) => t.cyM);
  f32((t) => t.lengthM); f32((t) => t.widthM); f32((t) => t.angleRad); f32((t) => t.score);
  for (const { table } of out) for (let i = 0; i < table.count; i++, o += 2) table.sceneIdx[i] = dv.getUint16(o, true);
  for (const { table } of out) for (let i = 0; i < table.count; i++, o += 1) table.classIdx[i] = dv.getUint8(o);
  if (o !== bytes.length) throw new Error(`seamtally block: ${bytes.length - o} bytes left over`);
  return out;
}
