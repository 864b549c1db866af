// Sidecar contract seamtally-model/1: valid files parse, each bad field is named, I/O checks against a real ONNX session.
import { describe, it, expect } from 'vitest';
import * as ort from 'onnxruntime-node';
import {
  parseSidecar, validateSidecar, checkModelIO, dimsFromMetadata, sidecarOutputNames, MAX_SIDECAR_BYTES,
} from '../../../web/core/model-contract.ts';
import { SeamtallyError } from '../../../web/core/errors.ts';
import { maxPool3Bytes } from './onnx-nms-model.ts';

const VALID = {
  format: 'seamtally-model/1', name: 'tiny', version: '1.0.0', card: 'models/README.md', summary: 'a tiny test model',
  classes: ['vehicle', 'solar_panel'], inputGsdM: 0.3, tilePx: 512,
  input: { name: 'image', bands: 'rgb', scale: 0.00392156862745098, mean: [0, 0, 0], std: [1, 1, 1] },
  output: { layout: 'center-heatmap', stride: 4, heatmap: 'hm', size: 'wh', offset: 'reg', angle: null },
  minScore: 0.3,
  objects: { vehicle: { criticalDimM: 1.8, maxExtentM: 7 }, solar_panel: { criticalDimM: 1.0, maxExtentM: 40 } },
  quality: { gsdM: [0.15, 0.3, 0.45, 0.6, 0.8], recall: { vehicle: [0.97, 0.95, 0.9, 0.7, 0.4] }, ap50: { vehicle: 0.93 }, evalSet: 'held-out seeds' },
  lowSun: { belowDeg: 32, countBiasPct: { vehicle: 7.7, solar_panel: -2 }, source: 'validation scenes' },
};
const clone = () => JSON.parse(JSON.stringify(VALID));

function fieldOf(fn: () => unknown): string {
  try { fn(); } catch (e) {
    expect(e).toBeInstanceOf(SeamtallyError);
    expect((e as SeamtallyError).kind).toBe('sidecar-invalid');
    return String((e as SeamtallyError).detail.field ?? (e as SeamtallyError).message);
  }
  throw new Error('expected a sidecar-invalid error');
}

describe('parseSidecar', () => {
  it('accepts the documented example (both layouts) and keeps every field', () => {
    const sc = parseSidecar(JSON.stringify(VALID));
    expect(sc.classes).toEqual(['vehicle', 'solar_panel']);
    expect(sc.output).toEqual({ ...VALID.output, features: null }); // the optional features output absent → null
    expect(sc.objects?.vehicle.maxExtentM).toBe(7);
    expect(sc.summary).toBe('a tiny test model');
    expect(sc.lowSun).toEqual(VALID.lowSun);
    expect(sidecarOutputNames(sc)).toEqual(['hm', 'wh', 'reg']);
    const b = clone(); b.output = { layout: 'boxes', boxes: 'det' };
    expect(parseSidecar(JSON.stringify(b)).output).toEqual({ layout: 'boxes', boxes: 'det' });
  });
  const BAD: Array<[string, (s: any) => void]> = [
    ['format', (s) => { s.format = 'seamtally-model/2'; }],
    ['summary', (s) => { s.summary = 3; }],
    ['classes', (s) => { s.classes = []; }],
    ['classes', (s) => { s.classes = ['a', 'a']; }],
    ['inputGsdM', (s) => { s.inputGsdM = -0.3; }],
    ['tilePx', (s) => { s.tilePx = 511.5; }],
    ['input.bands', (s) => { s.input.bands = 'bgr'; }],
    ['input.std[1]', (s) => { s.input.std = [1, 0, 1]; }],
    ['input.mean', (s) => { s.input.mean = [0, 0]; }],
    ['output.layout', (s) => { s.output.layout = 'anchors'; }],
    ['output.stride', (s) => { s.output.stride = 3; }],
    ['output.heatmap', (s) => { delete s.output.heatmap; }],
    ['minScore', (s) => { s.minScore = 1; }],
    ['objects.truck', (s) => { s.objects.truck = { criticalDimM: 2, maxExtentM: 12 }; }],
    ['objects.vehicle.criticalDimM', (s) => { s.objects.vehicle.criticalDimM = 9; }],
    ['quality.gsdM', (s) => { s.quality.gsdM = [0.3, 0.15, 0.45, 0.6, 0.8]; }],
    ['quality.recall.vehicle', (s) => { s.quality.recall.vehicle = [0.9, 0.8]; }],
    ['quality.recall.vehicle[0]', (s) => { s.quality.recall.vehicle[0] = 1.2; }],
    ['lowSun.belowDeg', (s) => { s.lowSun.belowDeg = 95; }],
    ['lowSun.countBiasPct.truck', (s) => { s.lowSun.countBiasPct.truck = 5; }],
    ['lowSun.countBiasPct.vehicle', (s) => { s.lowSun.countBiasPct.vehicle = '8 %'; }],
    ['maxTilePx', (s) => { s.maxTilePx = 256; }], // below tilePx
    ['maxTilePx', (s) => { s.tileAlignPx = 32; s.maxTilePx = 1000; }], // not a multiple of the alignment
    ['tileAlignPx', (s) => { s.tileAlignPx = 48; }], // does not divide tilePx 512
  ];
  for (const [field, mutate] of BAD) {
    it(`names the bad field "${field}"`, () => {
      const s = clone(); mutate(s);
      expect(fieldOf(() => parseSidecar(JSON.stringify(s)))).toBe(field);
    });
  }
  it('rejects non-JSON, non-objects and oversized text (files are untrusted)', () => {
    expect(() => parseSidecar('{"format": ')).toThrow(/not valid JSON/);
    expect(fieldOf(() => validateSidecar([1, 2]))).toBe('(top level)');
    const huge = JSON.stringify({ ...VALID, padding: 'x'.repeat(MAX_SIDECAR_BYTES) });
    expect(() => parseSidecar(huge)).toThrow(/at most/);
  });
});

describe('checkModelIO', () => {
  const sc = parseSidecar(JSON.stringify(VALID));
  const io = {
    inputNames: ['image'], outputNames: ['hm', 'wh', 'reg'],
    inputDims: { image: [1, 3, 512, 512] }, outputDims: { hm: ['batch', 2, 128, 128], wh: [1, 2, 128, 128], reg: [1, 2, 128, 128] },
  };
  const kindField = (fn: () => void) => {
    try { fn(); } catch (e) { return `${(e as SeamtallyError).kind} ${(e as SeamtallyError).detail.field}`; }
    return 'ok';
  };
  it('accepts matching names and shapes (symbolic dims are fine)', () => {
    expect(kindField(() => checkModelIO(sc, io))).toBe('ok');
    expect(kindField(() => checkModelIO(sc, { inputNames: ['image'], outputNames: ['hm', 'wh', 'reg'] }))).toBe('ok');
  });
  it('a model declaring a range of tile sizes (maxTilePx) must have dynamic height and width', () => {
    const ranged = parseSidecar(JSON.stringify({ ...VALID, maxTilePx: 1536, tileAlignPx: 32 }));
    expect(ranged.maxTilePx).toBe(1536);
    expect(ranged.tileAlignPx).toBe(32);
    expect(kindField(() => checkModelIO(ranged, io))).toBe('model-mismatch maxTilePx');
    expect(kindField(() => checkModelIO(ranged, { ...io, inputDims: { image: ['batch', 3, 'height', 'width'] }, outputDims: {} }))).toBe('ok');
  });
  it('contextPx: a whole number of model pixels 0–512, absent by default', () => {
    expect(parseSidecar(JSON.stringify(VALID)).contextPx).toBeUndefined();
    expect(parseSidecar(JSON.stringify({ ...VALID, contextPx: 38 })).contextPx).toBe(38);
    expect(parseSidecar(JSON.stringify({ ...VALID, contextPx: 0 })).contextPx).toBe(0);
    for (const bad of [-1, 2.5, 513, '38']) {
      expect(() => parseSidecar(JSON.stringify({ ...VALID, contextPx: bad }))).toThrow(/contextPx/);
    }
  });
  it('names the mismatching field', () => {
    expect(kindField(() => checkModelIO(sc, { ...io, inputNames: ['input'] }))).toBe('model-mismatch input.name');
    expect(kindField(() => checkModelIO(sc, { ...io, inputDims: { image: [1, 3, 256, 256] } }))).toBe('model-mismatch input.name');
    expect(kindField(() => checkModelIO(sc, { ...io, outputNames: ['hm', 'wh'] }))).toBe('model-mismatch output.offset');
    expect(kindField(() => checkModelIO(sc, { ...io, outputDims: { ...io.outputDims, hm: [1, 3, 128, 128] } }))).toBe('model-mismatch output.heatmap');
    expect(kindField(() => checkModelIO(sc, { ...io, outputDims: { ...io.outputDims, wh: [1, 2, 64, 64] } }))).toBe('model-mismatch output.size');
  });
  it('reads names and shapes from a real onnxruntime session (a one-node MaxPool model)', async () => {
    const session = await ort.InferenceSession.create(maxPool3Bytes());
    const got = {
      inputNames: session.inputNames, outputNames: session.outputNames,
      inputDims: dimsFromMetadata(session.inputMetadata as never), outputDims: dimsFromMetadata(session.outputMetadata as never),
    };
    expect(got.inputDims.x).toEqual([1, 'C', 'H', 'W']);
    expect(kindField(() => checkModelIO(sc, got))).toBe('model-mismatch input.name');
    const s2 = clone(); s2.input.name = 'x'; s2.output = { layout: 'boxes', boxes: 'y' };
    // 'y' is rank 4, the boxes layout needs [1, N, 6].
    expect(kindField(() => checkModelIO(parseSidecar(JSON.stringify(s2)), got))).toBe('model-mismatch output.boxes');
  });
});
